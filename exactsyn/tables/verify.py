"""Independent re-check of the class tables and of answers made from them.

This module and :mod:`exactsyn.tables.verify_keys` are the checker.  They use numpy,
hashlib and the project's definition of the gates (:func:`exactsyn.core.library.make_library`,
simulation by :class:`exactsyn.core.circuit.Circuit`); they import nothing of the table
builder or engine (no kernels, no shared key helpers), and every operation is written out
in plain vectorised numpy.

Keys (:mod:`~exactsyn.tables.verify_keys`): a permutation ``p`` of ``0..2^n − 1`` is
``Σ p[i]·2^(n·i)``; a class is the set of ``π_σ∘p^{±1}∘π_σ⁻¹`` over the ``n!``
relabellings ``σ`` of the lines; its canonical key is the least key of the class.  A level
file holds ``mix(canonical key)``, sorted.  The checker handles tables of 2, 3 and 4 lines
(one 64-bit word per key) and of 5 lines (three words, :mod:`~exactsyn.tables.verify_keys5`,
canonical form by line profile, then key); the line count is part of the table's directory
and format.

**verify_table** proves that the levels are exact, from the files alone:

1. every file matches the manifest's SHA-256; the gate list is the library's, every gate
   is self-inverse and relabelling a gate gives a gate (so the classes are sound);
2. level 0 is the identity; every level is strictly increasing; the levels are disjoint;
   every stored key is canonical; the class sizes give the manifest's function counts;
3. *closure*: for every class ``r`` of a level ``j < R`` and every gate ``g``, the classes
   of ``g∘r`` and ``g∘r⁻¹`` are in a level ``≤ j + 1``;
4. *descent*: every class of level ``j ≥ 1`` was reached in step 3 from level ``j − 1``.

Closure gives, by induction on ``d``, that a function needing ``d ≤ R`` gates has its class
in a level ``≤ d`` (``x = g∘y`` with ``y`` one gate shorter; if ``y = π∘r^e∘π⁻¹`` then
``x = π∘(g'∘r^e)∘π⁻¹`` with the gate ``g' = π⁻¹∘g∘π``).  Descent gives that a class of
level ``j`` has a circuit of ``j`` gates.  With disjointness, level = optimum exactly.

**check_claim** re-runs one answer: the circuit uses library gates and simulates to the
function; for a claimed optimum ``d ≤ R`` the class of ``f`` is in no level ``< d``; for
``d = R + L`` the class of ``f∘A⁻¹`` is in no level for every function ``A`` of every class
in levels ``0..L−1`` (all ``2·n!`` members of each class).  Closure alone makes this a
proof: a circuit of ``d' < d`` gates would split into ``A`` (its first ``max(0, d'−R)``
gates, in a level ``≤ L − 1``) and ``f∘A⁻¹`` (at most ``R`` gates, in some level).

**check_cost_claim** re-runs the descent over every optimal circuit
(:mod:`exactsyn.tables.descent`) for a least cost among them, asking this module's lookups
(:class:`CheckLookup`) for every distance.

Trusted: numpy, hashlib, the Python interpreter, the project's gate definitions, and
this file with :mod:`~exactsyn.tables.verify_keys`; the cost check also trusts the descent's
recursion (plain Python, shared with the search: it asks its lookup for every table fact);
the claim checks trust that the table passed :func:`verify_table` (they say whether this
table's content hash has a verification stamp).
"""

from __future__ import annotations

import hashlib
import json
import multiprocessing
import os
import time
from collections.abc import Callable, Sequence
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass, field
from multiprocessing import shared_memory
from pathlib import Path
from typing import Any

import numpy as np

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.tables.verify_keys import CheckKeys, check_keys
from exactsyn.tables.verify_keys5 import FiveCheckKeys

CHECKER = "exactsyn.tables.verify/1"
STAMP = "verified.json"
CHUNK = 1 << 15  # classes per task of the closure test (one-word keys)
CHUNK_WIDE = 1 << 13  # the same for 5-line keys: 160 neighbours and 240 members a class
Keys = CheckKeys | FiveCheckKeys
VerifyProgress = Callable[[str, int, int], None]
Tasks = list[tuple[Callable[..., Any], tuple[Any, ...]]]

_U = np.uint64


