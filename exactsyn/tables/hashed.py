"""5-line distance tables with hashed keys, and meet in the middle: optima up to 2D, bounds 2D + 1.

The breadth-first ball ``B_D`` (every function of at most ``D`` gates) grows about 60
times per layer on 5 lines with the 80 ``mct`` gates: 81, 5,161, 295,601 and about 16
million functions at depth 1–4.  Rows of 32 bytes make the depth-4 ball half a gigabyte,
so only its inner part is kept as rows:

* ``inner`` — the exact table of depth ``D − 1`` (:func:`exactsyn.tables.distance.distance_table`,
  rows, minimum gate counts, last gates; row-exact lookups);
* ``keys`` — a 64-bit hash of every function of ``B_D`` (inner ones and the last layer),
  sorted, with the least gate count and a last gate for each key.

The test is the one of :mod:`exactsyn.tables.distance` (Golubitsky, Falconer, Maslov,
DAC 2010): for every ``R`` of ``B_D`` — the inner rows, and the last layer generated on
the fly as ``g∘P`` for ``P`` in the inner table's last layer — look ``Q = f∘R`` up among
the keys.  The least ``dist(R) + dist(Q)`` over the hits is the optimum when it is at
most ``2D``; with no hit every circuit has more than ``2D`` gates.

Why hashing keeps this sound.  Equal functions have equal keys, so every function of
``B_D`` finds its key; breadth-first order stores, for each key, the least gate count of
all functions sharing it.  So a true hit is never missed and never counted with more
gates than it needs: the least total over all hits is at most the optimum, which makes
it (capped at ``2D + 1``) a proven **lower bound** even if two functions shared a key.
A claimed **optimum** comes with a circuit, rebuilt from the row-exact inner table and
simulated; if that ever failed (a shared key), only the lower bound is reported.  The
scan side is complete without hashing: the inner rows are exact, and the last layer is
generated from them.

Which depth pays is measured by ``scripts/bench_five.py`` and ``scripts/bench.py --set
five-line``: depth 3 is built in a fifth of a second (57 MiB) and settles optima up to 6
gates at once (bound 7); depth 4 takes 13 s and 1.3 GB to build and about 10 s per
function, and settles optima up to 8 (bound 9).  SAT settles k <= 7 in about two seconds
and a satisfiable k = 8 in 3–8 s, so depth 4 pays only when k = 8 is unsatisfiable
(20–40 s) — and then only about half of that.  Consulting it from k = 8 on made the
five-line set five times slower (one run each: 90.8 s against 18.4 s, peak 1.6 GB
against 118 MiB), so the search consults depth 3 only; ``EXACTSYN_FIVE_DEPTH`` picks
another depth.
"""

from __future__ import annotations

import functools
import os
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from exactsyn.caches import memo
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import Library, gate_table
from exactsyn.errors import ExactsynError
from exactsyn.tables.distance import DistanceTable, MeetResult, distance_table

#: Odd 64-bit multipliers of the key mix (fixed: keys must be the same in every process).
_MULT = np.array(
    [0x9E3779B97F4A7C15, 0xC2B2AE3D27D4EB4F, 0x165667B19E3779F9, 0xD6E8FEB86659FD93],
    dtype=np.uint64,
)
_FINAL = np.uint64(0xFF51AFD7ED558CCD)
_CHUNK = 1 << 19
MAX_DEPTH = 4
#: The depth of the table the gate search consults (see the module docstring for why 3).
DEFAULT_DEPTH = 3


def five_next_depth(k: int, current: int | None, time_left: float | None) -> int | None:
    """The table depth the gate search should consult before asking SAT for ``k`` gates, or None.

    ``current`` is the depth already consulted (None: none yet): the table is consulted
    once, at :data:`DEFAULT_DEPTH` or at ``EXACTSYN_FIVE_DEPTH`` (1 to 4).  ``k`` and
    ``time_left`` are for rules that consult a deeper table later (none at present: the
    measurements in the module docstring found none that pays).
    """
    if current is not None:
        return None
    raw = os.environ.get("EXACTSYN_FIVE_DEPTH", "")
    if not raw:
        return DEFAULT_DEPTH
    try:
        depth = int(raw)
    except ValueError:
        depth = -1
    if not 1 <= depth <= MAX_DEPTH:
        raise ExactsynError(f"EXACTSYN_FIVE_DEPTH must be 1 to {MAX_DEPTH}, not {raw!r}")
    return depth


