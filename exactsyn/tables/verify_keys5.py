"""The checker's own 5-line keys, in plain numpy (part of the checker, like :mod:`~exactsyn.tables.verify_keys`).

Written apart from :mod:`exactsyn.tables.keys` and the compiled kernels
(:mod:`exactsyn.tables.kernels5`), so that :mod:`exactsyn.tables.verify` trusts neither.

Keys.  A permutation ``p`` of ``0..31`` is the 160-bit key ``Σ p[i]·2^(5i)``, held in three
64-bit words ``(k0, k1, k2)``, least significant first; a key array has shape ``(N, 3)``.
Here the work is done on *rows*: ``(N, 32)`` uint8 arrays, ``row[x] = p[x]``.

Classes and canonical form.  The class of ``p`` is ``{π_σ∘p^{±1}∘π_σ⁻¹}`` over the 120
relabellings ``σ`` of the lines (``π_σ`` moves bit ``l`` of a state to bit ``σ[l]``).  Its
canonical key is the least member under (line profile, key): the profile of a member
``m`` is the vector over the lines ``l`` of ``flips·2^13 + spread·2^6 + low·2^3 + high``
with ``flips`` = #{x : bit ``l`` of ``m(x) ⊕ x`` set}, ``spread`` = ``Σ hw(m(x) ⊕ m(x ⊕ 2^l))``
over the ``x`` with bit ``l`` clear, ``low`` = ``hw(m(2^l))``, ``high`` = ``hw(m(31 ⊕ 2^l))``
(fields below 2^6, 2^7, 2^3, 2^3: comparing packed values compares the tuples).

Why only a few members need a key.  Renaming the lines by ``σ`` maps ``x`` to ``π_σ(x)``,
bit ``l`` to bit ``σ[l]``, ``2^l`` to ``2^σ[l]`` and keeps ``hw``; each field of line ``l``
of ``m`` is therefore the field of line ``σ[l]`` of ``π_σ∘m∘π_σ⁻¹``.  So the profile of the
conjugate by ``σ`` is the profile of ``m`` with entry ``l`` moved to place ``σ[l]``, the
least profile of a class is the sorted profile of ``p`` or of ``p⁻¹`` (the smaller), and
the members having it are exactly the conjugates, by a relabelling that sorts it, of the
side(s) whose sorted profile it is.  When that side is unique and its profile has no
repeated value, one relabelling sorts it and the class has one candidate; otherwise every
one of the 240 transforms whose moved profile equals the least is a candidate.  The
canonical key is the least candidate key; the transforms fixing a canonical key are among
its candidates (a fixing transform keeps the profile).

Mixed keys: ``(m0, k1, k2)`` with ``m0`` the SplitMix64 finaliser (Steele, Lea & Flood,
OOPSLA 2014) of ``k0 ⊕ (c1·k1 + c2·k2)`` for ``c1 = 0x9E3779B97F4A7C15``, ``c2 =
0xC2B2AE3D27D4EB4F`` (wrapping); ordered ``(m0, k1, k2)`` lexicographically.
"""

from __future__ import annotations

import itertools
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from functools import cached_property

import numpy as np

_U = np.uint64
_C1, _C2 = _U(0x9E3779B97F4A7C15), _U(0xC2B2AE3D27D4EB4F)
_N, _SIZE = 5, 32
_BLOCK = 1 << 16  # keys per block of the canonical form (its work arrays are about 100 bytes a key)
_STATES = np.arange(_SIZE, dtype=np.int64)
_STATES8 = _STATES.astype(np.uint8)
_HW8 = np.array([bin(v).count("1") for v in range(256)], dtype=np.uint8)
_ONE_PER_BYTE = _U(0x0101010101010101)
_IDENTITY_WORDS = np.arange(_SIZE, dtype=np.uint8).view("<u8").astype(np.uint64)  # the identity's bytes as words
_PAIR_MASK = [_U(0x00FF00FF00FF00FF), _U(0x0000FFFF0000FFFF), _U(0x00000000FFFFFFFF)]  # first byte of each pair


