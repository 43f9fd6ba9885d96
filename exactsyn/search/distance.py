"""Distance tables and the meet-in-the-middle test: exact optima up to 2D gates, lower bounds beyond.

A breadth-first table of depth ``D`` holds every permutation that some circuit of at
most ``D`` library gates computes, with its minimum gate count and the last gate of one
minimum circuit.  Because every gate is self-inverse the set is closed under inversion.
For a function ``f`` the meet-in-the-middle test composes ``f`` with every table entry
``R`` (``Q = f∘R``, i.e. ``R`` first) and looks ``Q`` up:

* if ``f`` has a circuit of ``d ≤ 2D`` gates, split it after its first ``a = min(d, D)``
  gates: the first part computes some ``P`` in the table and ``R = P⁻¹`` is in the table
  too, so ``Q = f∘P⁻¹`` — the second part, of at most ``d − a ≤ D`` gates — is found;
  every match gives a circuit of ``dist(R) + dist(Q)`` gates, so the least match is the
  optimum, with a circuit: ``R⁻¹`` (the gates of ``R`` reversed) then ``Q``;
* if nothing matches, every circuit has more than ``2D`` gates: a proven lower bound of
  ``2D + 1`` (the "table bound" of certificates, re-derived by the checker).

Bidirectional search of this kind is the method of exhaustive optimal synthesis of all
4-bit functions (Golubitsky, Falconer, Maslov, "Synthesis of the optimal 4-bit reversible
circuits", DAC 2010); the table sizes are checked against their counts in the tests.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from exactsyn.caches import memo
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import Library, gate_table
from exactsyn.errors import NoCircuitError
from exactsyn.search.bfs import row_keys

# Build the next layer only while the table stays below this many entries and the
# candidate rows of one expansion stay below MAX_CANDIDATES (memory ≈ candidates × 2^n bytes).
MAX_ENTRIES = 6_000_000
MAX_ENTRIES_WIDE = 1_000_000  # rows of more than 16 entries (5+ lines) use slower byte keys
MAX_CANDIDATE_BYTES = 160 << 20
_CHUNK = 1 << 20


def _pack(rows: np.ndarray) -> np.ndarray:
    """One sortable key per row: a uint64 of nibbles for ≤ 16 entries, else raw bytes."""
    rows = np.ascontiguousarray(rows, dtype=np.uint8)
    if rows.shape[1] <= 16:
        acc = np.zeros(rows.shape[0], dtype=np.uint64)
        for i in range(rows.shape[1]):
            acc |= rows[:, i].astype(np.uint64) << np.uint64(4 * i)
        return acc
    return row_keys(rows)


@dataclass(frozen=True, eq=False)
class DistanceTable:
    library: Library
    depth: int  # every function of distance ≤ depth is in the table
    rows: np.ndarray  # (M, 2^n) uint8, sorted by key
    keys: np.ndarray  # sorted
    dist: np.ndarray  # uint8
    last: np.ndarray  # int16: last gate of one minimum circuit (-1 for the identity)

    def lookup(self, rows: np.ndarray) -> np.ndarray:
        """Index of each row in the table, or -1."""
        k = _pack(rows)
        idx = np.searchsorted(self.keys, k)
        idx[idx >= len(self.keys)] = 0
        return np.where(self.keys[idx] == k, idx, -1)

    def circuit_of(self, index: int) -> list[Gate]:
        """A minimum circuit (application order) of table entry ``index``."""
        gates_t = gate_table(self.library)
        out: list[Gate] = []
        row = self.rows[index].copy()
        i = index
        while self.last[i] >= 0:
            j = int(self.last[i])
            out.append(self.library.gates[j])
            row = gates_t[j][row]  # strip the last gate: q = g⁻¹∘p = g∘p
            i = int(self.lookup(row[None, :])[0])
            if i < 0:  # pragma: no cover - a corrupt table
                raise RuntimeError("broken distance table")
        return out[::-1]


def default_depth(library: Library) -> int:
    """The depth :func:`distance_table` reaches under the size caps (0 unless every gate is self-inverse)."""
    if not library.involutive:
        return 0
    return distance_table(library, None).depth


@memo(maxsize=8)
def distance_table(library: Library, depth: int | None) -> DistanceTable:
    """Breadth-first table of every function of distance ≤ ``depth``.

    With ``depth=None`` layers are added while the caps allow; the depth reached is
    deterministic for a library (it depends on nothing else), so a certificate can
    name it and the checker rebuild the same table.
    """
    if depth is None:
        target = 64
    else:
        target = depth
    gates_t = gate_table(library)
    size = gates_t.shape[1]
    ident = np.arange(size, dtype=np.uint8)[None, :]
    layers_rows = [ident]
    layers_last = [np.array([-1], dtype=np.int16)]
    seen = np.sort(_pack(ident))
    frontier = ident
    total = 1
    built = 0
    cap = MAX_ENTRIES if size <= 16 else MAX_ENTRIES_WIDE
    for _ in range(target):
        cand_bytes = len(frontier) * len(library.gates) * size
        if depth is None and (cand_bytes > MAX_CANDIDATE_BYTES or total >= cap):
            break
        if depth is None and size > 16 and total + len(frontier) * len(library.gates) > cap:
            break
        cand_rows, cand_last, cand_keys = [], [], []
        for j in range(len(library.gates)):
            rows_j = gates_t[j][frontier]  # new_p[i] = g_j(p[i])
            keys_j = _pack(rows_j)
            pos = np.searchsorted(seen, keys_j)
            pos[pos >= len(seen)] = 0
            fresh = seen[pos] != keys_j
            cand_rows.append(rows_j[fresh])
            cand_keys.append(keys_j[fresh])
            cand_last.append(np.full(int(fresh.sum()), j, dtype=np.int16))
            del rows_j, keys_j, pos, fresh
        keys = np.concatenate(cand_keys)
        _, first = np.unique(keys, return_index=True)
        rows = np.concatenate(cand_rows)[first]
        last = np.concatenate(cand_last)[first]
        keys = keys[first]
        del cand_rows, cand_last, cand_keys
        if len(rows) == 0:
            break
        if depth is None and total + len(rows) > cap:
            break
        built += 1
        total += len(rows)
        layers_rows.append(rows)
        layers_last.append(last)
        seen = np.sort(np.concatenate([seen, keys]))
        frontier = rows
    all_rows = np.concatenate(layers_rows)
    all_last = np.concatenate(layers_last)
    all_dist = np.concatenate([np.full(len(r), d, dtype=np.uint8) for d, r in enumerate(layers_rows)])
    keys = _pack(all_rows)
    order = np.argsort(keys, kind="stable")
    # When a layer came out empty the table holds the whole reachable set: exact for all.
    full = len(layers_rows) - 1 < target and built == len(layers_rows) - 1 and _saturated(layers_rows, library)
    return DistanceTable(
        library,
        FULL if full else built,
        all_rows[order],
        keys[order],
        all_dist[order],
        all_last[order],
    )


FULL = 10**6  # depth of a table that holds every reachable function


def _saturated(layers: list[np.ndarray], library: Library) -> bool:
    """True when the last expansion found nothing new (the reachable set is complete)."""
    gates_t = gate_table(library)
    last = layers[-1]
    keys = np.sort(np.concatenate([_pack(x) for x in layers]))
    for j in range(len(library.gates)):
        k = _pack(gates_t[j][last])
        pos = np.searchsorted(keys, k)
        pos[pos >= len(keys)] = 0
        if np.any(keys[pos] != k):
            return False
    return True


@dataclass(frozen=True)
class MeetResult:
    """``exact`` is the optimum when found (with ``circuit``); else ``lower`` is a proven bound."""

    lower: int
    exact: int | None
    circuit: Circuit | None
    depth: int
    extended: bool = False


def extended_meet(perm: tuple[int, ...], library: Library, depth: int | None = None, budget: int = 40) -> MeetResult:
    """Meet in the middle, then one gate more: exact up to ``2D + 1``, else bound ``2D + 2``.

    ``f`` needs ``2D + 1`` gates exactly when, for some gate ``g``, ``g∘f`` (``f`` then
    ``g``) needs ``2D`` — its optimal circuit followed by ``g`` (self-inverse) gives
    ``f``, and the last gate of an optimal circuit of ``f`` is such a ``g``.  Tried only
    when the library has at most ``budget`` gates (the cost is one test per gate).
    """
    base = meet_in_the_middle(perm, library, depth)
    if base.exact is not None or len(library.gates) > budget:
        return base
    table = distance_table(library, depth)
    f = np.asarray(perm, dtype=np.int64)
    gates_t = gate_table(library)
    for j, g in enumerate(library.gates):
        h = tuple(int(v) for v in gates_t[j][f])  # h = g∘f
        sub = meet_in_the_middle(h, library, depth)
        if sub.exact is not None and sub.exact == 2 * table.depth and sub.circuit is not None:
            circ = Circuit(library.lines, sub.circuit.gates + (g,))
            if circ.permutation() != tuple(perm):
                raise RuntimeError("internal error: extended meet-in-the-middle circuit is wrong")
            return MeetResult(len(circ), len(circ), circ, table.depth, extended=True)
    return MeetResult(2 * table.depth + 2, None, None, table.depth, extended=True)


def meet_in_the_middle(perm: tuple[int, ...], library: Library, depth: int | None = None) -> MeetResult:
    """Optimum of ``perm`` if it is at most ``2·depth`` (with a circuit), else the bound ``2·depth + 1``."""
    table = distance_table(library, depth)
    f = np.asarray(perm, dtype=np.uint8)
    best, best_r, best_q = None, -1, -1
    for start in range(0, len(table.rows), _CHUNK):
        r_rows = table.rows[start : start + _CHUNK]
        q_idx = table.lookup(f[r_rows])  # Q = f∘R
        hit = np.nonzero(q_idx >= 0)[0]
        if len(hit) == 0:
            continue
        totals = table.dist[start + hit].astype(np.int64) + table.dist[q_idx[hit]]
        k = int(np.argmin(totals))
        if best is None or int(totals[k]) < best:
            best, best_r, best_q = int(totals[k]), start + int(hit[k]), int(q_idx[hit[k]])
    if best is None:
        if table.depth == FULL:
            raise NoCircuitError(
                f"no circuit of library {library.name} computes the function: the table holds every "
                f"function its gates generate ({len(table.rows)} of them)"
            )
        return MeetResult(2 * table.depth + 1, None, None, table.depth)
    r_gates = table.circuit_of(best_r)
    q_gates = table.circuit_of(best_q)
    circ = Circuit(library.lines, tuple(reversed(r_gates)) + tuple(q_gates))
    if circ.permutation() != tuple(perm) or len(circ) != best:
        raise RuntimeError("internal error: meet-in-the-middle circuit does not compute the function")
    return MeetResult(best, best, circ, table.depth)
