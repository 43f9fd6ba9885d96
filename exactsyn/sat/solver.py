"""Run one CNF through a SAT solver with a wall-clock limit.

python-sat's CaDiCaL bindings cannot be interrupted from another thread, so the time
limit is enforced by solving in slices of a conflict budget (CaDiCaL keeps its learnt
clauses between calls, so slicing costs little) and checking the clock in between.  Each
slice is sized from the conflict rate measured so far to last about
:data:`SLICE_SECONDS` (never past the limit), so a hard query stops within a fraction of
a second of its limit (the same rule as the LRAT runs of :mod:`exactsyn.sat.lrat_capture`).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable
from dataclasses import dataclass

from pysat.solvers import Solver

from exactsyn.errors import ExactsynError
from exactsyn.sat.status import Status

SOLVERS = {
    "cadical195": "CaDiCaL 1.9.5 (default; writes LRAT proofs)",
    "cadical153": "CaDiCaL 1.5.3",
    "glucose4": "Glucose 4.1",
    "minisat22": "MiniSat 2.2",
}
_SLICE0 = 2_000
_SLICE_MIN = 200
_SLICE_MAX = 2_000_000
#: Target length of one conflict-budget slice.
SLICE_SECONDS = 0.25


@dataclass(frozen=True)
class SolveOutcome:
    status: Status
    model: tuple[int, ...] | None
    seconds: float
    conflicts: int


def solve_cnf(
    clauses: list[list[int]],
    solver: str = "cadical195",
    time_limit: float | None = None,
    stop: Callable[[], bool] | None = None,
) -> SolveOutcome:
    """Solve; ``status`` is ``"unknown"`` when ``time_limit`` seconds ran out or ``stop()``
    (asked between budget slices) said so."""
    if solver not in SOLVERS:
        raise ExactsynError(f"unknown solver {solver!r}; choose one of: {', '.join(SOLVERS)}")
    start = time.perf_counter()
    with Solver(name=solver, bootstrap_with=clauses) as s:
        if time_limit is None and stop is None:
            res: bool | None = s.solve()
        else:
            budget = _SLICE0
            res = None
            done = 0
            while True:
                now = time.perf_counter()
                left = math.inf if time_limit is None else time_limit - (now - start)
                if left <= 0 or (stop is not None and stop()):
                    break
                s.conf_budget(budget)
                res = s.solve_limited()
                if res is not None:
                    break
                spent = max(time.perf_counter() - now, 1e-6)
                total = int((s.accum_stats() or {}).get("conflicts", done + budget))
                rate = max(total - done, 1) / spent
                done = total
                rest = math.inf if time_limit is None else time_limit - (time.perf_counter() - start)
                target = min(SLICE_SECONDS, max(rest, 0.0))
                budget = min(_SLICE_MAX, max(_SLICE_MIN, int(rate * target)))
        stats = s.accum_stats() or {}
        model = tuple(s.get_model() or ()) if res else None
    seconds = time.perf_counter() - start
    status = Status.UNKNOWN if res is None else (Status.SAT if res else Status.UNSAT)
    return SolveOutcome(status, model, seconds, int(stats.get("conflicts", 0)))