def _byte_sums(w: np.ndarray) -> np.ndarray:
    """Sum of the eight bytes of every word, when it is below 256 (the multiplication adds
    every byte into the top one: common practice)."""
    return ((w * _ONE_PER_BYTE) >> _U(56)).astype(np.int64)


def _popcount(w: np.ndarray) -> np.ndarray:
    """One bits of every 64-bit word (the parallel sideways addition of Knuth, TAOCP 4A §7.1.3)."""
    w = w - ((w >> _U(1)) & _U(0x5555555555555555))
    w = (w & _U(0x3333333333333333)) + ((w >> _U(2)) & _U(0x3333333333333333))
    w = (w + (w >> _U(4))) & _U(0x0F0F0F0F0F0F0F0F)
    return _byte_sums(w)


def mix64(x: np.ndarray) -> np.ndarray:
    """The SplitMix64 finaliser (Steele, Lea & Flood 2014), written out again here."""
    x = x ^ (x >> _U(30))
    x = x * _U(0xBF58476D1CE4E5B9)
    x = x ^ (x >> _U(27))
    x = x * _U(0x94D049BB133111EB)
    return x ^ (x >> _U(31))


def _undo_xorshift(y: np.ndarray, s: int) -> np.ndarray:
    x = y.copy()
    for _ in range(64 // s + 1):
        x = y ^ (x >> _U(s))
    return x


def unmix64(x: np.ndarray) -> np.ndarray:
    x = _undo_xorshift(x, 31) * _U(pow(0x94D049BB133111EB, -1, 1 << 64))
    x = _undo_xorshift(x, 27) * _U(pow(0xBF58476D1CE4E5B9, -1, 1 << 64))
    return _undo_xorshift(x, 30)


def _relabellings() -> tuple[np.ndarray, np.ndarray]:
    """``(sigmas, maps)``: the 120 relabellings (identity first) and ``maps[s][x] = π_σ(x)``."""
    sigmas = np.array(list(itertools.permutations(range(_N))), dtype=np.int64)
    maps = np.zeros((len(sigmas), _SIZE), dtype=np.int64)
    for s, sigma in enumerate(sigmas):
        for line in range(_N):
            maps[s] |= ((_STATES >> line) & 1) << sigma[line]
    return sigmas, maps


@dataclass(frozen=True, eq=False)
class FiveCheckKeys:
    """Numpy operations on arrays of 5-line keys (shape ``(N, 3)``, elementwise)."""

    lines: int = _N
    words: int = 3

    @property
    def size(self) -> int:
        return _SIZE

    @property
    def relabellings(self) -> int:
        return 120

    @property
    def symmetries(self) -> int:
        return 240

    @property
    def identity(self) -> int:
        return self.pack(range(_SIZE))

    def hex(self, key: int) -> str:
        return f"{key:040x}"

    def pack(self, perm: Sequence[int]) -> int:
        return sum(int(v) << (5 * i) for i, v in enumerate(perm))

    def arr(self, values: Sequence[int] | np.ndarray) -> np.ndarray:
        """Key array of Python integer keys (or a key array, returned as ``(N, 3)`` uint64)."""
        if isinstance(values, np.ndarray) and values.dtype == np.uint64:
            return values.reshape(-1, 3)
        mask = (1 << 64) - 1
        return np.array([[(int(k) >> s) & mask for s in (0, 64, 128)] for k in values], dtype=np.uint64).reshape(-1, 3)

    def ints(self, keys: np.ndarray) -> list[int]:
        return [int(a) | (int(b) << 64) | (int(c) << 128) for a, b, c in np.asarray(keys).reshape(-1, 3)]

    @cached_property
    def _tables(self) -> tuple[np.ndarray, np.ndarray]:
        return _relabellings()

    # ------------------------------------------------------------------ rows and keys
    def rows(self, keys: np.ndarray) -> np.ndarray:
        """``(N, 32)`` uint8 rows of a key array."""
        keys = np.asarray(keys, dtype=np.uint64).reshape(-1, 3)
        out = np.empty((len(keys), _SIZE), dtype=np.uint8)
        for i in range(_SIZE):
            word, shift = divmod(5 * i, 64)
            v = keys[:, word] >> _U(shift)
            if shift > 59:  # the entry runs into the next word
                v = v | (keys[:, word + 1] << _U(64 - shift))
            out[:, i] = v & _U(31)
        return out

    def keys(self, rows: np.ndarray) -> np.ndarray:
        """Key array of ``(N, 32)`` rows."""
        out = np.zeros((len(rows), 3), dtype=np.uint64)
        for i in range(_SIZE):
            v = rows[:, i].astype(np.uint64)
            word, shift = divmod(5 * i, 64)
            out[:, word] |= v << _U(shift)
            if shift > 59:
                out[:, word + 1] |= v >> _U(64 - shift)
        return out

    @staticmethod
    def invert_rows(rows: np.ndarray) -> np.ndarray:
        out = np.empty_like(rows)
        out[np.arange(len(rows))[:, None], rows] = _STATES.astype(np.uint8)
        return out

    def compose(self, f: np.ndarray, a: np.ndarray) -> np.ndarray:
        """``f∘a`` elementwise (``a`` first); either side may hold one key."""
        fr, ar = self.rows(f), self.rows(a)
        if len(fr) == 1:
            return self.keys(fr[0][ar])
        if len(ar) == 1:
            ar = np.broadcast_to(ar, fr.shape)
        return self.keys(np.take_along_axis(fr, ar.astype(np.int64), axis=1))

    def inverse(self, keys: np.ndarray) -> np.ndarray:
        return self.keys(self.invert_rows(self.rows(keys)))

    def conjugate_rows(self, rows: np.ndarray, maps: np.ndarray) -> np.ndarray:
        """``π∘h∘π⁻¹`` per row, ``maps[i]`` being ``π`` of row ``i`` (or one ``π`` for all)."""
        maps = np.broadcast_to(maps, rows.shape)
        out = np.empty_like(rows)
        out[np.arange(len(rows))[:, None], maps] = np.take_along_axis(maps, rows.astype(np.int64), axis=1)
        return out

    def member_rows(self, rows: np.ndarray) -> Iterator[np.ndarray]:
        """The 240 transforms of every row: the conjugates of ``h`` (relabellings in order,
        identity first), then those of ``h⁻¹``."""
        _, maps = self._tables
        for side in (rows, self.invert_rows(rows)):
            for pi in maps:
                yield self.conjugate_rows(side, pi)

    def transforms(self, keys: np.ndarray) -> list[np.ndarray]:
        """All 240 transforms of every key, as 240 key arrays (relabellings of ``k`` first)."""
        return [self.keys(m) for m in self.member_rows(self.rows(keys))]

    # ------------------------------------------------------------------ profile and canonical form
    @staticmethod
    def profiles(rows: np.ndarray) -> np.ndarray:
        """``(N, 5)`` int64: the packed line profile of every row (module docstring).

        Computed on the row's 32 bytes read as four little-endian words ``w[0..3]`` (byte
        ``x`` is bits ``8·(x mod 8)..`` of word ``x div 8``): the partner ``x ⊕ 2^l`` of a
        byte is ``2^l`` bytes further in its word for ``l < 3``, in the next word (``l = 3``)
        or two words on (``l = 4``)."""
        w = np.ascontiguousarray(rows, dtype=np.uint8).view("<u8").astype(np.uint64)  # (N, 4)
        changed = w ^ _IDENTITY_WORDS
        out = np.empty((len(w), _N), dtype=np.int64)
        for line in range(_N):
            flips = _byte_sums((changed >> _U(line)) & _ONE_PER_BYTE).sum(axis=1)
            if line < 3:
                shift = _U(8 << line)
                spread = _popcount((w ^ (w >> shift)) & _PAIR_MASK[line]).sum(axis=1)
            else:
                step = 1 << (line - 3)  # the partner word: one further (line 3) or two (line 4)
                firsts = [0, 2] if line == 3 else [0, 1]
                spread = sum(_popcount(w[:, i] ^ w[:, i + step]) for i in firsts)
            bit = 1 << line
            low = _HW8[rows[:, bit]].astype(np.int64)
            high = _HW8[rows[:, 31 ^ bit]].astype(np.int64)
            out[:, line] = (flips << 13) | (spread << 6) | (low << 3) | high
        return out

    def _least_profile(self, prof: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(least, sides)``: the least sorted profile per key and which sides reach it (``(N, 2)`` bool)."""
        srt = np.sort(prof, axis=2)
        differ = srt[:, 0] != srt[:, 1]
        first = np.argmax(differ, axis=1)
        n = np.arange(len(prof))
        a, b = srt[n, 0, first], srt[n, 1, first]
        tie = ~differ.any(axis=1)
        sides = np.stack([tie | (a < b), tie | (b < a)], axis=1)
        least = np.where(sides[:, :1], srt[:, 0], srt[:, 1])
        return least, sides

    def _simple_block(self, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Canonical keys of the rows whose class has one candidate; ``(keys, fixed, rest)``
        where ``rest`` lists the other rows (their keys are left unset)."""
        _, maps = self._tables
        inv = self.invert_rows(rows)
        prof = np.stack([self.profiles(rows), self.profiles(inv)], axis=1)
        _, sides = self._least_profile(prof)
        srt = np.sort(prof, axis=2)
        distinct = np.all(srt[:, :, 1:] != srt[:, :, :-1], axis=2)
        side = np.argmax(sides, axis=1)
        simple = (sides.sum(axis=1) == 1) & distinct[np.arange(len(rows)), side]
        out = np.empty((len(rows), 3), dtype=np.uint64)
        fixed = np.ones(len(rows), dtype=np.int64)
        idx = np.flatnonzero(simple)
        if len(idx):
            side = side[idx]
            src = np.where(side[:, None] == 0, rows[idx], inv[idx])
            sigma = np.argsort(np.argsort(prof[idx, side], axis=1), axis=1)  # σ[l] = rank of line l
            pi = maps[self._index_of(sigma)]
            out[idx] = self.keys(self.conjugate_rows(src, pi))
            fixed[idx] = np.all(out[idx] == self.keys(rows[idx]), axis=1)
        return out, fixed, np.flatnonzero(~simple)

    @cached_property
    def _codes(self) -> np.ndarray:
        """Position in the relabelling list of ``σ``, indexed by ``Σ σ[l]·5^l``."""
        sigmas, _ = self._tables
        table = np.full(_N**_N, -1, dtype=np.int64)
        table[(sigmas * _N ** np.arange(_N)).sum(axis=1)] = np.arange(len(sigmas))
        return table

    def _index_of(self, sigma: np.ndarray) -> np.ndarray:
        return self._codes[(sigma * _N ** np.arange(_N)).sum(axis=1)]

    def _general(self, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The definition over all 240 transforms: the least key among those whose moved
        profile is the least, and how many of them give the row's own key."""
        sigmas, maps = self._tables
        inv = self.invert_rows(rows)
        prof = np.stack([self.profiles(rows), self.profiles(inv)], axis=1)
        least, _ = self._least_profile(prof)
        best = np.full((len(rows), 3), np.iinfo(np.uint64).max, dtype=np.uint64)
        fixed = np.zeros(len(rows), dtype=np.int64)
        own = self.keys(rows)
        for side, src in enumerate((rows, inv)):
            for s, sigma in enumerate(sigmas):
                moved = np.empty_like(prof[:, side])
                moved[:, sigma] = prof[:, side]
                hit = np.flatnonzero(np.all(moved == least, axis=1))
                if len(hit) == 0:
                    continue
                k = self.keys(self.conjugate_rows(src[hit], maps[s]))
                fixed[hit] += np.all(k == own[hit], axis=1)
                b = best[hit]
                less = (k[:, 2] < b[:, 2]) | (k[:, 2] == b[:, 2]) & (
                    (k[:, 1] < b[:, 1]) | (k[:, 1] == b[:, 1]) & (k[:, 0] < b[:, 0])
                )
                best[hit[less]] = k[less]
        return best, fixed

    def _canonical_all(self, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Canonical keys, and the number of transforms fixing each row's key (the stabiliser
        when the row is canonical), in blocks; the rows with several candidates last, together."""
        out = np.empty((len(rows), 3), dtype=np.uint64)
        fixed = np.empty(len(rows), dtype=np.int64)
        rest = []
        for s in range(0, len(rows), _BLOCK):
            out[s : s + _BLOCK], fixed[s : s + _BLOCK], r = self._simple_block(rows[s : s + _BLOCK])
            rest.append(r + s)
        left = np.concatenate(rest) if rest else np.zeros(0, dtype=np.int64)
        for s in range(0, len(left), _BLOCK):
            part = left[s : s + _BLOCK]
            out[part], fixed[part] = self._general(rows[part])
        return out, fixed

    def canonical_rows(self, rows: np.ndarray) -> np.ndarray:
        """Canonical key of every row."""
        return self._canonical_all(rows)[0]

    def canonical(self, keys: np.ndarray) -> np.ndarray:
        """Canonical key of each key."""
        return self.canonical_rows(self.rows(keys))

    def canonical_and_size(self, keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Canonical keys and class sizes (240 / number of transforms fixing the key); the
        sizes are those of the classes when the keys are canonical."""
        canon, fixed = self._canonical_all(self.rows(keys))
        return canon, self.symmetries // np.maximum(fixed, 1)

    # ------------------------------------------------------------------ mixed keys
    def mix(self, keys: np.ndarray) -> np.ndarray:
        keys = np.asarray(keys, dtype=np.uint64).reshape(-1, 3)
        out = keys.copy()
        out[:, 0] = mix64(keys[:, 0] ^ (keys[:, 1] * _C1 + keys[:, 2] * _C2))
        return out

    def unmix(self, vals: np.ndarray) -> np.ndarray:
        vals = np.asarray(vals, dtype=np.uint64).reshape(-1, 3)
        out = vals.copy()
        out[:, 0] = unmix64(vals[:, 0]) ^ (vals[:, 1] * _C1 + vals[:, 2] * _C2)
        return out

    # ------------------------------------------------------------------ what the checker looks up
    def neighbour_keys(self, reps: np.ndarray, gates: np.ndarray) -> np.ndarray:
        """Mixed canonical keys of ``g∘r`` and ``g∘r⁻¹`` for all gates and (mixed) representatives."""
        r = self.rows(self.unmix(reps)).astype(np.int64)
        ri = self.invert_rows(r.astype(np.uint8)).astype(np.int64)
        parts = []
        for g in self.rows(gates):
            parts.append(self.canonical_rows(g[r]))
            parts.append(self.canonical_rows(g[ri]))
        return self.mix(np.concatenate(parts)) if parts else np.zeros((0, 3), dtype=np.uint64)

    def split_keys(self, f: int, reps: np.ndarray) -> np.ndarray:
        """Mixed canonical keys of ``f∘A⁻¹`` for all 240 members ``A`` of the (mixed) classes
        ``reps``: the inverses of a class's members are its members, so these are the
        ``f∘B`` over the members ``B``."""
        fr = self.rows(self.arr([f]))[0]
        parts = [self.canonical_rows(fr[m]) for m in self.member_rows(self.rows(self.unmix(reps)))]
        return self.mix(np.concatenate(parts)) if parts else np.zeros((0, 3), dtype=np.uint64)
