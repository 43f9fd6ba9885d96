"""One interface to every exact table of gate counts; the search, the fallback, the optimiser
and the checker ask it instead of testing line counts themselves.

Three kinds of table know minimum gate counts:

* **class tables** (:mod:`exactsyn.tables.engine`; cached on disk, for every line count the
  key engine has): every function up to the table depth by lookup, deeper ones by meet in
  the middle (Golubitsky, Falconer & Maslov, DAC 2010);
* **distance tables** (:mod:`exactsyn.tables.distance`; built in memory, up to 4 lines);
* **hashed distance tables** (:mod:`exactsyn.tables.hashed`; 5 lines).

Each is a :class:`GateOracle`, asked three things:

* :meth:`~GateOracle.optimum` — the optimum of this function with an optimal circuit, or a
  proven lower bound (a :class:`Verdict`, carrying the claim a certificate records);
* :meth:`~GateOracle.sizes` — exact gate counts of many functions where the table holds them
  directly (−1 beyond), for dynamic programmes over runs of gates;
* :meth:`~GateOracle.circuit` — an optimal circuit of a function the table holds directly
  (bounded meet in the middle for a distance table): the best replacement for a window.

:func:`table_roles` says which tables serve a library on its lines (:class:`TableRoles`):
a class table of exactly its gates (optimum), of a larger library (lower bounds only), of a
smaller library (its circuits are upper bounds), and an in-memory distance table, with the
rule of when each pays.  A new table (a 5-line class table) is one more implementation or
one more line count of the engine: nothing that asks needs to change.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cached_property
from typing import TYPE_CHECKING, Protocol

import numpy as np

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import Library
from exactsyn.tables.deep import ScanSettings
from exactsyn.tables.descent import Descent, commutation
from exactsyn.tables.distance import (
    WHOLE_GROUP_DEPTH,
    DistanceTable,
    MeetResult,
    distance_table,
    distance_table_by,
    extended_meet,
    extended_meet_by,
    meet_in_the_middle,
)
from exactsyn.tables.gate_keys import LAYERS
from exactsyn.tables.hashed import five_meet, five_next_depth, five_table_ok
from exactsyn.tables.keys import engine_lines, layout

if TYPE_CHECKING:  # pragma: no cover
    from exactsyn.tables.engine import MeetProgress, Tables

#: Class-table libraries, smallest gate set first (the tightest bound for a sub-library comes first).
TABLE_ORDER = ("nct", "mct", "mixed")
#: The one line the search adds when a class table would have answered but none is cached,
#: per line count whose tables are worth suggesting (``{library}`` is the table's library).
HINTS = {
    4: "4-line functions are settled in seconds once the class tables exist: "
    "run `exactsyn tables build --library {library}` once",
    5: "5-line functions of up to 12 gates are proven in minutes once the 5-line class table exists: "
    "run `exactsyn tables build --lines 5 --library {library}` once (a few minutes, 4 GB for mct)",
}
HINT = HINTS[4]
#: The line count whose missing layer tables the search suggests building (:data:`LAYER_HINT`).
HINT_LINES = 4
#: The note when a depth would have been settled by a layer table that is not cached.
LAYER_HINT = (
    "the depth of {lines}-line functions is settled in seconds from a layer table: "
    "run `exactsyn tables build --library {name}` once"
)
#: A cached class table at least this deep reaches further than any distance table (12 gates at most).
DEEP_CLASS_TABLE = 6


@dataclass(frozen=True)
class ClassTableClaim:
    """What a class table established: ``value`` is the optimum (``exact``) or a lower bound.

    ``library`` is the table's library (the search's library when ``exact``, else a
    library containing all its gates); ``content_hash`` names the table's files; ``lines``
    its line count.
    """

    library: str
    depth: int
    content_hash: str
    value: int
    exact: bool
    method: str
    seconds: float
    lines: int = 4

    def to_dict(self) -> dict[str, object]:
        """The JSON form (results and certificates); ``format`` names the table format."""
        return {
            "library": self.library,
            "lines": self.lines,
            "depth": self.depth,
            "content_hash": self.content_hash,
            "format": f"exactsyn-tables{self.lines}/1",
            "value": self.value,
            "exact": self.exact,
            "method": self.method,
            "seconds": round(self.seconds, 3),
        }


@dataclass(frozen=True)
class TableBound:
    """A bound from a distance table, re-derivable from its depth (and ``extended``: one gate more)."""

    value: int  # every circuit has at least this many gates
    exact: bool  # value is the optimum (a circuit of that size was found)
    depth: int
    extended: bool

    def to_dict(self) -> dict[str, object]:
        """The JSON form (results and certificates): ``depth`` is ``"full"`` for a table of every function."""
        depth: int | str = "full" if self.depth >= WHOLE_GROUP_DEPTH else self.depth
        return {"value": self.value, "exact": self.exact, "depth": depth, "extended": self.extended}


@dataclass(frozen=True)
class Verdict:
    """What a table proved about one function: every circuit needs at least ``lower`` gates;
    ``circuit`` is an optimal one (of ``lower`` gates, simulated) when the optimum is known."""

    lower: int
    circuit: Circuit | None
    claim: ClassTableClaim | TableBound

    @property
    def exact(self) -> bool:
        return self.circuit is not None


class GateOracle(Protocol):
    """An exact table of minimum gate counts for one library on its lines (module docstring)."""

    @property
    def library(self) -> Library: ...

    def describe(self) -> str: ...

    def optimum(self, perm: tuple[int, ...], deadline: float | None = None) -> Verdict | None:
        """The optimum and a circuit, or the lower bound reached; None when the table is not
        ready by ``deadline`` (a ``time.perf_counter()`` value)."""
        ...

    def sizes(self, perms: Sequence[tuple[int, ...]]) -> list[int]:
        """Exact gate counts of the functions the table holds directly, −1 for the others."""
        ...

    def circuit(self, perm: tuple[int, ...], max_gates: int | None = None) -> tuple[Gate, ...] | None:
        """An optimal circuit (application order) of a function the table can settle quickly,
        with at most ``max_gates`` gates; None otherwise."""
        ...


def _checked(circuit: Circuit, perm: tuple[int, ...], library: Library) -> Circuit:
    """Simulate a table's circuit before it leaves the tables."""
    if circuit.permutation() != tuple(perm) or not all(library.contains(g) for g in circuit.gates):
        raise RuntimeError("internal error: a table's circuit does not compute the function")
    return circuit


