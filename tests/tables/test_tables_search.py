"""Sampling and the hard-function search: the parts that do not need the full tables."""

from __future__ import annotations

import math

from helpers import hwb

from exactsyn import tables
from exactsyn.tables import hardest
from exactsyn.tables.keys import layout
from exactsyn.tables.sample import population, sample_function, summarise, wilson

L4 = layout(4)


def test_samples_are_fixed_per_index_and_even_for_nct() -> None:
    assert sample_function(3, 17) == sample_function(3, 17)
    assert sample_function(3, 17) != sample_function(3, 18)
    for i in range(200):
        assert not L4.is_odd(L4.pack(sample_function(5, i, even_only=True)))
    assert population(False) == math.factorial(16) and population(True) == math.factorial(16) // 2


def test_wilson_interval_and_summary() -> None:
    lo, hi = wilson(30, 100)
    assert 0.21 < lo < 0.22 and 0.39 < hi < 0.40  # textbook value for 30/100: [0.2189, 0.3958]
    d = summarise("mct", 1, [11, 12, 12, 13, None], False, (1, 32), 0.0)
    assert d.n == 4 and d.unsettled == 1 and d.counts == ((11, 1), (12, 2), (13, 1)) and d.mean == 12
    est, low, high = d.estimated(12)
    assert est == 0.5 * math.factorial(16) and low < est < high


def test_fixed_functions_satisfy_their_symmetry() -> None:
    for sigma, inverted in [((1, 2, 3, 0), False), ((1, 2, 3, 0), True), ((1, 2, 0, 3), True)]:
        P = L4.state_map(sigma)
        found = list(hardest.fixed_functions(sigma, inverted))
        assert len(set(found)) == len(found)
        for f in found:
            k = L4.pack(f)
            other = L4.inverse(k) if inverted else k
            assert L4.conjugate(other, sigma) == k
        if not inverted:
            assert set(found) == set(hardest.centraliser(P))
    # counts from the cycle structure: 3!·4^3 · 2 · 2! for a 4-cycle of the lines
    assert sum(1 for _ in hardest.fixed_functions((1, 2, 3, 0), False)) == 1536


def test_family_sizes_follow_from_the_cycle_structure() -> None:
    # A 3-cycle of the lines moves the 16 states in four 3-cycles and fixes four:
    # commuting functions number 4!·3^4·4! = 46656.  With inversion (f∘P∘f = P, i.e.
    # (f∘P)^2 = P^2): square roots of four 3-cycles and four fixed points: 46 · 10 = 460.
    assert sum(1 for _ in hardest.fixed_functions((1, 2, 0, 3), False)) == 46656
    assert sum(1 for _ in hardest.fixed_functions((1, 2, 0, 3), True)) == 460
    # a 4-cycle with inversion: 15 pairings · 2^3 orientations · 10 involutions on 4 fixed states
    assert sum(1 for _ in hardest.fixed_functions((1, 2, 3, 0), True)) == 1200


def test_hwb4_is_symmetric_and_the_oracle_agrees(mct6: tables.Tables) -> None:
    classes = hardest.symmetric_classes((1, 2, 3, 0))
    assert L4.canonical(L4.pack(hwb(4))) in classes
    assert hardest.at_least(mct6, hwb(4), 11) and not hardest.at_least(mct6, hwb(4), 12)
    assert hardest.at_least(mct6, hwb(4), 3)


def test_sample_distribution_runs_on_a_small_table(table_cache) -> None:  # type: ignore[no-untyped-def]
    d = tables.sample_distribution("mct", n=4, seed=1, cache=table_cache, time_limit=3.0)
    assert d.n + d.unsettled == 4
    assert d.exact == (1, 32, 784, 16204, 294507, 4807552, 70763560)
    # a depth-6 table settles up to 12 gates by meet in the middle, 13 with the peeled gate
    assert all(9 <= g <= 13 for g, _ in d.counts)