# ----------------------------------------------------------------------------- the table on disk
def _sort_mixed(keys: np.ndarray) -> np.ndarray:
    """Mixed keys in level order: as ``uint64`` for one word, rows lexicographically (leading word first)."""
    if keys.ndim == 1:
        return np.sort(keys)
    return keys[np.lexsort(keys.T[::-1])]


def _sorted_unique(keys: np.ndarray) -> np.ndarray:
    """Sorted keys without repeats (np.sort and a mask: np.unique is far slower here)."""
    s = _sort_mixed(keys)
    if len(s) == 0:
        return s
    keep = np.empty(len(s), dtype=bool)
    keep[0] = True
    if s.ndim == 1:
        np.not_equal(s[1:], s[:-1], out=keep[1:])
    else:
        np.any(s[1:] != s[:-1], axis=1, out=keep[1:])
    return s[keep]


def _increasing(part: np.ndarray) -> bool:
    """Is every mixed key (value or row) strictly below the next one?"""
    if part.ndim == 1:
        return not np.any(part[1:] <= part[:-1])
    a, b = part[:-1], part[1:]
    tail = (a[:, 1] < b[:, 1]) | (a[:, 1] == b[:, 1]) & (a[:, 2] < b[:, 2])
    less = (a[:, 0] < b[:, 0]) | (a[:, 0] == b[:, 0]) & tail
    return bool(less.all())


def _sha256(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 24), b""):
            h.update(block)
    return h.hexdigest()


_FILE_KEYS = (("file", "bytes", "sha256"), ("index_file", "index_bytes", "index_sha256"))
_HASHED = ("level", "classes", "functions", "index_bits", "file", "bytes", "sha256", "index_file", "index_bytes",
           "index_sha256")  # fmt: skip


def _content_hash(manifest: dict[str, Any]) -> str:
    """SHA-256 over the parameters and the per-file hashes (same definition as the builder's)."""
    core = {k: manifest[k] for k in ("format", "format_version", "library", "gate_keys", "depth", "mix")}
    core["levels"] = [{k: lv[k] for k in _HASHED} for lv in manifest["levels"]]
    return hashlib.sha256(json.dumps(core, sort_keys=True).encode()).hexdigest()


def _directory(library: str, cache: Path | None, lines: int) -> Path:
    if cache is None:
        env = os.environ.get("EXACTSYN_CACHE")
        if env:
            cache = Path(env).expanduser()
        else:
            xdg = os.environ.get("XDG_CACHE_HOME")
            cache = (Path(xdg).expanduser() if xdg else Path.home() / ".cache") / "exactsyn"
    return cache / f"tables{lines}-v1" / library


def _manifest(directory: Path, lines: int) -> dict[str, Any]:
    try:
        data = json.loads((directory / "manifest.json").read_text())
    except (OSError, ValueError):
        raise ExactsynError(f"no readable table manifest in {directory}") from None
    fmt = f"exactsyn-tables{lines}"
    if data.get("format") != fmt or data.get("format_version") != 1 or data.get("lines") != lines:
        raise ExactsynError(f"{directory}: not a {lines}-line table of format {fmt} version 1")
    return dict(data)


@dataclass(frozen=True)
class _Level:
    """A level: sorted mixed keys (values, or rows of three words ordered leading word first),
    and the index ``index[q]`` = first position whose leading word has top bits ``≥ q``
    (checked against the values by :func:`_index_problem` before use)."""

    vals: np.ndarray
    index: np.ndarray
    shift: int

    def __len__(self) -> int:
        return len(self.vals)

    @property
    def lead(self) -> np.ndarray:
        """The leading word of every stored key."""
        return self.vals if self.vals.ndim == 1 else self.vals[:, 0]

    def find(self, queries: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(found, position)``: where found, the position of the query; else the number of
        values whose leading word is below the query's (a binary search inside the query's
        bucket, all queries at once)."""
        n = len(self.vals)
        if n == 0:
            return np.zeros(len(queries), dtype=bool), np.zeros(len(queries), dtype=np.int64)
        lead = self.lead
        q = queries if queries.ndim == 1 else queries[:, 0]
        bucket = (q >> _U(self.shift)).astype(np.intp)
        lo = self.index[bucket].astype(np.int64)
        hi = self.index[bucket + 1].astype(np.int64)
        while True:
            active = lo < hi
            if not active.any():
                break
            mid = (lo + hi) >> 1
            below = lead[np.minimum(mid, n - 1)] < q
            lo = np.where(active & below, mid + 1, lo)
            hi = np.where(active & ~below, mid, hi)
        if queries.ndim == 1:
            found = self.vals[np.minimum(lo, n - 1)] == queries
            return found & (lo < n), lo
        return self._rows_from(queries, lo)

    def _rows_from(self, queries: np.ndarray, lo: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Rows: look through the run of equal leading words that starts at ``lo``."""
        n = len(self.vals)
        found = np.zeros(len(queries), dtype=bool)
        pos = lo.copy()
        at = lo.copy()
        todo = np.flatnonzero(at < n)
        while len(todo):
            rows = self.vals[at[todo]]
            same = rows[:, 0] == queries[todo, 0]
            equal = same & np.all(rows[:, 1:] == queries[todo, 1:], axis=1)
            found[todo[equal]] = True
            pos[todo[equal]] = at[todo[equal]]
            todo = todo[same & ~equal]
            at[todo] += 1
            todo = todo[at[todo] < n]
        return found, pos


