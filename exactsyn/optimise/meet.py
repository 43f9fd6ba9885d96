"""4-line windows: proven minimum gate counts from a distance table and a bounded meet in the middle.

A breadth-first distance table of depth ``D`` (:func:`exactsyn.tables.distance.distance_table`:
every function of at most ``D`` gates with its distance; ``D = 5`` for NCT and MCT on 4
lines, whose layer sizes the tests compare with Golubitsky, Falconer, Maslov, "Synthesis
of the optimal 4-bit reversible circuits", DAC 2010) answers a window in one of two ways:

* its permutation ``f`` is in the table: the optimum is its distance, with a circuit;
* otherwise every circuit has more than ``D`` gates, and for ``d = D+1, D+2, …`` (up to
  ``D + extra``, ``2D`` and one less than the window's gate count) the question "does a
  circuit of ``d`` gates exist?" is settled exactly: cut such a circuit after its first
  ``d − D`` gates, a function ``P`` with ``dist(P) ≤ d − D``; the rest ``f∘P⁻¹`` has at
  most ``D`` gates.  Every gate is self-inverse, so ``R = P⁻¹`` is in the table with the
  same distance, and it suffices to look ``f∘R`` up for every ``R`` of distance at most
  ``d − D`` and keep the least ``dist(R) + dist(f∘R)``.  The first ``d`` that succeeds is
  the optimum (the method of the distance module, bounded so that only the few thousand
  shortest entries are composed).

Only the gate count is minimised, so this answers the ``gates`` objective only, for
libraries of self-inverse gates.  The table is built once per library and process (3 s
and about 60 MB for NCT on 4 lines).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from exactsyn.core.circuit import Circuit
from exactsyn.core.library import Edge, Library
from exactsyn.optimise.allowed_gates import GateSet
from exactsyn.optimise.resynthesis import Optimum, WindowProblem, WindowResynthesis
from exactsyn.tables.distance import FULL, DistanceTable, distance_table

#: Extra layers beyond the table depth that the bounded meet in the middle tries.
DEFAULT_EXTRA = 3


@dataclass(frozen=True, eq=False)
class _Layers:
    table: DistanceTable
    by_distance: np.ndarray  # table indices sorted by distance
    ends: np.ndarray  # ends[d]: entries of distance <= d come first in by_distance


class MeetResynthesis:
    """:class:`~exactsyn.optimise.resynthesis.WindowResynthesis` for 4-line windows (gates objective)."""

    def __init__(self, gates: GateSet, extra: int = DEFAULT_EXTRA) -> None:
        self.gates = gates
        self.extra = extra
        self._layers: dict[tuple[Edge, ...], _Layers | None] = {}
        self._memo: dict[tuple[tuple[Edge, ...], tuple[int, ...]], Optimum | None] = {}

    @property
    def max_lines(self) -> int:
        return 4

    def layers(self, coupling: tuple[Edge, ...]) -> _Layers | None:
        if coupling not in self._layers:
            library = self.gates.window_library(4, coupling)
            if library is None or not library.involutive:
                self._layers[coupling] = None
            else:
                table = distance_table(library, None)
                order = np.argsort(table.dist, kind="stable")
                ends = np.searchsorted(table.dist[order], np.arange(int(table.dist.max()) + 1), side="right")
                self._layers[coupling] = _Layers(table, order, ends)
        return self._layers[coupling]

    def method(self, library: Library, depth: int) -> str:
        return f"distance table of depth {depth} and bounded meet in the middle, library {library.name} (gates)"

    def optimum(self, problem: WindowProblem) -> Optimum | None:
        if problem.lines != 4:
            return None
        key = (problem.coupling, problem.perm)
        if key in self._memo:
            return self._memo[key]
        result = self._solve(problem)
        if result is not None or problem.below is None:
            self._memo[key] = result
        return result

    def _solve(self, problem: WindowProblem) -> Optimum | None:
        layers = self.layers(problem.coupling)
        if layers is None:
            return None
        table = layers.table
        f = np.asarray(problem.perm, dtype=np.uint8)
        hit = int(table.lookup(f[None, :])[0])
        if hit >= 0:
            gates = tuple(table.circuit_of(hit))
            return Optimum(gates, len(gates), len(gates), self.method(table.library, table.depth))
        if table.depth == FULL:  # pragma: no cover - a full table holds every reachable function
            return None
        top = min(2 * table.depth, table.depth + self.extra)
        if problem.below is not None:
            top = min(top, problem.below - 1)
        for d in range(table.depth + 1, top + 1):
            r_index = layers.by_distance[: layers.ends[d - table.depth]]
            q_index = table.lookup(f[table.rows[r_index]])  # Q = f∘R
            found = np.nonzero(q_index >= 0)[0]
            if len(found) == 0:
                continue
            totals = table.dist[r_index[found]].astype(np.int64) + table.dist[q_index[found]]
            k = int(np.argmin(totals))
            if int(totals[k]) > d:  # pragma: no cover - the cut argument bounds every match by d
                continue
            r_gates = table.circuit_of(int(r_index[found[k]]))
            q_gates = table.circuit_of(int(q_index[found[k]]))
            circ = Circuit(4, tuple(reversed(r_gates)) + tuple(q_gates))
            if circ.permutation() != problem.perm:
                raise RuntimeError("internal error: meet-in-the-middle circuit does not compute the window")
            return Optimum(circ.gates, len(circ), len(circ), self.method(table.library, table.depth))
        return None


class CombinedResynthesis:
    """Windows of up to 3 lines from one answerer, 4-line windows from another."""

    def __init__(self, small: WindowResynthesis, four: MeetResynthesis) -> None:
        self.small = small
        self.four = four

    @property
    def max_lines(self) -> int:
        return 4

    def optimum(self, problem: WindowProblem) -> Optimum | None:
        if problem.lines == 4:
            return self.four.optimum(problem)
        return self.small.optimum(problem)
