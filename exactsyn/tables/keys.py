"""4-line permutations packed into one 64-bit key, and the 48 symmetries of the tables.

Packing: a permutation ``p`` of ``0..15`` (``p[i]`` = output for input ``i``; line ``l``
is bit ``l`` of a state) is the integer ``Σ p[i] · 16^i``: nibble ``i`` holds ``p[i]``.
Composition ``f∘a`` means ``a`` first, then ``f``: ``(f∘a)[i] = f[a[i]]``.

Symmetries.  For a relabelling ``σ`` of the 4 lines (``σ[l]`` is the new label of line
``l``) let ``π_σ`` move bit ``l`` of a state to bit ``σ[l]``.  Renaming every gate's lines
by ``σ`` turns a circuit for ``f`` into one for ``π_σ ∘ f ∘ π_σ⁻¹`` with as many gates,
and reversing a circuit of self-inverse gates computes ``f⁻¹``.  So in a library closed
under relabelling whose gates are self-inverse (``mct``, ``nct``, ``mixed``), the optimum
is constant on the class ``{π_σ ∘ f^e ∘ π_σ⁻¹ : σ ∈ S_4, e = ±1}`` (at most 48
functions) — the reduction of Shende, Prasad, Markov & Hayes (IEEE TCAD 22(6), 2003),
used for 4 lines by Golubitsky, Falconer & Maslov (DAC 2010).  The canonical form of a
function is the least key of its class; its class size is ``48 / |stabiliser|``.

This module is plain Python and numpy (the reference semantics); the compiled kernels in
:mod:`exactsyn.tables.kernels` compute the same things fast and are tested against it.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence

import numpy as np

from exactsyn.core.gates import permutation_is_odd
from exactsyn.errors import ExactsynError

LINES = 4
SIZE = 16
IDENTITY = sum(i << (4 * i) for i in range(SIZE))

#: The 24 relabellings of the lines, identity first.
RELABELLINGS: tuple[tuple[int, ...], ...] = tuple(itertools.permutations(range(LINES)))


def check_perm(perm: Sequence[int]) -> tuple[int, ...]:
    """``perm`` as a tuple, or :class:`ExactsynError` if it is not a permutation of 0..15."""
    try:
        values = tuple(int(v) for v in perm)
    except (TypeError, ValueError):
        raise ExactsynError("permutation entries must be integers") from None
    if len(values) != SIZE or sorted(values) != list(range(SIZE)):
        raise ExactsynError("the 4-line tables need a permutation of 0..15")
    return values


def pack(perm: Sequence[int]) -> int:
    """Key of a permutation of ``0..15``."""
    return sum(int(v) << (4 * i) for i, v in enumerate(check_perm(perm)))


def unpack(key: int) -> tuple[int, ...]:
    """Permutation of a key."""
    return tuple((int(key) >> (4 * i)) & 15 for i in range(SIZE))


def pack_rows(rows: np.ndarray) -> np.ndarray:
    """Keys of a ``(N, 16)`` array of permutations (uint64)."""
    rows = np.asarray(rows, dtype=np.uint64)
    out = np.zeros(rows.shape[0], dtype=np.uint64)
    for i in range(SIZE):
        out |= rows[:, i] << np.uint64(4 * i)
    return out


def unpack_keys(keys: np.ndarray) -> np.ndarray:
    """``(N, 16)`` uint8 permutations of an array of keys."""
    keys = np.asarray(keys, dtype=np.uint64)
    shifts = (np.arange(SIZE, dtype=np.uint64) * np.uint64(4))[None, :]
    return ((keys[:, None] >> shifts) & np.uint64(15)).astype(np.uint8)


def compose(f: int, a: int) -> int:
    """Key of ``f∘a`` (``a`` first)."""
    pf, pa = unpack(f), unpack(a)
    return sum(pf[pa[i]] << (4 * i) for i in range(SIZE))


def inverse(k: int) -> int:
    p = unpack(k)
    return sum(i << (4 * p[i]) for i in range(SIZE))


def state_map(sigma: Sequence[int]) -> tuple[int, ...]:
    """``π_σ`` as a permutation of the 16 states (bit ``l`` moves to bit ``σ[l]``)."""
    return tuple(sum(((x >> line) & 1) << sigma[line] for line in range(LINES)) for x in range(SIZE))


def conjugate(k: int, sigma: Sequence[int]) -> int:
    """Key of ``π_σ ∘ f ∘ π_σ⁻¹``: relabel the lines of ``f`` by ``σ``."""
    pi = state_map(sigma)
    p = unpack(k)
    out = [0] * SIZE
    for x in range(SIZE):
        out[pi[x]] = pi[p[x]]
    return sum(v << (4 * i) for i, v in enumerate(out))


def inverse_relabelling(sigma: Sequence[int]) -> tuple[int, ...]:
    out = [0] * LINES
    for line, new in enumerate(sigma):
        out[new] = line
    return tuple(out)


def class_members(k: int) -> dict[int, tuple[tuple[int, ...], bool]]:
    """Every member of the class of ``k``, each with one transform ``(σ, inverted)`` giving it."""
    out: dict[int, tuple[tuple[int, ...], bool]] = {}
    for inverted in (False, True):
        base = inverse(k) if inverted else k
        for sigma in RELABELLINGS:
            out.setdefault(conjugate(base, sigma), (sigma, inverted))
    return out


def canonical(k: int) -> int:
    """The least key of the class of ``k`` (the plain definition; slow)."""
    return min(class_members(k))


def class_size(k: int) -> int:
    return len(class_members(k))


def is_odd(k: int) -> bool:
    """Is the permutation of key ``k`` odd?"""
    return permutation_is_odd(unpack(k))