def _levels(directory: Path, manifest: dict[str, Any], words: int = 1) -> list[_Level]:
    out = []
    for lv in manifest["levels"]:
        n = int(lv["classes"])
        path = directory / lv["file"]
        if path.stat().st_size != 8 * n * words:
            raise ExactsynError(f"{path.name}: size does not match {n} classes")
        shape: tuple[int, ...] = (n,) if words == 1 else (n, words)
        vals = np.asarray(np.memmap(path, dtype="<u8", mode="r", shape=shape)) if n else np.zeros(shape, np.uint64)
        bits = int(lv["index_bits"])
        dtype = "<u4" if lv["index_file"].endswith(".u32") else "<u8"
        ipath = directory / lv["index_file"]
        if not 1 <= bits <= 40 or ipath.stat().st_size != np.dtype(dtype).itemsize * ((1 << bits) + 1):
            raise ExactsynError(f"{ipath.name}: size does not match {bits} index bits")
        index = np.asarray(np.memmap(ipath, dtype=dtype, mode="r", shape=((1 << bits) + 1,)))
        out.append(_Level(vals, index, 64 - bits))
    return out


def _index_problem(j: int, level: _Level) -> str | None:
    """The index must list, for every bucket, the first position of its top bits."""
    buckets = len(level.index) - 1
    lead = np.ascontiguousarray(level.lead)
    for s in range(0, buckets, 1 << 20):
        q = np.arange(s, min(buckets, s + (1 << 20)), dtype=np.uint64)
        if not np.array_equal(np.searchsorted(lead, q << _U(level.shift)), level.index[s : s + len(q)]):
            return f"the index of level {j} does not match its values"
    if int(level.index[-1]) != len(level.vals):
        return f"the index of level {j} does not end at its size"
    return None


_LAYERS = "-layers"  # a layer table: its steps are the sets of library gates on disjoint lines


def _library_keys(library: str, K: Keys) -> tuple[tuple[Gate, ...], list[int]]:
    """The library's gates, and the keys of the table's steps (gates, or layers of a layer table)."""
    base = library[: -len(_LAYERS)] if library.endswith(_LAYERS) else library
    lib = make_library(base, K.lines)
    if base == library:
        return tuple(lib.gates), [K.pack(g.permutation(K.lines)) for g in lib.gates]
    steps: list[int] = []

    def grow(start: int, used: int, key: int) -> None:  # layers in the order of their first gates
        for i in range(start, len(lib.gates)):
            g = lib.gates[i]
            mask = sum(1 << line for line in g.lines)
            if not used & mask:
                k = K.ints(K.compose(K.arr([K.pack(g.permutation(K.lines))]), K.arr([key])))[0]
                steps.append(k)
                grow(i + 1, used | mask, k)

    grow(0, 0, K.identity)
    return tuple(lib.gates), steps


def _check_gates(manifest: dict[str, Any], K: Keys) -> list[str]:
    problems = []
    _, keys = _library_keys(str(manifest["library"]), K)
    if manifest["gate_keys"] != [K.hex(k) for k in keys]:
        problems.append("the table's gate list is not the library's")
    gates = K.arr(keys)
    if not np.all(K.compose(gates, gates) == K.arr([K.identity])):
        problems.append("a gate is not its own inverse: classes under inversion are unsound")
    members = set(keys)
    for w in K.transforms(gates)[: K.relabellings]:
        if not set(K.ints(w)) <= members:
            problems.append("relabelling a gate leaves the library: classes under relabelling are unsound")
            break
    return problems


