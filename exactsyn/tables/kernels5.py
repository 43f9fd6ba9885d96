"""Compiled kernels (numba) for 5-line keys: canonical form, lookup, breadth-first step, scan.

Keys follow :mod:`exactsyn.tables.keys`: entry ``i`` of a 5-line permutation sits at bits
``5i .. 5i + 4`` of a 160-bit key, held in three 64-bit words (least significant first;
entries 12 and 25 straddle two words).  Inside a kernel a permutation is 32 bytes (byte
``x`` holds ``p[x]``), read as four 64-bit words where whole-permutation bit tricks pay.

Canonical form (the definition is :meth:`exactsyn.tables.keys.KeyLayout.order_key`): the
least member of the class under (line profile, key).  The profile of a line is
``(flips, spread, low, high)``, packed here into one integer ``flips·2^13 + spread·2^6 +
low·2^3 + high`` (the fields fit: 0..32, 0..80, 0..5, 0..5), so comparing profile
vectors is comparing integer vectors.  On the byte words every field is a few popcounts:
``flips`` of line ``l`` counts bit ``l`` of ``p ⊕ id`` in all bytes; ``spread`` pairs the
byte of ``x`` with that of ``x ⊕ 2^l`` by a shift of ``2^l`` bytes (lines 0–2) or by
taking another word (lines 3 and 4).  Relabelling permutes the entries of the profile
vector, so the least profile of the class is the sorted profile of ``f`` or of ``f⁻¹``
(both when they tie), and the members having it are the conjugates by the relabellings
that sort it: one per side unless profile values tie, then every order inside each run of
equal values (:data:`TIE_PERMS`).  The kernel computes the key of exactly those members
and keeps the least: about one conjugate per key on random functions and on the products
of a few gates the table build meets, where the plain definition needs all 240.  This is
the canonical-labelling idea of refining by invariants before comparing (McKay & Piperno,
"Practical graph isomorphism, II", J. Symbolic Computation 60, 2014), with invariants of
the lines chosen for reversible functions.  The class size comes the same way: the
transforms fixing a canonical key are among its own candidates.

Mixed keys (stored levels, sets, lookups): ``(m0, m1, m2)`` with ``m1 = k1``, ``m2 = k2``
and ``m0 = s(k0 ⊕ (c1·k1 + c2·k2))`` for the SplitMix64 finaliser ``s`` (Steele, Lea &
Flood, OOPSLA 2014) and two odd constants: a bijection with ``mix(0) = 0``, leading word
``m0`` uniform, ordered ``(m0, m1, m2)`` lexicographically.  The third word of a
permutation's key is never 0 (entries 26–31 hold distinct values), so a zero ``m2``
marks an empty slot of a set.  A level is a sorted ``(N, 3)`` mixed array and a bucket
index on the top bits of ``m0`` (as for one word, :mod:`exactsyn.tables.kernels`).

:func:`kernels_for` wraps everything as the :class:`~exactsyn.tables.kernel_api.TableKernels`
of the 5-line layout.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import Any

import numba as nb
import numpy as np
from llvmlite import ir
from numba.core import cgutils, types
from numba.extending import intrinsic

from exactsyn.tables.kernels import bucket_bits, mix, one_thread, unmix
from exactsyn.tables.keys import KeyLayout

U64 = np.uint64
LINES = 5
SIZE = 32
SYMMETRIES = 240
_C1 = U64(0x9E3779B97F4A7C15)
_C2 = U64(0xC2B2AE3D27D4EB4F)
_LOW = U64(0x0101010101010101)
_M8 = U64(0x00FF00FF00FF00FF)
_M16 = U64(0x0000FFFF0000FFFF)
_M32 = U64(0x00000000FFFFFFFF)
_ID = np.array([sum((8 * w + j) << (8 * j) for j in range(8)) for w in range(4)], dtype=np.uint64)
_ID0, _ID1, _ID2, _ID3 = (U64(int(v)) for v in _ID)


# ----------------------------------------------------------------------------- tables
def _lehmer(sigma: tuple[int, ...]) -> int:
    code = 0
    for i in range(LINES):
        code = code * (LINES - i) + sum(1 for j in range(i + 1, LINES) if sigma[j] < sigma[i])
    return code


def _state_maps() -> np.ndarray:
    """``PI[code(σ)][x]`` = ``π_σ(x)``: bit ``l`` of ``x`` moved to bit ``σ[l]``."""
    out = np.zeros((120, SIZE), dtype=np.uint8)
    for sigma in itertools.permutations(range(LINES)):
        row = out[_lehmer(sigma)]
        for x in range(SIZE):
            row[x] = sum(((x >> line) & 1) << sigma[line] for line in range(LINES))
    return out


def _tie_perms() -> tuple[np.ndarray, np.ndarray]:
    """For each tie mask ``t`` (bit ``i``: sorted positions ``i`` and ``i + 1`` hold equal
    profiles) the permutations of the positions that keep every run of equal values in
    place: ``PERMS[START[t]:START[t + 1]]``."""
    rows: list[tuple[int, ...]] = []
    start = [0]
    for t in range(16):
        group, groups = [0], []
        for i in range(1, LINES):
            if (t >> (i - 1)) & 1:
                group.append(i)
            else:
                groups.append(group)
                group = [i]
        groups.append(group)
        for tau in itertools.permutations(range(LINES)):
            if all(set(tau[i] for i in g) == set(g) for g in groups):
                rows.append(tau)
        start.append(len(rows))
    return np.array(rows, dtype=np.int64), np.array(start, dtype=np.int64)


def _codes() -> np.ndarray:
    """``CODE[Σ σ[l]·5^l]`` = the row of ``σ`` in :data:`PI` (−1 for non-permutations)."""
    out = np.full(LINES**LINES, -1, dtype=np.int64)
    for sigma in itertools.permutations(range(LINES)):
        out[sum(v * LINES**line for line, v in enumerate(sigma))] = _lehmer(sigma)
    return out


PI = _state_maps()
CODE = _codes()
TIE_PERMS, TIE_START = _tie_perms()


# ----------------------------------------------------------------------------- scalar pieces
def _ctpop(typingctx: Any, x: Any) -> Any:
    sig = types.int64(types.uint64)

    def codegen(context: Any, builder: Any, signature: Any, args: Any) -> Any:
        fnty = ir.FunctionType(ir.IntType(64), [ir.IntType(64)])
        fn = cgutils.get_or_insert_function(builder.module, fnty, "llvm.ctpop.i64")
        return builder.call(fn, [args[0]])

    return sig, codegen


#: Number of one bits of a ``uint64`` (LLVM's ``ctpop``: one instruction where the CPU has it).
popcount: Any = intrinsic(_ctpop)


@nb.njit(inline="always", cache=True)
def unpack(k0: np.uint64, k1: np.uint64, k2: np.uint64, out: np.ndarray) -> None:
    """Bytes ``out[0..31]`` of the key ``(k0, k1, k2)``."""
    m = U64(31)
    for i in range(12):
        out[i] = (k0 >> U64(5 * i)) & m
    out[12] = ((k0 >> U64(60)) | (k1 << U64(4))) & m
    for i in range(13, 25):
        out[i] = (k1 >> U64(5 * i - 64)) & m
    out[25] = ((k1 >> U64(61)) | (k2 << U64(3))) & m
    for i in range(26, 32):
        out[i] = (k2 >> U64(5 * i - 128)) & m


@nb.njit(inline="always", cache=True)
def pack(b: np.ndarray) -> tuple[np.uint64, np.uint64, np.uint64]:
    """Key ``(k0, k1, k2)`` of the bytes ``b[0..31]``."""
    k0 = U64(0)
    k1 = U64(0)
    k2 = U64(0)
    for i in range(12):
        k0 |= U64(b[i]) << U64(5 * i)
    v = U64(b[12])
    k0 |= v << U64(60)
    k1 |= v >> U64(4)
    for i in range(13, 25):
        k1 |= U64(b[i]) << U64(5 * i - 64)
    v = U64(b[25])
    k1 |= v << U64(61)
    k2 |= v >> U64(3)
    for i in range(26, 32):
        k2 |= U64(b[i]) << U64(5 * i - 128)
    return k0, k1, k2


@nb.njit(inline="always", cache=True)
def invert(b: np.ndarray, out: np.ndarray) -> None:
    for x in range(SIZE):
        out[b[x]] = x


@nb.njit(inline="always", cache=True)
def mix3(k0: np.uint64, k1: np.uint64, k2: np.uint64) -> np.uint64:
    """Leading word of the mixed key (the other two words are ``k1`` and ``k2``)."""
    return mix(k0 ^ (k1 * _C1 + k2 * _C2))


@nb.njit(inline="always", cache=True)
def unmix3(m0: np.uint64, k1: np.uint64, k2: np.uint64) -> np.uint64:
    """``k0`` of the mixed key ``(m0, k1, k2)``."""
    return unmix(m0) ^ (k1 * _C1 + k2 * _C2)


@nb.njit(inline="always", cache=True)
def key_less(a0: np.uint64, a1: np.uint64, a2: np.uint64, b0: np.uint64, b1: np.uint64, b2: np.uint64) -> bool:
    """Key order: ``(a0, a1, a2) < (b0, b1, b2)`` as 160-bit integers (``a2`` most significant)."""
    if a2 != b2:
        return bool(a2 < b2)
    if a1 != b1:
        return bool(a1 < b1)
    return bool(a0 < b0)


@nb.njit(inline="always", cache=True)
def mixed_less(a: np.ndarray, b0: np.uint64, b1: np.uint64, b2: np.uint64) -> bool:
    """Mixed order: the row ``a`` before ``(b0, b1, b2)`` (leading word first)."""
    if a[0] != b0:
        return bool(a[0] < b0)
    if a[1] != b1:
        return bool(a[1] < b1)
    return bool(a[2] < b2)


@nb.njit(inline="always", cache=True)
def flips(w: np.ndarray, out: np.ndarray) -> None:
    """``out[l]`` = the ``flips`` field of line ``l``, in place (the same for a permutation and
    its inverse: ``x ↦ h(x)`` pairs the inputs where ``h`` changes bit ``l`` with those where ``h⁻¹`` does)."""
    d0, d1, d2, d3 = w[0] ^ _ID0, w[1] ^ _ID1, w[2] ^ _ID2, w[3] ^ _ID3
    for line in range(LINES):
        m = _LOW << U64(line)
        out[line] = (popcount(d0 & m) + popcount(d1 & m) + popcount(d2 & m) + popcount(d3 & m)) << 13


@nb.njit(inline="always", cache=True)
def profile(w: np.ndarray, b: np.ndarray, base: np.ndarray, out: np.ndarray) -> None:
    """``out[l]`` = packed profile of line ``l`` of the permutation with bytes ``b`` (words
    ``w``), given its ``flips`` fields in ``base``."""
    f0, f1, f2, f3 = w[0], w[1], w[2], w[3]
    s8 = U64(8)
    s16 = U64(16)
    s32 = U64(32)
    sp0 = (
        popcount((f0 ^ (f0 >> s8)) & _M8)
        + popcount((f1 ^ (f1 >> s8)) & _M8)
        + popcount((f2 ^ (f2 >> s8)) & _M8)
        + popcount((f3 ^ (f3 >> s8)) & _M8)
    )
    sp1 = (
        popcount((f0 ^ (f0 >> s16)) & _M16)
        + popcount((f1 ^ (f1 >> s16)) & _M16)
        + popcount((f2 ^ (f2 >> s16)) & _M16)
        + popcount((f3 ^ (f3 >> s16)) & _M16)
    )
    sp2 = (
        popcount((f0 ^ (f0 >> s32)) & _M32)
        + popcount((f1 ^ (f1 >> s32)) & _M32)
        + popcount((f2 ^ (f2 >> s32)) & _M32)
        + popcount((f3 ^ (f3 >> s32)) & _M32)
    )
    sp3 = popcount(f0 ^ f1) + popcount(f2 ^ f3)
    sp4 = popcount(f0 ^ f2) + popcount(f1 ^ f3)
    out[0] = base[0] | (sp0 << 6) | (popcount(U64(b[1])) << 3) | popcount(U64(b[30]))
    out[1] = base[1] | (sp1 << 6) | (popcount(U64(b[2])) << 3) | popcount(U64(b[29]))
    out[2] = base[2] | (sp2 << 6) | (popcount(U64(b[4])) << 3) | popcount(U64(b[27]))
    out[3] = base[3] | (sp3 << 6) | (popcount(U64(b[8])) << 3) | popcount(U64(b[23]))
    out[4] = base[4] | (sp4 << 6) | (popcount(U64(b[16])) << 3) | popcount(U64(b[15]))


@nb.njit(inline="always", cache=True)
def sort_lines(prof: np.ndarray, vals: np.ndarray, order: np.ndarray) -> int:
    """Sort the lines by profile: ``vals`` ascending, ``order[i]`` the line at position ``i``;
    returns the tie mask (bit ``i``: positions ``i`` and ``i + 1`` tie).

    A sorting network of nine comparators for five values (Knuth, TAOCP 3, §5.3.4), on
    ``profile·8 + line`` (distinct values), without branches."""
    v0 = (prof[0] << 3) | 0
    v1 = (prof[1] << 3) | 1
    v2 = (prof[2] << 3) | 2
    v3 = (prof[3] << 3) | 3
    v4 = (prof[4] << 3) | 4
    v0, v1 = min(v0, v1), max(v0, v1)
    v3, v4 = min(v3, v4), max(v3, v4)
    v2, v4 = min(v2, v4), max(v2, v4)
    v2, v3 = min(v2, v3), max(v2, v3)
    v0, v3 = min(v0, v3), max(v0, v3)
    v0, v2 = min(v0, v2), max(v0, v2)
    v1, v4 = min(v1, v4), max(v1, v4)
    v1, v3 = min(v1, v3), max(v1, v3)
    v1, v2 = min(v1, v2), max(v1, v2)
    order[0], order[1], order[2], order[3], order[4] = v0 & 7, v1 & 7, v2 & 7, v3 & 7, v4 & 7
    vals[0], vals[1], vals[2], vals[3], vals[4] = v0 >> 3, v1 >> 3, v2 >> 3, v3 >> 3, v4 >> 3
    return (
        int(vals[0] == vals[1]) | (int(vals[1] == vals[2]) << 1) | (int(vals[2] == vals[3]) << 2)
        | (int(vals[3] == vals[4]) << 3)
    )  # fmt: skip


@nb.njit(inline="always", cache=True)
def conjugate_key(
    b: np.ndarray, order: np.ndarray, tau: np.ndarray, sigma: np.ndarray, out: np.ndarray
) -> tuple[np.uint64, np.uint64, np.uint64]:
    """Key of ``π_σ∘h∘π_σ⁻¹`` for ``σ[order[i]] = tau[i]`` (``h`` has bytes ``b``)."""
    for i in range(LINES):
        sigma[order[i]] = tau[i]
    pi = PI[CODE[sigma[0] + 5 * sigma[1] + 25 * sigma[2] + 125 * sigma[3] + 625 * sigma[4]]]
    for x in range(SIZE):
        out[pi[x]] = pi[b[x]]
    return pack(out)


@nb.njit(inline="always", cache=True)
def sorted_profiles(
    hw: np.ndarray, hb: np.ndarray, iw: np.ndarray, ib: np.ndarray, prof: np.ndarray, vals: np.ndarray,
    order: np.ndarray,
) -> tuple[int, int, int]:  # fmt: skip
    """The sorted line profiles of ``h`` (``vals[0]``, lines in ``order[0]``) and of ``h⁻¹``
    (``vals[1]``, ``order[1]``), their tie masks, and the side holding the least of the two
    vectors (0: ``h``, 1: ``h⁻¹``, 2: both equal).  The class invariant behind the canonical
    form (:func:`canon_core`) and the scan filter (:mod:`exactsyn.tables.filter5`)."""
    flips(hw, prof[1])
    profile(hw, hb, prof[1], prof[0])
    profile(iw, ib, prof[1], prof[1])
    ties0 = sort_lines(prof[0], vals[0], order[0])
    ties1 = sort_lines(prof[1], vals[1], order[1])
    side = 0
    for i in range(LINES):
        if vals[0, i] != vals[1, i]:
            side = 0 if vals[0, i] < vals[1, i] else 1
            break
    else:
        side = 2
    return ties0, ties1, side


@nb.njit(inline="always", cache=True)
def compose_lane(
    f: np.ndarray, fi: np.ndarray, ab: np.ndarray, qb: np.ndarray, e: int, hb: np.ndarray, ib: np.ndarray
) -> None:
    """Lane ``e`` of a scan: ``h = f∘a`` (``e = 0``) or ``f∘a⁻¹`` (``e = 1``) into ``hb``, its
    inverse into ``ib`` (``a`` in ``ab``, ``a⁻¹`` in ``qb``, ``f⁻¹`` in ``fi``)."""
    src = ab if e == 0 else qb
    back = qb if e == 0 else ab
    for x in range(SIZE):
        hb[x] = f[src[x]]
        ib[x] = back[fi[x]]


@nb.njit(inline="always", cache=True)
def canon_core(
    hw: np.ndarray,
    hb: np.ndarray,
    iw: np.ndarray,
    ib: np.ndarray,
    prof: np.ndarray,
    vals: np.ndarray,
    order: np.ndarray,
    sigma: np.ndarray,
    conj: np.ndarray,
    t0: np.uint64,
    t1: np.uint64,
    t2: np.uint64,
) -> tuple[np.uint64, np.uint64, np.uint64, int]:
    """Canonical key of ``h`` (bytes ``hb``, words ``hw``; its inverse in ``ib``, ``iw``) and
    the number of candidate transforms giving the key ``(t0, t1, t2)``.

    Scratch: ``prof (2, 5)``, ``vals (2, 5)``, ``order (2, 5)`` int64, ``sigma (5,)`` int64,
    ``conj (32,)`` uint8."""
    ties0, ties1, side = sorted_profiles(hw, hb, iw, ib, prof, vals, order)
    best0 = U64(0xFFFFFFFFFFFFFFFF)
    best1 = best0
    best2 = best0
    hits = 0
    for s in range(2):
        if side != 2 and side != s:
            continue
        ties = ties0 if s == 0 else ties1
        src = hb if s == 0 else ib
        for r in range(TIE_START[ties], TIE_START[ties + 1]):
            k0, k1, k2 = conjugate_key(src, order[s], TIE_PERMS[r], sigma, conj)
            if k0 == t0 and k1 == t1 and k2 == t2:
                hits += 1
            if key_less(k0, k1, k2, best0, best1, best2):
                best0, best1, best2 = k0, k1, k2
    return best0, best1, best2, hits


# ----------------------------------------------------------------------------- per-thread buffers
@nb.njit(inline="always", cache=True)
def new_words() -> np.ndarray:
    return np.zeros(4, dtype=np.uint64)


@nb.njit(inline="always", cache=True)
def canon_of_bytes(
    hw: np.ndarray, hb: np.ndarray, iw: np.ndarray, ib: np.ndarray, work: np.ndarray, sigma: np.ndarray,
    conj: np.ndarray,
) -> tuple[np.uint64, np.uint64, np.uint64]:  # fmt: skip
    """Canonical key of the permutation in ``hb`` whose inverse is in ``ib``; ``work`` is (6, 5) int64."""
    k0, k1, k2, _ = canon_core(hw, hb, iw, ib, work[0:2], work[2:4], work[4:6], sigma, conj, U64(0), U64(0), U64(0))
    return k0, k1, k2


# ----------------------------------------------------------------------------- array kernels
_CHUNKS = 64


@nb.njit(parallel=True, cache=True)
def canon_many(keys: np.ndarray) -> np.ndarray:
    n = keys.shape[0]
    out = np.empty_like(keys)
    step = (n + _CHUNKS - 1) // _CHUNKS
    for t in nb.prange(_CHUNKS):
        hw, iw = new_words(), new_words()
        hb, ib = hw.view(np.uint8), iw.view(np.uint8)
        work = np.empty((6, LINES), dtype=np.int64)
        sigma = np.empty(LINES, dtype=np.int64)
        conj = np.empty(SIZE, dtype=np.uint8)
        for i in range(t * step, min(n, (t + 1) * step)):
            unpack(keys[i, 0], keys[i, 1], keys[i, 2], hb)
            invert(hb, ib)
            out[i, 0], out[i, 1], out[i, 2] = canon_of_bytes(hw, hb, iw, ib, work, sigma, conj)
    return out


@nb.njit(parallel=True, cache=True)
def mix_many(keys: np.ndarray) -> np.ndarray:
    out = np.empty_like(keys)
    for i in nb.prange(keys.shape[0]):
        out[i, 0] = mix3(keys[i, 0], keys[i, 1], keys[i, 2])
        out[i, 1] = keys[i, 1]
        out[i, 2] = keys[i, 2]
    return out


@nb.njit(parallel=True, cache=True)
def unmix_many(vals: np.ndarray) -> np.ndarray:
    out = np.empty_like(vals)
    for i in nb.prange(vals.shape[0]):
        out[i, 0] = unmix3(vals[i, 0], vals[i, 1], vals[i, 2])
        out[i, 1] = vals[i, 1]
        out[i, 2] = vals[i, 2]
    return out


@nb.njit(parallel=True, cache=True)
def class_size_counts(vals: np.ndarray) -> np.ndarray:
    """Per chunk of mixed canonical keys, how many classes have each size (``(chunks, 241)``)."""
    n = vals.shape[0]
    step = (n + _CHUNKS - 1) // _CHUNKS
    parts = np.zeros((_CHUNKS, SYMMETRIES + 1), dtype=np.int64)
    for t in nb.prange(_CHUNKS):
        hw, iw = new_words(), new_words()
        hb, ib = hw.view(np.uint8), iw.view(np.uint8)
        work = np.empty((6, LINES), dtype=np.int64)
        sigma = np.empty(LINES, dtype=np.int64)
        conj = np.empty(SIZE, dtype=np.uint8)
        for i in range(t * step, min(n, (t + 1) * step)):
            k1, k2 = vals[i, 1], vals[i, 2]
            k0 = unmix3(vals[i, 0], k1, k2)
            unpack(k0, k1, k2, hb)
            invert(hb, ib)
            _, _, _, fixed = canon_core(hw, hb, iw, ib, work[0:2], work[2:4], work[4:6], sigma, conj, k0, k1, k2)
            parts[t, SYMMETRIES // max(fixed, 1)] += 1
    return parts


# ----------------------------------------------------------------------------- levels and lookup
@nb.njit(cache=True)
def _fill_index(vals: np.ndarray, bits: int, index: np.ndarray) -> None:
    shift = U64(64 - bits)
    pos = 0
    n = vals.shape[0]
    for q in range(len(index) - 1):
        while pos < n and (vals[pos, 0] >> shift) < U64(q):
            pos += 1
        index[q] = pos
    index[len(index) - 1] = n


def make_index(vals: np.ndarray) -> tuple[np.ndarray, int]:
    """Bucket index of a sorted mixed level on the top bits of its leading word, and its shift."""
    bits = bucket_bits(len(vals))
    dtype = np.uint32 if len(vals) < (1 << 32) else np.uint64
    index = np.zeros((1 << bits) + 1, dtype=dtype)
    _fill_index(vals, bits, index)
    return index, 64 - bits


@nb.njit(inline="always", cache=True)
def find(vals: np.ndarray, lo: np.int64, hi: np.int64, m0: np.uint64, m1: np.uint64, m2: np.uint64) -> bool:
    """Is ``(m0, m1, m2)`` among the sorted rows ``vals[lo:hi]`` (one bucket)?"""
    while lo < hi:
        mid = (lo + hi) >> 1
        row = vals[mid]
        if row[0] == m0 and row[1] == m1 and row[2] == m2:
            return True
        if mixed_less(row, m0, m1, m2):
            lo = mid + 1
        else:
            hi = mid
    return False


@nb.njit(parallel=True, cache=True)
def contains_many(vals: np.ndarray, index: np.ndarray, shift: int, mixed: np.ndarray) -> np.ndarray:
    out = np.zeros(mixed.shape[0], dtype=np.bool_)
    if vals.shape[0] == 0:
        return out
    for i in nb.prange(mixed.shape[0]):
        m0 = mixed[i, 0]
        q = m0 >> U64(shift)
        out[i] = find(vals, np.int64(index[q]), np.int64(index[q + U64(1)]), m0, mixed[i, 1], mixed[i, 2])
    return out


# ----------------------------------------------------------------------------- breadth-first step
@nb.njit(parallel=True, cache=True)
def expand(reps: np.ndarray, gb: np.ndarray, gib: np.ndarray, out: np.ndarray) -> None:
    """Mixed canonical keys of ``g_j∘r`` (``out[i·2G + j]``) and ``g_j∘r⁻¹`` (``out[i·2G + G + j]``)
    for the mixed classes ``r = reps[i]``; ``gb``/``gib`` are the gates' bytes and their inverses'.

    The neighbours of the class of ``r`` are the classes of ``g∘r`` and ``r∘g`` for every
    gate ``g``; the class of ``r∘g`` is that of its inverse ``g⁻¹∘r⁻¹`` (a gate of a
    table library is its own inverse, :mod:`exactsyn.tables.gate_keys`)."""
    ng = gb.shape[0]
    n = reps.shape[0]
    step = (n + _CHUNKS - 1) // _CHUNKS
    for t in nb.prange(_CHUNKS):
        rw, qw, hw, iw = new_words(), new_words(), new_words(), new_words()
        rb, qb, hb, ib = rw.view(np.uint8), qw.view(np.uint8), hw.view(np.uint8), iw.view(np.uint8)
        work = np.empty((6, LINES), dtype=np.int64)
        sigma = np.empty(LINES, dtype=np.int64)
        conj = np.empty(SIZE, dtype=np.uint8)
        for i in range(t * step, min(n, (t + 1) * step)):
            k1, k2 = reps[i, 1], reps[i, 2]
            unpack(unmix3(reps[i, 0], k1, k2), k1, k2, rb)
            invert(rb, qb)
            base = i * 2 * ng
            for side in range(2):
                src = rb if side == 0 else qb  # r, then r⁻¹
                back = qb if side == 0 else rb  # its inverse
                for j in range(ng):
                    g, gi = gb[j], gib[j]
                    for x in range(SIZE):
                        hb[x] = g[src[x]]  # g∘s
                        ib[x] = back[gi[x]]  # (g∘s)⁻¹ = s⁻¹∘g⁻¹
                    c0, c1, c2 = canon_of_bytes(hw, hb, iw, ib, work, sigma, conj)
                    row = base + side * ng + j
                    out[row, 0] = mix3(c0, c1, c2)
                    out[row, 1] = c1
                    out[row, 2] = c2


# ----------------------------------------------------------------------------- set of a new level
# As for one word (exactsyn.tables.kernels): an open-addressing set in regions chosen by the
# top bits of the leading word, home slots monotone in it; a slot is three words.
@nb.njit(inline="always", cache=True)
def _region_of(c: np.uint64, skip: int, region_bits: int) -> np.int64:
    return np.int64((c << U64(skip)) >> U64(64 - region_bits))


@nb.njit(inline="always", cache=True)
def _home(c: np.uint64, skip: int, region_bits: int, width: int) -> np.int64:
    return np.int64((((c << U64(skip + region_bits)) >> U64(32)) * U64(width)) >> U64(32))


@nb.njit(parallel=True, cache=True)
def partition(
    cand: np.ndarray, lo: np.uint64, hi: np.uint64, skip: int, region_bits: int, out: np.ndarray
) -> np.ndarray:
    """Copy the rows whose leading word lies in ``lo..hi`` into ``out`` grouped by region; the offsets."""
    regions = 1 << region_bits
    n = cand.shape[0]
    step = (n + _CHUNKS - 1) // _CHUNKS
    hist = np.zeros((_CHUNKS, regions), dtype=np.int64)
    for t in nb.prange(_CHUNKS):
        for i in range(t * step, min(n, (t + 1) * step)):
            c = cand[i, 0]
            if lo <= c <= hi:
                hist[t, _region_of(c, skip, region_bits)] += 1
    pos = np.empty((_CHUNKS, regions), dtype=np.int64)
    offsets = np.empty(regions + 1, dtype=np.int64)
    total = 0
    for q in range(regions):
        offsets[q] = total
        for t in range(_CHUNKS):
            pos[t, q] = total
            total += hist[t, q]
    offsets[regions] = total
    for t in nb.prange(_CHUNKS):
        for i in range(t * step, min(n, (t + 1) * step)):
            c = cand[i, 0]
            if lo <= c <= hi:
                r = _region_of(c, skip, region_bits)
                p = pos[t, r]
                out[p, 0] = c
                out[p, 1] = cand[i, 1]
                out[p, 2] = cand[i, 2]
                pos[t, r] = p + 1
    return offsets


@nb.njit(inline="always", cache=True)
def _put(row: np.ndarray, c0: np.uint64, c1: np.uint64, c2: np.uint64, h: np.int64) -> int:
    """Insert probing from ``h``: 1 if new, 0 if present, −1 if the row is exhausted."""
    cap = row.shape[0]
    while h < cap:
        if row[h, 2] == U64(0):
            row[h, 0] = c0
            row[h, 1] = c1
            row[h, 2] = c2
            return 1
        if row[h, 0] == c0 and row[h, 1] == c1 and row[h, 2] == c2:
            return 0
        h += 1
    return -1


@nb.njit(parallel=True, cache=True)
def insert(slots: np.ndarray, skip: int, region_bits: int, width: int, part: np.ndarray, offsets: np.ndarray) -> int:
    regions = slots.shape[0]
    added = np.zeros(regions, dtype=np.int64)
    failed = np.zeros(regions, dtype=np.bool_)
    for q in nb.prange(regions):
        row = slots[q]
        for i in range(offsets[q], offsets[q + 1]):
            c0 = part[i, 0]
            r = _put(row, c0, part[i, 1], part[i, 2], _home(c0, skip, region_bits, width))
            if r < 0:
                failed[q] = True
                break
            added[q] += r
    if failed.any():
        return -1
    return added.sum()


@nb.njit(parallel=True, cache=True)
def reinsert(old: np.ndarray, slots: np.ndarray, skip: int, region_bits: int, width: int) -> bool:
    regions = slots.shape[0]
    failed = np.zeros(regions, dtype=np.bool_)
    for q in nb.prange(regions):
        row = slots[q]
        for i in range(old.shape[1]):
            if old[q, i, 2] != U64(0):
                c0 = old[q, i, 0]
                if _put(row, c0, old[q, i, 1], old[q, i, 2], _home(c0, skip, region_bits, width)) < 0:
                    failed[q] = True
                    break
    return not failed.any()


@nb.njit(inline="always", cache=True)
def _lower_bound(a: np.ndarray, v0: np.uint64, v1: np.uint64, v2: np.uint64) -> int:
    lo = 0
    hi = a.shape[0]
    while lo < hi:
        mid = (lo + hi) >> 1
        if mixed_less(a[mid], v0, v1, v2):
            lo = mid + 1
        else:
            hi = mid
    return lo


@nb.njit(inline="always", cache=True)
def _drop_sorted(row: np.ndarray, n: int, other: np.ndarray) -> int:
    """Remove from the sorted ``row[:n]`` every value of the sorted ``other``; zero the tail."""
    if n == 0:
        return 0
    k = _lower_bound(other, row[0, 0], row[0, 1], row[0, 2])
    m = other.shape[0]
    out = 0
    for i in range(n):
        v0, v1, v2 = row[i, 0], row[i, 1], row[i, 2]
        while k < m and mixed_less(other[k], v0, v1, v2):
            k += 1
        if k < m and other[k, 0] == v0 and other[k, 1] == v1 and other[k, 2] == v2:
            continue
        row[out, 0] = v0
        row[out, 1] = v1
        row[out, 2] = v2
        out += 1
    for i in range(out, n):
        row[i, 0] = U64(0)
        row[i, 1] = U64(0)
        row[i, 2] = U64(0)
    return out


@nb.njit(parallel=True, cache=True)
def finish_regions(slots: np.ndarray, skip: int, region_bits: int, cur: np.ndarray, prev: np.ndarray) -> np.ndarray:
    """Sort every region's rows to its front and drop those in ``cur`` or ``prev``; rows left per region."""
    regions = slots.shape[0]
    counts = np.zeros(regions, dtype=np.int64)
    for q in nb.prange(regions):
        row = slots[q]
        n = 0
        for i in range(row.shape[0]):
            if row[i, 2] != U64(0):
                v0, v1, v2 = row[i, 0], row[i, 1], row[i, 2]
                row[i, 0] = U64(0)
                row[i, 1] = U64(0)
                row[i, 2] = U64(0)
                j = n
                while j > 0 and not mixed_less(row[j - 1], v0, v1, v2):
                    row[j, 0] = row[j - 1, 0]
                    row[j, 1] = row[j - 1, 1]
                    row[j, 2] = row[j - 1, 2]
                    j -= 1
                row[j, 0] = v0
                row[j, 1] = v1
                row[j, 2] = v2
                n += 1
        n = _drop_sorted(row, n, cur)
        n = _drop_sorted(row, n, prev)
        counts[q] = n
    return counts