# ----------------------------------------------------------------------------- class tables
class ClassOracle:
    """A cached class table of ``name`` on ``lines`` lines.

    ``library`` is the library it answers for exactly (same gates), or None when it only
    bounds a library with fewer gates (then :meth:`optimum` gives lower bounds, no circuits).
    """

    def __init__(self, name: str, lines: int, library: Library | None, scan: ScanSettings | None = None) -> None:
        self.name, self.lines, self._library, self.scan = name, lines, library, scan

    @cached_property
    def table(self) -> Tables:
        from exactsyn.tables.engine import load  # numba loads with the first table

        return load(self.name, lines=self.lines)

    @property
    def library(self) -> Library:
        if self._library is None:
            from exactsyn.core.library import make_library

            return make_library(self.name, self.lines)
        return self._library

    @property
    def depth(self) -> int:
        return self.table.depth

    def describe(self) -> str:
        if self.name.endswith(LAYERS):
            return f"{self.lines}-line layer table of {self.name[: -len(LAYERS)]}"
        return f"{self.lines}-line class table of {self.name}"

    def optimum(
        self,
        perm: tuple[int, ...],
        deadline: float | None = None,
        progress: MeetProgress | None = None,
        known: int | None = None,
    ) -> Verdict:
        """The optimum in the table's steps (gates; layers for a layer table) and a circuit, or a
        bound; ``progress(what, classes done, classes)`` hears of long scans.  ``known``: the
        caller holds a circuit of that many gates, so the scans stop once the bound reaches it
        (ignored by a layer table)."""
        t0 = time.perf_counter()
        t = self.table
        left = None if deadline is None else max(0.0, deadline - t0)
        known = None if self.name.endswith(LAYERS) else known
        ans = t.synthesise(perm, time_limit=left, scan=self.scan, progress=progress, known=known)
        seconds = time.perf_counter() - t0
        if ans.optimal and ans.gates is not None and ans.gate_count is not None and self._library is not None:
            circuit = _checked(Circuit(self.lines, tuple(ans.gates)), perm, self._library)
            claim = ClassTableClaim(self.name, t.depth, t.content_hash, ans.gate_count, True, ans.method, seconds,
                                    self.lines)  # fmt: skip
            return Verdict(ans.gate_count, circuit, claim)
        bound = ans.gate_count if ans.optimal and ans.gate_count is not None else ans.lower_bound
        method = ans.method if self._library is not None else f"{ans.method} over the larger library {self.name}"
        claim = ClassTableClaim(self.name, t.depth, t.content_hash, bound, False, method, seconds, self.lines)
        return Verdict(bound, None, claim)

    def sizes(self, perms: Sequence[tuple[int, ...]]) -> list[int]:
        lay = layout(self.lines)
        if not perms:
            return []
        return [int(v) for v in self.table.levels_of(lay.array([lay.pack(p) for p in perms]))]

    def circuit(self, perm: tuple[int, ...], max_gates: int | None = None) -> tuple[Gate, ...] | None:
        j = self.table.level_of(perm)
        if j is None or (max_gates is not None and j > max_gates):
            return None
        ans = self.table.synthesise(perm)
        return None if ans.gates is None else tuple(ans.gates)

    def descent(self, perm: tuple[int, ...], gates: int, deadline: float | None = None) -> Descent | None:
        """Every optimal circuit of ``perm`` (which needs ``gates`` gates) as a DAG of descents
        (:mod:`exactsyn.tables.descent`); None for a table that only bounds the library."""
        if self._library is None:
            return None
        from exactsyn.tables.engine import TableLookup  # numba loads with the first table

        lookup = TableLookup(self.table)
        return Descent(lookup, self.table.layout.pack(perm), gates, commutation(lookup), deadline)

    def claim(self, value: int, method: str, seconds: float = 0.0) -> ClassTableClaim:
        """The claim a certificate records for ``value`` proven exactly from this table."""
        t = self.table
        return ClassTableClaim(self.name, t.depth, t.content_hash, value, True, method, seconds, self.lines)


