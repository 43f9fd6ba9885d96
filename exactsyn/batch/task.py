"""One batch item: its stable key, the task a worker runs, and the outcome it returns.

A worker runs :func:`run_task` — :func:`exactsyn.search.loop.synthesise` on one spec, with
the certificate written by :func:`exactsyn.proof.certificate.proof_writer` and
:func:`~exactsyn.proof.certificate.write_result` into a private temporary directory, then
read back as bytes.  The outcome carries the certificate files, so no shared file
system is needed between the workers and the process that owns the results store
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
from functools import lru_cache
from pathlib import Path
from typing import Any

from exactsyn import __version__
from exactsyn.core.library import Library, make_library
from exactsyn.errors import ExactsynError
from exactsyn.sat.encode import EncodingOptions
from exactsyn.spec.reversible import Spec

OBJECTIVE = "gates"
STATUSES = ("done", "timeout", "failed")


@dataclass(frozen=True)
class LibraryChoice:
    """A preset (or kind list), an optional control cap and coupling; the library itself depends on the line count."""

    preset: str = "nct"
    max_controls: int | None = None
    coupling: str = ""  # as for --coupling; resolved per line count ("chain", "0-1-2", ...)

    def build(self, lines: int) -> Library:
        return _library(self.preset, lines, self.max_controls, self.coupling)


@lru_cache(maxsize=32)
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


def item_key(spec: Spec, library: Library, encoding: EncodingOptions, objective: str = OBJECTIVE) -> str:
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
            "objective": objective,
            "encoding": encoding.describe(),
        }
    )


def unreadable_key(path: Path) -> str:
    """Key of the failure row of a spec file that cannot be read (by its resolved path)."""
    return _digest({"unreadable": str(path.resolve())})


@dataclass(frozen=True)
class Task:
    key: str
    spec: Spec
    library: Library
    encoding: EncodingOptions
    source: str = ""
    solver: str = "cadical195"
    time_limit: float | None = None
    certificates: bool = True
    verify: bool = False
    bounds: str = "table"  # lower bounds of exactsyn.search.loop (BOUNDS)
    #: set for a check-only task: re-check the stored certificate (these files), do not solve
    check_files: tuple[tuple[str, bytes], ...] | None = field(default=None, repr=False)


@dataclass(frozen=True)
class Outcome:
    """What a worker hands back; ``row`` holds the store's columns for this item.

    ``kind`` is ``solve`` (a whole row) or ``check`` (only the verification columns of
    an existing row, and status ``failed`` with the reason if the certificate was rejected).
    """

    key: str
    status: str
    row: dict[str, Any]
    files: tuple[tuple[str, bytes], ...] = field(default=(), repr=False)
    kind: str = "solve"


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
        "objective": OBJECTIVE,
        "encoding": json.dumps(task.encoding.describe(), sort_keys=True),
        "solver": task.solver,
        "tool_version": __version__,
        "worker": f"{socket.gethostname()}:{os.getpid()}",
    }


def failed(task: Task, reason: str, status: str = "failed", **extra: Any) -> Outcome:
    """The outcome of a task that did not complete: a whole ``failed`` / ``timeout`` row.

    For a check-only task nothing is known about the certificate, so the stored row is
    left as it was (and checked again by the next ``--verify`` run).
    """
    if task.check_files is not None:
        return Outcome(task.key, status, {}, kind="check")
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


@lru_cache(maxsize=1)
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
    from exactsyn.proof.certificate import check_certificate

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
    return Outcome(task.key, "done" if ok else "failed", row, kind="check")


def _run(task: Task, started: float) -> Outcome:
    from exactsyn.io.jsonio import gate_to_dict
    from exactsyn.io.report import step_to_dict
    from exactsyn.proof.certificate import check_certificate, proof_writer, write_result
    from exactsyn.search.loop import NoCircuitError, synthesise

    library = task.library
    cert_dir = _scratch()
    _clear(cert_dir)
    try:
        res = synthesise(
            task.spec,
            library,
            encoding=task.encoding,
            solver=task.solver,
            time_limit=task.time_limit,
            bounds=task.bounds,
            proof_sink=proof_writer(cert_dir) if task.certificates else None,
        )
    except NoCircuitError as e:
        return failed(task, f"no circuit: {e.message}", wall_seconds=round(time.perf_counter() - started, 4))
    files: tuple[tuple[str, bytes], ...] = ()
    verified: int | None = None
    verify_seconds: float | None = None
    reason: str | None = None
    if task.certificates:
        write_result(cert_dir, res)
        if task.verify:
            rep = check_certificate(cert_dir)
            verified, verify_seconds = int(rep.ok), round(rep.seconds, 4)
            if not rep.ok:
                reason = _rejection(rep)
        files = tuple((p.name, p.read_bytes()) for p in sorted(cert_dir.iterdir()))
        _clear(cert_dir)
    circuit = res.circuit
    status = "done" if res.optimal else "timeout"
    if reason:
        status = "failed"
    elif status == "timeout":
        reason = f"time limit: the optimum lies in [{res.lower_bound}, {res.upper_bound if circuit else '?'}]"
    row = _row_base(task) | {
        "status": status,
        "reason": reason,
        "optimum": len(circuit) if circuit is not None and res.optimal else None,
        "lower_bound": res.lower_bound,
        "upper_bound": res.upper_bound,
        "circuit": None if circuit is None else json.dumps([gate_to_dict(g) for g in circuit.gates]),
        "source_kind": res.source,
        "verified": verified,
        "seconds": round(res.seconds, 4),
        "wall_seconds": round(time.perf_counter() - started, 4),
        "verify_seconds": verify_seconds,
        "conflicts": sum(s.conflicts for s in res.steps),
        "steps": json.dumps([step_to_dict(s) for s in res.steps]),
    }
    return Outcome(task.key, status, row, files)
