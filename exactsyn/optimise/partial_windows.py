"""Partial windows: the fewest gates that agree with a window on the input states it can be in.

When some lines of a window are known to be 0 where the window starts, only the input
states with those lines 0 (the *honoured* states, :attr:`WindowProblem.honoured`) can
occur there; on the others any behaviour will do (don't-cares).  A replacement must agree
with the window on the honoured states only, so the best replacement is the least circuit
over every *completion* of the partial function — every permutation that agrees with the
window there.  :class:`PartialResynthesis` finds it:

* **up to 3 lines**, by exhaustion: the breadth-first table of the window's library lists
  every reachable permutation with its least (gates, cost)
  (:class:`~exactsyn.optimise.resynthesis.OptimumTable`); the entries that agree with the
  window on the honoured states are exactly the completions a circuit of the library can
  compute, and the least of them is the optimum (a proof by exhaustion, like the table's);
* **4 lines and more, few completions** (at most :data:`MAX_COMPLETIONS`: at most 3 states
  not honoured): each completion is a permutation the wrapped answerer settles (the class
  or distance tables); the least of their optima is the optimum of the partial function
  when every completion was answered (every circuit that agrees on the honoured states
  computes one of them), else it is the best known circuit below;
* **4 lines and more**, by SAT on a specification with don't-cares (the encoding of
  :mod:`exactsyn.sat.encode`, which imposes only the specified output bits of the
  specified rows: Große, Chen, Dueck, Drechsler, "Exact multiple-control Toffoli network
  synthesis with SAT techniques", IEEE TCAD 28(5), 2009): ``k = 0, 1, …`` below the best
  known circuit (the window's own gate count, or the full function's optimum from the
  answerer this one wraps, whichever is smaller), each answer UNSAT until the first SAT,
  which is then the fewest gates for the partial function.  A per-window time budget
  bounds the search; a window whose budget runs out keeps the wrapped answerer's answer.
  Under ``gates-then-cost`` a SAT answer has the fewest gates but its cost is not
  minimised among them (the method says so).

Windows that are not partial go to the wrapped answerer unchanged.  The driver simulates
every answer on the honoured states before it uses it.
"""

from __future__ import annotations

import time
from collections.abc import Iterator
from dataclasses import replace
from itertools import permutations
from math import factorial

import numpy as np

from exactsyn.core.costs import CostModel
from exactsyn.core.library import Edge
from exactsyn.optimise.allowed_gates import GateSet
from exactsyn.optimise.resynthesis import Optimum, OptimumTable, TableResynthesis, WindowProblem, WindowResynthesis
from exactsyn.sat.encode import encode
from exactsyn.sat.solver import solve
from exactsyn.sat.status import Status
from exactsyn.specification.reversible import MAX_LINES as SPEC_LINES
from exactsyn.specification.reversible import Spec

#: Seconds of SAT search one partial window of 4 or more lines may take.
WINDOW_SECONDS = 2.0
#: Completions up to which a wide partial window asks the wrapped answerer about each one.
MAX_COMPLETIONS = 6

Key = tuple[int, tuple[Edge, ...], tuple[int, ...], tuple[int, ...]]


def table_completion(table: OptimumTable, problem: WindowProblem) -> int | None:
    """The index of the least (gates, cost) entry of ``table`` that agrees with the window on
    its honoured states (module docstring), or None when the library reaches none."""
    honoured = problem.honoured if problem.honoured is not None else tuple(range(1 << problem.lines))
    lines = problem.lines
    mask = target = 0
    for s in honoured:
        mask |= ((1 << lines) - 1) << (lines * s)
        target |= problem.perm[s] << (lines * s)
    hits = np.nonzero((table.keys & np.int64(mask)) == np.int64(target))[0]
    if len(hits) == 0:
        return None
    # lexicographic (gates, cost): costs are far below 2^32 for windows of a few gates
    order = table.sizes[hits].astype(np.int64) << 32 | table.cost[hits].astype(np.int64)
    return int(hits[int(np.argmin(order))])


def partial_spec(problem: WindowProblem) -> Spec:
    """The window's function on its honoured states, every other row a don't-care."""
    size = 1 << problem.lines
    honoured = set(problem.honoured or range(size))
    outputs = tuple(problem.perm[s] if s in honoured else 0 for s in range(size))
    care = tuple(size - 1 if s in honoured else 0 for s in range(size))
    return Spec(problem.lines, outputs, care, "partial window")


