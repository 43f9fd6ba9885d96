"""Where the class tables live on disk: cache directory, file layout, manifest, hashes.

Layout (format version :data:`FORMAT_VERSION`) for tables of ``n`` lines::

    <cache>/tables<n>-v1/<library>/manifest.json
    <cache>/tables<n>-v1/<library>/level-00.u64   sorted mixed canonical keys of level 0
    <cache>/tables<n>-v1/<library>/index-00.u32   bucket index of level 0 (u32 or u64)
    ...

so the 4-line tables stay in ``tables4-v1`` with format ``exactsyn-tables4``.  A layout of
several 64-bit words per key stores ``words`` little-endian words per key in
``level-00.u64x<words>``.  ``<cache>`` is ``$EXACTSYN_CACHE`` if set, else ``$XDG_CACHE_HOME/exactsyn``, else
``~/.cache/exactsyn``.  Level and index files are raw little-endian arrays (memory-mapped
on load).  The manifest is written last, inside a temporary directory that is renamed
into place in one step, so an interrupted build never leaves a directory that looks
complete.  It records every file's size and SHA-256, and a content hash over the
parameters and those file hashes: two tables with the same content hash are the same
table.  Nothing is ever downloaded.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from exactsyn.errors import ExactsynError

FORMAT_VERSION = 1
CACHE_ENV = "EXACTSYN_CACHE"
MANIFEST = "manifest.json"


def resolve_cache_dir() -> Path:
    """The per-user cache directory (not created here)."""
    env = os.environ.get(CACHE_ENV)
    if env:
        return Path(env).expanduser()
    xdg = os.environ.get("XDG_CACHE_HOME")
    base = Path(xdg).expanduser() if xdg else Path.home() / ".cache"
    return base / "exactsyn"


def format_name(lines: int) -> str:
    """The ``format`` of an ``n``-line table's manifest (``exactsyn-tables4`` for 4 lines)."""
    return f"exactsyn-tables{lines}"


def tables_root(cache: Path | None = None, lines: int = 4) -> Path:
    return (cache or resolve_cache_dir()) / f"tables{lines}-v{FORMAT_VERSION}"


def table_dir(library: str, cache: Path | None = None, lines: int = 4) -> Path:
    return tables_root(cache, lines) / library


def level_file(level: int, words: int = 1) -> str:
    return f"level-{level:02d}.u64" + (f"x{words}" if words > 1 else "")


def index_file(level: int, dtype: np.dtype) -> str:
    return f"index-{level:02d}.{'u32' if np.dtype(dtype) == np.uint32 else 'u64'}"


#: Per level: (file name key, size key, hash key) in the manifest.
FILE_KEYS = (
    ("file", "bytes", "sha256"),
    ("index_file", "index_bytes", "index_sha256"),
)


def sha256_file(path: Path, chunk: int = 1 << 24) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        while True:
            block = fh.read(chunk)
            if not block:
                break
            h.update(block)
    return h.hexdigest()


def content_hash(manifest: dict[str, Any]) -> str:
    """SHA-256 over the parameters and file hashes (not over timings or machine data)."""
    core = {
        "format": manifest["format"],
        "format_version": manifest["format_version"],
        "library": manifest["library"],
        "gate_keys": manifest["gate_keys"],
        "depth": manifest["depth"],
        "mix": manifest["mix"],
        "levels": [
            {k: lv[k] for k in ("level", "classes", "functions", "index_bits") + tuple(x for t in FILE_KEYS for x in t)}
            for lv in manifest["levels"]
        ],
    }
    return hashlib.sha256(json.dumps(core, sort_keys=True).encode()).hexdigest()


def read_manifest(directory: Path, lines: int = 4) -> dict[str, Any] | None:
    """The manifest of an ``n``-line table directory, or None if absent, unreadable or of another format."""
    try:
        data = json.loads((directory / MANIFEST).read_text())
    except (OSError, ValueError):
        return None
    if not isinstance(data, dict) or data.get("format") != format_name(lines):
        return None
    if data.get("format_version") != FORMAT_VERSION:
        return None
    return data


@dataclass(frozen=True)
class Problem:
    """Why a table directory is not a usable table (empty when it is)."""

    reasons: tuple[str, ...]

    @property
    def ok(self) -> bool:
        return not self.reasons


def check_directory(directory: Path, hashes: bool, lines: int = 4) -> Problem:
    """Sizes always; SHA-256 of every file and the content hash when ``hashes``."""
    manifest = read_manifest(directory, lines)
    if manifest is None:
        return Problem(("no readable manifest",))
    reasons: list[str] = []
    for lv in manifest.get("levels", []):
        for name_key, size_key, hash_key in FILE_KEYS:
            if not all(k in lv for k in (name_key, size_key, hash_key)):
                reasons.append(f"the manifest lacks {name_key} of level {lv.get('level')}")
                continue
            path = directory / lv[name_key]
            try:
                size = path.stat().st_size
            except OSError:
                reasons.append(f"{lv[name_key]} is missing")
                continue
            if size != lv[size_key]:
                reasons.append(f"{lv[name_key]} has {size} bytes, the manifest says {lv[size_key]}")
            elif hashes and sha256_file(path) != lv[hash_key]:
                reasons.append(f"{lv[name_key]}: SHA-256 differs from the manifest")
    if hashes and not reasons and content_hash(manifest) != manifest.get("content_hash"):
        reasons.append("content hash differs from the manifest")
    return Problem(tuple(reasons))


def write_manifest(directory: Path, manifest: dict[str, Any]) -> None:
    manifest = dict(manifest)
    manifest["content_hash"] = content_hash(manifest)
    tmp = directory / (MANIFEST + ".tmp")
    tmp.write_text(json.dumps(manifest, indent=2) + "\n")
    os.replace(tmp, directory / MANIFEST)


def install(tmp_dir: Path, final_dir: Path) -> None:
    """Move a finished build into place in one rename (an older table is moved aside first)."""
    final_dir.parent.mkdir(parents=True, exist_ok=True)
    if final_dir.exists():
        aside = final_dir.with_name(f".{final_dir.name}.old-{os.getpid()}")
        os.replace(final_dir, aside)
        shutil.rmtree(aside, ignore_errors=True)
    os.replace(tmp_dir, final_dir)


def new_work_dir(library: str, cache: Path | None = None, lines: int = 4) -> Path:
    root = tables_root(cache, lines)
    try:
        root.mkdir(parents=True, exist_ok=True)
    except OSError as e:
        raise ExactsynError(f"cannot create the table cache {root}: {e.strerror}") from None
    work = root / f".{library}.build-{os.getpid()}"
    if work.exists():
        shutil.rmtree(work)
    work.mkdir()
    return work


def read_array(path: Path, dtype: type, count: int, words: int = 1) -> np.ndarray:
    """Memory-map a raw little-endian array of ``count`` items of ``words`` values (read-only).

    One value per item gives shape ``(count,)``, else ``(count, words)`` (key arrays of
    :mod:`exactsyn.tables.keys`)."""
    shape: tuple[int, ...] = (count,) if words == 1 else (count, words)
    if count == 0:
        return np.zeros(shape, dtype=dtype)
    mapped = np.memmap(path, dtype=np.dtype(dtype).newbyteorder("<"), mode="r", shape=shape)
    return np.asarray(mapped)
