"""Read a function from a file of any supported kind.

* a saved circuit in any readable format of :mod:`exactsyn.io.registry` (OpenQASM 2.0 or
  3.0 with the gate set of :mod:`exactsyn.io.qasm`, exactsyn JSON as written by
  ``--format json``): the circuit's function, as a full permutation, to be resynthesised
  optimally (the circuit itself, from :func:`load_with_circuit`, is the search's first upper bound);
* TOML: a permutation spec (``permutation`` / ``cycles``, :mod:`exactsyn.specification.reversible`) or a
  Boolean function (``inputs`` / ``outputs``, :mod:`exactsyn.specification.boolean`), embedded into
  a reversible spec by :mod:`exactsyn.specification.embed`.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

from exactsyn.core.circuit import Circuit
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import circuit_from_text, is_circuit_kind, kind_of_text, read_text
from exactsyn.specification.boolean import function_from_mapping, is_function_mapping
from exactsyn.specification.embed import Embedding, embed
from exactsyn.specification.reversible import MAX_LINES, Spec, from_permutation, spec_from_mapping


def load_any(path: str | Path) -> tuple[Spec, Embedding | None]:
    """The function of a spec file or saved circuit, with the embedding of a Boolean function."""
    spec, embedding, _ = load_with_circuit(path)
    return spec, embedding


def load_with_circuit(path: str | Path) -> tuple[Spec, Embedding | None, Circuit | None]:
    """:func:`load_any`, and the circuit itself when the file is a saved circuit (the search's
    first upper bound); one read, one parse."""
    p = Path(path)
    text = read_text(p, "spec file")
    kind = kind_of_text(text, p.suffix)
    if kind == "empty":
        raise ExactsynError(f"spec file {p} is empty: expected a TOML spec, OpenQASM or exactsyn JSON circuit")
    if is_circuit_kind(kind):
        circ = circuit_from_text(text, p)
        if circ.lines > MAX_LINES:  # before its 2^n-entry function is made
            raise ExactsynError(
                f"{p} is a circuit on {circ.lines} lines; synth handles functions of 1 to {MAX_LINES} lines "
                "('exactsyn optimise' makes circuits of up to 1,024 lines smaller)"
            )
        return from_permutation(list(circ.permutation()), p.stem), None, circ
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as e:
        raise ExactsynError(f"malformed spec file {p}: {e}") from None
    if is_function_mapping(data):
        fn = function_from_mapping(data, str(p))
        return (*embed(fn), None)
    return spec_from_mapping(data, str(p)), None, None
