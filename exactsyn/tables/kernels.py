"""Compiled kernels (numba) for single-word key layouts (``n ≤ 4`` lines): canonical form, lookup, BFS.

Keys follow :mod:`exactsyn.tables.keys` (entry ``i`` at bits ``n·i .. n·i + n − 1`` of one
64-bit word; for 4 lines nibble ``i`` holds ``p[i]``).  One set of kernels serves every
such layout: the layout's constants travel as one tuple ``C = (n, seq, pos_mask, pos_shift,
val_mask)`` (:func:`constants`), so each kernel is compiled once for all line counts.
:func:`kernels_for` wraps them as the :class:`~exactsyn.tables.kernel_api.TableKernels` of
a layout.

Canonical form.  Conjugating by the transposition of lines ``a`` and ``a+1`` moves the
entry at position ``x`` to position ``τ(x)`` and swaps bits ``a``, ``a+1`` inside every
entry; on the 64-bit word both are single *delta swaps* (exchange of the bit groups
selected by a mask with the groups ``s`` places higher: ``t = ((w >> s) ^ w) & m;
w ^= t ^ (t << s)``; Knuth, TAOCP 4A, §7.1.3).  Walking through all ``n!`` relabellings by
adjacent transpositions (the Steinhaus–Johnson–Trotter order) visits every conjugate of
``f`` and of ``f⁻¹`` with two delta swaps each; the least key is the canonical form.
The tests compare it with the plain definition in :mod:`exactsyn.tables.keys`.

Lookup.  A stored level is a sorted array of *mixed* keys ``mix(k)`` (an invertible
64-bit mixing function, the finaliser of Steele, Lea & Flood's SplitMix64, OOPSLA 2014),
so the top bits are uniform, plus a bucket index on the top ``b`` bits:
``index[q]`` = first position whose value has top bits ``≥ q``.  A lookup is one index
read and a short binary search inside one bucket.

Nothing here allocates a table; :mod:`exactsyn.tables.levels` and
:mod:`exactsyn.tables.engine` drive these kernels.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numba as nb
import numpy as np

from exactsyn.tables.keys import KeyLayout

U64 = np.uint64
_ONES = U64(0xFFFFFFFFFFFFFFFF)
_M1 = U64(0xBF58476D1CE4E5B9)
_M2 = U64(0x94D049BB133111EB)
_M1_INV = U64(pow(0xBF58476D1CE4E5B9, -1, 1 << 64))
_M2_INV = U64(pow(0x94D049BB133111EB, -1, 1 << 64))


def _sjt_transpositions(n: int) -> list[int]:
    """Adjacent transpositions (``a`` swaps ``a``, ``a+1``) visiting all ``n!`` orders once."""
    perm = list(range(n))
    dirs = [-1] * n
    seq: list[int] = []
    while True:
        mobile, at = -1, -1
        for i in range(n):
            j = i + dirs[perm[i]]
            if 0 <= j < n and perm[j] < perm[i] and perm[i] > mobile:
                mobile, at = perm[i], i
        if mobile < 0:
            return seq
        j = at + dirs[mobile]
        seq.append(min(at, j))
        perm[at], perm[j] = perm[j], perm[at]
        for x in range(n):
            if x > mobile:
                dirs[x] = -dirs[x]


def constants(lines: int) -> tuple[int, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """``C = C`` of the ``n``-line single-word layout.

    ``seq``: the ``n! − 1`` adjacent transpositions of the walk; for the transposition of
    lines ``a``, ``a+1``: ``pos_mask[a]`` selects the entries of the states with bit ``a``
    set and bit ``a+1`` clear (their partners sit ``pos_shift[a] = n·2^a`` bits higher), and
    ``val_mask[a]`` bit ``a`` of every entry (its partner one bit higher).
    """
    n, size = lines, 1 << lines
    if n * size > 64:
        raise ValueError(f"{n}-line keys do not fit one 64-bit word")
    entry = (1 << n) - 1
    seq = np.array(_sjt_transpositions(n), dtype=np.int64)
    pos_mask = np.zeros(n - 1, dtype=np.uint64)
    pos_shift = np.zeros(n - 1, dtype=np.uint64)
    val_mask = np.zeros(n - 1, dtype=np.uint64)
    for a in range(n - 1):
        low = [x for x in range(size) if (x >> a) & 1 and not (x >> (a + 1)) & 1]
        pos_mask[a] = sum(entry << (n * x) for x in low)
        pos_shift[a] = n * ((1 << (a + 1)) - (1 << a))
        val_mask[a] = sum(1 << (n * i + a) for i in range(size))
    return n, seq, pos_mask, pos_shift, val_mask


# ----------------------------------------------------------------------------- scalar kernels
@nb.njit(inline="always", cache=True)
def mix(k: np.uint64) -> np.uint64:
    x = k
    x = (x ^ (x >> U64(30))) * _M1
    x = (x ^ (x >> U64(27))) * _M2
    return x ^ (x >> U64(31))


@nb.njit(inline="always", cache=True)
def _unshift(x: np.uint64, s: int) -> np.uint64:
    """Inverse of ``x ^ (x >> s)``."""
    y = x
    for _ in range(64 // s + 1):
        y = x ^ (y >> U64(s))
    return y


@nb.njit(inline="always", cache=True)
def unmix(m: np.uint64) -> np.uint64:
    x = _unshift(m, 31) * _M2_INV
    x = _unshift(x, 27) * _M1_INV
    return _unshift(x, 30)


@nb.njit(inline="always", cache=True)
def inverse(k: np.uint64, n: int) -> np.uint64:
    """Inverse of the ``n``-line key ``k``: ``q[p[i]] = i``."""
    un = U64(n)
    entry = (U64(1) << un) - U64(1)
    q = U64(0)
    for i in range(1 << n):
        v = (k >> (U64(i) * un)) & entry
        q |= U64(i) << (v * un)
    return q


@nb.njit(inline="always", cache=True)
def contains(vals: np.ndarray, index: np.ndarray, shift: int, m: np.uint64) -> bool:
    """True when mixed key ``m`` is in the sorted level ``vals`` with bucket ``index``."""
    q = m >> U64(shift)
    lo = np.int64(index[q])
    hi = np.int64(index[q + U64(1)])
    while lo < hi:
        mid = (lo + hi) >> 1
        v = vals[mid]
        if v < m:
            lo = mid + 1
        elif v > m:
            hi = mid
        else:
            return True
    return False


# ----------------------------------------------------------------------------- block kernels
# The walk over the n! relabellings, run on a block of keys in lock step: every step
# applies one uniform shift and mask to all lanes, which the compiler turns into SIMD
# code (about ten times faster per key than a scalar loop on AVX-512 hardware).
@nb.njit(inline="always", cache=True)
def canon_block(
    w: np.ndarray,
    best: np.ndarray,
    n: int,
    lines: int,
    seq: np.ndarray,
    pos_mask: np.ndarray,
    pos_shift: np.ndarray,
    val_mask: np.ndarray,
) -> None:
    """``best[l] = canon(w[l])`` for ``l < n``; ``w`` is overwritten."""
    for lane in range(n):
        best[lane] = w[lane]
    for side in range(2):
        if side == 1:
            for lane in range(n):
                x = inverse(w[lane], lines)  # the inverse of a conjugate is a conjugate of the inverse
                w[lane] = x
                best[lane] = min(best[lane], x)
        for j in range(len(seq)):
            a = seq[j]
            s = pos_shift[a]
            m = pos_mask[a]
            m2 = val_mask[a]
            for lane in range(n):
                x = w[lane]
                t = ((x >> s) ^ x) & m
                x = x ^ t ^ (t << s)
                t = ((x >> U64(1)) ^ x) & m2
                x = x ^ t ^ (t << U64(1))
                w[lane] = x
                best[lane] = min(best[lane], x)


@nb.njit(inline="always", cache=True)
def stabiliser_block(
    w: np.ndarray,
    count: np.ndarray,
    n: int,
    lines: int,
    seq: np.ndarray,
    pos_mask: np.ndarray,
    pos_shift: np.ndarray,
    val_mask: np.ndarray,
) -> None:
    """``count[l]`` = transforms fixing the key ``w[l]`` (among ``2·n!``); ``w`` is overwritten."""
    keys = w.copy()
    for lane in range(n):
        count[lane] = 1
    for side in range(2):
        if side == 1:
            for lane in range(n):
                x = inverse(w[lane], lines)
                w[lane] = x
                count[lane] += x == keys[lane]
        for j in range(len(seq)):
            a = seq[j]
            s = pos_shift[a]
            m = pos_mask[a]
            m2 = val_mask[a]
            for lane in range(n):
                x = w[lane]
                t = ((x >> s) ^ x) & m
                x = x ^ t ^ (t << s)
                t = ((x >> U64(1)) ^ x) & m2
                x = x ^ t ^ (t << U64(1))
                w[lane] = x
                count[lane] += x == keys[lane]


@nb.njit(inline="always", cache=True)
def compose_block(fs: np.ndarray, a: np.uint64, out: np.ndarray, offset: int, n: int) -> None:
    """``out[offset + l] = fs[l] ∘ a`` for every lane (one shift per entry for all lanes)."""
    un = U64(n)
    entry = (U64(1) << un) - U64(1)
    lanes = len(fs)
    for lane in range(lanes):
        out[offset + lane] = U64(0)
    for i in range(1 << n):
        d = U64(i) * un
        s = ((a >> d) & entry) * un
        for lane in range(lanes):
            out[offset + lane] |= ((fs[lane] >> s) & entry) << d


# ----------------------------------------------------------------------------- array kernels
_BLOCK = 256


@nb.njit(parallel=True, inline="always", cache=True)
def _canon_many(
    keys: np.ndarray, lines: int, seq: np.ndarray, pos_mask: np.ndarray, pos_shift: np.ndarray, val_mask: np.ndarray
) -> np.ndarray:
    n = len(keys)
    out = np.empty_like(keys)
    for b in nb.prange((n + _BLOCK - 1) // _BLOCK):
        lo = b * _BLOCK
        m = min(_BLOCK, n - lo)
        w = keys[lo : lo + m].copy()
        best = np.empty(m, dtype=np.uint64)
        canon_block(w, best, m, lines, seq, pos_mask, pos_shift, val_mask)
        out[lo : lo + m] = best
    return out


@nb.njit(parallel=True, cache=True)
def mix_many(keys: np.ndarray) -> np.ndarray:
    out = np.empty_like(keys)
    for i in nb.prange(len(keys)):
        out[i] = mix(keys[i])
    return out


@nb.njit(parallel=True, cache=True)
def unmix_many(vals: np.ndarray) -> np.ndarray:
    out = np.empty_like(vals)
    for i in nb.prange(len(vals)):
        out[i] = unmix(vals[i])
    return out


@nb.njit(parallel=True, inline="always", cache=True)
def _class_size_counts(
    vals: np.ndarray, lines: int, seq: np.ndarray, pos_mask: np.ndarray, pos_shift: np.ndarray, val_mask: np.ndarray
) -> np.ndarray:
    """Per block of (mixed) canonical keys, how many classes have each size ``0..2·n!``.

    Returns an ``(blocks, 2·n! + 1)`` array; its column sums are the histogram.  The class
    of ``k`` has ``2·n! / |stabiliser|`` members.
    """
    transforms = 2 * (len(seq) + 1)
    n = len(vals)
    nb_ = (n + _BLOCK - 1) // _BLOCK
    parts = np.zeros((max(nb_, 1), transforms + 1), dtype=np.int64)
    for b in nb.prange(nb_):
        lo = b * _BLOCK
        m = min(_BLOCK, n - lo)
        w = np.empty(m, dtype=np.uint64)
        for lane in range(m):
            w[lane] = unmix(vals[lo + lane])
        count = np.empty(m, dtype=np.int64)
        stabiliser_block(w, count, m, lines, seq, pos_mask, pos_shift, val_mask)
        for lane in range(m):
            parts[b, transforms // count[lane]] += 1
    return parts


@nb.njit(parallel=True, cache=True)
def contains_many(vals: np.ndarray, index: np.ndarray, shift: int, mixed: np.ndarray) -> np.ndarray:
    out = np.empty(len(mixed), dtype=np.bool_)
    for i in nb.prange(len(mixed)):
        out[i] = contains(vals, index, shift, mixed[i])
    return out


def bucket_bits(n: int) -> int:
    """Index bits for a level of ``n`` values: about 8 values per bucket, at least 1 bit."""
    bits = 1
    while (n >> bits) > 8 and bits < 32:
        bits += 1
    return bits


@nb.njit(cache=True)
def _fill_index(vals: np.ndarray, bits: int, index: np.ndarray) -> None:
    shift = U64(64 - bits)
    pos = 0
    n = len(vals)
    for q in range(len(index) - 1):
        while pos < n and (vals[pos] >> shift) < U64(q):
            pos += 1
        index[q] = pos
    index[len(index) - 1] = n


def make_index(vals: np.ndarray) -> tuple[np.ndarray, int]:
    """Bucket index of a sorted mixed level and its shift (``64 − bits``)."""
    bits = bucket_bits(len(vals))
    dtype = np.uint32 if len(vals) < (1 << 32) else np.uint64
    index = np.zeros((1 << bits) + 1, dtype=dtype)
    _fill_index(vals, bits, index)
    return index, 64 - bits


# ----------------------------------------------------------------------------- breadth-first step
@nb.njit(parallel=True, inline="always", cache=True)
def _expand(
    reps: np.ndarray,
    gates: np.ndarray,
    out: np.ndarray,
    lines: int,
    seq: np.ndarray,
    pos_mask: np.ndarray,
    pos_shift: np.ndarray,
    val_mask: np.ndarray,
) -> None:
    """Mixed canonical keys of the neighbours of every (mixed) class ``reps[i]``.

    The neighbours of the class of ``r`` are the classes of ``g∘r`` and ``r∘g`` for every
    gate ``g`` (those of other members are relabellings or inverses of these), and the
    class of ``r∘g`` is the class of its inverse ``g∘r⁻¹``.  ``out[i·2G + j]`` gets the
    mixed canonical key of ``g_j∘r`` and ``out[i·2G + G + j]`` that of ``g_j∘r⁻¹``.
    """
    ng = len(gates)
    lanes = 2 * ng
    n = len(reps)
    chunks = 64
    step = (n + chunks - 1) // chunks
    for t in nb.prange(chunks):
        w = np.empty(lanes, dtype=np.uint64)
        best = np.empty(lanes, dtype=np.uint64)
        for i in range(t * step, min(n, (t + 1) * step)):
            r = unmix(reps[i])
            compose_block(gates, r, w, 0, lines)
            compose_block(gates, inverse(r, lines), w, ng, lines)
            canon_block(w, best, lanes, lines, seq, pos_mask, pos_shift, val_mask)
            base = i * lanes
            for lane in range(lanes):
                out[base + lane] = mix(best[lane])


# ----------------------------------------------------------------------------- set of a new level
# The keys found in one breadth-first step go into an open-addressing set split into
# regions by their top bits (after ``skip`` bits that select the pass of a multi-pass
# build); a region is small enough to stay in cache while one thread fills it, and the
# home slot grows with the key, so filled slots come out nearly sorted.  Candidates are
# first grouped by region (a counting sort).
@nb.njit(inline="always", cache=True)
def _region_of(c: np.uint64, skip: int, region_bits: int) -> int:
    return int((c << U64(skip)) >> U64(64 - region_bits))


@nb.njit(inline="always", cache=True)
def _home(c: np.uint64, skip: int, region_bits: int, width: int) -> np.uint64:
    return (((c << U64(skip + region_bits)) >> U64(32)) * U64(width)) >> U64(32)


@nb.njit(parallel=True, cache=True)
def partition(
    cand: np.ndarray, lo: np.uint64, hi: np.uint64, skip: int, region_bits: int, out: np.ndarray
) -> np.ndarray:
    """Copy the candidates with ``lo ≤ c ≤ hi`` into ``out`` grouped by region (ascending).

    Returns ``offsets`` (length ``regions + 1``): region ``q`` is ``out[offsets[q]:offsets[q+1]]``.
    """
    regions = 1 << region_bits
    chunks = 64
    n = len(cand)
    step = (n + chunks - 1) // chunks
    hist = np.zeros((chunks, regions), dtype=np.int64)
    for t in nb.prange(chunks):
        for i in range(t * step, min(n, (t + 1) * step)):
            c = cand[i]
            if lo <= c <= hi:
                hist[t, _region_of(c, skip, region_bits)] += 1
    pos = np.empty((chunks, regions), dtype=np.int64)
    offsets = np.empty(regions + 1, dtype=np.int64)
    total = 0
    for q in range(regions):
        offsets[q] = total
        for t in range(chunks):
            pos[t, q] = total
            total += hist[t, q]
    offsets[regions] = total
    for t in nb.prange(chunks):
        for i in range(t * step, min(n, (t + 1) * step)):
            c = cand[i]
            if lo <= c <= hi:
                q = _region_of(c, skip, region_bits)
                out[pos[t, q]] = c
                pos[t, q] += 1
    return offsets


@nb.njit(inline="always", cache=True)
def _put(row: np.ndarray, c: np.uint64, h: np.uint64) -> int:
    """Insert ``c`` probing from ``h``: 1 if new, 0 if present, −1 if the row is exhausted."""
    cap = U64(len(row))
    while h < cap:
        v = row[h]
        if v == c:
            return 0
        if v == U64(0):
            row[h] = c
            return 1
        h += U64(1)
    return -1


@nb.njit(parallel=True, cache=True)
def insert(slots: np.ndarray, skip: int, region_bits: int, width: int, part: np.ndarray, offsets: np.ndarray) -> int:
    """Insert partitioned keys into ``slots`` (shape ``(regions, width + pad)``).

    The home slot of ``c`` in its region is ``width`` times the fraction given by its next
    32 bits (monotone in ``c``); probing is linear and never leaves the region.  Returns
    the number of new keys, or −1 if a probe ran past the pad (the caller enlarges the set
    and inserts again; inserting a key twice is harmless).
    """
    regions = slots.shape[0]
    added = np.zeros(regions, dtype=np.int64)
    failed = np.zeros(regions, dtype=np.bool_)
    for q in nb.prange(regions):
        row = slots[q]
        for i in range(offsets[q], offsets[q + 1]):
            c = part[i]
            r = _put(row, c, _home(c, skip, region_bits, width))
            if r < 0:
                failed[q] = True
                break
            added[q] += r
    if failed.any():
        return -1
    return added.sum()


@nb.njit(parallel=True, cache=True)
def reinsert(old: np.ndarray, slots: np.ndarray, skip: int, region_bits: int, width: int) -> bool:
    """Move every key of the set ``old`` into the larger empty set ``slots`` (same regions)."""
    regions = slots.shape[0]
    failed = np.zeros(regions, dtype=np.bool_)
    for q in nb.prange(regions):
        row = slots[q]
        for i in range(old.shape[1]):
            c = old[q, i]
            if c != U64(0) and _put(row, c, _home(c, skip, region_bits, width)) < 0:
                failed[q] = True
                break
    return not failed.any()


@nb.njit(inline="always", cache=True)
def _lower_bound(a: np.ndarray, v: np.uint64) -> int:
    lo = 0
    hi = len(a)
    while lo < hi:
        mid = (lo + hi) >> 1
        if a[mid] < v:
            lo = mid + 1
        else:
            hi = mid
    return lo


@nb.njit(inline="always", cache=True)
def _drop_sorted(row: np.ndarray, n: int, other: np.ndarray) -> int:
    """Remove from the sorted ``row[:n]`` every value of the sorted ``other``; zero the tail."""
    if n == 0:
        return 0
    k = _lower_bound(other, row[0])
    out = 0
    for i in range(n):
        v = row[i]
        while k < len(other) and other[k] < v:
            k += 1
        if k < len(other) and other[k] == v:
            continue
        row[out] = v
        out += 1
    for i in range(out, n):
        row[i] = U64(0)
    return out


@nb.njit(parallel=True, cache=True)
def finish_regions(slots: np.ndarray, skip: int, region_bits: int, cur: np.ndarray, prev: np.ndarray) -> np.ndarray:
    """Sort every region's keys to its front and drop those in ``cur`` or ``prev`` (sorted).

    Returns the number of keys left per region.  Filled slots are in home order up to
    displacements inside probe clusters, so the insertion sort does little work.
    """
    regions = slots.shape[0]
    counts = np.zeros(regions, dtype=np.int64)
    for q in nb.prange(regions):
        row = slots[q]
        n = 0
        for i in range(len(row)):
            v = row[i]
            if v != U64(0):
                row[i] = U64(0)
                j = n
                while j > 0 and row[j - 1] > v:
                    row[j] = row[j - 1]
                    j -= 1
                row[j] = v
                n += 1
        n = _drop_sorted(row, n, cur)
        n = _drop_sorted(row, n, prev)
        counts[q] = n
    return counts


# ----------------------------------------------------------------------------- meet in the middle
@nb.njit(parallel=True, inline="always", cache=True)
def _scan(
    reps: np.ndarray,
    start: int,
    stop: int,
    fconj: np.ndarray,
    vals: np.ndarray,
    index: np.ndarray,
    shift: int,
    out: np.ndarray,
    lines: int,
    seq: np.ndarray,
    pos_mask: np.ndarray,
    pos_shift: np.ndarray,
    val_mask: np.ndarray,
) -> None:
    """For each class ``a = reps[i]`` (``start ≤ i < stop``), the first ``(c, e)`` with
    ``canon(fconj[c] ∘ a^e)`` in the level: ``out[i − start] = 2c + (e == −1)``, or −1.

    Per representative the ``2·len(fconj)`` keys go through the block kernels; the
    lookups run in phases (all bucket bounds, then the first value of every bucket, then
    the searches) so that the memory accesses of different lanes overlap.
    """
    nf = len(fconj)
    lanes = 2 * nf
    n = stop - start
    chunks = 64
    step = (n + chunks - 1) // chunks
    nv = len(vals)
    for t in nb.prange(chunks):
        w = np.empty(lanes, dtype=np.uint64)
        best = np.empty(lanes, dtype=np.uint64)
        lo = np.empty(lanes, dtype=np.int64)
        hi = np.empty(lanes, dtype=np.int64)
        first = np.empty(lanes, dtype=np.uint64)
        for i in range(start + t * step, min(stop, start + (t + 1) * step)):
            a = unmix(reps[i])
            compose_block(fconj, a, w, 0, lines)
            compose_block(fconj, inverse(a, lines), w, nf, lines)
            canon_block(w, best, lanes, lines, seq, pos_mask, pos_shift, val_mask)
            for lane in range(lanes):
                m = mix(best[lane])
                best[lane] = m
                q = m >> U64(shift)
                lo[lane] = np.int64(index[q])
                hi[lane] = np.int64(index[q + U64(1)])
            for lane in range(lanes):
                first[lane] = vals[min(lo[lane], nv - 1)]
            res = -1
            for lane in range(lanes):
                m = best[lane]
                if first[lane] > m:
                    continue
                for k in range(lo[lane], hi[lane]):
                    if vals[k] == m:
                        res = lane
                        break
                if res >= 0:
                    break
            if res >= 0:
                # lane order: conjugate c with a at lane c, with a^-1 at lane nf + c
                res = 2 * res if res < nf else 2 * (res - nf) + 1
            out[i - start] = res


# ----------------------------------------------------------------------------- one compiled set per layout
@dataclass(frozen=True)
class _Compiled:
    canon_many: Any
    class_size_counts: Any
    expand: Any
    scan: Any


def _compile(lines: int) -> _Compiled:
    """The kernels that depend on the layout, specialised to ``lines`` lines.

    Each is a thin closure over the layout's constants (plain integers and arrays, which
    numba freezes into the code and includes in its cache key, so each line count gets
    its own cached machine code) around a body above that is inlined into it: the walk
    over the relabellings and the loops over the entries then have constant trip counts
    and masks, as fast as kernels written for one line count (``scripts/bench_canon.py``;
    passing the constants as arguments instead costs about a third more per key).
    """
    n, seq, pos_mask, pos_shift, val_mask = constants(lines)

    @nb.njit(parallel=True, cache=True)
    def canon_many(keys: np.ndarray) -> np.ndarray:
        return _canon_many(keys, n, seq, pos_mask, pos_shift, val_mask)  # type: ignore[no-any-return]

    @nb.njit(parallel=True, cache=True)
    def class_size_counts(vals: np.ndarray) -> np.ndarray:
        return _class_size_counts(vals, n, seq, pos_mask, pos_shift, val_mask)  # type: ignore[no-any-return]

    @nb.njit(parallel=True, cache=True)
    def expand(reps: np.ndarray, gates: np.ndarray, out: np.ndarray) -> None:
        _expand(reps, gates, out, n, seq, pos_mask, pos_shift, val_mask)

    @nb.njit(parallel=True, cache=True)
    def scan(
        reps: np.ndarray,
        start: int,
        stop: int,
        fconj: np.ndarray,
        vals: np.ndarray,
        index: np.ndarray,
        shift: int,
        out: np.ndarray,
    ) -> None:
        _scan(reps, start, stop, fconj, vals, index, shift, out, n, seq, pos_mask, pos_shift, val_mask)

    return _Compiled(canon_many, class_size_counts, expand, scan)


# ----------------------------------------------------------------------------- short arrays on one thread
#: Arrays of fewer items than this go through a parallel kernel on the calling thread alone:
#: waking the other threads costs more than the work (the optimiser's window lookups are a
#: few keys each), and on a busy machine far more, since each waits for a core.  The same
#: kernel runs either way, so the results are the same.
ONE_THREAD_BELOW = 4096


def one_thread(items: int, kernel: Any, *args: Any) -> Any:
    """``kernel(*args)``, on one thread when ``items`` is below :data:`ONE_THREAD_BELOW`."""
    if items >= ONE_THREAD_BELOW:
        return kernel(*args)
    threads = nb.get_num_threads()
    if threads == 1:
        return kernel(*args)
    nb.set_num_threads(1)
    try:
        return kernel(*args)
    finally:
        nb.set_num_threads(threads)


# ----------------------------------------------------------------------------- the layout's kernel object
@dataclass(frozen=True, eq=False)
class WordKernels:
    """:class:`~exactsyn.tables.kernel_api.TableKernels` of a single-word layout."""

    layout: KeyLayout
    compiled: _Compiled
    mix_name: str = "splitmix64-finaliser"

    def canon_many(self, keys: np.ndarray) -> np.ndarray:
        return one_thread(len(keys), self.compiled.canon_many, np.ascontiguousarray(keys, dtype=np.uint64))  # type: ignore[no-any-return]

    def mix_many(self, keys: np.ndarray) -> np.ndarray:
        return one_thread(len(keys), mix_many, np.ascontiguousarray(keys, dtype=np.uint64))  # type: ignore[no-any-return]

    def unmix_many(self, mixed: np.ndarray) -> np.ndarray:
        return one_thread(len(mixed), unmix_many, np.ascontiguousarray(mixed, dtype=np.uint64))  # type: ignore[no-any-return]

    def class_size_histogram(self, mixed: np.ndarray) -> np.ndarray:
        if len(mixed) == 0:
            return np.zeros(self.layout.symmetries + 1, dtype=np.int64)
        return self.compiled.class_size_counts(mixed).sum(axis=0)  # type: ignore[no-any-return]

    def make_index(self, mixed: np.ndarray) -> tuple[np.ndarray, int]:
        return make_index(mixed)

    def contains_many(self, vals: np.ndarray, index: np.ndarray, shift: int, mixed: np.ndarray) -> np.ndarray:
        return one_thread(len(mixed), contains_many, vals, index, shift, mixed)  # type: ignore[no-any-return]

    def expand(self, reps: np.ndarray, gates: np.ndarray, out: np.ndarray) -> None:
        self.compiled.expand(reps, gates, out)

    def new_set(self, regions: int, slots: int) -> np.ndarray:
        return np.zeros((regions, slots), dtype=np.uint64)

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
        return finish_regions(slots, skip, region_bits, cur, prev)  # type: ignore[no-any-return]

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
        self.compiled.scan(reps, start, stop, fconj, vals, index, shift, out)  # no filter: 4-line scans are short


def kernels_for(layout: KeyLayout) -> WordKernels:
    """The kernels of a single-word layout (``n·2^n ≤ 64``: 2, 3 or 4 lines)."""
    return WordKernels(layout, _compile(layout.lines))