def five_table_ok(library: Library) -> bool:
    """True when :func:`hashed_table` can be built for ``library``."""
    return library.lines == 5 and library.involutive and len(library.gates) <= 32767


def row_hash(rows: np.ndarray) -> np.ndarray:
    """A 64-bit key per row of a ``(N, 32)`` uint8 matrix (equal rows, equal keys)."""
    rows = np.ascontiguousarray(rows, dtype=np.uint8)
    if rows.shape[1] != 32:
        raise ExactsynError("hashed tables are for 5-line functions (32 entries per row)")
    words = rows.view(np.uint64)  # (N, 4): the row's 32 bytes as four words
    acc = np.zeros(len(rows), dtype=np.uint64)
    for i in range(4):  # chained multiply-xorshift rounds (a word's mix depends on all earlier ones)
        acc ^= words[:, i]
        acc *= _MULT[i]
        acc ^= acc >> np.uint64(31)
    acc *= _FINAL
    acc ^= acc >> np.uint64(33)
    return acc


@dataclass(frozen=True, eq=False)
class HashedTable:
    """The depth-``depth`` ball as hashed keys, with the exact table one layer less deep."""

    library: Library
    depth: int
    inner: DistanceTable
    frontier: np.ndarray  # rows of the inner table's last layer (depth − 1)
    frontier_dist: int
    frontier_index: np.ndarray  # their indices in ``inner``
    keys: np.ndarray  # sorted uint64
    dist: np.ndarray  # uint8, least gate count of the functions with that key
    last: np.ndarray  # int16, last gate of one minimum circuit (-1 for the identity)

    def lookup(self, rows: np.ndarray) -> np.ndarray:
        """Index of each row's key, or -1."""
        k = row_hash(rows)
        idx = np.searchsorted(self.keys, k)
        idx[idx >= len(self.keys)] = 0
        return np.where(self.keys[idx] == k, idx, -1)

    def circuit_of(self, row: np.ndarray, index: int) -> list[Gate] | None:
        """A circuit of ``dist[index]`` gates computing ``row``, or None (a shared key)."""
        d = int(self.dist[index])
        gates_t = gate_table(self.library)
        tail: list[Gate] = []
        if d == self.depth:
            j = int(self.last[index])
            tail = [self.library.gates[j]]
            row = gates_t[j][row]  # strip the last gate (self-inverse)
            d -= 1
        i = int(self.inner.lookup(row[None, :])[0])
        if i < 0 or int(self.inner.dist[i]) != d:
            return None
        return self.inner.circuit_of(i) + tail


@memo(maxsize=2)
def hashed_table(library: Library, depth: int) -> HashedTable:
    """Build the table of ``depth`` (1 to :data:`MAX_DEPTH`) for a 5-line library of self-inverse gates."""
    if not five_table_ok(library):
        raise ExactsynError("hashed distance tables need 5 lines and self-inverse gates")
    if not 1 <= depth <= MAX_DEPTH:
        raise ExactsynError(f"the hashed table depth must be 1 to {MAX_DEPTH}")
    inner = distance_table(library, depth - 1)
    if inner.depth != depth - 1:  # the whole group is smaller than the ball: never for mct
        raise ExactsynError("the inner distance table did not reach its depth")
    gates_t = gate_table(library)
    in_keys = row_hash(inner.rows)
    order = np.argsort(in_keys, kind="stable")
    in_keys, in_dist, in_last = in_keys[order], inner.dist[order], inner.last[order]
    frontier_index = np.nonzero(inner.dist == depth - 1)[0]
    frontier = inner.rows[frontier_index]
    new_keys, new_last = [], []
    for j in range(len(library.gates)):
        for s in range(0, len(frontier), _CHUNK):
            k = row_hash(gates_t[j][frontier[s : s + _CHUNK]])
            pos = np.searchsorted(in_keys, k)
            pos[pos >= len(in_keys)] = 0
            fresh = in_keys[pos] != k
            new_keys.append(k[fresh])
            new_last.append(np.full(int(fresh.sum()), j, dtype=np.int16))
    keys = np.concatenate(new_keys) if new_keys else np.zeros(0, dtype=np.uint64)
    lasts = np.concatenate(new_last) if new_last else np.zeros(0, dtype=np.int16)
    keys, first = np.unique(keys, return_index=True)
    lasts = lasts[first]
    all_keys = np.concatenate([in_keys, keys])
    all_dist = np.concatenate([in_dist, np.full(len(keys), depth, dtype=np.uint8)])
    all_last = np.concatenate([in_last, lasts])
    order = np.argsort(all_keys, kind="stable")  # inner (smaller distance) first among equal keys
    all_keys, all_dist, all_last = all_keys[order], all_dist[order], all_last[order]
    keep = np.ones(len(all_keys), dtype=bool)
    keep[1:] = all_keys[1:] != all_keys[:-1]
    return HashedTable(
        library,
        depth,
        inner,
        frontier,
        depth - 1,
        frontier_index,
        all_keys[keep],
        all_dist[keep],
        all_last[keep],
    )


