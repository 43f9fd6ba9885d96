"""Race several formulations of one k-query on separate cores; the first answer wins.

Symmetry breaking makes refutations shorter but leaves few models, so on satisfiable
queries the solver can need far longer to find one of them than without it (measured in
``scripts/bench.py``: e.g. a 5-line, 8-gate query, 18 s with breaking against 1.6 s
without).  Both formulations are exact for the question "is there a circuit of exactly k
gates?": with breaking a circuit survives whenever one exists (the arguments in
:mod:`exactsyn.sat.encode`), so whichever answers first — SAT with a circuit that is then
simulated, or UNSAT with its own LRAT refutation of its own CNF — decides the query.
This is a plain algorithm portfolio (Gomes & Selman, "Algorithm portfolios", Artificial
Intelligence 126, 2001).

The racer without symmetry breaking runs Kissat 4.0.4 when it is available (it found
satisfying assignments several times faster than CaDiCaL on our queries: hwb4, k = 11,
42 s against 127 s); it writes no proof, so with certificates only its SAT answers count.

Each racer runs in a forked process; its answer (and proof, through a temporary file)
comes back over a queue, and the losers are terminated.  The parent waits no longer than
the time limit plus :data:`GRACE_SECONDS`: the CaDiCaL racers stop at the limit on their
own, and Kissat (which cannot be given a budget through python-sat) is terminated then.
Kissat exposes no statistics through python-sat, so its conflict count is unknown
(``None``), never reported as 0.
"""

from __future__ import annotations

import multiprocessing as mp
import os
import queue
import signal
import tempfile
import time
from dataclasses import dataclass, replace

from exactsyn.sat.solver import UNBOUNDED, Outcome, solve
from exactsyn.sat.status import Status

#: How long past the time limit the parent waits for a racer's answer before stopping them.
GRACE_SECONDS = 0.25


@dataclass(frozen=True)
class RaceOutcome:
    """The answer that won, and the index of its formulation (``None``: no racer answered)."""

    winner: int | None
    outcome: Outcome


def _racer(
    index: int, clauses: list[list[int]], certify: bool, solver: str, limit: float | None, out: mp.Queue
) -> None:  # type: ignore[type-arg]
    # A forked racer inherits the parent's signal set-up: the parent stops it (SIGTERM, the
    # default action) and alone answers Ctrl-C (python-sat's handler is off: exactsyn.sat.sigint).
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.set_wakeup_fd(-1)
    try:
        # Kissat takes no budget (sat/solver.py): it runs to the end, and the parent terminates
        # this process when another racer answers or time runs out.  It writes no proof.
        unbounded = solver in UNBOUNDED
        run = solve(clauses, solver=solver, time_limit=None if unbounded else limit, proof=certify and not unbounded)
        path = None
        if run.proof:
            fd, path = tempfile.mkstemp(prefix="exactsyn-race-", suffix=".lrat")
            with os.fdopen(fd, "wb") as fh:
                fh.write(run.proof)
        out.put((index, "ok", replace(run, proof=b""), path))
    except KeyboardInterrupt:
        out.put((index, "interrupted", "", None))
    except Exception as e:  # report, never hang the parent
        out.put((index, "error", repr(e), None))


def race(
    formulas: list[list[list[int]]],
    *,
    certify: bool,
    solver: str = "cadical195",
    time_limit: float | None = None,
    solvers: list[str] | None = None,
) -> RaceOutcome:
    """Solve every formula in its own process; return the first definite answer.

    ``solvers`` names a solver per formula (default ``solver`` for all).  A racer that
    cannot write LRAT (``kissat404``) may win with SAT — the circuit is simulated — but
    when ``certify`` is set its UNSAT answer is not taken: the race waits for a racer
    whose refutation comes with a proof.
    """
    names = solvers or [solver] * len(formulas)
    nobody = RaceOutcome(None, Outcome(Status.UNKNOWN, None, b"", 0.0, None, solver))
    if time_limit is not None and time_limit <= 0:
        return nobody
    ctx = mp.get_context("fork")
    out: mp.Queue = ctx.Queue()  # type: ignore[type-arg]
    start = time.perf_counter()
    procs = [
        ctx.Process(target=_racer, args=(i, f, certify, names[i], time_limit, out), daemon=True)
        for i, f in enumerate(formulas)
    ]
    for p in procs:
        p.start()
    pending = len(procs)
    result = nobody
    errors: list[str] = []
    try:
        while pending:
            wait = None if time_limit is None else max(0.05, time_limit - (time.perf_counter() - start) + GRACE_SECONDS)
            try:
                index, kind, answer, path = out.get(timeout=wait)
            except queue.Empty:
                break
            pending -= 1
            if kind == "interrupted":  # Ctrl-C reached the racers; the parent stops too
                raise KeyboardInterrupt
            if kind == "error":
                errors.append(answer)
                continue
            proof = b""
            if path:
                with open(path, "rb") as fh:
                    proof = fh.read()
                os.unlink(path)
            if answer.status == Status.UNSAT and certify and not path:
                continue  # a refutation without a proof does not count for a certificate
            if answer.status in (Status.SAT, Status.UNSAT):
                result = RaceOutcome(index, replace(answer, proof=proof, seconds=time.perf_counter() - start))
                break
    finally:
        for p in procs:
            if p.is_alive():
                p.terminate()
        for p in procs:
            p.join(timeout=5)
        _drain(out)
    if result.winner is None and errors and len(errors) == len(procs):
        raise RuntimeError(f"every racer failed: {errors[0]}")
    return result


def _drain(q: mp.Queue) -> None:  # type: ignore[type-arg]
    """Remove proof files of racers that finished after the winner."""
    while True:
        try:
            item = q.get_nowait()
        except (queue.Empty, OSError, ValueError):
            return
        path = item[3]
        if path and os.path.exists(path):
            os.unlink(path)
