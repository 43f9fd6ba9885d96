"""Engines that run batch tasks: a local process pool, or Dask distributed.

Both hand every :class:`~exactsyn.batch.task.Outcome` to a callback in the calling
process as soon as it arrives (that process owns the results store).

``LocalPool``
    ``jobs`` worker processes (``spawn`` start method), each with its own pipe, fed one
    task at a time.  The pool knows which task each worker holds, so a worker that dies
    (a crash, the out-of-memory killer) costs only its item — recorded as ``failed``
    with the exit code — and is replaced; with a per-item time limit a worker still
    busy well past it (``hard_limit``) is killed and its item recorded as ``timeout``.
``DaskEngine``
    tasks go to a Dask distributed scheduler — one given by address (a cluster started
    elsewhere, e.g. through dask-jobqueue on Slurm), or a ``LocalCluster`` of worker
    processes on loopback.  At most a few tasks per worker thread are in flight, so a
    large batch does not flood the scheduler; a task whose worker was lost repeatedly
    (Dask's ``KilledWorker``) is recorded as ``failed``.  Workers need exactsyn
    installed, nothing else: certificates travel back inside the outcome.
"""

from __future__ import annotations

import itertools
import multiprocessing as mp
import shutil
import tempfile
import time
from collections import deque
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from multiprocessing.connection import Connection, wait
from typing import Any, Protocol

from exactsyn.batch.task import Outcome, Task, failed, run_task, run_tasks
from exactsyn.cluster import INTERRUPTED_EXIT, dask_client, default_jobs, describe, distributed, serve_pipe
from exactsyn.errors import ExactsynError

__all__ = ["DaskEngine", "Engine", "LocalPool", "default_jobs", "hard_limit"]

OnOutcome = Callable[[Outcome], None]


class Engine(Protocol):
    def describe(self) -> str: ...

    def run(self, tasks: Iterable[Task], on_outcome: OnOutcome) -> None: ...


def hard_limit(time_limit: float | None, grace: float = 30.0) -> float | None:
    """How long a worker may hold one item before it is killed (None: no limit)."""
    if time_limit is None:
        return None
    return 2 * time_limit + grace


# ------------------------------------------------------------------ local processes
def _worker_main(conn: Connection, scratch: str) -> None:
    serve_pipe(conn, scratch, run_task)


@dataclass
class _Slot:
    process: Any
    conn: Connection
    tasks: deque[Task] = field(default_factory=deque)  # sent, in order; the first is running
    started: float = 0.0  # when the first of ``tasks`` started
    closed: bool = False


@dataclass(frozen=True)
class LocalPool:
    """A pool of ``jobs`` local worker processes (see the module docstring).

    Each worker holds up to ``depth`` tasks (the one it runs and the next ones), so it
    never waits for the parent to store a result before it starts the next item.
    """

    jobs: int = field(default_factory=default_jobs)
    time_limit: float | None = None
    depth: int = 2
    grace: float = 30.0  # the hard limit is 2 × time_limit + grace

    def __post_init__(self) -> None:
        if self.jobs < 1:
            raise ExactsynError("jobs must be 1 or more")

    def describe(self) -> str:
        return f"{self.jobs} local worker process{'es' if self.jobs != 1 else ''}"

    def run(self, tasks: Iterable[Task], on_outcome: OnOutcome) -> None:
        queue = _Queue(iter(tasks))
        if not queue:
            return
        ctx = mp.get_context("spawn")
        limit = hard_limit(self.time_limit, self.grace)
        slots: list[_Slot] = []
        scratch = tempfile.mkdtemp(prefix="exactsyn-pool-")

        def start() -> _Slot:
            parent, child = ctx.Pipe()
            proc = ctx.Process(target=_worker_main, args=(child, scratch), daemon=True, name="exactsyn-worker")
            proc.start()
            child.close()
            return _Slot(proc, parent, started=time.monotonic())

        def feed(slot: _Slot) -> None:
            """Top the worker up to ``depth`` tasks; tell it to stop when none is left."""
            while len(slot.tasks) < self.depth and queue:
                task = queue.popleft()
                try:
                    slot.conn.send(task)
                except OSError:  # the worker is gone: its death is noticed by the main loop
                    queue.appendleft(task)
                    return
                if not slot.tasks:
                    slot.started = time.monotonic()
                slot.tasks.append(task)
            if not queue and not slot.closed:
                slot.closed = True
                try:
                    slot.conn.send(None)
                except OSError:
                    pass

        def retire(slot: _Slot) -> Task | None:
            """Stop a worker; give back the tasks it had not started, return the one it ran."""
            _stop(slot)
            running = slot.tasks.popleft() if slot.tasks else None
            while slot.tasks:
                queue.appendleft(slot.tasks.pop())
            return running

        def restart(slot: _Slot) -> None:
            if not queue:
                slots.remove(slot)
                return
            fresh = start()
            slots[slots.index(slot)] = fresh
            feed(fresh)

        try:
            for _ in range(self.jobs):
                if not queue:
                    break
                slot = start()
                slots.append(slot)
                feed(slot)
            while slots:
                waitables: list[Any] = [s.conn for s in slots] + [s.process.sentinel for s in slots]
                ready = set(wait(waitables, timeout=1.0))
                now = time.monotonic()
                for slot in list(slots):
                    dead = slot.process.sentinel in ready
                    if slot.conn in ready or slot.conn.poll():
                        try:
                            out = slot.conn.recv()
                        except (EOFError, OSError):
                            dead = True
                        else:
                            if slot.tasks:
                                slot.tasks.popleft()
                                slot.started = now
                                feed(slot)  # first, so the worker goes on while the result is stored
                                on_outcome(out)
                            if not slot.tasks and slot.closed:
                                _stop(slot, wait=2.0)  # it got no more work: let it exit by itself
                                slots.remove(slot)
                            continue
                    if dead:
                        slot.process.join(5)
                        code = slot.process.exitcode
                        if code == INTERRUPTED_EXIT:  # Ctrl-C reached the worker: stop, record nothing
                            raise KeyboardInterrupt
                        running = retire(slot)
                        if running is not None:
                            on_outcome(failed(running, f"worker process died (exit code {code})"))
                        restart(slot)
                    elif limit is not None and slot.tasks and now - slot.started > limit:
                        held = now - slot.started
                        running = retire(slot)
                        if running is not None:
                            msg = f"hard time limit: the worker was stopped after {held:.0f} s"
                            on_outcome(failed(running, msg, status="timeout"))
                        restart(slot)
        finally:
            for slot in slots:
                _stop(slot)
            shutil.rmtree(scratch, ignore_errors=True)


