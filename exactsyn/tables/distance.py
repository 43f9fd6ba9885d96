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

import time
from dataclasses import dataclass

import numpy as np

from exactsyn.caches import memo
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import Library, gate_table
from exactsyn.errors import NoCircuitError
from exactsyn.tables.bfs import row_keys

# Build the next layer only while the table stays below this many entries and the
# candidate rows of one expansion stay below MAX_CANDIDATES (memory ≈ candidates × 2^n bytes).
MAX_ENTRIES = 6_000_000
MAX_ENTRIES_WIDE = 1_000_000  # rows of more than 16 entries (5+ lines) use slower byte keys
MAX_CANDIDATE_BYTES = 160 << 20
#: Finishing a table (concatenating, sorting) takes about as long as building its largest
#: layer (measured: 3.0 s against 4.0 s for MCT on 4 lines); a build with a deadline does not
#: start it with less time left than this share of that layer's time.
FINISH_FACTOR = 1.0
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


class _Builder:
    """A distance table under construction, one breadth-first layer at a time.

    :meth:`build` adds layers until the table is complete or a deadline passes; the
    layers built so far are kept, so a later call (with more time) resumes where the last
    one stopped.  The finished table is the same whatever the deadlines were (the layers
    depend on the library and the caps only), so certificates can name its depth.
    """

    def __init__(self, library: Library, depth: int | None) -> None:
        self.library = library
        self.depth = depth
        self.target = 64 if depth is None else depth
        size = 1 << library.lines
        ident = np.arange(size, dtype=np.uint8)[None, :]
        self.layers_rows: list[np.ndarray] = [ident]
        self.layers_last: list[np.ndarray] = [np.array([-1], dtype=np.int16)]
        self.seen = np.sort(_pack(ident))
        self.frontier = ident
        self.total = 1
        self.built = 0
        self.stopped = False  # no further layer will be added
        self.table: DistanceTable | None = None
        self.layer_seconds = 0.0  # time the last layer took: finishing (sorting) takes about as long
        self.layer_frontier = 0  # the frontier that layer was built from

    def build(self, deadline: float | None = None) -> DistanceTable | None:
        """The finished table, or ``None`` when ``deadline`` (a ``time.perf_counter()`` value) passed first."""
        while self.table is None:
            now = time.perf_counter()
            if deadline is not None and now >= deadline:
                return None
            if not self.stopped and self._capped():
                self.stopped = True
            if self.stopped or self.built >= self.target:
                if deadline is not None and deadline - now < FINISH_FACTOR * self.layer_seconds:
                    return None  # sorting the table would overrun the deadline
                self.table = self._finish()
            else:
                if deadline is not None and deadline - now < self._next_layer_estimate():
                    return None  # the next layer would overrun the deadline
                frontier = len(self.frontier)
                if not self._layer(deadline):
                    return None
                self.layer_seconds = time.perf_counter() - now
                self.layer_frontier = frontier
        return self.table

    def _next_layer_estimate(self) -> float:
        """Seconds the next layer may take: the last one's time scaled by the frontier's growth, × 1.5."""
        if self.layer_frontier == 0:
            return 0.0
        return 1.5 * self.layer_seconds * len(self.frontier) / self.layer_frontier

    def _capped(self) -> bool:
        """Do the size caps forbid the next layer (default depth only)?"""
        if self.depth is not None:
            return False
        size = 1 << self.library.lines
        cap = MAX_ENTRIES if size <= 16 else MAX_ENTRIES_WIDE
        candidates = len(self.frontier) * len(self.library.gates)
        if candidates * size > MAX_CANDIDATE_BYTES or self.total >= cap:
            return True
        return size > 16 and self.total + candidates > cap

    def _layer(self, deadline: float | None) -> bool:
        """Add one layer (or decide to stop); False when the deadline passed in between (nothing kept)."""
        library, depth = self.library, self.depth
        gates_t = gate_table(library)
        size = gates_t.shape[1]
        cap = MAX_ENTRIES if size <= 16 else MAX_ENTRIES_WIDE
        frontier = self.frontier
        cand_rows, cand_last, cand_keys = [], [], []
        seen = self.seen
        started = time.perf_counter()
        for j in range(len(library.gates)):
            if deadline is not None and time.perf_counter() >= deadline:
                return False
            rows_j = gates_t[j][frontier]  # new_p[i] = g_j(p[i])
            keys_j = _pack(rows_j)
            pos = np.searchsorted(seen, keys_j)
            pos[pos >= len(seen)] = 0
            fresh = seen[pos] != keys_j
            cand_rows.append(rows_j[fresh])
            cand_keys.append(keys_j[fresh])
            cand_last.append(np.full(int(fresh.sum()), j, dtype=np.int16))
            del rows_j, keys_j, pos, fresh
        now = time.perf_counter()
        if deadline is not None and deadline - now < 0.7 * (now - started):
            return False  # merging the candidates takes about 0.7 of the time it took to make them
        keys = np.concatenate(cand_keys)
        _, first = np.unique(keys, return_index=True)
        rows = np.concatenate(cand_rows)[first]
        last = np.concatenate(cand_last)[first]
        keys = keys[first]
        del cand_rows, cand_last, cand_keys
        if len(rows) == 0 or (depth is None and self.total + len(rows) > cap):
            self.stopped = True
            return True
        self.built += 1
        self.total += len(rows)
        self.layers_rows.append(rows)
        self.layers_last.append(last)
        self.seen = np.sort(np.concatenate([seen, keys]))
        self.frontier = rows
        return True

    def _finish(self) -> DistanceTable:
        layers_rows, library = self.layers_rows, self.library
        all_rows = np.concatenate(layers_rows)
        all_last = np.concatenate(self.layers_last)
        all_dist = np.concatenate([np.full(len(r), d, dtype=np.uint8) for d, r in enumerate(layers_rows)])
        keys = _pack(all_rows)
        order = np.argsort(keys, kind="stable")
        # When a layer came out empty the table holds the whole reachable set: exact for all.
        full = (
            len(layers_rows) - 1 < self.target
            and self.built == len(layers_rows) - 1
            and _saturated(layers_rows, library)
        )
        self.frontier = self.seen = np.empty(0, dtype=np.uint8)  # free the working arrays
        return DistanceTable(
            library,
            WHOLE_GROUP_DEPTH if full else self.built,
            all_rows[order],
            keys[order],
            all_dist[order],
            all_last[order],
        )


