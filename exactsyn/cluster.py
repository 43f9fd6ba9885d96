"""Where parallel work runs: the cores of this machine, or a Dask distributed cluster.

One place for what the batch engines (:mod:`exactsyn.batch.workers`) and the cube solver
(:mod:`exactsyn.sat.conquer`) share: how many cores this process may use, the worker
side of a local process pool (:func:`serve_pipe`), and how to reach Dask — a scheduler
given by address (a cluster started elsewhere, e.g. through dask-jobqueue on Slurm), or
a ``LocalCluster`` of worker processes on loopback (``address`` ``None`` or
``"local"``).  dask.distributed is imported only here and only when asked for: it is the
optional ``cluster`` extra.
"""

from __future__ import annotations

import contextlib
import logging
import os
import signal
import tempfile
from collections.abc import Callable, Iterator
from multiprocessing.connection import Connection
from typing import Any

from exactsyn.errors import ExactsynError

LOCAL = "local"


def default_jobs() -> int:
    """Every core this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not on Linux
        return max(1, os.cpu_count() or 1)


#: The exit status of a local worker that Ctrl-C reached in the middle of a job (its parent
#: stops too; the job is not recorded as failed).
INTERRUPTED_EXIT = 130


def serve_pipe(conn: Connection, scratch: str, handle: Callable[[Any], Any]) -> None:
    """The body of a local worker process: answer each job from ``conn`` with ``handle(job)``.

    Ctrl-C is left to the parent, which stops its workers (SIGINT is ignored here, and
    python-sat's own handler is switched off: :mod:`exactsyn.sat.sigint`); should an
    interrupt reach the worker anyway, it exits with :data:`INTERRUPTED_EXIT` without an
    answer. Every temporary file of the worker goes below ``scratch``, a directory the
    parent removes at the end, also after it had to kill the worker. ``None`` or a closed
    pipe ends the loop.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    os.environ["TMPDIR"] = scratch
    tempfile.tempdir = scratch
    while True:
        try:
            job = conn.recv()
        except (EOFError, OSError):
            return
        if job is None:
            return
        try:
            out = handle(job)
        except KeyboardInterrupt:
            conn.close()
            os._exit(INTERRUPTED_EXIT)
        try:
            conn.send(out)
        except OSError:
            return


def distributed() -> Any:
    """The ``distributed`` module, or a clear error naming the extra to install."""
    try:
        import distributed as dist  # optional: the 'cluster' extra
    except ImportError:
        raise ExactsynError("the Dask engine needs dask.distributed: pip install 'exactsyn[cluster]'") from None
    return dist


def describe(address: str | None, jobs: int) -> str:
    if address and address != LOCAL:
        return f"Dask scheduler at {address}"
    return f"Dask local cluster of {jobs} worker process{'es' if jobs != 1 else ''} on 127.0.0.1"


@contextlib.contextmanager
def dask_client(address: str | None, jobs: int) -> Iterator[Any]:
    """A connected ``distributed.Client``; a local cluster of ``jobs`` processes when ``address`` is
    ``None`` or ``"local"``.  Closed (with the local cluster) on exit."""
    dist = distributed()
    cluster = None
    try:
        if address and address != LOCAL:
            client = dist.Client(address, timeout=30)
        else:
            cluster = dist.LocalCluster(
                n_workers=jobs,
                threads_per_worker=1,
                processes=True,
                host="127.0.0.1",
                dashboard_address=None,
                silence_logs=logging.ERROR,
            )
            client = dist.Client(cluster)
    except OSError as e:
        if cluster is not None:
            cluster.close()
        raise ExactsynError(f"cannot reach the Dask scheduler: {e}") from None
    try:
        yield client
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