# ----------------------------------------------------------------------------- verify_table
@dataclass(frozen=True)
class TableCheck:
    """Outcome of :func:`verify_table`; ``ok`` only when every test passed."""

    library: str
    directory: Path
    content_hash: str
    depth: int
    ok: bool
    classes: tuple[int, ...]
    functions: tuple[int, ...]
    problems: tuple[str, ...]
    seconds: dict[str, float] = field(default_factory=dict)
    lines: int = 4


def _open(directory: str, lines: int) -> tuple[Keys, dict[str, Any], list[_Level]]:
    """Keys, manifest and levels of a table (in a worker process too)."""
    d = Path(directory)
    manifest = _manifest(d, lines)
    K = check_keys(lines)
    return K, manifest, _levels(d, manifest, K.words)


def _chunk(K: Keys) -> int:
    return CHUNK if K.words == 1 else CHUNK_WIDE


def _closure_task(
    directory: str, lines: int, level: int, lo: int, hi: int, marks_name: str | None
) -> tuple[int, list[str]]:
    """Closure test for classes ``lo..hi`` of ``level``; marks the next level's classes reached."""
    K, manifest, levels = _open(directory, lines)
    _, keys = _library_keys(str(manifest["library"]), K)
    q = _sort_mixed(K.neighbour_keys(levels[level].vals[lo:hi], K.arr(keys)))
    problems: list[str] = []
    nxt = levels[level + 1]
    found, pos = nxt.find(q)
    if marks_name is not None:
        shm = shared_memory.SharedMemory(name=marks_name)
        try:
            marks = np.ndarray((len(nxt),), dtype=np.uint8, buffer=shm.buf)
            marks[pos[found]] = 1
            del marks
        finally:
            shm.close()
    rest = q[~found]
    for j in [level, level - 1, *range(level - 2, -1, -1)]:
        if j < 0 or len(rest) == 0:
            continue
        f, _ = levels[j].find(rest)
        rest = rest[~f]
    if len(rest):
        problems.append(f"closure fails: {len(rest)} neighbours of level {level} are in no level ≤ {level + 1}")
    return hi - lo, problems


def _class_task(directory: str, lines: int, level: int, lo: int, hi: int) -> tuple[int, list[str], int]:
    """Canonical-key test and function count for classes ``lo..hi`` of ``level``."""
    K, _, levels = _open(directory, lines)
    keys = K.unmix(levels[level].vals[lo:hi])
    canon, size = K.canonical_and_size(keys)
    problems = []
    if not np.array_equal(canon, keys):
        wrong = int(np.sum(np.any((canon != keys).reshape(len(keys), -1), axis=1)))
        problems.append(f"level {level} stores {wrong} keys that are not canonical")
    return hi - lo, problems, int(size.sum())


def _run(tasks: Tasks, workers: int, progress: VerifyProgress, label: str) -> list[Any]:
    total = len(tasks)
    results: list[Any] = []
    if workers <= 1 or total <= 1:
        for k, (fn, args) in enumerate(tasks):
            results.append(fn(*args))
            progress(label, k + 1, total)
        return results
    ctx = multiprocessing.get_context("spawn")
    with ProcessPoolExecutor(max_workers=workers, mp_context=ctx) as pool:
        futures = [pool.submit(fn, *args) for fn, args in tasks]
        for k, fut in enumerate(futures):
            results.append(fut.result())
            progress(label, k + 1, total)
    return results


def _noop(description: str, done: int, total: int) -> None:
    return None


def _file_problems(directory: Path, manifest: dict[str, Any], progress: VerifyProgress | None) -> list[str]:
    """Every file against the manifest's size and SHA-256, and the content hash."""
    problems = []
    for lv in manifest["levels"]:
        for name, size, digest in _FILE_KEYS:
            path = directory / lv[name]
            if progress:
                progress(f"hashing {lv[name]}", 0, 1)
            if not path.is_file() or path.stat().st_size != lv[size] or _sha256(path) != lv[digest]:
                problems.append(f"{lv[name]} does not match the manifest")
    if _content_hash(manifest) != manifest.get("content_hash"):
        problems.append("the content hash does not match the manifest")
    return problems