# ----------------------------------------------------------------------------- meet in the middle
@nb.njit(parallel=True, cache=True)
def scan(
    reps: np.ndarray,
    start: int,
    stop: int,
    fb: np.ndarray,
    fib: np.ndarray,
    vals: np.ndarray,
    index: np.ndarray,
    shift: int,
    out: np.ndarray,
) -> None:
    """For each mixed class ``a = reps[i]`` (``start ≤ i < stop``) the first lane ``2c + e``
    (``e = 1`` for ``a⁻¹``) with ``canon(f_c∘a^±1)`` in the level ``vals``, or −1; ``fb``
    holds the conjugates ``f_c`` as bytes, ``fib`` their inverses.

    All lanes of a representative are computed first, then their buckets are read, then
    searched, so that the memory accesses of different lanes overlap."""
    nf = fb.shape[0]
    lanes = 2 * nf
    n = stop - start
    step = (n + _CHUNKS - 1) // _CHUNKS
    nv = vals.shape[0]
    for t in nb.prange(_CHUNKS):
        aw, qw, hw, iw = new_words(), new_words(), new_words(), new_words()
        ab, qb, hb, ib = aw.view(np.uint8), qw.view(np.uint8), hw.view(np.uint8), iw.view(np.uint8)
        work = np.empty((6, LINES), dtype=np.int64)
        sigma = np.empty(LINES, dtype=np.int64)
        conj = np.empty(SIZE, dtype=np.uint8)
        keys = np.empty((lanes, 3), dtype=np.uint64)
        lo = np.empty(lanes, dtype=np.int64)
        hi = np.empty(lanes, dtype=np.int64)
        first = np.empty(lanes, dtype=np.uint64)
        for i in range(start + t * step, min(stop, start + (t + 1) * step)):
            k1, k2 = reps[i, 1], reps[i, 2]
            unpack(unmix3(reps[i, 0], k1, k2), k1, k2, ab)
            invert(ab, qb)
            for c in range(nf):
                for e in range(2):  # f_c∘a, then f_c∘a⁻¹
                    compose_lane(fb[c], fib[c], ab, qb, e, hb, ib)
                    c0, c1, c2 = canon_of_bytes(hw, hb, iw, ib, work, sigma, conj)
                    lane = 2 * c + e
                    keys[lane, 0] = mix3(c0, c1, c2)
                    keys[lane, 1] = c1
                    keys[lane, 2] = c2
            res = -1
            if nv:
                # independent loads first (bucket bounds, then each bucket's first row), so
                # that the cache misses of all lanes are in flight together
                for lane in range(lanes):
                    q = keys[lane, 0] >> U64(shift)
                    lo[lane] = np.int64(index[q])
                    hi[lane] = np.int64(index[q + U64(1)])
                for lane in range(lanes):
                    first[lane] = vals[min(lo[lane], nv - 1), 0]
                for lane in range(lanes):
                    if first[lane] > keys[lane, 0]:
                        continue
                    if find(vals, lo[lane], hi[lane], keys[lane, 0], keys[lane, 1], keys[lane, 2]):
                        res = lane
                        break
            out[i - start] = res