class _Queue:
    """Tasks taken lazily from an iterator, with a push-back for a task a dead worker never took."""

    def __init__(self, it: Iterator[Task]) -> None:
        self._it = it
        self._front: deque[Task] = deque()

    def __bool__(self) -> bool:
        if not self._front:
            nxt = next(self._it, None)
            if nxt is None:
                return False
            self._front.append(nxt)
        return True

    def popleft(self) -> Task:
        if not self:
            raise IndexError("no task left")
        return self._front.popleft()

    def appendleft(self, task: Task) -> None:
        self._front.appendleft(task)


def _stop(slot: _Slot, wait: float = 0.0) -> None:
    if wait:
        slot.process.join(wait)
    if slot.process.is_alive():
        slot.process.kill()
    slot.process.join(5)
    slot.conn.close()


# ------------------------------------------------------------------ Dask distributed
@dataclass(frozen=True)
class DaskEngine:
    """Run tasks on Dask distributed: ``address`` of a scheduler, or a local cluster of ``jobs`` processes."""

    address: str | None = None
    jobs: int = field(default_factory=default_jobs)
    per_worker: int = 4  # tasks in flight per worker thread
    chunk_seconds: float = 0.5  # items are grouped into Dask tasks of about this long

    def _stream(self, client: Any, pending: Iterator[Task], on_outcome: OnOutcome, as_completed: Any) -> None:
        """Keep a window of chunks in flight; sizes adapt to the measured time per item.

        Dask costs about a millisecond per task, as much as a small item takes, so items
        go in chunks of about ``chunk_seconds``.  A chunk that fails as a whole (its
        worker was lost) is split and its items are sent again one by one, so only an
        item that itself kills workers is recorded as failed.
        """
        retry: deque[Task] = deque()
        by_future: dict[Any, list[Task]] = {}
        serial = itertools.count()
        stream = as_completed()
        mean = 0.0  # running mean of seconds per item
        threads, checked = 1, 0.0

        def window() -> int:
            nonlocal threads, checked
            if time.monotonic() - checked > 5:  # workers may join later (cluster jobs start)
                threads, checked = max(1, sum(client.nthreads().values())), time.monotonic()
            return max(2, self.per_worker * threads)

        def submit_next() -> bool:
            if retry:
                chunk = [retry.popleft()]
            else:
                size = 1 if mean <= 0 else max(1, min(64, int(self.chunk_seconds / mean)))
                chunk = list(itertools.islice(pending, size))
            if not chunk:
                return False
            fut = client.submit(run_tasks, chunk, pure=False, key=f"exactsyn-items-{next(serial)}")
            by_future[fut.key] = chunk
            stream.add(fut)
            return True

        while len(by_future) < window() and submit_next():
            pass
        done = 0
        for fut in stream:
            chunk = by_future.pop(fut.key)
            try:
                outs = fut.result()
            except Exception as e:  # noqa: BLE001 - KilledWorker and the like
                outs = []
                if len(chunk) > 1:
                    retry.extend(chunk)
                else:
                    outs = [failed(chunk[0], f"Dask: {type(e).__name__}: {e}")]
            fut.release()
            for out in outs:
                secs = float(out.row.get("wall_seconds") or 0.0)
                done += 1
                mean += (secs - mean) / min(done, 200)
                on_outcome(out)
            while len(by_future) < window() and submit_next():
                pass

    def describe(self) -> str:
        return describe(self.address, self.jobs)

    def run(self, tasks: Iterable[Task], on_outcome: OnOutcome) -> None:
        pending: Iterator[Task] = iter(tasks)
        first = next(pending, None)
        if first is None:
            return
        pending = itertools.chain([first], pending)
        as_completed = distributed().as_completed
        with dask_client(self.address, self.jobs) as client:
            self._stream(client, pending, on_outcome, as_completed)
