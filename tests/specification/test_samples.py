"""Seeded samples: the even sampler reaches exactly the even permutations (parity by inversions)."""

from __future__ import annotations

import itertools
import random

import pytest

from exactsyn.specification.samples import random_circuit, random_permutation


def _inversions(p: tuple[int, ...]) -> int:
    return sum(1 for i, j in itertools.combinations(range(len(p)), 2) if p[i] > p[j])


def test_even_sampler_reaches_every_even_permutation_and_nothing_else() -> None:
    rng = random.Random(5)
    seen = {random_permutation(2, rng, even=True) for _ in range(600)}
    even = {p for p in itertools.permutations(range(4)) if _inversions(p) % 2 == 0}
    assert seen == even  # 12 of the 24 permutations of 4 points (common practice: half are even)


def test_plain_sampler_reaches_odd_permutations_too() -> None:
    rng = random.Random(6)
    seen = {random_permutation(2, rng) for _ in range(1000)}
    assert len(seen) == 24


def test_random_circuit_respects_control_bounds() -> None:
    rng = random.Random(7)
    c = random_circuit(5, 200, rng, min_controls=1, max_controls=2)
    assert len(c.gates) == 200
    assert all(1 <= g.num_controls <= 2 for g in c.gates)
    assert {g.num_controls for g in c.gates} == {1, 2}
    with pytest.raises(ValueError):
        random_circuit(3, 2, rng, min_controls=2, max_controls=1)


def test_a_library_function_is_the_function_of_the_library_circuit_of_the_same_draws() -> None:
    from exactsyn.core.library import make_library
    from exactsyn.specification.samples import random_library_circuit, random_library_function

    lib = make_library("mct", 4)
    for seed in range(5):
        c = random_library_circuit(lib, 9, random.Random(seed))
        assert len(c) == 9 and all(lib.contains(g) for g in c.gates)
        assert random_library_function(lib, 9, random.Random(seed)) == c.permutation()