# ----------------------------------------------------------------------------- distance tables
#: Gate counts from which the search consults a distance table, by line count: building the
#: 4-line table takes seconds, while SAT refutes k ≤ 7 on 4 lines in well under one.
DISTANCE_FROM = {1: 0, 2: 0, 3: 0, 4: 8}
#: The table is not started when less time than this is left (its build stops at the
#: deadline anyway; this leaves short time limits to SAT).
DISTANCE_MIN_SECONDS = {1: 0.0, 2: 0.0, 3: 0.0, 4: 5.0}
#: Extra layers beyond the table depth that :meth:`DistanceOracle.circuit` tries.
WINDOW_EXTRA = 3


def _verdict(mr: MeetResult, library: Library, perm: tuple[int, ...]) -> Verdict:
    exact = mr.exact is not None and mr.circuit is not None
    value = mr.exact if exact and mr.exact is not None else mr.lower
    circuit = _checked(mr.circuit, perm, library) if exact and mr.circuit is not None else None
    return Verdict(value, circuit, TableBound(value, exact, mr.depth, mr.extended))


class DistanceOracle:
    """A breadth-first distance table of every function up to a depth (:mod:`exactsyn.tables.distance`).

    ``depth=None`` is the default depth the size caps allow, built layer by layer under the
    search's deadline (a certificate records the depth reached); a given ``depth`` (and
    ``extended``) re-derives a recorded bound exactly, as the checker does.
    """

    def __init__(self, library: Library, depth: int | None = None, extended: bool = True) -> None:
        self._library, self.depth, self.extended = library, depth, extended

    @property
    def library(self) -> Library:
        return self._library

    def describe(self) -> str:
        return f"distance table of {self._library.name}"

    def pays_at(self, k: int, left: float | None) -> bool:
        """Should the search consult the table before asking SAT for ``k`` gates (``left`` seconds left)?"""
        lines = self._library.lines
        room = left is None or left >= DISTANCE_MIN_SECONDS.get(lines, 0.0)
        return room and k >= DISTANCE_FROM.get(lines, 99)

    def ready(self) -> bool:
        """Is the default table already built in this process (no time spent here)?"""
        return distance_table_by(self._library, None, deadline=0.0) is not None

    def optimum(self, perm: tuple[int, ...], deadline: float | None = None) -> Verdict | None:
        mr: MeetResult | None
        if self.depth is None:
            mr = extended_meet_by(perm, self._library, deadline)
        else:
            meet = extended_meet if self.extended else meet_in_the_middle
            mr = meet(perm, self._library, self.depth)
        return None if mr is None else _verdict(mr, self._library, perm)

    @cached_property
    def _table(self) -> DistanceTable:
        return distance_table(self._library, self.depth)

    @property
    def reach(self) -> int:
        """The depth of the built table: every function of at most this many gates is in it."""
        return self._table.depth

    @cached_property
    def _by_distance(self) -> tuple[np.ndarray, np.ndarray]:
        """Table indices sorted by distance, and where each distance ends in that order."""
        t = self._table
        order = np.argsort(t.dist, kind="stable")
        ends = np.searchsorted(t.dist[order], np.arange(int(t.dist.max()) + 1), side="right")
        return order, ends

    def sizes(self, perms: Sequence[tuple[int, ...]]) -> list[int]:
        if not perms:
            return []
        t = self._table
        idx = t.lookup(np.asarray(perms, dtype=np.uint8))
        return [int(t.dist[i]) if i >= 0 else -1 for i in idx]

    def circuit(self, perm: tuple[int, ...], max_gates: int | None = None) -> tuple[Gate, ...] | None:
        """Lookup, then a meet in the middle bounded to :data:`WINDOW_EXTRA` layers past the depth.

        Beyond the depth ``D`` every circuit has more than ``D`` gates; for ``d = D+1, …`` a
        circuit of ``d`` gates, cut after its first ``d − D`` gates, is ``R⁻¹`` then ``Q =
        f∘R`` with ``dist(R) ≤ d − D`` and ``dist(Q) ≤ D`` (every gate is self-inverse, so
        ``R = P⁻¹`` is in the table).  The first ``d`` with a match is the optimum.
        """
        t = self._table
        f = np.asarray(perm, dtype=np.uint8)
        hit = int(t.lookup(f[None, :])[0])
        if hit >= 0:
            gates = tuple(t.circuit_of(hit))
            return gates if max_gates is None or len(gates) <= max_gates else None
        if t.depth == WHOLE_GROUP_DEPTH:  # pragma: no cover - a full table holds every reachable function
            return None
        order, ends = self._by_distance
        top = min(2 * t.depth, t.depth + WINDOW_EXTRA)
        if max_gates is not None:
            top = min(top, max_gates)
        for d in range(t.depth + 1, top + 1):
            r_index = order[: ends[d - t.depth]]
            q_index = t.lookup(f[t.rows[r_index]])  # Q = f∘R
            found = np.nonzero(q_index >= 0)[0]
            if len(found) == 0:
                continue
            totals = t.dist[r_index[found]].astype(np.int64) + t.dist[q_index[found]]
            k = int(np.argmin(totals))
            r_gates = t.circuit_of(int(r_index[found[k]]))
            q_gates = t.circuit_of(int(q_index[found[k]]))
            circ = Circuit(self._library.lines, tuple(reversed(r_gates)) + tuple(q_gates))
            return _checked(circ, perm, self._library).gates
        return None


