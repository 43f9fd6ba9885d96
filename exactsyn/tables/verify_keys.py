"""The checker's own keys: packed ``n``-line permutations in plain numpy (part of the checker).

One 64-bit word per key up to 4 lines (this module); 5-line keys (three words) are
:mod:`~exactsyn.tables.verify_keys5`, and :func:`check_keys` hands out either.

Written out here, apart from :mod:`exactsyn.tables.keys` and the compiled kernels, so that
:mod:`exactsyn.tables.verify` trusts neither.  Keys: a permutation ``p`` of ``0..2^n − 1``
is ``Σ p[i]·2^(n·i)`` in one 64-bit word (``n ≤ 4``); a class is the set of
``π_σ∘p^{±1}∘π_σ⁻¹`` over the ``n!`` relabellings ``σ`` of the lines; its canonical key is
the least key of the class.  A level file holds ``mix(canonical key)``, sorted, with the
SplitMix64 finaliser as ``mix`` (Steele, Lea & Flood, OOPSLA 2014).

Relabellings are visited by a walk of adjacent transpositions (Steinhaus–Johnson–Trotter;
:func:`check_keys` checks that it reaches all ``n!``); conjugating by the transposition of
lines ``a < b`` is two exchanges of bit groups on the word (entries of states with bit
``a`` set and ``b`` clear trade places with their partners, then bits ``a`` and ``b`` of
every entry).
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from functools import cache

import numpy as np

from exactsyn.errors import ExactsynError
from exactsyn.tables.verify_keys5 import FiveCheckKeys

_U = np.uint64
_M1, _M2 = 0xBF58476D1CE4E5B9, 0x94D049BB133111EB
_M1_INV, _M2_INV = pow(_M1, -1, 1 << 64), pow(_M2, -1, 1 << 64)
_BLOCK = 1 << 14  # keys per pass: the working arrays stay in the CPU cache


def arr(values: Sequence[int] | np.ndarray) -> np.ndarray:
    return np.asarray(values, dtype=np.uint64)


def _exchange(w: np.ndarray, t: np.ndarray, mask: np.uint64, shift: np.uint64) -> None:
    """In place: ``t = ((w >> shift) ^ w) & mask; w ^= t ^ (t << shift)``."""
    np.right_shift(w, shift, out=t)
    np.bitwise_xor(t, w, out=t)
    np.bitwise_and(t, mask, out=t)
    np.bitwise_xor(w, t, out=w)
    np.left_shift(t, shift, out=t)
    np.bitwise_xor(w, t, out=w)


def _walk(n: int) -> list[tuple[int, int]]:
    """``n! − 1`` transpositions of adjacent lines whose running products are all ``n!`` relabellings."""
    perm, dirs, out = list(range(n)), [-1] * n, []
    while True:
        mobile = max((v for i, v in enumerate(perm) if 0 <= i + dirs[v] < n and perm[i + dirs[v]] < v), default=-1)
        if mobile < 0:
            break
        i = perm.index(mobile)
        j = i + dirs[mobile]
        out.append((min(i, j), max(i, j)))
        perm[i], perm[j] = perm[j], perm[i]
        for v in range(mobile + 1, n):
            dirs[v] = -dirs[v]
    return out


@dataclass(frozen=True, eq=False)
class CheckKeys:
    """Numpy operations on arrays of ``lines``-line keys of one word (elementwise)."""

    lines: int
    walk: tuple[tuple[int, int], ...]
    masks: dict[tuple[int, int], tuple[np.uint64, np.uint64, np.uint64, np.uint64]]
    words: int = 1

    def arr(self, values: Sequence[int] | np.ndarray) -> np.ndarray:
        return arr(values)

    def ints(self, keys: np.ndarray) -> list[int]:
        return [int(v) for v in np.asarray(keys, dtype=np.uint64)]

    def mix(self, keys: np.ndarray) -> np.ndarray:
        return mix(keys)

    def unmix(self, vals: np.ndarray) -> np.ndarray:
        return unmix(vals)

    def neighbour_keys(self, reps: np.ndarray, gates: np.ndarray) -> np.ndarray:
        """Mixed canonical keys of ``g∘r`` and ``g∘r⁻¹`` for all gates and (mixed) representatives."""
        r = unmix(reps)
        ri = self.inverse(r)
        parts = []
        for g in gates:
            parts.append(self.compose(arr([g]), r))
            parts.append(self.compose(arr([g]), ri))
        return mix(self.canonical(np.concatenate(parts)))

    def split_keys(self, f: int, reps: np.ndarray) -> np.ndarray:
        """Mixed canonical keys of ``f∘A⁻¹`` for all ``2·n!`` members ``A`` of the (mixed) classes ``reps``."""
        members = np.concatenate(self.transforms(unmix(reps)))
        return mix(self.canonical(self.compose(arr([f]), self.inverse(members))))

    @property
    def size(self) -> int:
        return 1 << self.lines

    @property
    def relabellings(self) -> int:
        return math.factorial(self.lines)

    @property
    def symmetries(self) -> int:
        return 2 * self.relabellings

    @property
    def identity(self) -> int:
        return self.pack(range(self.size))

    def hex(self, key: int) -> str:
        return f"{key:0{self.lines * self.size // 4}x}"

    def pack(self, perm: Sequence[int]) -> int:
        return sum(int(v) << (self.lines * i) for i, v in enumerate(perm))

    def _entry(self, keys: np.ndarray, i: int) -> np.ndarray:
        return (keys >> _U(self.lines * i)) & _U(self.size - 1)

    def compose(self, f: np.ndarray, a: np.ndarray) -> np.ndarray:
        """``f∘a`` elementwise (``a`` first): entry ``i`` is ``f[a[i]]``."""
        n, m = _U(self.lines), _U(self.size - 1)
        out = np.zeros(np.broadcast(f, a).shape, dtype=np.uint64)
        for i in range(self.size):
            out |= ((f >> (self._entry(a, i) * n)) & m) << _U(self.lines * i)
        return out

    def inverse(self, keys: np.ndarray) -> np.ndarray:
        """``q[p[i]] = i`` elementwise."""
        out = np.zeros_like(keys)
        for i in range(self.size):
            out |= _U(i) << (self._entry(keys, i) * _U(self.lines))
        return out

    def each_transform(self, keys: np.ndarray) -> Iterator[np.ndarray]:
        """All ``2·n!`` transforms of a block of keys: the ``n!`` conjugates of ``k``, then
        those of ``k⁻¹``.  The same buffer is yielded each time, overwritten by the next."""
        t = np.empty_like(keys)
        for start in (keys, self.inverse(keys)):
            w = start.copy()
            yield w
            for pair in self.walk:
                pm, ps, vm, vs = self.masks[pair]
                _exchange(w, t, pm, ps)
                _exchange(w, t, vm, vs)
                yield w

    def transforms(self, keys: np.ndarray) -> list[np.ndarray]:
        """All ``2·n!`` transforms of every key, as ``2·n!`` arrays (relabellings of ``k`` first)."""
        return [w.copy() for w in self.each_transform(keys)]

    def canonical(self, keys: np.ndarray) -> np.ndarray:
        """Least key of the class of each key."""
        keys = np.ascontiguousarray(keys, dtype=np.uint64)
        best = keys.copy()
        for s in range(0, len(keys), _BLOCK):
            part = best[s : s + _BLOCK]
            for w in self.each_transform(keys[s : s + _BLOCK]):
                np.minimum(part, w, out=part)
        return best

    def canonical_and_size(self, keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Canonical keys and class sizes (``2·n!`` / number of transforms fixing the key)."""
        keys = np.ascontiguousarray(keys, dtype=np.uint64)
        best = keys.copy()
        fixed = np.zeros(len(keys), dtype=np.int64)
        for s in range(0, len(keys), _BLOCK):
            part, count, orig = best[s : s + _BLOCK], fixed[s : s + _BLOCK], keys[s : s + _BLOCK]
            for w in self.each_transform(orig):
                np.minimum(part, w, out=part)
                count += w == orig
        return best, self.symmetries // fixed


