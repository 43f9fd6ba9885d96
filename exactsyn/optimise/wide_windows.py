"""5-line windows: from the cached 5-line class table, else by SAT with a small gate bound.

A 5-line window is asked only when a window of 5 lines was grown (``window=5``); its
function goes to one of two answerers, and every narrower window to the 4-line answerer
the optimiser uses anyway.

* **The 5-line class table**, when one of exactly the window's gates is cached: lookup up to
  the table depth, meet in the middle beyond (Golubitsky, Falconer & Maslov, "Synthesis of
  the optimal 4-bit reversible circuits", DAC 2010; the engine of
  :mod:`exactsyn.tables.engine` on 160-bit keys), bounded below the window's own gate count
  and by a per-window time budget (:data:`TABLE_SECONDS`).  An answer is a proven optimum;
  a window the scan did not finish in time is left as it is, and not asked again.
* **SAT** otherwise: the exact-``k`` queries of :mod:`exactsyn.sat.encode` (Große, Chen,
  Dueck & Drechsler, "Exact multiple-control Toffoli network synthesis with SAT
  techniques", IEEE TCAD 28(5), 2009) for ``k = 1, 2, …`` up to the smaller of
  :data:`SAT_MAX_GATES` and one less than the window's gate count, all within
  :data:`SAT_SECONDS` per window.  The first satisfiable ``k`` gives a circuit of ``k``
  gates, fewer than the window has, so it replaces the window (fewer gates are fewer
  gates).  It is *the minimum* only when every smaller ``k`` was refuted; when one ran
  out of time, the method says "not proven minimal".  A window of more gates than the
  bound allows, or whose queries ran out of time, is not settled: the result then claims
  optimality only for windows of up to 4 lines (:attr:`WideResynthesis.settled_lines`).

5-line windows are grown to at most :attr:`WideResynthesis.window_gates` gates (10 with the
table, 7 with SAT): on a circuit of only 5 lines a window would otherwise hold every gate.

Under ``gates-then-cost`` only replacements of strictly fewer gates are searched by SAT (its
queries do not minimise cost), and each is costed as its gates cost in the whole circuit.
"""

from __future__ import annotations

import time

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import CostModel
from exactsyn.core.library import Edge, Library
from exactsyn.optimise.allowed_gates import GateSet
from exactsyn.optimise.class_windows import ClassTableResynthesis, class_table_lines
from exactsyn.optimise.resynthesis import Optimum, WindowProblem, WindowResynthesis
from exactsyn.sat.encode import encode
from exactsyn.sat.options import SearchOptions
from exactsyn.sat.query import run_query
from exactsyn.sat.status import Status
from exactsyn.specification.reversible import from_permutation

#: Line count of the wide windows.
WIDE_LINES = 5
#: Largest replacement the SAT answerer looks for (k ≤ 6 takes about a second on 5 lines).
SAT_MAX_GATES = 6
#: Seconds of SAT per 5-line window (all its queries together).
SAT_SECONDS = 2.0
#: Seconds of class-table scan per 5-line window (lookup alone takes milliseconds).
TABLE_SECONDS = 5.0
#: Most gates of a 5-line window answered from the class table: its depth (6) plus a meet in
#: the middle over the three smallest levels, which takes milliseconds.  A window of every
#: gate on 5 lines (a whole 5-line circuit) is beyond any table and would spend its whole
#: budget each time.
TABLE_WINDOW_GATES = 10