def completions(problem: WindowProblem) -> Iterator[tuple[int, ...]]:
    """Every permutation that agrees with the window on its honoured states."""
    honoured = set(problem.honoured or ())
    size = 1 << problem.lines
    free_in = [s for s in range(size) if s not in honoured]
    used = {problem.perm[s] for s in honoured}
    free_out = [v for v in range(size) if v not in used]
    for outs in permutations(free_out):
        perm = list(problem.perm)
        for s, v in zip(free_in, outs, strict=True):
            perm[s] = v
        yield tuple(perm)


class PartialResynthesis:
    """:class:`~exactsyn.optimise.resynthesis.WindowResynthesis` for partial windows (module
    docstring); every other window, and the upper bound of a wide partial one, from ``full``."""

    def __init__(
        self,
        full: WindowResynthesis,
        gates: GateSet,
        circuit_lines: int,
        model: CostModel | None = None,
        seconds: float = WINDOW_SECONDS,
    ) -> None:
        self.full, self.gates, self.model, self.seconds = full, gates, model, seconds
        self.small = TableResynthesis(gates, circuit_lines, model)
        self._memo: dict[Key, Optimum | None] = {}
        self.unsettled = 0  # partial windows whose SAT search was cut short or not run

    @property
    def max_lines(self) -> int:
        return self.full.max_lines

    @property
    def settled_lines(self) -> int:
        """Every window of up to this many lines left in place is proven optimal: the wrapped
        answerer's figure, or the exhaustive tables' line count once a partial window's SAT
        search was cut short."""
        inner = getattr(self.full, "settled_lines", self.full.max_lines)
        return inner if self.unsettled == 0 else min(inner, self.small.max_lines)

    def optimum(self, problem: WindowProblem) -> Optimum | None:
        if problem.honoured is None or len(problem.honoured) == 1 << problem.lines:
            return self.full.optimum(problem)
        honoured = problem.honoured
        key = (problem.lines, problem.coupling, honoured, tuple(problem.perm[s] for s in honoured))
        if key in self._memo:
            return self._memo[key]
        if problem.lines <= self.small.max_lines:
            found = self._from_table(problem)
        else:
            found = self._by_sat(problem)
        if found is not None or problem.below is None:
            self._memo[key] = found
        return found

    def _from_table(self, problem: WindowProblem) -> Optimum | None:
        table = self.small.table(problem.lines, problem.coupling)
        if table is None:
            return None
        index = table_completion(table, problem)
        if index is None:
            return None
        what = "gates" if self.model is None else f"gates, then {self.model.name}"
        method = (
            f"least completion of a partial function in the breadth-first table of library "
            f"{table.library.name} ({what})"
        )
        return Optimum(table.circuit(index), int(table.sizes[index]), int(table.cost[index]), method)

    def _few_completions(self, problem: WindowProblem) -> tuple[Optimum | None, bool]:
        """The least optimum over the completions (the wrapped answerer's), and whether every
        completion was answered; (the full function's optimum, False) when there are too many."""
        if problem.lines > self.full.max_lines:
            return None, False
        unknown = (1 << problem.lines) - len(problem.honoured or ())
        if factorial(unknown) > MAX_COMPLETIONS:
            return self.full.optimum(problem), False
        best: Optimum | None = None
        every = True
        for perm in completions(problem):
            found = self.full.optimum(replace(problem, perm=perm, honoured=None))
            every = every and found is not None
            if found is not None and (best is None or (found.gate_count, found.cost) < (best.gate_count, best.cost)):
                best = found
        if best is not None:
            what = f"least of {factorial(unknown)} completions of a partial function, each by {best.method}"
            best = replace(best, method=what)
        return best, every

    def _by_sat(self, problem: WindowProblem) -> Optimum | None:
        whole, settled = self._few_completions(problem)
        if settled:
            return whole
        bound = problem.below
        if whole is not None:
            bound = whole.gate_count if bound is None else min(bound, whole.gate_count)
        library = self.gates.window_library(problem.lines, problem.coupling)
        if bound is None or library is None or problem.lines > SPEC_LINES:
            self.unsettled += 1
            return whole
        spec = partial_spec(problem)
        deadline = time.perf_counter() + self.seconds
        for k in range(bound):
            left = deadline - time.perf_counter()
            if left <= 0:
                self.unsettled += 1
                return whole
            enc = encode(spec, library, k)
            out = solve(enc.clauses, time_limit=left)
            if out.status == Status.SAT and out.model is not None:
                gates = enc.decode(out.model).gates
                n = self.small.circuit_lines
                cost = len(gates) if self.model is None else sum(self.model.cost(g, n) for g in gates)
                note = "" if self.model is None else f"; {self.model.name} not minimised among them"
                method = f"fewest gates of a partial function by SAT with don't-cares, library {library.name}{note}"
                return Optimum(gates, len(gates), cost, method)
            if out.status != Status.UNSAT:
                self.unsettled += 1
                return whole
        return whole