def _order_problems(K: Keys, levels: list[_Level]) -> list[str]:
    """Level 0 is the identity; every level strictly increasing with a right index; levels disjoint."""
    problems = []
    identity = K.mix(K.arr([K.identity]))
    if len(levels[0]) != 1 or not np.array_equal(levels[0].vals.reshape(identity.shape), identity):
        problems.append("level 0 is not the identity alone")
    for j, lv in enumerate(levels):
        for s in range(0, len(lv), 1 << 24):
            part = lv.vals[s : s + (1 << 24) + 1]
            if not _increasing(part):
                problems.append(f"level {j} is not strictly increasing")
                break
        problem = _index_problem(j, lv)
        if problem:
            problems.append(problem)
    for j in range(len(levels)):
        for i in range(j):
            if np.any(levels[j].find(levels[i].vals)[0]):
                problems.append(f"levels {i} and {j} share a class")
    return problems


def _class_problems(
    directory: Path, manifest: dict[str, Any], levels: list[_Level], workers: int, report: VerifyProgress
) -> tuple[list[str], list[int]]:
    """Every stored key canonical; the class sizes per level against the manifest's function counts."""
    lines, step = int(manifest["lines"]), 4 * CHUNK
    problems: list[str] = []
    functions = []
    for j, lv in enumerate(levels):
        tasks: Tasks = [
            (_class_task, (str(directory), lines, j, s, min(len(lv), s + step))) for s in range(0, len(lv), step)
        ]
        res = _run(tasks, workers, report, f"canonical keys and class sizes, level {j}")
        problems += [p for _, ps, _ in res for p in ps]
        functions.append(sum(n for _, _, n in res))
        if functions[-1] != int(manifest["levels"][j]["functions"]):
            problems.append(f"level {j}: class sizes give {functions[-1]} functions, the manifest says "
                            f"{manifest['levels'][j]['functions']}")  # fmt: skip
    return problems, functions


def _closure_problems(
    directory: Path, lines: int, levels: list[_Level], workers: int, report: VerifyProgress
) -> list[str]:
    """Closure of every level below the depth and descent of every level above 0."""
    problems: list[str] = []
    for j in range(len(levels) - 1):
        nxt = len(levels[j + 1])
        shm = shared_memory.SharedMemory(create=True, size=max(1, nxt))
        try:
            marks = np.ndarray((nxt,), dtype=np.uint8, buffer=shm.buf)
            marks[:] = 0
            lv, step = levels[j], _chunk(check_keys(lines))
            tasks: Tasks = [
                (_closure_task, (str(directory), lines, j, s, min(len(lv), s + step), shm.name))
                for s in range(0, len(lv), step)
            ]
            res = _run(tasks, workers, report, f"closure of level {j}, descent of level {j + 1}")
            problems += [p for _, ps in res for p in ps]
            unreached = int(nxt - np.count_nonzero(marks))
            if unreached:
                problems.append(f"descent fails: {unreached} classes of level {j + 1} are not reached from level {j}")
            del marks
        finally:
            shm.close()
            shm.unlink()
    return problems


def _write_stamp(directory: Path, result: TableCheck) -> None:
    data = {"checker": CHECKER, "content_hash": result.content_hash, "seconds": result.seconds,
            "functions": list(result.functions), "checked_at": time.strftime("%Y-%m-%dT%H:%M:%S")}  # fmt: skip
    tmp = directory / (STAMP + ".tmp")
    tmp.write_text(json.dumps(data, indent=2) + "\n")
    os.replace(tmp, directory / STAMP)


