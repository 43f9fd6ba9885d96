"""Long meet-in-the-middle scans in independent chunks: resumable, in this process, on a
process pool or on Dask.

The scan of :mod:`exactsyn.tables.engine` asks, for every class ``a`` of one stored level
``L`` of a table of depth ``R`` and the conjugates ``t_c`` of one or more target functions,
whether some ``canon(t_c∘a^±1)`` lies in level ``R`` (Golubitsky, Falconer & Maslov, DAC
2010).  On 5 lines level 6 holds 1.65e8 classes, so scanning it (what proving an optimum
of 13 gates takes) is hours of work; it splits into *chunks*, ranges ``lo..hi`` of class
positions of level ``L``.  A chunk's outcome — the first hit ``(position, lane)`` or none —
depends only on the table (named by its content hash), the targets and the range, so
chunks run in any order, in any process or machine whose cache holds the table.

* **Where.**  :class:`ScanSettings`: ``jobs = 1`` runs the chunks here (the kernel uses
  every core through numba's threads); ``jobs > 1`` on a pool of worker processes
  (``spawn``, one kernel thread each); ``address`` on Dask distributed (a scheduler
  address, or ``"local"``: :func:`exactsyn.cluster.dask_client`).
* **Resumable.**  With a ``state`` directory, every finished chunk is appended to the
  scan's state file (JSON lines: the scan's identity first, then one line per chunk,
  written and flushed one at a time).  A scan started again with the same identity — the
  table's content hash, the level, the targets' hash and the chunk size — skips the
  chunks recorded; a recorded hit is returned at once.  A state file whose identity
  differs is refused.
* **Stopping.**  Chunks are handed out in order; after the first hit no new chunk starts
  (any hit settles the level: the engine needs one split, not the first).  A deadline
  stops handing out chunks; the outcome then says how many classes were covered.

Which chunks are certified is not decided here: a result records the claim, and the
checker re-derives it from the table alone (:mod:`exactsyn.tables.verify`).
"""

from __future__ import annotations

import hashlib
import json
import multiprocessing
import time
from collections.abc import Callable, Iterator
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from exactsyn.caches import memo
from exactsyn.cluster import dask_client, distributed
from exactsyn.errors import ExactsynError
from exactsyn.tables import storage
from exactsyn.tables.keys import layout

#: Classes per chunk when the settings do not say (in-process scans check the deadline between chunks).
DEFAULT_CHUNK = 1 << 15
#: Lanes (classes × 2 × conjugates) per process from which a scan builds the kernels' filter
#: of the top level first (5 lines, :mod:`exactsyn.tables.filter5`: about 27 CPU seconds for
#: the depth-6 level, saving about 65 ns of 190 per lane; same answers).
FILTER_LANES = 5 * 10**8
STATE_FORMAT = "exactsyn-scan/1"
ScanProgress = Callable[[int, int], None]  # (classes done, classes in the level)


@dataclass(frozen=True)
class ScanSettings:
    """Where and how long scans run (module docstring)."""

    jobs: int = 1
    address: str | None = None
    state: Path | None = None
    chunk: int = DEFAULT_CHUNK

    def __post_init__(self) -> None:
        if self.jobs < 1 or self.chunk < 1:
            raise ExactsynError("a scan needs at least one job and one class per chunk")


@dataclass(frozen=True)
class ScanJob:
    """One chunk, as sent to a worker: the table by name and content hash, the levels, the
    range, and the targets' conjugates as raw key words."""

    library: str
    lines: int
    content_hash: str
    cache: str | None
    level: int
    top: int
    lo: int
    hi: int
    fkeys: bytes
    filtered: bool = False


@dataclass(frozen=True)
class ChunkOutcome:
    lo: int
    hi: int
    position: int  # −1: no hit in the chunk
    lane: int
    seconds: float


@dataclass(frozen=True)
class ScanResult:
    """``hit`` = ``(position, lane)`` of a hit, else None; ``complete``: every class scanned
    (or a hit found); ``classes``: classes covered; ``resumed``: chunks taken from the state file."""

    hit: tuple[int, int] | None
    complete: bool
    classes: int
    seconds: float
    resumed: int