class SatWindowResynthesis:
    """5-line windows by SAT with a small gate bound (module docstring)."""

    def __init__(
        self,
        gates: GateSet,
        circuit_lines: int,
        model: CostModel | None,
        max_gates: int = SAT_MAX_GATES,
        seconds: float = SAT_SECONDS,
    ) -> None:
        self.gates, self.circuit_lines, self.model = gates, circuit_lines, model
        self.max_gates, self.seconds = max_gates, seconds
        self._options = SearchOptions(fallback=False)
        self._libraries: dict[tuple[Edge, ...], Library | None] = {}
        # a replacement found, or the largest k refuted or tried (nothing below it is asked again)
        self._memo: dict[tuple[tuple[Edge, ...], tuple[int, ...]], Optimum | int] = {}
        self.unsettled = 0  # windows left with neither a replacement nor a proof that none exists

    @property
    def max_lines(self) -> int:
        return WIDE_LINES

    def library(self, coupling: tuple[Edge, ...]) -> Library | None:
        if coupling not in self._libraries:
            self._libraries[coupling] = self.gates.window_library(WIDE_LINES, coupling)
        return self._libraries[coupling]

    def optimum(self, problem: WindowProblem) -> Optimum | None:
        library = self.library(problem.coupling) if problem.lines == WIDE_LINES else None
        if library is None:
            return None
        # below the window's gates (gates-then-cost passes one more than it has: SAT takes only fewer)
        want = None if problem.below is None else problem.below - 1 - (self.model is not None)
        top = self.max_gates if want is None else min(self.max_gates, want)
        key = (problem.coupling, problem.perm)
        got = self._memo.get(key)
        if isinstance(got, Optimum):
            return got if got.gate_count <= top else None
        if got is not None and got >= top:
            return None
        found, refuted = self._search(library, problem.perm, top)
        if found is not None:
            self._memo[key] = found
        else:
            self._memo[key] = top
            if want is None or refuted < want or self.model is not None:  # the least cost is not searched
                self.unsettled += 1
        return found

    def _search(self, library: Library, perm: tuple[int, ...], top: int) -> tuple[Optimum | None, int]:
        """The first satisfiable ``k ≤ top`` as an :class:`Optimum`, and the largest ``k`` up to
        which every smaller query was refuted (``-1`` before ``k = 0``)."""
        if perm == tuple(range(len(perm))):
            return Optimum((), 0, 0, "the identity (no gates)"), 0
        deadline = time.perf_counter() + self.seconds
        spec = from_permutation(perm)
        refuted = 0  # k = 0 is refuted: the window is not the identity
        for k in range(1, top + 1):
            left = deadline - time.perf_counter()
            if left <= 0:
                break
            answer = run_query(encode(spec, library, k, self._options.encoding), self._options, time_limit=left)
            status = answer.query.status
            if status == Status.SAT and answer.circuit is not None:
                return self._optimum(library, perm, answer.circuit, proven=refuted == k - 1), refuted
            if status == Status.UNSAT and refuted == k - 1:
                refuted = k
        return None, refuted

    def _optimum(self, library: Library, perm: tuple[int, ...], circuit: Circuit, proven: bool) -> Optimum:
        if circuit.permutation() != perm or not all(library.contains(g) for g in circuit.gates):
            raise RuntimeError("internal error: a SAT circuit does not compute its window's function")
        k = circuit.gate_count
        cost = k if self.model is None else sum(self.model.cost(g, self.circuit_lines) for g in circuit.gates)
        if proven:
            method = f"SAT, 5-line windows of {library.name}: the minimum (every smaller k refuted)"
        else:
            method = f"SAT, 5-line windows of {library.name}: fewer gates, not proven minimal (a smaller k timed out)"
        return Optimum(circuit.gates, k, cost, method)


class WideResynthesis:
    """:class:`~exactsyn.optimise.resynthesis.WindowResynthesis` for windows of up to 5 lines:
    5-line windows from the class table (``table``, with a time budget per window) or by SAT
    (``sat``), narrower ones from ``other``."""

    def __init__(
        self,
        other: WindowResynthesis,
        table: ClassTableResynthesis | None = None,
        sat: SatWindowResynthesis | None = None,
        table_seconds: float = TABLE_SECONDS,
    ) -> None:
        self.other, self.table, self.sat, self.table_seconds = other, table, sat, table_seconds
        self._cut_short: set[tuple[tuple[Edge, ...], tuple[int, ...]]] = set()

    @property
    def max_lines(self) -> int:
        return WIDE_LINES

    @property
    def window_gates(self) -> int:
        """Most gates a 5-line window is grown to: within reach of the class table, or one more
        than the SAT bound (then every smaller k is asked, and a window can be settled)."""
        return TABLE_WINDOW_GATES if self.sat is None else self.sat.max_gates + 1

    @property
    def settled_lines(self) -> int:
        """Every window of up to this many lines that was left in place is proven optimal."""
        unsettled = len(self._cut_short) + (0 if self.sat is None else self.sat.unsettled)
        return WIDE_LINES if unsettled == 0 else self.other.max_lines

    def optimum(self, problem: WindowProblem) -> Optimum | None:
        if problem.lines < WIDE_LINES:
            return self.other.optimum(problem)
        if problem.lines > WIDE_LINES:
            return None
        if self.table is not None:
            key = (problem.coupling, problem.perm)
            if key in self._cut_short:
                return None
            deadline = time.perf_counter() + self.table_seconds
            found = self.table.optimum(problem, deadline)
            if found is None and time.perf_counter() >= deadline:
                self._cut_short.add(key)
            return found
        return None if self.sat is None else self.sat.optimum(problem)


def wide_answerers(
    gates: GateSet,
    circuit_lines: int,
    model: CostModel | None,
    other: WindowResynthesis,
    max_gates: int = SAT_MAX_GATES,
    seconds: float = SAT_SECONDS,
) -> WideResynthesis:
    """5-line windows from the cached 5-line class table of the gate set when there is one, else
    by SAT (at most ``max_gates`` gates, ``seconds`` per window); narrower windows from ``other``."""
    if class_table_lines(gates, WIDE_LINES) == WIDE_LINES:
        table = ClassTableResynthesis(gates, circuit_lines, model, other, lines=WIDE_LINES)
        return WideResynthesis(other, table=table)
    return WideResynthesis(other, sat=SatWindowResynthesis(gates, circuit_lines, model, max_gates, seconds))
