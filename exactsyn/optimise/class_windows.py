"""Windows of the class tables' line count answered from the cached class tables.

A window whose lines carry exactly the gates of a class table (``mct``, ``nct`` or
``mixed`` on 4 lines, or on 5 lines when that table is cached; no coupling restriction
inside the window) is settled from the table, through the tables' one interface
(:mod:`exactsyn.tables.oracle`):

* ``gates``: the optimum by lookup, or by meet in the middle bounded below the window's own
  gate count (Golubitsky, Falconer & Maslov, DAC 2010) — the window is only replaced when
  fewer gates exist, so a window of ``w`` gates needs at most ``w − 1 − R`` extra levels;
* ``gates-then-cost``: the least cost among the minimum-gate circuits, by the descent over
  every optimal circuit (:mod:`exactsyn.tables.descent`), each gate costing what it costs in
  the whole circuit.

Every answer is a proof by exhaustion over a table whose content hash names it (``exactsyn
tables verify`` re-proves the table from its files).  Windows the tables do not serve go
to the next answerer (:class:`ClassTableResynthesis` wraps one).
"""

from __future__ import annotations

import time

from exactsyn.core.costs import CostModel
from exactsyn.core.library import Edge
from exactsyn.optimise.allowed_gates import GateSet
from exactsyn.optimise.resynthesis import Optimum, WindowProblem, WindowResynthesis
from exactsyn.tables.oracle import ClassOracle, table_roles


def class_table_lines(gates: GateSet, lines: int = 4) -> int | None:
    """``lines`` when a cached class table serves this gate set's windows of that many lines, else None."""
    library = gates.window_library(lines, ())
    if library is None or gates.coupling:
        return None
    return lines if table_roles(library).exact is not None else None


class ClassTableResynthesis:
    """:class:`~exactsyn.optimise.resynthesis.WindowResynthesis`: windows of ``lines`` lines (4
    unless told) from the cached class table of their library, every other window from ``other``."""

    def __init__(
        self, gates: GateSet, circuit_lines: int, model: CostModel | None, other: WindowResynthesis, lines: int = 4
    ) -> None:
        self.gates, self.circuit_lines, self.model, self.other = gates, circuit_lines, model, other
        self.lines = lines
        self._tables: dict[tuple[Edge, ...], ClassOracle | None] = {}
        # the optimum, or the ``below`` under which none was found (a bounded search)
        self._memo: dict[tuple[tuple[Edge, ...], tuple[int, ...]], Optimum | int] = {}

    @property
    def max_lines(self) -> int:
        return max(self.lines, self.other.max_lines)

    def table(self, coupling: tuple[Edge, ...]) -> ClassOracle | None:
        if coupling not in self._tables:
            library = self.gates.window_library(self.lines, coupling)
            self._tables[coupling] = None if library is None else table_roles(library).exact
        return self._tables[coupling]

    def optimum(self, problem: WindowProblem, deadline: float | None = None) -> Optimum | None:
        """The window's optimum (module docstring); with ``deadline`` (a ``perf_counter`` time)
        the table's meet in the middle stops there, and a window cut short is not remembered."""
        table = self.table(problem.coupling) if problem.lines == self.lines else None
        if table is None:
            return self.other.optimum(problem) if problem.lines <= self.other.max_lines else None
        key = (problem.coupling, problem.perm)
        got = self._memo.get(key)
        if isinstance(got, Optimum):
            return got
        if got is not None and (got < 0 or (problem.below is not None and problem.below <= got)):
            return None  # nothing within reach (-1), or nothing below a bound at least as low
        found = self._solve(table, problem, deadline)
        if found is None and deadline is not None and time.perf_counter() >= deadline:
            return None  # cut short: not known that nothing is within reach
        self._memo[key] = found if found is not None else (-1 if problem.below is None else problem.below)
        return found

    def _solve(self, table: ClassOracle, problem: WindowProblem, deadline: float | None) -> Optimum | None:
        depth = table.depth
        if problem.below is not None:
            level = table.table.level_of(problem.perm)
            if level is not None and level >= problem.below:
                return None  # the optimum is known and of no use: no circuit is rebuilt for it
        extra = depth if problem.below is None else max(0, problem.below - 1 - depth)
        left = None if deadline is None else max(0.0, deadline - time.perf_counter())
        ans = table.table.synthesise(problem.perm, max_extra=min(depth, extra), time_limit=left)
        if not ans.optimal or ans.gates is None:
            return None
        method = f"{table.describe()} (depth {depth}, {ans.method})"
        if self.model is None:
            return Optimum(tuple(ans.gates), len(ans.gates), len(ans.gates), method)
        library = table.library
        costs = [self.model.cost(g, self.circuit_lines) for g in library.gates]
        descent = table.descent(problem.perm, len(ans.gates))
        assert descent is not None
        value, indices = descent.cheapest_circuit(costs)
        gates = tuple(library.gates[j] for j in indices)
        return Optimum(gates, len(gates), value, method + f", then the least {self.model.name} by descent")