# ----------------------------------------------------------------------------- the worker side
@memo(maxsize=4)
def _open(library: str, lines: int, content_hash: str, cache: str | None) -> tuple[tuple[Any, ...], ...]:
    """``(vals, index, shift)`` of every level of the cached table with this content hash."""
    directory = storage.table_dir(library, Path(cache) if cache else None, lines)
    manifest = storage.read_manifest(directory, lines)
    if manifest is None or manifest.get("content_hash") != content_hash:
        raise ExactsynError(f"this worker's cache has no {lines}-line {library} table {content_hash[:16]}")
    words = layout(lines).words
    out = []
    for lv in manifest["levels"]:
        vals = storage.read_array(directory / lv["file"], np.uint64, int(lv["classes"]), words)
        idx_dtype = np.uint32 if lv["index_file"].endswith(".u32") else np.uint64
        index = storage.read_array(directory / lv["index_file"], idx_dtype, (1 << int(lv["index_bits"])) + 1)
        out.append((vals, index, 64 - int(lv["index_bits"])))
    return tuple(out)


def run_chunk(job: ScanJob) -> ChunkOutcome:
    """Scan one chunk (in any process whose cache holds the table)."""
    t0 = time.perf_counter()
    levels = _open(job.library, job.lines, job.content_hash, job.cache)
    lay = layout(job.lines)
    fkeys = np.frombuffer(job.fkeys, dtype=np.uint64)
    if lay.words > 1:
        fkeys = fkeys.reshape(-1, lay.words)
    reps = levels[job.level][0]
    vals, index, shift = levels[job.top]
    out = np.empty(job.hi - job.lo, dtype=np.int64)
    lay.kernels().scan(reps, job.lo, job.hi, fkeys, vals, index, shift, out, filtered=job.filtered)
    hits = np.flatnonzero(out >= 0)
    position, lane = (job.lo + int(hits[0]), int(out[hits[0]])) if len(hits) else (-1, -1)
    return ChunkOutcome(job.lo, job.hi, position, lane, time.perf_counter() - t0)


def _single_thread_worker() -> None:
    """Pool workers share the cores: one kernel thread each."""
    import numba  # heavy: the kernels' compiler, loaded by the first chunk anyway

    numba.set_num_threads(1)


# ----------------------------------------------------------------------------- the state file
class _State:
    """The JSON-lines record of one scan (module docstring)."""

    def __init__(self, directory: Path, identity: dict[str, Any]) -> None:
        digest = hashlib.sha256(json.dumps(identity, sort_keys=True).encode()).hexdigest()[:20]
        directory.mkdir(parents=True, exist_ok=True)
        self.path = directory / f"scan-{digest}.jsonl"
        self.done: dict[int, ChunkOutcome] = {}
        if self.path.exists():
            lines = self.path.read_text().splitlines()
            if not lines or json.loads(lines[0]).get("scan") != identity:
                raise ExactsynError(f"{self.path} records another scan; remove it or use another state directory")
            for line in lines[1:]:
                try:
                    row = json.loads(line)
                except ValueError:  # a line cut by a kill: that chunk runs again
                    continue
                self.done[int(row["lo"])] = ChunkOutcome(row["lo"], row["hi"], row["position"], row["lane"],
                                                         row["seconds"])  # fmt: skip
        else:
            self.path.write_text(json.dumps({"scan": identity}) + "\n")

    def record(self, out: ChunkOutcome) -> None:
        with open(self.path, "a") as fh:
            fh.write(json.dumps(out.__dict__) + "\n")
            fh.flush()
        self.done[out.lo] = out


