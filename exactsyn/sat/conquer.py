"""Solve the cubes of one k-query on many processes (cube and conquer, the conquer half).

The cubes come from :mod:`exactsyn.sat.cube_split`; they are solved on a local process pool
or on Dask (:mod:`exactsyn.sat.cube_engines`).  Each cube is the query's CNF plus the
cube's clauses *appended at the end*, solved from scratch:

* the first satisfiable cube answers the query — its model is a model of the CNF, so it
  decodes to a circuit like any other (and is simulated before it is used) — and every
  other cube is cancelled;
* an unsatisfiable cube comes back, when certifying, with its own LRAT refutation of
  "CNF + cube clauses" captured by :func:`exactsyn.sat.solver.solve` (``proof=True``)
  (clause ids ``1..m`` are the CNF's, the cube's clauses ``m+1…``), stored through the
  proof sink as ``k11-c0007.lrat.gz``;
* the query is refuted when every cube is; that the cubes cover the query is argued in
  :mod:`exactsyn.sat.cube_split` and re-checked by :mod:`exactsyn.proof.cover`.

A worker receives the question (spec, library, k, encoding options), not 170,000
clauses: it encodes the query itself, once per process, and compares the CNF's hash with
the one the caller computed, so a worker with another version of the encoder fails
loudly instead of refuting a different formula.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Protocol

from exactsyn.caches import memo
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.sat.cube_split import DEFAULT_DEPTH, DEFAULT_SCHEME, CubePlan, split_query
from exactsyn.sat.dimacs import cnf_sha256
from exactsyn.sat.encode import Encoding, EncodingOptions, encode
from exactsyn.sat.solver import solve
from exactsyn.sat.status import Status
from exactsyn.specification.reversible import Spec

#: A query still open after this long on its own is split (when splitting is asked for).
SPLIT_AFTER = 1.0


@dataclass(frozen=True)
class CubeOptions:
    """How hard queries are split and where the cubes run.

    ``jobs`` local worker processes, or Dask: ``scheduler`` is a scheduler address, or
    ``"local"`` for a ``LocalCluster`` of ``jobs`` processes on 127.0.0.1.  ``scheme`` and
    ``depth`` choose the cubes (:func:`exactsyn.sat.cube_split.split_query`); a query still
    open after ``after`` seconds on its own is split.
    """

    jobs: int = 2
    scheduler: str | None = None
    scheme: str = DEFAULT_SCHEME
    depth: int = DEFAULT_DEPTH
    after: float = SPLIT_AFTER

    def __post_init__(self) -> None:
        if self.jobs < 1:
            raise ExactsynError("jobs must be 1 or more")
        if self.depth < 1:
            raise ExactsynError("the cube depth must be 1 or more")
        if not self.after >= 0:
            raise ExactsynError("the time before splitting must be 0 or more seconds")


SPLIT_MODES = {
    "auto": "cubes on a Dask scheduler, or on local processes from 3 jobs up; with 2 jobs the race",
    "cubes": "split hard queries into cubes on the jobs' processes (or the Dask scheduler)",
    "race": "race a hard query against the formulation without symmetry breaking (2 processes)",
    "off": "one process per query",
}


def split_options(
    mode: str,
    jobs: int,
    scheduler: str | None = None,
    scheme: str = DEFAULT_SCHEME,
    depth: int = DEFAULT_DEPTH,
    after: float = SPLIT_AFTER,
) -> CubeOptions | None:
    """The cube options of a run, or ``None`` when queries are not split (see :data:`SPLIT_MODES`)."""
    if mode not in SPLIT_MODES:
        raise ExactsynError(f"unknown split mode {mode!r}; choose one of: {', '.join(SPLIT_MODES)}")
    if scheduler is not None and mode in ("race", "off"):
        raise ExactsynError(f"a Dask scheduler runs cubes; it does not go with split mode {mode!r}")
    if mode == "cubes" or (mode == "auto" and (scheduler is not None or jobs >= 3)):
        return CubeOptions(jobs, scheduler, scheme, depth, after)
    return None


@dataclass(frozen=True)
class CubeJob:
    """What a worker needs to solve one cube (see the module docstring)."""

    spec: Spec
    library: Library
    k: int
    options: EncodingOptions
    cnf_sha256: str
    index: int
    clauses: tuple[tuple[int, ...], ...]
    certify: bool
    solver: str
    time_limit: float | None


@dataclass(frozen=True)
class CubeOutcome:
    """A worker's answer for one cube; ``status`` is a :class:`Status` or ``"error"``."""

    index: int
    status: str
    model: tuple[int, ...] | None
    proof: bytes
    seconds: float
    conflicts: int
    solver: str
    error: str = ""
    cpu_seconds: float = 0.0  # processor time of the worker on this cube


@dataclass(frozen=True)
class CubeRecord:
    """One cube as the certificate lists it."""

    index: int
    clauses: tuple[tuple[int, ...], ...]
    label: str
    status: Status
    proof: str | None = None
    seconds: float = 0.0
    conflicts: int = 0
    proof_bytes: int = 0
    cpu_seconds: float = 0.0


@dataclass(frozen=True)
class SplitRecord:
    """How a query was split and what became of every cube."""

    scheme: str
    positions: tuple[int, ...]
    engine: str
    cubes: tuple[CubeRecord, ...]

    def counts(self) -> dict[str, int]:
        out = {"total": len(self.cubes)}
        for c in self.cubes:
            out[str(c.status)] = out.get(str(c.status), 0) + 1
        return out