def five_meet(perm: tuple[int, ...], library: Library, depth: int) -> MeetResult:
    """Optimum of ``perm`` if at most ``2·depth`` gates (with a circuit), else the bound ``2·depth + 1``."""
    table = hashed_table(library, depth)
    f = np.asarray(perm, dtype=np.uint8)
    if f.shape != (32,) or sorted(perm) != list(range(32)):
        raise ExactsynError("a 5-line permutation has 32 entries")
    gates_t = gate_table(library)
    best = 2 * depth + 1
    hits: list[tuple[int, np.ndarray, int, list[Gate] | None, int]] = []  # total, R row, Q index, R gates, order

    def consider(r_rows: np.ndarray, r_dist: np.ndarray, r_circuit: Callable[[int], list[Gate]]) -> None:
        nonlocal best
        q_rows = f[r_rows]  # Q = f∘R: R first, then f
        keys = row_hash(q_rows)
        order = np.argsort(keys) if r_dist.min() != r_dist.max() else None
        needles = keys[order] if order is not None else np.sort(keys)  # sorted needles search 4x faster
        pos = np.searchsorted(table.keys, needles)
        pos[pos >= len(table.keys)] = 0
        found = np.nonzero(table.keys[pos] == needles)[0]
        if len(found) == 0:
            return
        if order is not None:
            totals = r_dist[order[found]] + table.dist[pos[found]].astype(np.int64)
        else:
            totals = int(r_dist[0]) + table.dist[pos[found]].astype(np.int64)
        k = int(np.argmin(totals))
        if int(totals[k]) <= best:
            best = int(totals[k])
            i = int(order[found[k]]) if order is not None else int(np.flatnonzero(keys == needles[found[k]])[0])
            hits.append((best, q_rows[i].copy(), int(pos[found[k]]), r_circuit(i), len(hits)))

    inner = table.inner

    def inner_gates(offset: int, i: int) -> list[Gate]:
        return inner.circuit_of(offset + i)

    def frontier_gates(offset: int, g: Gate, i: int) -> list[Gate]:
        return inner.circuit_of(int(table.frontier_index[offset + i])) + [g]

    for s in range(0, len(inner.rows), _CHUNK):
        r_dist = inner.dist[s : s + _CHUNK].astype(np.int64)
        consider(inner.rows[s : s + _CHUNK], r_dist, functools.partial(inner_gates, s))
    for j, g in enumerate(library.gates):
        for s in range(0, len(table.frontier), _CHUNK):
            rows = gates_t[j][table.frontier[s : s + _CHUNK]]  # R = g∘P: P first, then g
            r_dist = np.full(len(rows), table.frontier_dist + 1, dtype=np.int64)
            consider(rows, r_dist, functools.partial(frontier_gates, s, g))
    if not hits:
        return MeetResult(2 * depth + 1, None, None, depth)
    total, q_row, q_index, r_gates, _ = min(hits, key=lambda h: (h[0], h[4]))
    q_gates = table.circuit_of(q_row, q_index)
    if q_gates is not None and r_gates is not None:
        circ = Circuit(library.lines, tuple(reversed(r_gates)) + tuple(q_gates))
        if len(circ) == total and circ.permutation() == tuple(perm):
            return MeetResult(total, total, circ, depth)
    return MeetResult(total, None, None, depth)  # a shared key: only the bound is proven
