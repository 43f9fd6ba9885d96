"""A profile filter for long 5-line scans: most lanes never need a canonical key.

The meet-in-the-middle scan (:func:`exactsyn.tables.kernels5.scan`) asks, for every lane
``h = f_c∘a^±1``, whether ``canon(h)`` lies in the top level of the table.  On the depth-6
5-line table that costs, per lane, the canonical key and two dependent random reads in a
3.9 GiB level: about 170 ns of one core, of which the reads are more than half.  Almost
every lane of a deep scan is far from the level (a function 11 or 12 gates away from the
identity looks nothing like one of 6), and a cheap class invariant says so.

**Invariant.**  The sorted line-profile vectors of ``h`` and of ``h⁻¹`` (the profile of
:mod:`exactsyn.tables.kernels5`: flips, spread, low and high of each line), as an
unordered pair.  Relabelling the lines by ``σ`` permutes the entries of both vectors by
``σ``, so their sorted forms do not change; inverting swaps the two vectors, and the pair
is taken least vector first.  So every member of a class has the invariant of the class,
and a lane whose invariant no class of the level has is not in the level.  On the depth-6
mct table the invariant separates 160.4 million of the 165.3 million level-6 classes
(measured), so it is nearly a canonical form itself, at the price of two profiles.

**Filter.**  A bit array of ``2^b`` bits (a Bloom filter with one hash function: Bloom,
"Space/time trade-offs in hash coding with allowable errors", CACM 13(7), 1970): bit
``hash(invariant) >> (64 − b)`` is set for every class of the level.  A lane whose bit is
clear is skipped; a lane whose bit is set takes the exact test of the plain scan (its
canonical key looked up in the level), so the filter can only save work, never change an
answer: the filtered scan returns exactly the lanes of the plain one (tested).  With
``b = 32`` (512 MiB) and 1.65·10^8 classes about 4 % of the bits are set, so about 4 % of
the far lanes take the exact test.

Building the filter reads the level once (a profile per class, on every kernel thread)
and sets its bits; a process builds it the first time it scans against that level
(:func:`filter_for`) and keeps it while the level array lives.
"""

from __future__ import annotations

import mmap
import weakref
from typing import Any

import numba as nb
import numpy as np

from exactsyn.tables.kernels import mix
from exactsyn.tables.kernels5 import (
    LINES,
    SIZE,
    canon_of_bytes,
    compose_lane,
    find,
    invert,
    mix3,
    new_words,
    sorted_profiles,
    unmix3,
    unpack,
)

U64 = np.uint64
#: Bits of the largest filter (2^32 bits = 512 MiB).
MAX_BITS = 32
#: Filter bits beyond ``log2(classes)``: about 1/32 of the bits set.
SPARE_BITS = 5
_CHUNKS = 64  # work items per parallel loop (as in kernels5)
_BLOCK = 1 << 22  # classes per block while building (bounds the temporary hash array)


@nb.njit(inline="always", cache=True)
def invariant_hash(hw: np.ndarray, hb: np.ndarray, iw: np.ndarray, ib: np.ndarray, work: np.ndarray) -> np.uint64:
    """64-bit hash of the class invariant of ``h`` (bytes ``hb``, words ``hw``; its inverse in
    ``ib``, ``iw``); ``work`` is (6, 5) int64 scratch."""
    vals = work[2:4]
    _, _, side = sorted_profiles(hw, hb, iw, ib, work[0:2], vals, work[4:6])
    s = 0 if side == 2 else side
    h = U64(0x243F6A8885A308D3)
    for i in range(LINES):
        h = mix(h ^ U64(vals[s, i]))
    for i in range(LINES):
        h = mix(h ^ (U64(vals[1 - s, i]) << U64(24)))
    return h


@nb.njit(parallel=True, cache=True)
def _hashes(vals: np.ndarray, start: int, stop: int, out: np.ndarray) -> None:
    """``out[i − start]`` = invariant hash of the mixed class ``vals[i]``."""
    n = stop - start
    step = (n + _CHUNKS - 1) // _CHUNKS
    for t in nb.prange(_CHUNKS):
        hw, iw = new_words(), new_words()
        hb, ib = hw.view(np.uint8), iw.view(np.uint8)
        work = np.empty((6, LINES), dtype=np.int64)
        for i in range(start + t * step, min(stop, start + (t + 1) * step)):
            k1, k2 = vals[i, 1], vals[i, 2]
            unpack(unmix3(vals[i, 0], k1, k2), k1, k2, hb)
            invert(hb, ib)
            out[i - start] = invariant_hash(hw, hb, iw, ib, work)


