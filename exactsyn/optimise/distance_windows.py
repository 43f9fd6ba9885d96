"""4-line windows: proven minimum gate counts from a distance table and a bounded meet in the middle.

The window's library asks its breadth-first distance table through the tables' one
interface (:class:`exactsyn.tables.oracle.DistanceOracle`: every function of at most ``D``
gates with its distance; ``D = 5`` for NCT and MCT on 4 lines, whose layer sizes the tests
compare with Golubitsky, Falconer, Maslov, "Synthesis of the optimal 4-bit reversible
circuits", DAC 2010).  Its :meth:`~exactsyn.tables.oracle.DistanceOracle.circuit` answers a
window by lookup, or by a meet in the middle bounded to a few layers past ``D`` (and below
the window's own gate count), whose argument is in its docstring.

Only the gate count is minimised, so this answers the ``gates`` objective only, for
libraries of self-inverse gates.  The table is built once per library and process (3 s
and about 60 MB for NCT on 4 lines).
"""

from __future__ import annotations

from exactsyn.core.library import Edge, Library
from exactsyn.optimise.allowed_gates import GateSet
from exactsyn.optimise.resynthesis import Optimum, WindowProblem, WindowResynthesis
from exactsyn.tables.oracle import WINDOW_EXTRA, DistanceOracle


class MeetResynthesis:
    """:class:`~exactsyn.optimise.resynthesis.WindowResynthesis` for 4-line windows (gates objective)."""

    def __init__(self, gates: GateSet) -> None:
        self.gates = gates
        self._tables: dict[tuple[Edge, ...], DistanceOracle | None] = {}
        self._memo: dict[tuple[tuple[Edge, ...], tuple[int, ...]], Optimum | None] = {}

    @property
    def max_lines(self) -> int:
        return 4

    def table(self, coupling: tuple[Edge, ...]) -> DistanceOracle | None:
        """The distance table of the window library on these coupled lines (None: not self-inverse)."""
        if coupling not in self._tables:
            library = self.gates.window_library(4, coupling)
            ok = library is not None and library.involutive
            self._tables[coupling] = DistanceOracle(library) if ok and library is not None else None
        return self._tables[coupling]

    def method(self, library: Library, depth: int) -> str:
        return f"distance table of depth {depth} and bounded meet in the middle, library {library.name} (gates)"

    def optimum(self, problem: WindowProblem) -> Optimum | None:
        if problem.lines != 4:
            return None
        key = (problem.coupling, problem.perm)
        if key in self._memo:
            return self._memo[key]
        table = self.table(problem.coupling)
        result = None
        if table is not None:
            below = None if problem.below is None else problem.below - 1
            gates = table.circuit(problem.perm, below)
            if gates is not None:
                result = Optimum(gates, len(gates), len(gates), self.method(table.library, table.reach))
        if result is not None or problem.below is None:
            self._memo[key] = result
        return result


__all__ = ["WINDOW_EXTRA", "CombinedResynthesis", "MeetResynthesis"]


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
