"""Where the cubes of a split query run: local worker processes, or Dask distributed.

Both engines hand out cubes in order as workers free up, give every answer to the
caller as soon as it arrives, and stop everything when the caller says so (the first
satisfiable cube, a cube out of time, an error) or when the deadline passes.

``LocalCubes``
    with ``jobs == 1`` the cubes run one after another in this process (no start-up cost,
    each with the time left as its limit); otherwise
    ``jobs`` worker processes (``spawn``), each fed one cube at a time over its own pipe;
    stopping kills them, so a cube that is still running costs nothing more.  A worker
    that dies (the out-of-memory killer) is reported as an error for its cube.
``DaskCubes``
    one Dask task per cube on a scheduler given by address, or on a ``LocalCluster`` of
    ``jobs`` processes on 127.0.0.1 (:mod:`exactsyn.cluster`, shared with the batch
    engine).  Dask cannot interrupt a running task, so stopping sets a
    ``distributed.Event`` that each running cube reads between its solver's budget slices
    (at most once a second), and cancels the cubes not yet started.
"""

from __future__ import annotations

import multiprocessing as mp
import os
import shutil
import tempfile
import time
import uuid
from collections import deque
from collections.abc import Callable
from dataclasses import dataclass, replace
from multiprocessing.connection import Connection, wait
from typing import Any

from exactsyn.cluster import INTERRUPTED_EXIT, dask_client, describe, distributed, serve_pipe
from exactsyn.errors import ExactsynError
from exactsyn.sat.conquer import CubeEngine, CubeJob, CubeOptions, CubeOutcome, OnOutcome, solve_cube


def make_engine(options: CubeOptions) -> CubeEngine:
    """The engine ``options`` ask for: Dask when a scheduler is named, else local processes."""
    if options.scheduler:
        return DaskCubes(options.scheduler, options.jobs)
    return LocalCubes(options.jobs)


# ------------------------------------------------------------------ local processes
def _worker_main(conn: Connection, scratch: str, parent: int) -> None:
    def orphaned() -> bool:  # the parent was killed before it could stop us: give up the cube
        return os.getppid() != parent

    serve_pipe(conn, scratch, lambda job: solve_cube(job, orphaned))


@dataclass
class _Slot:
    process: Any
    conn: Connection
    job: CubeJob | None = None


@dataclass(frozen=True)
class LocalCubes:
    """``jobs`` local worker processes (see the module docstring)."""

    jobs: int = 2

    def __post_init__(self) -> None:
        if self.jobs < 1:
            raise ExactsynError("jobs must be 1 or more")

    def describe(self) -> str:
        return f"{self.jobs} local worker process{'es' if self.jobs != 1 else ''}"

    def run(self, jobs: list[CubeJob], on_outcome: OnOutcome, deadline: float | None) -> None:
        if not jobs:
            return
        if self.jobs == 1:
            for job in jobs:
                left = None if deadline is None else deadline - time.monotonic()
                if left is not None and left <= 0:
                    return
                if on_outcome(solve_cube(replace(job, time_limit=left))):
                    return
            return
        ctx = mp.get_context("spawn")
        queue = deque(jobs)
        slots: list[_Slot] = []
        scratch = tempfile.mkdtemp(prefix="exactsyn-cubes-")
        try:
            for _ in range(min(self.jobs, len(jobs))):
                parent, child = ctx.Pipe()
                args = (child, scratch, os.getpid())
                proc = ctx.Process(target=_worker_main, args=args, daemon=True, name="exactsyn-cube")
                proc.start()
                child.close()
                slot = _Slot(proc, parent)
                slots.append(slot)
                _feed(slot, queue)
            while any(s.job is not None for s in slots):
                timeout = 1.0 if deadline is None else max(0.0, min(1.0, deadline - time.monotonic()))
                ready = set(wait([s.conn for s in slots] + [s.process.sentinel for s in slots], timeout=timeout))
                for slot in slots:
                    if slot.job is None:
                        continue
                    if slot.conn in ready or slot.conn.poll():
                        try:
                            out = slot.conn.recv()
                        except (EOFError, OSError):
                            out = None
                        if out is not None:
                            slot.job = None
                            if on_outcome(out):
                                return
                            _feed(slot, queue)
                            continue
                    if slot.process.sentinel in ready and slot.job is not None:
                        slot.process.join(5)
                        if slot.process.exitcode == INTERRUPTED_EXIT:  # Ctrl-C reached the worker
                            raise KeyboardInterrupt
                        job, slot.job = slot.job, None
                        msg = f"worker process died (exit code {slot.process.exitcode})"
                        on_outcome(CubeOutcome(job.index, "error", None, b"", 0.0, 0, job.solver, msg))
                        return
                if deadline is not None and time.monotonic() >= deadline:
                    return
        finally:
            for slot in slots:
                if slot.process.is_alive():
                    slot.process.kill()
                slot.process.join(5)
                slot.conn.close()
            shutil.rmtree(scratch, ignore_errors=True)


def _feed(slot: _Slot, queue: deque[CubeJob]) -> None:
    if not queue:
        return
    job = queue.popleft()
    slot.conn.send(job)
    slot.job = job


# ------------------------------------------------------------------ Dask distributed
def _stop_reader(event_name: str) -> Callable[[], bool]:
    """``stop()`` for a cube on a Dask worker: reads the stop event at most once a second."""
    dist = distributed()
    event = dist.Event(event_name)
    last = [0.0, False]

    def stop() -> bool:
        now = time.monotonic()
        if not last[1] and now - last[0] >= 1.0:
            last[0] = now
            try:
                last[1] = bool(event.is_set())
            except Exception:  # noqa: BLE001 - scheduler gone: stop rather than run on unseen
                last[1] = True
        return bool(last[1])

    return stop


def dask_solve_cube(job: CubeJob, event_name: str) -> CubeOutcome:
    """The Dask task: one cube, stoppable through the named event."""
    return solve_cube(job, _stop_reader(event_name))


@dataclass(frozen=True)
class DaskCubes:
    """Cubes as Dask tasks (see the module docstring)."""

    address: str | None = None
    jobs: int = 2

    def describe(self) -> str:
        return describe(self.address, self.jobs)

    def run(self, jobs: list[CubeJob], on_outcome: OnOutcome, deadline: float | None) -> None:
        if not jobs:
            return
        dist = distributed()
        with dask_client(self.address, self.jobs) as client:
            tag = uuid.uuid4().hex[:12]
            event_name = f"exactsyn-stop-{tag}"
            event = dist.Event(event_name, client=client)
            owner: dict[Any, CubeJob] = {}
            for i, job in enumerate(jobs):
                fut = client.submit(
                    dask_solve_cube, job, event_name, key=f"exactsyn-cube-{tag}-{job.index}", priority=-i, pure=False
                )
                owner[fut] = job
            pending = set(owner)
            try:
                while pending:
                    timeout = 1.0 if deadline is None else max(0.05, min(1.0, deadline - time.monotonic()))
                    try:
                        done = dist.wait(list(pending), timeout=timeout, return_when="FIRST_COMPLETED").done
                    except TimeoutError:
                        done = set()
                    for fut in done:
                        pending.discard(fut)
                        try:
                            out = fut.result()
                        except Exception as e:  # noqa: BLE001 - KilledWorker and the like
                            job = owner[fut]
                            out = CubeOutcome(job.index, "error", None, b"", 0.0, 0, job.solver, f"Dask: {e}")
                        if on_outcome(out):
                            return
                    if deadline is not None and time.monotonic() >= deadline:
                        return
            finally:
                if pending:
                    event.set()
                    client.cancel(list(pending))
