"""Distance tables and meet in the middle against published counts and the SAT engine."""

from __future__ import annotations

import random

import numpy as np
from helpers import random_perm

from exactsyn.core.library import make_library
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.bfs import optimal_sizes
from exactsyn.tables.distance import distance_table, extended_meet, meet_in_the_middle


def test_depth3_table_sizes_match_published_counts() -> None:
    # Golubitsky, Falconer, Maslov, DAC 2010: 1, 32, 784, 16204 4-bit functions need 0..3 MCT gates.
    t = distance_table(make_library("mct", 4), 3)
    assert np.bincount(t.dist).tolist() == [1, 32, 784, 16204]


def test_meet_in_the_middle_is_exact_on_three_lines_with_a_small_table() -> None:
    # Depth-2 table on 3 lines: exact up to 4 gates, bound 5 beyond; reference: breadth-first
    # table (exactsyn.tables.bfs, checked against Shende et al. 2003).
    lib = make_library("nct", 3)
    table = optimal_sizes(lib)
    rng = random.Random(2)
    for _ in range(300):
        p = tuple(random_perm(rng, 3))
        r = meet_in_the_middle(p, lib, 2)
        d = table.size(p)
        if d <= 4:
            assert r.exact == d and r.circuit is not None and r.circuit.permutation() == p
        else:
            assert r.exact is None and r.lower == 5
        e = extended_meet(p, lib, 2)
        if d <= 5:
            assert e.exact == d and e.circuit is not None and e.circuit.permutation() == p
        else:
            assert e.exact is None and e.lower == 6


def test_table_optimum_equals_sat_optimum_on_four_lines() -> None:
    # Independent method: the SAT engine with cheap bounds only.
    lib = make_library("mct", 4)
    rng = random.Random(9)
    for _ in range(12):
        s = np.arange(16)
        for _ in range(rng.randrange(3, 7)):
            s = lib.gates[rng.randrange(len(lib))].apply(s)
        p = tuple(int(v) for v in s)
        r = meet_in_the_middle(p, lib, 3)
        sat = minimise_gates(from_permutation(list(p)), lib, SearchOptions(bounds="cheap"))
        assert sat.circuit is not None and sat.optimal
        assert r.exact == len(sat.circuit)