def _swap_masks(n: int, a: int, b: int) -> tuple[np.uint64, np.uint64, np.uint64, np.uint64]:
    """``(position mask, position shift, value mask, value shift)`` of the transposition of lines ``a < b``."""
    size = 1 << n
    low_states = [x for x in range(size) if (x >> a) & 1 and not (x >> b) & 1]  # partner: x + 2^b − 2^a
    position_mask = _U(sum(((1 << n) - 1) << (n * x) for x in low_states))
    position_shift = _U(n * ((1 << b) - (1 << a)))
    value_mask = _U(sum(1 << (n * i + a) for i in range(size)))
    return position_mask, position_shift, value_mask, _U(b - a)


@cache
def check_keys(lines: int) -> CheckKeys | FiveCheckKeys:
    """The checker's keys for ``lines`` lines: one word up to 4 lines, :mod:`~exactsyn.tables.verify_keys5` for 5."""
    if lines == 5:
        return FiveCheckKeys()
    if not 2 <= lines or lines * (1 << lines) > 64:
        raise ExactsynError(f"the table checker handles 2 to 5 lines, not {lines}")
    walk = _walk(lines)
    seen, cur = {tuple(range(lines))}, list(range(lines))
    for a, b in walk:
        cur[a], cur[b] = cur[b], cur[a]
        seen.add(tuple(cur))
    if len(walk) != math.factorial(lines) - 1 or len(seen) != math.factorial(lines):
        raise AssertionError("the relabelling walk must visit every relabelling once")
    return CheckKeys(lines, tuple(walk), {pair: _swap_masks(lines, *pair) for pair in set(walk)})


def _xorshift_inverse(y: np.ndarray, s: int) -> np.ndarray:
    x = y.copy()
    for _ in range(64 // s + 1):
        x = y ^ (x >> _U(s))
    return x


def mix(keys: np.ndarray) -> np.ndarray:
    """The SplitMix64 finaliser (Steele, Lea & Flood 2014); invertible."""
    x = keys ^ (keys >> _U(30))
    x = x * _U(_M1)
    x = x ^ (x >> _U(27))
    x = x * _U(_M2)
    return x ^ (x >> _U(31))


def unmix(vals: np.ndarray) -> np.ndarray:
    x = _xorshift_inverse(vals, 31) * _U(_M2_INV)
    x = _xorshift_inverse(x, 27) * _U(_M1_INV)
    return _xorshift_inverse(x, 30)
