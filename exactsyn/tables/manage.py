"""Build, inspect and remove the cached 4-line class tables.

:func:`build` is idempotent: when a table of at least the requested depth is cached and
its files are there with the manifest's sizes, it returns at once without reading
them (``exactsyn tables info --hashes`` re-hashes them, and every certificate check
re-hashes the table it uses).  Otherwise it builds into a temporary directory and renames it into place (see
:mod:`exactsyn.tables.storage`), so a crash or Ctrl-C never leaves a table that looks
complete; a stale temporary directory of a dead build is removed by the next build.
"""

from __future__ import annotations

import os
import shutil
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from exactsyn.errors import ExactsynError
from exactsyn.tables import storage
from exactsyn.tables.gate_keys import TABLE_LIBRARIES, gate_set
from exactsyn.tables.levels import DEFAULT_MEMORY, BuildProgress, build_table

#: Depth of the table built for each library.  ``mct``: levels 0..8 (about 2.4e8 classes,
#: 1.9 GB) settle every function, the largest optimum being 15 = 8 + 7.  See
#: ``docs/tables4.md`` for the measurements behind these choices.
DEFAULT_DEPTH = {"mct": 8, "nct": 8, "mixed": 6}


@dataclass(frozen=True)
class TableInfo:
    """What is cached for one library."""

    library: str
    directory: Path
    present: bool
    depth: int | None = None
    bytes: int = 0
    classes: tuple[int, ...] = ()
    functions: tuple[int, ...] = ()
    content_hash: str | None = None
    problem: str | None = None
    manifest: dict[str, Any] | None = None


def info(library: str | None = None, cache: Path | None = None, hashes: bool = False) -> list[TableInfo]:
    """One entry per library (or for ``library`` only): present or not, depth, size, counts."""
    names = [library] if library else list(TABLE_LIBRARIES)
    out = []
    for name in names:
        directory = storage.table_dir(name, cache)
        manifest = storage.read_manifest(directory)
        if manifest is None:
            out.append(TableInfo(name, directory, False))
            continue
        problem = storage.check_directory(directory, hashes)
        levels = manifest["levels"]
        out.append(
            TableInfo(
                library=name,
                directory=directory,
                present=problem.ok,
                depth=int(manifest["depth"]),
                bytes=sum(int(lv[size]) for lv in levels for _, size, _ in storage.FILE_KEYS),
                classes=tuple(int(lv["classes"]) for lv in levels),
                functions=tuple(int(lv["functions"]) for lv in levels),
                content_hash=manifest.get("content_hash"),
                problem="; ".join(problem.reasons) or None,
                manifest=manifest,
            )
        )
    return out


def _clean_stale(library: str, cache: Path | None) -> None:
    """Remove temporary build directories whose process is gone."""
    root = storage.tables_root(cache)
    if not root.is_dir():
        return
    for entry in root.glob(f".{library}.build-*"):
        try:
            pid = int(entry.name.rsplit("-", 1)[1])
        except ValueError:
            continue
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            shutil.rmtree(entry, ignore_errors=True)
        except PermissionError:
            pass


def build(
    library: str = "mct",
    depth: int | None = None,
    progress: BuildProgress | None = None,
    cache: Path | None = None,
    memory: int = DEFAULT_MEMORY,
    force: bool = False,
) -> TableInfo:
    """Build the class table of ``library`` into the cache (or return the valid cached one)."""
    gs = gate_set(library)
    want = DEFAULT_DEPTH[gs.library] if depth is None else depth
    if want < 0:
        raise ExactsynError("table depth must be 0 or more")
    directory = storage.table_dir(gs.library, cache)
    if not force:
        manifest = storage.read_manifest(directory)
        if manifest is not None and (int(manifest["depth"]) >= want or manifest.get("complete")):
            if progress:
                progress("checking the cached table", 0, 1)
            if storage.check_directory(directory, hashes=False).ok:
                return info(gs.library, cache)[0]
    _clean_stale(gs.library, cache)
    work = storage.new_work_dir(gs.library, cache)
    try:
        build_table(gs, want, work, progress, memory)
        storage.install(work, directory)
    except BaseException:
        shutil.rmtree(work, ignore_errors=True)
        raise
    return info(gs.library, cache)[0]


def remove(library: str, cache: Path | None = None) -> bool:
    """Delete the cached table of ``library``; True if there was one."""
    directory = storage.table_dir(gate_set(library).library, cache)
    if not directory.exists():
        return False
    shutil.rmtree(directory)
    return True