def verify_table(
    library: str = "mct",
    cache: Path | None = None,
    workers: int = 2,
    progress: VerifyProgress | None = None,
    stamp: bool = True,
    lines: int = 4,
) -> TableCheck:
    """Re-check a cached ``lines``-line table from scratch (see the module docstring for what is proven)."""
    report = progress or _noop
    K = check_keys(lines)
    directory = _directory(library, cache, lines)
    manifest = _manifest(directory, lines)
    seconds: dict[str, float] = {}
    t = time.perf_counter()
    problems = _file_problems(directory, manifest, report) + _check_gates(manifest, K)
    seconds["hashes and gates"] = time.perf_counter() - t
    levels = _levels(directory, manifest, K.words)
    depth = len(levels) - 1
    if depth != int(manifest["depth"]):
        problems.append("the manifest's depth does not match its levels")
    t = time.perf_counter()
    problems += _order_problems(K, levels)
    seconds["order and disjointness"] = time.perf_counter() - t
    t = time.perf_counter()
    more, functions = _class_problems(directory, manifest, levels, workers, report)
    problems += more
    seconds["canonical keys and class sizes"] = time.perf_counter() - t
    t = time.perf_counter()
    problems += _closure_problems(directory, lines, levels, workers, report)
    seconds["closure and descent"] = time.perf_counter() - t
    result = TableCheck(
        library=str(manifest["library"]),
        directory=directory,
        content_hash=str(manifest.get("content_hash")),
        depth=depth,
        ok=not problems,
        classes=tuple(len(lv) for lv in levels),
        functions=tuple(functions),
        problems=tuple(problems),
        seconds={k: round(v, 1) for k, v in seconds.items()},
        lines=lines,
    )
    if stamp and result.ok:
        _write_stamp(directory, result)
    return result


# ----------------------------------------------------------------------------- check_claim
@dataclass(frozen=True)
class ClaimCheck:
    """Outcome of :func:`check_claim`."""

    ok: bool
    library: str
    gate_count: int
    content_hash: str
    table_verified: bool  # a verification stamp of this content hash exists
    tests: int  # distinct classes looked up
    seconds: float
    problems: tuple[str, ...]


def _split_task(directory: str, lines: int, f: int, level: int, lo: int, hi: int) -> tuple[int, int]:
    """For all ``2·n!`` members ``A`` of the classes ``lo..hi`` of ``level``: how many distinct
    classes ``f∘A⁻¹`` there are, and how many of them some level holds (one sorted pass per
    level: the queries are sorted, so the accesses sweep each level in order)."""
    K, _, levels = _open(directory, lines)
    q = _sorted_unique(K.split_keys(f, levels[level].vals[lo:hi]))
    hits = 0
    for lv in levels:
        if len(lv) and len(q):
            if q.ndim == 1:
                pos = np.minimum(np.searchsorted(lv.vals, q), len(lv) - 1)
                hits += int(np.count_nonzero(lv.vals[pos] == q))
            else:
                hits += int(np.count_nonzero(lv.find(q)[0]))
    return len(q), hits


def _circuit_problems(
    library: str, K: Keys, perm: tuple[int, ...], gate_count: int, gates: Sequence[Gate]
) -> list[str]:
    """The circuit uses library gates, has ``gate_count`` of them (layers of a layer table:
    gates on disjoint lines share one) and computes ``perm``."""
    problems = []
    lib_gates, _ = _library_keys(library, K)
    if any(g not in lib_gates for g in gates):
        problems.append(f"the circuit uses a gate outside {library}")
    if library.endswith(_LAYERS):
        depth = Circuit(K.lines, tuple(gates)).depth()
        if depth != gate_count:
            problems.append(f"the circuit has depth {depth}, not {gate_count}")
    elif len(gates) != gate_count:
        problems.append(f"the circuit has {len(gates)} gates, not {gate_count}")
    if Circuit(K.lines, tuple(gates)).permutation() != perm:
        problems.append("the circuit does not compute the function")
    return problems


def _no_shorter_split(
    directory: Path, K: Keys, levels: list[_Level], f: int, gate_count: int, workers: int, report: VerifyProgress
) -> tuple[list[str], int]:
    """No ``f∘A⁻¹`` is in any level, for every member ``A`` of levels ``0 .. gate_count − depth − 1``."""
    depth = len(levels) - 1
    extra = gate_count - depth
    step = _chunk(K)
    hits = tests = 0  # classes f∘A⁻¹ found in some level; classes looked up (distinct within a task)
    for j in range(extra):  # level by level, so a false claim stops at its first hit
        tasks: Tasks = [
            (_split_task, (str(directory), K.lines, f, j, s, min(len(levels[j]), s + step)))
            for s in range(0, len(levels[j]), step)
        ]
        res = _run(tasks, workers, report, f"no circuit below {gate_count} gates: classes of level {j}")
        tests += sum(t for t, _ in res)
        hits += sum(h for _, h in res)
        if hits:
            return [f"{hits} splits after level {j} give a circuit of fewer than {gate_count} gates"], tests
    return [], tests


