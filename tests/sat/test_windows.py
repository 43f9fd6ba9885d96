"""Forbidden-window symmetry breaking: table sizes against published counts, soundness
against breadth-first search."""

from __future__ import annotations

import random

from helpers import random_perm

from exactsyn.core.library import make_library
from exactsyn.sat.encode import EncodingOptions
from exactsyn.sat.forbidden import allowed_windows, forbidden_windows
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.bfs import optimal_sizes


def test_allowed_windows_are_one_per_function_at_that_distance() -> None:
    # One least optimal sequence per function needing exactly w gates: the counts are
    # the published distributions (Shende et al., IEEE TCAD 2003, NCT on 3 lines;
    # Golubitsky, Falconer, Maslov, DAC 2010, MCT on 4 lines).
    nct3 = make_library("nct", 3)
    assert [len(allowed_windows(nct3, w)) for w in (1, 2, 3, 4)] == [12, 102, 625, 2780]
    mct4 = make_library("mct", 4)
    assert [len(allowed_windows(mct4, w)) for w in (1, 2, 3)] == [32, 784, 16204]


def test_window2_contains_the_pairwise_rules() -> None:
    lib = make_library("mct", 4)
    bad = set(forbidden_windows(lib, 2))
    assert all((j, j) in bad for j in range(len(lib)))  # equal neighbours cancel
    from exactsyn.sat.encode import commuting_pairs

    assert all((j, i) in bad for i, j in commuting_pairs(lib))  # commuting pair out of order


def test_window_rules_keep_an_optimal_circuit() -> None:
    # Independent reference: breadth-first optimum (exactsyn.tables.bfs).
    lib = make_library("nct", 3)
    table = optimal_sizes(lib)
    opts = EncodingOptions("onehot", ("touch", "window2", "window3", "window4"))
    rng = random.Random(3)
    perms = [random_perm(rng, 3) for _ in range(150)]
    perms += [[int(v) for v in r] for r in table.permutations()[table.sizes == 8][:60]]
    for p in perms:
        res = minimise_gates(from_permutation(p), lib, SearchOptions(encoding=opts, bounds="cheap"))
        assert res.circuit is not None and list(res.circuit.permutation()) == p
        assert len(res.circuit) == table.size(p), p
