"""Level counts: class sizes against plain breadth-first search and published figures."""

from __future__ import annotations

from pathlib import Path

import pytest

from exactsyn import tables
from exactsyn.core.library import make_library
from exactsyn.tables.bfs import distance_layers


@pytest.mark.parametrize(("library", "depth"), [("mct", 4), ("nct", 4), ("mixed", 3)])
def test_level_counts_equal_breadth_first_search_over_all_functions(
    table_cache: Path, library: str, depth: int
) -> None:
    # Independent method: exactsyn.bfs enumerates every function (no classes, no kernels).
    layers = distance_layers(make_library(library, 4), depth)
    t = tables.load(library, cache=table_cache)
    assert t.distribution()[: depth + 1] == [len(x) for x in layers]


def test_mct_counts_match_the_published_table(mct6: tables.Tables) -> None:
    # Golubitsky, Falconer, Maslov, "Synthesis of the optimal 4-bit reversible circuits",
    # DAC 2010: 4-bit functions needing exactly 0..5 MCT gates; 6 gates: same paper, from memory.
    assert mct6.distribution() == [1, 32, 784, 16204, 294507, 4807552, 70763560]


def test_info_reports_what_is_cached(table_cache: Path) -> None:
    entries = {i.library: i for i in tables.info(cache=table_cache)}
    assert entries["mct"].present and entries["mct"].depth == 6
    assert entries["mct"].functions[:3] == (1, 32, 784)
    assert entries["mct"].bytes == sum(
        p.stat().st_size
        for p in entries["mct"].directory.iterdir()
        if p.name != "manifest.json" and not p.name.startswith("verified")
    )


@pytest.mark.slow
def test_full_mct_table_counts(full_cache: Path) -> None:  # pragma: no cover - minutes
    # Levels 0..6 as published (Golubitsky, Falconer, Maslov DAC 2010; k = 6 from memory);
    # levels 7 and 8 (932,651,938 and 10,804,681,959) are our own, checked by verify_table.
    info = tables.build("mct", cache=full_cache)
    assert info.functions[:9] == (1, 32, 784, 16204, 294507, 4807552, 70763560, 932651938, 10804681959)


@pytest.mark.slow
def test_nct_functions_of_at_most_8_gates(full_cache: Path) -> None:  # pragma: no cover - minutes
    # Li, Chen, Yang, Liu, J. Applied Mathematics 2013, article 291410: 3,120,218,828 optimal
    # 4-bit NCT circuits of up to 8 gates.  Our class tables give 3,120,218,829 even
    # permutations of size 0..8: the published figure matches sizes 1..8, i.e. it leaves out
    # the identity (the empty circuit).
    info = tables.build("nct", cache=full_cache)
    assert sum(info.functions[1:9]) == 3_120_218_828
    assert info.functions[0] == 1