def check_claim(
    library: str,
    perm: Sequence[int],
    gate_count: int,
    gates: Sequence[Gate] | None,
    cache: Path | None = None,
    content_hash: str | None = None,
    workers: int = 2,
    progress: VerifyProgress | None = None,
    lines: int = 4,
) -> ClaimCheck:
    """Re-check that ``gates`` is a circuit of ``gate_count`` gates for the ``lines``-line
    permutation ``perm`` and that no shorter circuit exists, against the cached table (see
    the module docstring).

    With ``gates=None`` only the lower bound is checked: no circuit of fewer than
    ``gate_count`` gates computes ``perm``."""
    report = progress or _noop
    t0 = time.perf_counter()
    K = check_keys(lines)
    directory = _directory(library, cache, lines)
    manifest = _manifest(directory, lines)
    problems: list[str] = []
    if content_hash is not None and manifest.get("content_hash") != content_hash:
        problems.append("the cached table is not the one the claim names (content hash differs)")
    problems += _file_problems(directory, manifest, None)
    perm_t = tuple(int(v) for v in perm)
    if sorted(perm_t) != list(range(K.size)):
        raise ExactsynError(f"the claim's function is not a permutation of 0..{K.size - 1}")
    if gates is not None:
        problems += _circuit_problems(library, K, perm_t, gate_count, gates)
    tests = 0
    levels = _levels(directory, manifest, K.words)
    problems += [p for j, lv in enumerate(levels) if (p := _index_problem(j, lv))]
    if not problems:
        depth = len(levels) - 1
        f = K.pack(perm_t)
        if gate_count <= depth:
            q = K.mix(K.canonical(K.arr([f])))
            tests = 1
            if any(levels[j].find(q)[0][0] for j in range(gate_count)):
                problems.append(f"the function's class is in a level below {gate_count}")
        elif gate_count - depth - 1 > depth:
            problems.append(f"a claim of {gate_count} gates is beyond what a depth-{depth} table can check")
        else:
            more, tests = _no_shorter_split(directory, K, levels, f, gate_count, workers, report)
            problems += more
    stamp_ok = False
    try:
        stamp = json.loads((directory / STAMP).read_text())
        stamp_ok = stamp.get("content_hash") == manifest.get("content_hash")
    except (OSError, ValueError):
        pass
    return ClaimCheck(
        ok=not problems,
        library=library,
        gate_count=gate_count,
        content_hash=str(manifest.get("content_hash")),
        table_verified=stamp_ok,
        tests=tests,
        seconds=time.perf_counter() - t0,
        problems=tuple(problems),
    )


# ----------------------------------------------------------------------------- descent claims
class CheckLookup:
    """The :class:`exactsyn.tables.descent.Lookup` of a table's files, with this module's numpy
    keys: the descent re-run by the checker asks nothing of the engine or its kernels."""

    def __init__(self, directory: Path, lines: int) -> None:
        self.directory, self.lines = directory, lines
        self.K, self.manifest, self.levels = _open(str(directory), lines)
        self.depth = len(self.levels) - 1
        self.identity = self.K.identity
        self.gate_keys = tuple(_library_keys(str(self.manifest["library"]), self.K)[1])

    def compose(self, f: int, a: int) -> int:
        n, mask = self.lines, (1 << self.lines) - 1
        return sum(((f >> (n * ((a >> (n * i)) & mask))) & mask) << (n * i) for i in range(1 << n))

    def inverse(self, key: int) -> int:
        n, mask = self.lines, (1 << self.lines) - 1
        return sum(i << (n * ((key >> (n * i)) & mask)) for i in range(1 << n))

    def compose_grid(self, fs: Sequence[int], as_: Sequence[int]) -> list[int]:
        if self.K.words != 1:  # 5-line keys: one pair at a time (the descent runs on 4 lines)
            return [self.K.ints(self.K.compose(self.K.arr([f]), self.K.arr([a])))[0] for f in fs for a in as_]
        grid = self.K.compose(self.K.arr(list(fs))[:, None], self.K.arr(list(as_))[None, :])
        return [int(v) for v in grid.ravel()]

    def at_level(self, keys: Sequence[int], level: int) -> list[bool]:
        if not keys:
            return []
        if not 0 <= level <= self.depth:
            return [False] * len(keys)
        found, _ = self.levels[level].find(self.K.mix(self.K.canonical(self.K.arr(keys))))
        return [bool(v) for v in found]

    def split(self, f: int, level: int) -> frozenset[int]:
        """Every member ``A`` of every class of ``level`` with ``f∘A⁻¹`` in the top level."""
        K, top = self.K, self.levels[self.depth]
        out: set[int] = set()
        vals = self.levels[level].vals
        step = _chunk(K)
        for s in range(0, len(vals), step):
            for members in K.transforms(K.unmix(vals[s : s + step])):
                rest = K.compose(K.arr([f]), K.inverse(members))
                found, _ = top.find(K.mix(K.canonical(rest)))
                out.update(K.ints(members[found]))
        return frozenset(out)