# ----------------------------------------------------------------------------- the layout's kernel object
def as_bytes(keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``(bytes, inverse bytes)``, each ``(N, 32)`` uint8, of a 5-line key array."""
    keys = np.ascontiguousarray(keys, dtype=np.uint64).reshape(-1, 3)
    b = np.empty((len(keys), SIZE), dtype=np.uint8)
    m = np.uint64(31)
    for i in range(SIZE):
        word, shift = divmod(5 * i, 64)
        v = keys[:, word] >> np.uint64(shift)
        if shift > 59:
            v = v | (keys[:, word + 1] << np.uint64(64 - shift))
        b[:, i] = v & m
    inv = np.empty_like(b)
    inv[np.arange(len(b))[:, None], b] = np.arange(SIZE, dtype=np.uint8)
    return b, inv


def _rows(a: np.ndarray) -> np.ndarray:
    return np.ascontiguousarray(a, dtype=np.uint64).reshape(-1, 3)


@dataclass(frozen=True, eq=False)
class FiveKernels:
    """:class:`~exactsyn.tables.kernel_api.TableKernels` of the 5-line layout (three words per key)."""

    layout: KeyLayout
    mix_name: str = "splitmix64-finaliser of k0 xor (k1*9e3779b97f4a7c15 + k2*c2b2ae3d27d4eb4f), k1, k2"

    def canon_many(self, keys: np.ndarray) -> np.ndarray:
        return one_thread(len(keys), canon_many, _rows(keys))  # type: ignore[no-any-return]

    def mix_many(self, keys: np.ndarray) -> np.ndarray:
        return one_thread(len(keys), mix_many, _rows(keys))  # type: ignore[no-any-return]

    def unmix_many(self, mixed: np.ndarray) -> np.ndarray:
        return one_thread(len(mixed), unmix_many, _rows(mixed))  # type: ignore[no-any-return]

    def class_size_histogram(self, mixed: np.ndarray) -> np.ndarray:
        if len(mixed) == 0:
            return np.zeros(SYMMETRIES + 1, dtype=np.int64)
        return class_size_counts(_rows(mixed)).sum(axis=0)  # type: ignore[no-any-return]

    def make_index(self, mixed: np.ndarray) -> tuple[np.ndarray, int]:
        return make_index(_rows(mixed))

    def contains_many(self, vals: np.ndarray, index: np.ndarray, shift: int, mixed: np.ndarray) -> np.ndarray:
        return one_thread(len(mixed), contains_many, vals.reshape(-1, 3), index, shift, _rows(mixed))  # type: ignore[no-any-return]

    def expand(self, reps: np.ndarray, gates: np.ndarray, out: np.ndarray) -> None:
        gb, gib = as_bytes(gates)
        expand(_rows(reps), gb, gib, out)

    def new_set(self, regions: int, slots: int) -> np.ndarray:
        return np.zeros((regions, slots, 3), dtype=np.uint64)

    def partition(self, cand: np.ndarray, lo: int, hi: int, skip: int, region_bits: int, out: np.ndarray) -> np.ndarray:
        return partition(cand, U64(lo), U64(hi), skip, region_bits, out)  # type: ignore[no-any-return]

    def insert(
        self, slots: np.ndarray, skip: int, region_bits: int, width: int, part: np.ndarray, offsets: np.ndarray
    ) -> int:
        return int(insert(slots, skip, region_bits, width, part, offsets))

    def reinsert(self, old: np.ndarray, new: np.ndarray, skip: int, region_bits: int, width: int) -> bool:
        return bool(reinsert(old, new, skip, region_bits, width))

    def finish_regions(
        self, slots: np.ndarray, skip: int, region_bits: int, cur: np.ndarray, prev: np.ndarray
    ) -> np.ndarray:
        return finish_regions(slots, skip, region_bits, cur.reshape(-1, 3), prev.reshape(-1, 3))  # type: ignore[no-any-return]

    def scan(
        self,
        reps: np.ndarray,
        start: int,
        stop: int,
        fconj: np.ndarray,
        vals: np.ndarray,
        index: np.ndarray,
        shift: int,
        out: np.ndarray,
        filtered: bool = False,
    ) -> None:
        fb, fib = as_bytes(fconj)
        if filtered:
            from exactsyn.tables import filter5  # imports this module

            bits, bshift = filter5.filter_for(vals)
            filter5.scan_filtered(reps, start, stop, fb, fib, vals.reshape(-1, 3), index, shift, bits, bshift, out)
            return
        scan(reps, start, stop, fb, fib, vals.reshape(-1, 3), index, shift, out)


def kernels_for(layout: KeyLayout) -> FiveKernels:
    """The kernels of the 5-line layout."""
    if layout.lines != LINES:
        raise ValueError("exactsyn.tables.kernels5 is for 5-line keys")
    return FiveKernels(layout)
