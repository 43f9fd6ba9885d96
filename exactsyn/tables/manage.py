"""Build, inspect and remove the cached class tables (any line count the engine has).

:func:`build` is idempotent: when a table of at least the requested depth is cached and
its files are there with the manifest's sizes, it returns at once without reading
them (``exactsyn tables info --hashes`` re-hashes them, and every certificate check
re-hashes the table it uses).  Otherwise it builds into a temporary directory and renames
it into place (see :mod:`exactsyn.tables.storage`), so a crash or Ctrl-C never leaves a
table that looks complete; a stale temporary directory of a dead build is removed by the
next build.
"""

from __future__ import annotations

import os
import shutil
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from exactsyn.errors import ExactsynError
from exactsyn.tables import storage
from exactsyn.tables.gate_keys import LAYER_LIBRARIES, TABLE_LIBRARIES, gate_set
from exactsyn.tables.keys import DEFAULT_DEPTHS, MAX_DEPTHS, check_lines
from exactsyn.tables.levels import DEFAULT_MEMORY, BuildProgress, build_table


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
    lines: int = 4


def info(
    library: str | None = None, cache: Path | None = None, hashes: bool = False, lines: int = 4
) -> list[TableInfo]:
    """One entry per library (or for ``library`` only): present or not, depth, size, counts.
    Layer tables (``mct-layers``, …) are listed when they are there."""
    layered = [n for n in LAYER_LIBRARIES if storage.read_manifest(storage.table_dir(n, cache, lines), lines)]
    names = [library] if library else list(TABLE_LIBRARIES) + layered
    out = []
    for name in names:
        directory = storage.table_dir(name, cache, lines)
        manifest = storage.read_manifest(directory, lines)
        if manifest is None:
            out.append(TableInfo(name, directory, False, lines=lines))
            continue
        problem = storage.check_directory(directory, hashes, lines)
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
                lines=lines,
            )
        )
    return out


def _clean_stale(library: str, cache: Path | None, lines: int) -> None:
    """Remove temporary build directories whose process is gone."""
    root = storage.tables_root(cache, lines)
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


def _wanted_depth(library: str, depth: int | None, lines: int) -> int | None:
    """The depth to build (None: until a level comes out empty, only where the group fits)."""
    if depth is None:
        wanted = DEFAULT_DEPTHS.get(lines, {}).get(library)
        if wanted is None and lines in MAX_DEPTHS:
            raise ExactsynError(f"no default depth for a {lines}-line {library} table: give --depth")
        return wanted
    if depth < 0:
        raise ExactsynError("table depth must be 0 or more")
    top = MAX_DEPTHS.get(lines)
    if top is not None and depth > top:
        raise ExactsynError(f"a {lines}-line table deeper than {top} does not fit memory or disk")
    return depth


def build(
    library: str = "mct",
    depth: int | None = None,
    progress: BuildProgress | None = None,
    cache: Path | None = None,
    memory: int = DEFAULT_MEMORY,
    force: bool = False,
    lines: int = 4,
) -> TableInfo:
    """Build the class table of ``library`` on ``lines`` lines into the cache (or return the valid cached one).

    ``depth=None`` builds the default depth (4 lines) or every level (other line counts)."""
    gs = gate_set(library, check_lines(lines))
    want = _wanted_depth(gs.library, depth, lines)
    directory = storage.table_dir(gs.library, cache, lines)
    if not force:
        manifest = storage.read_manifest(directory, lines)
        if manifest is not None and (manifest.get("complete") or (want is not None and int(manifest["depth"]) >= want)):
            if progress:
                progress("checking the cached table", 0, 1)
            if storage.check_directory(directory, False, lines).ok:
                return info(gs.library, cache, lines=lines)[0]
    _clean_stale(gs.library, cache, lines)
    work = storage.new_work_dir(gs.library, cache, lines)
    try:
        build_table(gs, want, work, progress, memory)
        storage.install(work, directory)
    except BaseException:
        shutil.rmtree(work, ignore_errors=True)
        raise
    return info(gs.library, cache, lines=lines)[0]


def remove(library: str, cache: Path | None = None, lines: int = 4) -> bool:
    """Delete the cached table of ``library``; True if there was one."""
    directory = storage.table_dir(gate_set(library, check_lines(lines)).library, cache, lines)
    if not directory.exists():
        return False
    shutil.rmtree(directory)
    return True