@memo(maxsize=8)
def _builder(library: Library, depth: int | None) -> _Builder:
    return _Builder(library, depth)


def distance_table(library: Library, depth: int | None) -> DistanceTable:
    """Breadth-first table of every function of distance ≤ ``depth`` (built once per process).

    With ``depth=None`` layers are added while the caps allow; the depth reached is
    deterministic for a library (it depends on nothing else), so a certificate can
    name it and the checker rebuild the same table.
    """
    table = _builder(library, depth).build(None)
    assert table is not None
    return table


def distance_table_by(library: Library, depth: int | None, deadline: float | None) -> DistanceTable | None:
    """:func:`distance_table`, or ``None`` when ``deadline`` (``time.perf_counter()``) passes first.

    The layers built before the deadline are kept for the next call in this process.
    """
    return _builder(library, depth).build(deadline)


#: The depth recorded for a table that holds every function the library generates (the whole group).
WHOLE_GROUP_DEPTH = 10**6


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
    out = _extended(perm, library, distance_table(library, depth), depth, budget, None)
    assert out is not None
    return out


def extended_meet_by(
    perm: tuple[int, ...], library: Library, deadline: float | None, budget: int = 40
) -> MeetResult | None:
    """:func:`extended_meet` on the default table, within a deadline (``time.perf_counter()``).

    ``None`` when the table is not built by then.  When the deadline passes during the
    extension step the plain meet-in-the-middle result is returned (its bound ``2D + 1``
    is proven on its own), with ``extended=False``, exactly as the checker re-derives it.
    """
    table = distance_table_by(library, None, deadline)
    if table is None:
        return None
    return _extended(perm, library, table, None, budget, deadline)


def _extended(
    perm: tuple[int, ...],
    library: Library,
    table: DistanceTable,
    depth: int | None,
    budget: int,
    deadline: float | None,
) -> MeetResult | None:
    base = meet_in_the_middle(perm, library, depth)
    if base.exact is not None or len(library.gates) > budget:
        return base
    f = np.asarray(perm, dtype=np.int64)
    gates_t = gate_table(library)
    for j, g in enumerate(library.gates):
        if deadline is not None and time.perf_counter() >= deadline:
            return base
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
        if table.depth == WHOLE_GROUP_DEPTH:
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