class HashedOracle:
    """The hashed 5-line distance table of ``depth`` (:mod:`exactsyn.tables.hashed`)."""

    def __init__(self, library: Library, depth: int) -> None:
        self._library, self.depth = library, depth

    @property
    def library(self) -> Library:
        return self._library

    def describe(self) -> str:
        return f"distance table of {self._library.name}, depth {self.depth}"

    def pays_at(self, k: int, left: float | None) -> bool:
        return left is None or left >= 0.0  # once, from the first k: a fifth of a second (tables/hashed.py)

    def ready(self) -> bool:
        return False

    def optimum(self, perm: tuple[int, ...], deadline: float | None = None) -> Verdict | None:
        return _verdict(five_meet(perm, self._library, self.depth), self._library, perm)

    def sizes(self, perms: Sequence[tuple[int, ...]]) -> list[int]:
        return DistanceOracle(self._library, self.depth - 1).sizes(perms)

    def circuit(self, perm: tuple[int, ...], max_gates: int | None = None) -> tuple[Gate, ...] | None:
        return DistanceOracle(self._library, self.depth - 1).circuit(perm, max_gates)


def distance_oracle(library: Library) -> DistanceOracle | HashedOracle | None:
    """The in-memory distance table that serves ``library`` on its lines, or None.

    Up to 4 lines: the breadth-first table of a library of self-inverse gates (at most 256);
    5 lines: the hashed table at the depth :func:`~exactsyn.tables.hashed.five_next_depth` picks.
    """
    if library.lines <= 4 and library.involutive and len(library) <= 256:
        return DistanceOracle(library)
    if five_table_ok(library):
        depth = five_next_depth(0, None, None)
        return None if depth is None else HashedOracle(library, depth)
    return None