@nb.njit(cache=True)
def _set_bits(hashes: np.ndarray, shift: int, bits: np.ndarray) -> None:
    s = U64(shift)
    for h in hashes:
        j = h >> s
        bits[j >> U64(6)] |= U64(1) << (j & U64(63))


def _zeroed_words(words: int) -> np.ndarray:
    """``words`` zero uint64s, on huge pages where the kernel offers them (fewer TLB misses)."""
    nbytes = words * 8
    if nbytes < (1 << 21) or not hasattr(mmap, "MADV_HUGEPAGE"):
        return np.zeros(words, dtype=np.uint64)
    region = mmap.mmap(-1, nbytes, flags=mmap.MAP_PRIVATE | mmap.MAP_ANONYMOUS)
    try:
        region.madvise(mmap.MADV_HUGEPAGE)
    except OSError:
        pass
    return np.frombuffer(region, dtype=np.uint64)  # anonymous pages are zero


def filter_bits(classes: int) -> int:
    """Bits ``b`` of the filter of a level with ``classes`` classes."""
    return max(6, min(MAX_BITS, int(max(classes, 1) - 1).bit_length() + SPARE_BITS))


def build(vals: np.ndarray) -> tuple[np.ndarray, int]:
    """The filter of a sorted mixed level ``vals`` ((N, 3) uint64): ``(bit words, shift)``."""
    vals = vals.reshape(-1, 3)
    b = filter_bits(len(vals))
    bits = _zeroed_words((1 << b) >> 6)
    tmp = np.empty(min(_BLOCK, max(1, len(vals))), dtype=np.uint64)
    for lo in range(0, len(vals), _BLOCK):
        hi = min(len(vals), lo + _BLOCK)
        _hashes(vals, lo, hi, tmp)
        _set_bits(tmp[: hi - lo], 64 - b, bits)
    return bits, 64 - b


_FILTERS: dict[int, tuple[Any, tuple[np.ndarray, int]]] = {}


def filter_for(vals: np.ndarray) -> tuple[np.ndarray, int]:
    """The filter of the level array ``vals``, built on first use and kept while ``vals`` lives
    (held by a weak reference, so a new array at the same address gets its own)."""
    key = id(vals)
    got = _FILTERS.get(key)
    if got is not None and got[0]() is vals:
        return got[1]
    made = build(vals)

    def forget(_ref: Any) -> None:
        _FILTERS.pop(key, None)

    _FILTERS[key] = (weakref.ref(vals, forget), made)
    return made


@nb.njit(parallel=True, cache=True)
def scan_filtered(
    reps: np.ndarray,
    start: int,
    stop: int,
    fb: np.ndarray,
    fib: np.ndarray,
    vals: np.ndarray,
    index: np.ndarray,
    shift: int,
    bits: np.ndarray,
    bshift: int,
    out: np.ndarray,
) -> None:
    """:func:`exactsyn.tables.kernels5.scan` with the filter ``(bits, bshift)`` of ``vals``:
    the same ``out``.  Per representative, every lane's filter bit is read first (the reads
    overlap), then lanes whose bit is set take the exact test in lane order."""
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
        slot = np.empty(lanes, dtype=np.uint64)
        word = np.empty(lanes, dtype=np.uint64)
        for i in range(start + t * step, min(stop, start + (t + 1) * step)):
            out[i - start] = -1
            if nv == 0:
                continue
            k1, k2 = reps[i, 1], reps[i, 2]
            unpack(unmix3(reps[i, 0], k1, k2), k1, k2, ab)
            invert(ab, qb)
            for lane in range(lanes):
                compose_lane(fb[lane >> 1], fib[lane >> 1], ab, qb, lane & 1, hb, ib)
                slot[lane] = invariant_hash(hw, hb, iw, ib, work) >> U64(bshift)
            for lane in range(lanes):
                word[lane] = bits[slot[lane] >> U64(6)]
            for lane in range(lanes):
                if (word[lane] >> (slot[lane] & U64(63))) & U64(1) == U64(0):
                    continue
                compose_lane(fb[lane >> 1], fib[lane >> 1], ab, qb, lane & 1, hb, ib)
                c0, c1, c2 = canon_of_bytes(hw, hb, iw, ib, work, sigma, conj)
                m0 = mix3(c0, c1, c2)
                q = m0 >> U64(shift)
                if find(vals, np.int64(index[q]), np.int64(index[q + U64(1)]), m0, c1, c2):
                    out[i - start] = lane
                    break
