"""The encoder's modes: refused combinations."""

from __future__ import annotations

import pytest

from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.sat.encode import EncodingOptions, encode
from exactsyn.specification.reversible import parse_cycles


def test_a_guarded_textbook_query_is_refused() -> None:
    # The textbook encoding fixes the outputs by unit clauses that no activation literal can
    # switch off, so one solver could not hold several k: refused instead of built wrong.
    with pytest.raises(ExactsynError, match="onehot"):
        encode(parse_cycles("(1 2)"), make_library("nct", 2), 3, EncodingOptions("textbook", ()), guard=True)
