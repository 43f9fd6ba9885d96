"""One batch item: its stable key, the task a worker runs, and the outcome it returns.

A worker runs :func:`run_task` — :func:`exactsyn.synthesise` on one spec, for the
batch's :class:`Goal` (objective and cost model), with the certificate written into a
private temporary directory, then read back as bytes.  The outcome carries the
certificate files, so no shared file system is needed between the workers and the process that owns the results store
(which writes them: :mod:`exactsyn.batch.store`).  Every error of one item becomes a
``failed`` outcome with its reason; nothing escapes to stop the batch.
"""

from __future__ import annotations

import atexit
import hashlib
import json
import os
import shutil
import socket
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from exactsyn.api.synthesis import Request, synthesise_request
from exactsyn.caches import memo
from exactsyn.core.costs import cost_model, library_costs
from exactsyn.core.library import Library, make_library
from exactsyn.errors import ExactsynError, NoCircuitError
from exactsyn.io.jsonio import gate_to_dict
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.encode import EncodingOptions
from exactsyn.sat.options import DEFAULT_OPTIONS, SearchOptions
from exactsyn.specification.reversible import Spec
from exactsyn.version import __version__

STATUSES = ("done", "timeout", "failed")


@dataclass(frozen=True)
class Goal:
    """What a batch minimises: an objective of :func:`exactsyn.synthesise` and its cost model."""

    objective: str = "gates"
    cost: str = "ncv"  # a built-in model name or a cost table file (used by the cost objectives)

    @property
    def uses_cost(self) -> bool:
        return self.objective in ("gates-then-cost", "cost")

    def label(self) -> str:
        """``gates``, ``depth``, ``gates-then-cost:t-count`` — the store's ``objective`` column."""
        return f"{self.objective}:{cost_model(self.cost).name}" if self.uses_cost else self.objective

    def identity(self, library: Library | None) -> Any:
        """The goal inside item keys and batch ids: the plain name for gates and depth (so keys of
        stores written before objectives existed stay the same), with the per-gate costs otherwise."""
        if not self.uses_cost:
            return self.objective
        model = cost_model(self.cost)
        ident: dict[str, Any] = {"name": self.objective, "cost_model": model.name}
        if library is not None:
            ident["costs"] = list(library_costs(library, model, positive=self.objective == "cost"))
        return ident


GATES = Goal()


@dataclass(frozen=True)
class LibraryChoice:
    """A preset (or kind list), an optional control cap and coupling; the library itself depends on the line count."""

    preset: str = "nct"
    max_controls: int | None = None
    coupling: str = ""  # as for --coupling; resolved per line count ("chain", "0-1-2", ...)

    def build(self, lines: int) -> Library:
        return _library(self.preset, lines, self.max_controls, self.coupling)


@memo(maxsize=32)
def _library(preset: str, lines: int, cap: int | None, coupling: str = "") -> Library:
    return make_library(preset, lines, cap, coupling)


def _digest(data: Any) -> str:
    text = json.dumps(data, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode()).hexdigest()


def library_identity(library: Library) -> dict[str, Any]:
    if library.preset:
        ident: dict[str, Any] = {"preset": library.preset, "lines": library.lines, "max_controls": library.control_cap}
        if library.coupling:
            ident["coupling"] = [list(e) for e in library.coupling]
        return ident
    return {"lines": library.lines, "gates": [str(g) for g in library.gates]}


def item_key(spec: Spec, library: Library, encoding: EncodingOptions, goal: Goal = GATES) -> str:
    """SHA-256 of (spec, library, objective, encoding options).

    The spec enters with every field that defines the problem (those of
    :func:`exactsyn.proof.certificate.spec_to_dict` but its name): outputs, care masks and
    the embedding choices left to the solver.  Those choices enter only when there are
    any, so a plain spec keeps the key earlier versions gave it and older stores resume.
    """
    problem: dict[str, Any] = {"lines": spec.lines, "outputs": list(spec.outputs), "care": list(spec.care)}
    if spec.open_lines or spec.output_targets or spec.output_candidates:
        problem |= {
            "open_lines": list(spec.open_lines),
            "output_targets": [list(t) for t in spec.output_targets],
            "output_candidates": list(spec.output_candidates),
        }
    return _digest(
        {
            "spec": problem,
            "library": library_identity(library),
            "objective": goal.identity(library),
            "encoding": encoding.describe(),
        }
    )


def unreadable_key(path: Path) -> str:
    """Key of the failure row of a spec file that cannot be read (by its resolved path)."""
    return _digest({"unreadable": str(path.resolve())})


@dataclass(frozen=True)
class Task:
    """One item for a worker: the function, its library, how to search (the batch's
    :class:`~exactsyn.sat.options.SearchOptions`, whose encoding is part of the item key)
    and what to minimise."""

    key: str
    spec: Spec
    library: Library
    search: SearchOptions = DEFAULT_OPTIONS
    source: str = ""
    certificates: bool = True
    verify: bool = False
    goal: Goal = GATES
    #: set for a check-only task: re-check the stored certificate (these files), do not solve
    check_files: tuple[tuple[str, bytes], ...] | None = field(default=None, repr=False)


@dataclass(frozen=True)
class Outcome:
    """What a worker hands back; ``row`` holds the store's columns for this item.

    ``work`` is ``solve`` (a whole row) or ``check`` (only the verification columns of
    an existing row, and status ``failed`` with the reason if the certificate was rejected).
    """

    key: str
    status: str
    row: dict[str, Any]
    files: tuple[tuple[str, bytes], ...] = field(default=(), repr=False)
    work: str = "solve"