def recorded_distance_oracle(library: Library, bound: TableBound) -> DistanceOracle | HashedOracle | None:
    """The table a recorded :class:`TableBound` came from (the checker re-runs it), or None if none can."""
    if 1 <= bound.depth <= 4 and not bound.extended and five_table_ok(library):
        return HashedOracle(library, bound.depth)
    if library.lines <= 4 and library.involutive and 0 <= bound.depth <= WHOLE_GROUP_DEPTH:
        return DistanceOracle(library, bound.depth, bound.extended)
    return None


# ----------------------------------------------------------------------------- roles
def _gate_set(name: str, lines: int) -> frozenset[Gate]:
    from exactsyn.tables.gate_keys import gate_set

    return frozenset(gate_set(name, lines).gates)


def cached(name: str, lines: int = 4) -> bool:
    """Is a complete class table of ``name`` in the cache (files of the manifest's sizes; no hashing)?"""
    from exactsyn.tables.manage import info

    found = info(name, lines=lines)
    return bool(found) and found[0].present


@dataclass(frozen=True)
class TableRoles:
    """Which tables serve a library on its lines (see the module docstring).

    ``exact``: a cached class table of exactly its gates; ``bound``: a cached class table of
    the smallest larger library (lower bounds only); ``missing``: the class table that would
    answer but is not cached (the search suggests building it, in the words of ``hint``);
    ``inner``: a cached class table of the largest library inside it (its circuits are the
    library's); ``distance``: the in-memory distance table, unless the exact class table
    reaches further; ``layers``: a cached layer table of exactly its gates (steps are
    layers of gates on disjoint lines, so its optimum is the minimum depth).
    """

    exact: ClassOracle | None = None
    bound: ClassOracle | None = None
    missing: str | None = None
    inner: ClassOracle | None = None
    distance: DistanceOracle | HashedOracle | None = None
    layers: ClassOracle | None = None  # a cached layer table of exactly its gates: minimum depths
    missing_layers: str | None = None  # the layer table that would settle depths but is not cached
    hint: str = ""

    @property
    def class_table(self) -> ClassOracle | None:
        """The class table the search asks first: the exact one, else the bounding one."""
        return self.exact or self.bound


def table_roles(library: Library, scan: ScanSettings | None = None) -> TableRoles:
    """The tables of ``library`` (see :class:`TableRoles`), as the cache holds them now;
    ``scan`` says where the long scans of its class tables run (:mod:`exactsyn.tables.deep`)."""
    distance = distance_oracle(library)
    lines = library.lines
    if lines not in engine_lines():
        return TableRoles(distance=distance)
    gates = frozenset(library.gates)
    sets = {name: _gate_set(name, lines) for name in TABLE_ORDER}
    same = next((n for n in TABLE_ORDER if sets[n] == gates), None)
    above = next((n for n in TABLE_ORDER if gates <= sets[n]), None)
    inside = next((n for n in reversed(TABLE_ORDER) if sets[n] <= gates and cached(n, lines)), None)
    exact = ClassOracle(same, lines, library, scan) if same is not None and cached(same, lines) else None
    bound = None
    if exact is None and above is not None and above != same and cached(above, lines):
        bound = ClassOracle(above, lines, None, scan)
    missing = same if same is not None and exact is None and lines in HINTS else None
    hint = HINTS[lines].format(library=missing) if missing is not None else ""
    if exact is not None and exact.depth >= DEEP_CLASS_TABLE:
        distance = None  # the class table reaches further than the distance table (12 gates at most)
    inner = ClassOracle(inside, lines, library if inside == same else None) if inside is not None else None
    layered = None
    if same is not None and cached(same + LAYERS, lines):
        layered = ClassOracle(same + LAYERS, lines, library, scan)
    no_layers = same + LAYERS if same is not None and layered is None and lines == HINT_LINES else None
    return TableRoles(exact, bound, missing, inner, distance, layered, no_layers, hint)