def check_cost_claim(
    library: str,
    perm: Sequence[int],
    gate_count: int,
    costs: Sequence[int],
    value: int,
    cache: Path | None = None,
    content_hash: str | None = None,
    lines: int = 4,
) -> ClaimCheck:
    """Re-check that ``value`` is the least cost (``costs[j]`` per library gate) among the
    circuits of ``gate_count`` gates of ``perm``, by re-running the descent
    (:mod:`exactsyn.tables.descent`) over the table's files with this module's keys.
    That ``gate_count`` is the optimum is a separate claim (:func:`check_claim`)."""

    def question(descent: Any) -> str | None:
        got = descent.cheapest(costs)
        return None if got == value else f"the least cost among {gate_count}-gate circuits is {got}, not {value}"

    return _rerun_descent(library, perm, gate_count, costs, question, cache, content_hash, lines)


def check_count_claim(
    library: str,
    perm: Sequence[int],
    gate_count: int,
    count: int,
    costs: Sequence[int] | None = None,
    least_cost: int | None = None,
    cache: Path | None = None,
    content_hash: str | None = None,
    lines: int = 4,
) -> ClaimCheck:
    """Re-check that ``perm`` has exactly ``count`` classes of ``gate_count``-gate circuits up
    to reordering adjacent commuting gates (of least cost ``least_cost`` under ``costs`` when
    given), by re-running the descent and its Möbius count over the table's files with this
    module's keys.  That ``gate_count`` is the optimum is a separate claim."""

    def question(descent: Any) -> str | None:
        if costs is not None and least_cost is not None and (got := descent.cheapest(costs)) != least_cost:
            return f"the least cost among {gate_count}-gate circuits is {got}, not {least_cost}"
        got = descent.traces(costs if least_cost is not None else None)
        return None if got == count else f"there are {got} classes of optimal circuits, not {count}"

    return _rerun_descent(library, perm, gate_count, costs, question, cache, content_hash, lines)


def _rerun_descent(
    library: str,
    perm: Sequence[int],
    gate_count: int,
    costs: Sequence[int] | None,
    question: Callable[[Any], str | None],
    cache: Path | None,
    content_hash: str | None,
    lines: int,
) -> ClaimCheck:
    """Check the table's files, build the descent of ``perm`` with :class:`CheckLookup` and
    ask ``question`` of it (a problem, or None)."""
    from exactsyn.tables.descent import Descent, commutation

    t0 = time.perf_counter()
    directory = _directory(library, cache, lines)
    lookup = CheckLookup(directory, lines)
    manifest = lookup.manifest
    problems: list[str] = []
    if content_hash is not None and manifest.get("content_hash") != content_hash:
        problems.append("the cached table is not the one the claim names (content hash differs)")
    problems += _file_problems(directory, manifest, None)
    problems += [p for j, lv in enumerate(lookup.levels) if (p := _index_problem(j, lv))]
    if costs is not None and len(costs) != len(lookup.gate_keys):
        problems.append("one cost per library gate is needed")
    if not problems:
        f = lookup.K.pack(tuple(int(v) for v in perm))
        try:
            problem = question(Descent(lookup, f, gate_count, commutation(lookup)))
        except ExactsynError as e:
            problems.append(e.message)
        else:
            if problem:
                problems.append(problem)
    return ClaimCheck(
        ok=not problems,
        library=library,
        gate_count=gate_count,
        content_hash=str(manifest.get("content_hash")),
        table_verified=_stamped(directory, manifest),
        tests=0,
        seconds=time.perf_counter() - t0,
        problems=tuple(problems),
    )


def _stamped(directory: Path, manifest: dict[str, Any]) -> bool:
    try:
        stamp = json.loads((directory / STAMP).read_text())
    except (OSError, ValueError):
        return False
    return bool(stamp.get("content_hash") == manifest.get("content_hash"))