def _row_base(task: Task) -> dict[str, Any]:
    lib = task.library
    return {
        "key": task.key,
        "source": task.source,
        "lines": task.spec.lines,
        "outputs": json.dumps(list(task.spec.outputs)),
        "care": json.dumps(list(task.spec.care)),
        "library": lib.name,
        "preset": lib.preset,
        "max_controls": lib.control_cap,
        "objective": task.goal.label(),
        "encoding": json.dumps(task.search.encoding.describe(), sort_keys=True),
        "solver": task.search.solver,
        "tool_version": __version__,
        "worker": f"{socket.gethostname()}:{os.getpid()}",
    }


def failed(task: Task, reason: str, status: str = "failed", **extra: Any) -> Outcome:
    """The outcome of a task that did not complete: a whole ``failed`` / ``timeout`` row.

    For a check-only task nothing is known about the certificate, so the stored row is
    left as it was (and checked again by the next ``--verify`` run).
    """
    if task.check_files is not None:
        return Outcome(task.key, status, {}, work="check")
    row = _row_base(task) | {"status": status, "reason": reason} | extra
    return Outcome(task.key, status, row)


def run_task(task: Task) -> Outcome:
    """Solve one item; never raises for a problem of the item itself."""
    started = time.perf_counter()
    if task.check_files is not None:
        return _check(task)
    try:
        return _run(task, started)
    except Exception as e:  # noqa: BLE001 - one item's error must not stop the batch
        reason = e.message if isinstance(e, ExactsynError) else f"{type(e).__name__}: {e}"
        return failed(task, reason, wall_seconds=round(time.perf_counter() - started, 4))


def run_tasks(tasks: list[Task]) -> list[Outcome]:
    """Several items in a row (one Dask task for a chunk of small items)."""
    return [run_task(t) for t in tasks]


@memo(maxsize=1)
def _scratch() -> Path:
    """This process's private scratch directory for certificates (made once, removed at exit).

    One directory per worker process rather than one per item: creating and removing a
    directory per item costs more than solving a 3-line function.
    """
    d = Path(tempfile.mkdtemp(prefix=f"exactsyn-worker-{os.getpid()}-"))
    atexit.register(shutil.rmtree, d, True)
    return d


def _clear(directory: Path) -> None:
    for p in directory.iterdir():
        if p.is_dir():
            shutil.rmtree(p)
        else:
            p.unlink()


def _rejection(report: Any) -> str:
    return "certificate rejected: " + "; ".join(f"{line.what}: {line.detail}" for line in report.lines if not line.ok)


def _check(task: Task) -> Outcome:
    """Re-check a stored certificate (``exactsyn check``) in a private directory."""
    started = time.perf_counter()
    tmp = _scratch()
    try:
        _clear(tmp)
        for name, data in task.check_files or ():
            if Path(name).name != name:
                raise ExactsynError(f"certificate file name {name!r} must be a plain name")
            (tmp / name).write_bytes(data)
        rep = check_certificate(tmp)
        _clear(tmp)
        ok, reason = rep.ok, None if rep.ok else _rejection(rep)
    except Exception as e:  # noqa: BLE001 - an unreadable certificate is a rejected one
        ok, reason = False, "certificate rejected: " + (e.message if isinstance(e, ExactsynError) else repr(e))
    row: dict[str, Any] = {"verified": int(ok), "verify_seconds": round(time.perf_counter() - started, 4)}
    if not ok:
        row |= {"status": "failed", "reason": reason}
    return Outcome(task.key, "done" if ok else "failed", row, work="check")


def _run(task: Task, started: float) -> Outcome:
    cert_dir = _scratch()
    _clear(cert_dir)
    try:
        request = Request(
            library=task.library,
            objective=task.goal.objective,
            cost=task.goal.cost,
            certificate=cert_dir if task.certificates else None,
            search=task.search,
        )
        syn = synthesise_request(task.spec, request)
    except NoCircuitError as e:
        return failed(task, f"no circuit: {e.message}", wall_seconds=round(time.perf_counter() - started, 4))
    res = syn.gate_result
    files: tuple[tuple[str, bytes], ...] = ()
    verified: int | None = None
    verify_seconds: float | None = None
    reason: str | None = None
    if task.certificates:
        if task.verify:
            rep = check_certificate(cert_dir)
            verified, verify_seconds = int(rep.ok), round(rep.seconds, 4)
            if not rep.ok:
                reason = _rejection(rep)
        files = tuple((p.name, p.read_bytes()) for p in sorted(cert_dir.iterdir()))
        _clear(cert_dir)
    circuit = syn.circuit
    status = "done" if syn.optimal else "timeout"
    if reason:
        status = "failed"
    elif status == "timeout":
        reason = "; ".join(
            [f"time limit: the optimum lies in [{res.lower_bound}, {res.upper_bound if circuit else '?'}]", *syn.notes]
        )
    optimum = None
    if circuit is not None and syn.optimal:
        obj = syn.objective_result
        optimum = len(circuit) if obj is None else obj.value
    row = _row_base(task) | {
        "status": status,
        "reason": reason,
        "optimum": optimum,
        "lower_bound": res.lower_bound,
        "upper_bound": res.upper_bound,
        "circuit": None if circuit is None else json.dumps([gate_to_dict(g) for g in circuit.gates]),
        "source_kind": res.source,
        "verified": verified,
        "seconds": round(syn.seconds, 4),
        "wall_seconds": round(time.perf_counter() - started, 4),
        "verify_seconds": verify_seconds,
        "conflicts": sum(s.conflicts or 0 for s in syn.steps),  # as reported (a Kissat racer reports none)
        "steps": json.dumps([s.summary() for s in syn.steps]),
    }
    return Outcome(task.key, status, row, files)