# ----------------------------------------------------------------------------- running a scan
def _outcomes(jobs: list[ScanJob], settings: ScanSettings, stop: Callable[[], bool]) -> Iterator[ChunkOutcome]:
    """Run the jobs where the settings say; yield outcomes as they come; no new job once ``stop()``."""
    if settings.address is not None:
        yield from _dask(jobs, settings, stop)
        return
    if settings.jobs <= 1:
        for job in jobs:
            if stop():
                return
            yield run_chunk(job)
        return
    ctx = multiprocessing.get_context("spawn")
    with ProcessPoolExecutor(settings.jobs, mp_context=ctx, initializer=_single_thread_worker) as pool:
        pending: set[Future[ChunkOutcome]] = set()
        queue = iter(jobs)
        try:
            while True:
                while len(pending) < 2 * settings.jobs and not stop() and (nxt := next(queue, None)) is not None:
                    pending.add(pool.submit(run_chunk, nxt))
                if not pending:
                    return
                finished, pending = wait(pending, return_when=FIRST_COMPLETED)
                for fut in finished:
                    yield fut.result()
        finally:
            for fut in pending:
                fut.cancel()


def _dask(jobs: list[ScanJob], settings: ScanSettings, stop: Callable[[], bool]) -> Iterator[ChunkOutcome]:
    with dask_client(settings.address, settings.jobs) as client:
        stream = distributed().as_completed()
        queue = iter(jobs)
        window = max(2, 2 * sum(client.nthreads().values()))
        live = 0

        def submit() -> bool:
            nxt = None if stop() else next(queue, None)
            if nxt is not None:
                stream.add(client.submit(run_chunk, nxt, pure=False))
            return nxt is not None

        while live < window and submit():
            live += 1
        for fut in stream:
            live -= 1
            yield fut.result()
            fut.release()
            if submit():
                live += 1
            elif live == 0:
                return


def worth_filter(classes: int, conjugates: int, processes: int = 1) -> bool:
    """Does a scan of ``classes`` classes for ``conjugates`` target conjugates pay for building
    the filter in each of ``processes`` processes (:data:`FILTER_LANES`)?"""
    return classes * 2 * conjugates >= FILTER_LANES * max(1, processes)


def scan_level(
    library: str,
    lines: int,
    content_hash: str,
    cache: Path | None,
    level: int,
    classes: int,
    top: int,
    fkeys: np.ndarray,
    settings: ScanSettings | None = None,
    deadline: float | None = None,
    progress: ScanProgress | None = None,
) -> ScanResult:
    """Scan the ``classes`` classes of ``level`` against level ``top`` for the conjugates ``fkeys``
    (a key array; lanes as in :meth:`TableKernels.scan`): the first hit found, or none."""
    settings = settings or ScanSettings()
    t0 = time.perf_counter()
    raw = np.ascontiguousarray(fkeys, dtype=np.uint64).tobytes()
    identity = {"format": STATE_FORMAT, "table": content_hash, "library": library, "lines": lines, "level": level,
                "top": top, "classes": classes, "chunk": settings.chunk,
                "targets": hashlib.sha256(raw).hexdigest()}  # fmt: skip
    state = _State(settings.state, identity) if settings.state is not None else None
    recorded = state.done if state is not None else {}
    hits = [o for o in recorded.values() if o.position >= 0]
    if hits:
        best = min(hits, key=lambda o: o.lo)
        return ScanResult((best.position, best.lane), True, sum(o.hi - o.lo for o in recorded.values()), 0.0,
                          len(recorded))  # fmt: skip
    cache_text = str(cache) if cache is not None else None
    filtered = worth_filter(classes, len(fkeys), settings.jobs)
    jobs = [
        ScanJob(library, lines, content_hash, cache_text, level, top, lo, min(classes, lo + settings.chunk), raw,
                filtered)  # fmt: skip
        for lo in range(0, classes, settings.chunk)
        if lo not in recorded
    ]
    covered = sum(o.hi - o.lo for o in recorded.values())
    found: list[ChunkOutcome] = []

    def stop() -> bool:
        return bool(found) or (deadline is not None and time.perf_counter() > deadline)

    for out in _outcomes(jobs, settings, stop):
        covered += out.hi - out.lo
        if state is not None:
            state.record(out)
        if out.position >= 0:
            found.append(out)
        if progress is not None:
            progress(covered, classes)
    seconds = time.perf_counter() - t0
    if found:
        best = min(found, key=lambda o: o.lo)
        return ScanResult((best.position, best.lane), True, covered, seconds, len(recorded))
    return ScanResult(None, covered >= classes, covered, seconds, len(recorded))
