"""``--all`` enumeration against breadth-first enumeration of every optimal gate sequence.

The reference here is independent of the encoder: all optimal words come from the
breadth-first size table, and each word is reduced to its class representative by the
greedy lexicographic normal form of traces (Anisimov & Knuth 1979; Diekert & Rozenberg,
"The Book of Traces", 1995): repeatedly take the least gate that commutes with every
gate before it.
"""

from __future__ import annotations

import random
from collections.abc import Sequence

import pytest
from helpers import optimal_words, trace_normal_form

from exactsyn.core.library import Library, make_library
from exactsyn.sat.encode import CostLimit
from exactsyn.search.all_optima import enumerate_optimal
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.bfs import optimal_sizes


def _normal_form(word: Sequence[int], library: Library) -> tuple[int, ...]:
    return trace_normal_form(word, library)


@pytest.mark.parametrize("name", ["nct", "nct-peres", "mixed"])
def test_all_optimal_count_matches_breadth_first_enumeration(name: str) -> None:
    lib = make_library(name, 3)
    sizes = optimal_sizes(lib).as_dict()
    rng = random.Random(11)
    sample = rng.sample(sorted(p for p, k in sizes.items() if 2 <= k <= 4), 12)
    for perm in sample:
        words = optimal_words(perm, lib, sizes)
        classes = {_normal_form(w, lib) for w in words}
        res = enumerate_optimal(from_permutation(perm), lib, sizes[perm])
        assert res.complete
        assert res.count == len(classes), (name, perm)
        got = {tuple(lib.index(g) for g in c.gates) for c in res.circuits}
        assert got == classes
        for c in res.circuits:
            assert c.permutation() == perm


def test_count_only_and_limit() -> None:
    lib = make_library("nct", 3)
    sizes = optimal_sizes(lib).as_dict()
    # the first 4-gate function with more than one class of optimal circuits (reference above)
    perm, classes = next(
        (p, c)
        for p, k in sorted(sizes.items())
        if k == 4 and len(c := {_normal_form(w, lib) for w in optimal_words(p, lib, sizes)}) > 1
    )
    full = enumerate_optimal(from_permutation(perm), lib, 4)
    counted = enumerate_optimal(from_permutation(perm), lib, 4, keep=False)
    assert full.complete and counted.complete
    assert counted.count == full.count == len(classes) and counted.circuits == ()
    part = enumerate_optimal(from_permutation(perm), lib, 4, limit=1)
    assert part.count == 1 and not part.complete and len(part.circuits) == 1
    assert part.circuits[0].permutation() == perm


def test_cheapest_minimum_gate_circuits_under_a_cost_limit() -> None:
    # NCV quantum cost (Barenco et al. 1995): NOT 1, CNOT 1, Toffoli 5.  Reference: the
    # classes of optimal words whose cost is the least among optimal words.
    lib = make_library("nct", 3)
    costs = tuple(5 if g.num_controls == 2 else 1 for g in lib.gates)
    sizes = optimal_sizes(lib).as_dict()
    perm = next(
        p for p, k in sorted(sizes.items()) if k == 4 and len({_c(w, costs) for w in optimal_words(p, lib, sizes)}) > 1
    )
    words = optimal_words(perm, lib, sizes)
    cheapest = min(_c(w, costs) for w in words)
    classes = {_normal_form(w, lib) for w in words if _c(w, costs) == cheapest}
    res = enumerate_optimal(from_permutation(perm), lib, 4, cost_limit=CostLimit(costs, cheapest))
    assert res.count == len(classes)


def _c(word: Sequence[int], costs: Sequence[int]) -> int:
    return sum(costs[j] for j in word)
