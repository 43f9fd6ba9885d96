"""The one place exactsyn builds a SAT solver: one call to solve a CNF, one incremental session.

Solvers come from python-sat (A. Ignatiev, A. Morgado, J. Marques-Silva, "PySAT: A Python
Toolkit for Prototyping with SAT Oracles", SAT 2018) and are named as there
(:data:`SOLVERS`).  :func:`solve` answers one CNF; with ``proof=True`` it runs CaDiCaL 1.9.5
with LRAT capture (the id watching and renumbering are :mod:`exactsyn.sat.lrat_capture`;
this module hands it the solver object and the search).  :class:`SatSession` keeps one
solver across calls, adding clauses between them (the enumeration of all optima).  Every
answer is an :class:`Outcome`.

Time limits.  python-sat's CaDiCaL bindings cannot be interrupted from another thread, so a
limit (or a ``stop`` callable) is kept by solving in slices of a conflict budget (the
solver keeps its learnt clauses between calls, so slicing costs little) and checking the
clock in between.  Each slice is sized from the conflict rate measured so far to last
about :data:`SLICE_SECONDS` (never past the limit), so a hard query stops within a fraction
of a second of its limit.  An incremental re-solve keeps the proof trace, so a sliced
certified search still yields one LRAT refutation.  Kissat 4.0.4 (the racer of
:mod:`exactsyn.sat.race`) is not incremental through python-sat and takes no budget: it
runs to the end, so it is given no limit (its caller stops its process instead).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from types import TracebackType
from typing import Any

import pysat
from pysat.solvers import Cadical195, Solver

from exactsyn.errors import ExactsynError, is_interrupt
from exactsyn.sat.lrat_capture import SOLVER_NAME, capture
from exactsyn.sat.sigint import keep_python_sigint
from exactsyn.sat.status import Status

keep_python_sigint()  # Ctrl-C is Python's; every solve below runs in slices (exactsyn.sat.sigint)

SOLVERS = {
    "cadical195": "CaDiCaL 1.9.5 (default; writes LRAT proofs)",
    "cadical153": "CaDiCaL 1.5.3",
    "glucose4": "Glucose 4.1",
    "minisat22": "MiniSat 2.2",
    "kissat404": "Kissat 4.0.4 (no proof, no budget: runs to the end)",
}
#: Solvers that take no conflict budget through python-sat (and are not incremental).
UNBOUNDED = frozenset({"kissat404"})
#: The names a user may pick for the k-queries: every solver that keeps a time limit.
BOUNDED = tuple(name for name in SOLVERS if name not in UNBOUNDED)
#: The solver that writes proofs; ``proof=True`` always runs it.
PROOF_SOLVER = "cadical195"

_SLICE0 = 2_000  # conflicts in the first slice
_SLICE_MIN = 200
_SLICE_MAX = 2_000_000
#: Target length of one conflict-budget slice.
SLICE_SECONDS = 0.25

Stop = Callable[[], bool]
"""Asked between conflict-budget slices: true means give up now (the answer is "unknown")."""


@dataclass(frozen=True)
class Outcome:
    """The answer of one solver call.

    ``model`` lists the solver's literals (positive = true) when ``status`` is SAT.
    ``proof`` is LRAT text whose clause ids ``1..m`` are the input clauses in order, empty
    unless the call was certified and the answer is UNSAT.  ``conflicts`` is the solver's
    count for this call (``None`` when it does not say: Kissat).  ``solver`` names what
    answered (with a proof: CaDiCaL 1.9.5 and the python-sat version).
    """

    status: Status
    model: tuple[int, ...] | None
    proof: bytes
    seconds: float
    conflicts: int | None
    solver: str


def check_solver(name: str) -> None:
    """Raise :class:`ExactsynError` unless ``name`` is one of :data:`SOLVERS`."""
    if name not in SOLVERS:
        raise ExactsynError(f"unknown solver {name!r}; choose one of: {', '.join(SOLVERS)}")


def check_time_limit(time_limit: float | None) -> float | None:
    """A valid limit in seconds (> 0), ``None`` for none (infinity too); else :class:`ExactsynError`."""
    if time_limit is None:
        return None
    if isinstance(time_limit, bool) or not isinstance(time_limit, int | float):
        raise ExactsynError(f"time limit must be a number of seconds, got {time_limit!r}")
    if math.isnan(time_limit) or time_limit <= 0:
        raise ExactsynError(f"time limit must be positive, got {time_limit!r}")
    return None if math.isinf(time_limit) else float(time_limit)


def _status(result: bool | None) -> Status:
    return Status.UNKNOWN if result is None else (Status.SAT if result else Status.UNSAT)


def _conflicts(solver: Any) -> int | None:
    value = (solver.accum_stats() or {}).get("conflicts")
    return None if value is None else int(value)


def _interruptible(call: Callable[[], Any]) -> Any:
    """Run a solver call; the exception python-sat raises on SIGINT becomes :class:`KeyboardInterrupt`."""
    try:
        return call()
    except Exception as e:
        if is_interrupt(e):
            raise KeyboardInterrupt from None
        raise


def _search(solver: Any, time_limit: float | None, stop: Stop | None, budgets: bool = True) -> bool | None:
    """Solve in conflict-budget slices (module docstring): between two slices the clock and
    ``stop`` are asked, and a Ctrl-C that came during a slice is raised by Python
    (:mod:`exactsyn.sat.sigint`), so also a search without a limit answers it within a slice.
    A solver that takes no budget (:data:`UNBOUNDED`) runs to the end in one call."""
    if not budgets:
        return bool(_interruptible(solver.solve))
    deadline = math.inf if time_limit is None else time.perf_counter() + time_limit
    budget = _SLICE0
    while True:
        now = time.perf_counter()
        if now >= deadline or (stop is not None and stop()):
            return None
        before = _conflicts(solver)
        solver.conf_budget(budget)
        result = _interruptible(solver.solve_limited)
        if result is not None:
            return bool(result)
        spent = max(time.perf_counter() - now, 1e-6)
        after = _conflicts(solver)
        done = budget if before is None or after is None else max(after - before, 1)
        target = max(min(SLICE_SECONDS, deadline - time.perf_counter()), 1e-3)
        budget = min(_SLICE_MAX, max(_SLICE_MIN, int(done / spent * target)))


#: Clauses handed to the solver between two looks at the clock while loading.
_LOAD_BLOCK = 4096


def _load(solver: Any, clauses: Sequence[Sequence[int]], deadline: float | None) -> bool:
    """Add ``clauses`` to ``solver``; False when the clock passed ``deadline`` first."""
    for i in range(0, len(clauses), _LOAD_BLOCK):
        if deadline is not None and i and time.perf_counter() >= deadline:
            return False
        for clause in clauses[i : i + _LOAD_BLOCK]:
            solver.add_clause(clause)
    return True


#: A formula of at least this many clauses solved under a limit or a stop gets :data:`TAME`.
TAME_FROM = 1_000_000
#: CaDiCaL options for such a formula.  Its clean-up between two conflicts (bounded variable
#: elimination, vivification) grows with the formula and no conflict budget bounds it:
#: measured on a 4.8-million-clause cost CNF (a 4-line function, 13 gates), slices of 1000
#: conflicts took up to 6.4 s; with both off up to 0.99 s, and 12 s gave 48 thousand
#: conflicts instead of 23 thousand.  Proofs stay LRAT proofs.
TAME = {"elim": 0, "vivify": 0}


def _tame(clauses: Sequence[Sequence[int]], limit: float | None, stop: Stop | None) -> dict[str, int]:
    """The options of :data:`TAME` for a huge formula whose search must stop on time, else none."""
    return TAME if len(clauses) >= TAME_FROM and (limit is not None or stop is not None) else {}


def _configured(solver: Any, options: dict[str, int]) -> Any:
    if options:
        solver.configure(options)
    return solver


def _until(deadline: float | None) -> float | None:
    """Seconds left before ``deadline`` (at least a microsecond, so the search gives up at once)."""
    return None if deadline is None else max(deadline - time.perf_counter(), 1e-6)


def _bounded(name: str, time_limit: float | None, stop: Stop | None) -> None:
    if name in UNBOUNDED and (time_limit is not None or stop is not None):
        raise ExactsynError(f"solver {name} takes no time limit (it runs to the end)")


def proof_solver_name() -> str:
    """What a certified answer records as its solver: CaDiCaL 1.9.5 and the python-sat version."""
    return f"{SOLVER_NAME} via python-sat {getattr(pysat, '__version__', '?')}"


def _description(name: str) -> str:
    # The names recorded in queries before this module existed: the racer's long name, else the key.
    return "Kissat 4.0.4" if name == "kissat404" else name


def solve(
    clauses: Sequence[Sequence[int]],
    *,
    solver: str = PROOF_SOLVER,
    time_limit: float | None = None,
    stop: Stop | None = None,
    proof: bool = False,
) -> Outcome:
    """Solve ``clauses`` (DIMACS-style literals) with the solver named ``solver``.

    ``status`` is ``unknown`` when ``time_limit`` seconds (> 0) ran out or ``stop()`` (asked
    between budget slices) said so.  With ``proof=True`` the solver is CaDiCaL 1.9.5 whatever
    ``solver`` names (the only one whose proof python-sat gives out), and an UNSAT answer
    comes with its LRAT refutation.  The limit counts from the call: loading millions of
    clauses into the solver takes seconds, and it is watched too.  Raises
    :class:`ExactsynError` for an unknown solver, a bad limit, a limit for a solver that takes
    none (:data:`UNBOUNDED`) or a proof from one.
    """
    check_solver(solver)
    limit = check_time_limit(time_limit)
    started = time.perf_counter()
    deadline = None if limit is None else started + limit
    if proof:
        if solver in UNBOUNDED:
            raise ExactsynError(f"solver {solver} writes no proof")
        tame = _tame(clauses, limit, stop)
        run = capture(clauses, lambda: _configured(Cadical195(), tame), lambda s: _search(s, _until(deadline), stop),
                      deadline=deadline)  # fmt: skip
        seconds = time.perf_counter() - started
        return Outcome(run.status, run.model, run.proof, seconds, run.conflicts, proof_solver_name())
    _bounded(solver, limit, stop)
    with Solver(name=solver) as s:
        if solver == PROOF_SOLVER:
            _configured(s.solver, _tame(clauses, limit, stop))
        loaded = _load(s, clauses, deadline)
        result = _search(s, _until(deadline), stop, solver not in UNBOUNDED) if loaded else None
        conflicts = None if solver in UNBOUNDED else _conflicts(s)
        model = tuple(s.get_model() or ()) if result else None
    return Outcome(_status(result), model, b"", time.perf_counter() - started, conflicts, _description(solver))


class SatSession:
    """One incremental solver: add clauses, solve again; learnt clauses are kept between calls.

    Use it as a context manager (or call :meth:`close`).  Every :class:`Outcome` it returns
    counts the seconds and conflicts of its own call.  It writes no proofs.
    """

    def __init__(self, clauses: Iterable[Sequence[int]] = (), *, solver: str = PROOF_SOLVER) -> None:
        check_solver(solver)
        if solver in UNBOUNDED:
            raise ExactsynError(f"solver {solver} is not incremental through python-sat")
        self._name = solver
        self._solver: Any = Solver(name=solver, bootstrap_with=clauses)

    def add_clause(self, clause: Sequence[int]) -> None:
        self._solver.add_clause(list(clause))

    def solve(self, *, time_limit: float | None = None, stop: Stop | None = None) -> Outcome:
        """As :func:`solve` without a proof, on every clause added so far."""
        limit = check_time_limit(time_limit)
        started = time.perf_counter()
        before = _conflicts(self._solver)
        result = _search(self._solver, limit, stop)
        after = _conflicts(self._solver)
        model = tuple(self._solver.get_model() or ()) if result else None
        conflicts = None if after is None else after - (before or 0)
        return Outcome(_status(result), model, b"", time.perf_counter() - started, conflicts, self._name)

    def close(self) -> None:
        self._solver.delete()

    def __enter__(self) -> SatSession:
        return self

    def __exit__(
        self, kind: type[BaseException] | None, error: BaseException | None, trace: TracebackType | None
    ) -> None:
        self.close()
