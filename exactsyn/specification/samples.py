"""Seeded random functions: the inputs of sampled tables, benchmarks and tests.

A uniform random permutation is a shuffle (Fisher–Yates; Knuth, TAOCP vol. 2, sec. 3.4.2,
Algorithm P, as done by :meth:`random.Random.shuffle`). A uniform random *even* permutation is
drawn by rejection: exactly half of all permutations of 2^n ≥ 2 points are even, so on average
two draws are needed. A function "made by a random circuit" of g gates needs at most g gates;
such functions are how instances with a known upper bound are built, either from X gates with
a chosen number of controls (:func:`random_circuit`) or from gates drawn uniformly from a
library (:func:`random_library_function`).
"""

from __future__ import annotations

import random

import numpy as np

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, permutation_is_odd, x_gate
from exactsyn.core.library import Library


def random_permutation(lines: int, rng: random.Random, *, even: bool = False) -> tuple[int, ...]:
    """A uniform random permutation of 2^lines points (uniform among the even ones if ``even``)."""
    while True:
        p = list(range(1 << lines))
        rng.shuffle(p)
        if not even or not permutation_is_odd(tuple(p)):
            return tuple(p)


def random_circuit(
    lines: int, gates: int, rng: random.Random, *, min_controls: int = 0, max_controls: int = 3
) -> Circuit:
    """A circuit of ``gates`` positive-control X gates on random lines.

    Each gate picks its target uniformly, then between ``min_controls`` and ``max_controls``
    controls (capped by ``lines - 1``) uniformly among the other lines.
    """
    if lines < 1 or gates < 0 or min_controls < 0 or max_controls < min_controls:
        raise ValueError("random_circuit needs lines >= 1, gates >= 0 and 0 <= min_controls <= max_controls")
    out: list[Gate] = []
    for _ in range(gates):
        t = rng.randrange(lines)
        others = [x for x in range(lines) if x != t]
        top = min(max_controls, len(others))
        out.append(x_gate(t, rng.sample(others, rng.randint(min(min_controls, top), top))))
    return Circuit(lines, tuple(out))


def random_library_circuit(library: Library, gates: int, rng: random.Random) -> Circuit:
    """A circuit of ``gates`` gates drawn uniformly (with repetition) from ``library``."""
    return Circuit(library.lines, tuple(library.gates[rng.randrange(len(library.gates))] for _ in range(gates)))


def random_library_function(library: Library, gates: int, rng: random.Random) -> tuple[int, ...]:
    """The function of :func:`random_library_circuit` (the same draws from ``rng``)."""
    state = np.arange(1 << library.lines)
    for g in random_library_circuit(library, gates, rng).gates:
        state = g.apply(state)
    return tuple(int(v) for v in state)