@dataclass(frozen=True)
class CubeEvent:
    """Progress of a split query: ``start`` (``total`` cubes), ``cube`` (one answered), ``end``."""

    phase: str
    k: int
    total: int
    done: int = 0
    status: str = ""
    seconds: float = 0.0
    label: str = ""


CubeProgress = Callable[[CubeEvent], None]
OnOutcome = Callable[[CubeOutcome], bool]  # returns True: stop every other cube


class CubeEngine(Protocol):
    def describe(self) -> str: ...

    def run(self, jobs: list[CubeJob], on_outcome: OnOutcome, deadline: float | None) -> None:
        """Solve ``jobs`` (in order, as workers free up) until done, told to stop, or past ``deadline``
        (``time.monotonic()``)."""
        ...


# ------------------------------------------------------------------ worker side
@memo(maxsize=2)
def _encoding(spec: Spec, library: Library, k: int, options: EncodingOptions, digest: str) -> Encoding:
    enc = encode(spec, library, k, options)
    if cnf_sha256(enc.num_vars, enc.clauses) != digest:
        raise ExactsynError("cube worker: the re-encoded query differs from the caller's (another exactsyn version?)")
    return enc


def solve_cube(job: CubeJob, stop: Callable[[], bool] | None = None) -> CubeOutcome:
    """Solve one cube (in a worker process); errors come back as ``status="error"``."""
    t0, c0 = time.perf_counter(), time.process_time()
    try:
        enc = _encoding(job.spec, job.library, job.k, job.options, job.cnf_sha256)
        clauses = enc.clauses + [list(c) for c in job.clauses]
        limit = job.time_limit
        if limit is not None and limit <= 0:
            return CubeOutcome(job.index, Status.UNKNOWN, None, b"", 0.0, 0, job.solver)
        out = solve(clauses, solver=job.solver, time_limit=limit, stop=stop, proof=job.certify)
        wall, cpu = time.perf_counter() - t0, time.process_time() - c0
        return CubeOutcome(
            job.index, out.status, out.model, out.proof, wall, out.conflicts or 0, out.solver, cpu_seconds=cpu
        )
    except Exception as e:  # noqa: BLE001 - reported to the caller, which stops the query
        msg = e.message if isinstance(e, ExactsynError) else f"{type(e).__name__}: {e}"
        return CubeOutcome(job.index, "error", None, b"", time.perf_counter() - t0, 0, job.solver, msg)


# ------------------------------------------------------------------ caller side
@dataclass(frozen=True)
class Conquest:
    """The answer of a split query."""

    status: Status
    model: tuple[int, ...] | None
    conflicts: int
    solver: str
    split: SplitRecord
    proof_bytes: int = 0
    errors: tuple[str, ...] = field(default=())


def conquer(
    enc: Encoding,
    options: CubeOptions,
    *,
    engine: CubeEngine,
    certify: bool,
    solver: str = "cadical195",
    time_limit: float | None = None,
    proof_sink: Callable[[str, bytes], str] | None = None,
    stem: str = "",
    progress: CubeProgress | None = None,
    plan: CubePlan | None = None,
) -> Conquest:
    """Split ``enc`` (unless ``plan`` is given) and solve the cubes on ``engine``."""
    plan = plan or split_query(enc, options.scheme, options.depth)
    start = time.monotonic()
    deadline = None if time_limit is None else start + time_limit
    digest = cnf_sha256(enc.num_vars, enc.clauses)
    jobs = [
        CubeJob(enc.spec, enc.library, enc.k, enc.options, digest, c.index, c.clauses, certify, solver, time_limit)
        for c in plan.cubes
    ]
    by_index = {c.index: c for c in plan.cubes}
    records: dict[int, CubeRecord] = {}
    found: list[CubeOutcome] = []
    errors: list[str] = []
    names: list[str] = []
    total = len(plan.cubes)
    if progress:
        progress(CubeEvent("start", enc.k, total))

    def on_outcome(out: CubeOutcome) -> bool:
        cube = by_index[out.index]
        if out.status == "error":
            errors.append(f"cube {out.index} ({cube.label}): {out.error}")
            return True
        status = Status(out.status)
        stored = None
        if status == Status.UNSAT and certify:
            assert proof_sink is not None
            stored = proof_sink(f"{stem}-c{out.index:04d}", out.proof)
        records[out.index] = CubeRecord(
            out.index,
            cube.clauses,
            cube.label,
            status,
            stored,
            out.seconds,
            out.conflicts,
            len(out.proof) if stored else 0,
            out.cpu_seconds,
        )
        names.append(out.solver)
        if progress:
            progress(CubeEvent("cube", enc.k, total, len(records), str(status), out.seconds, cube.label))
        if status == Status.SAT:
            found.append(out)
            return True
        return status == Status.UNKNOWN  # a cube ran out of time: the query cannot be refuted now

    engine.run(jobs, on_outcome, deadline)
    if progress:
        progress(CubeEvent("end", enc.k, total, len(records), seconds=time.monotonic() - start))
    if errors:
        raise ExactsynError(errors[0])
    cubes = tuple(records.get(c.index) or CubeRecord(c.index, c.clauses, c.label, Status.UNKNOWN) for c in plan.cubes)
    split = SplitRecord(plan.scheme, plan.positions, engine.describe(), cubes)
    conflicts = sum(c.conflicts for c in cubes)
    if found:
        status, model = Status.SAT, found[0].model
    elif all(c.status == Status.UNSAT for c in cubes):
        status, model = Status.UNSAT, None
    else:
        status, model = Status.UNKNOWN, None
    solver_name = names[0] if names else solver
    return Conquest(status, model, conflicts, solver_name, split, sum(c.proof_bytes for c in cubes), tuple(errors))
