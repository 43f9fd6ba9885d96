"""Independent re-check of the 4-line class tables and of answers made from them.

This module is the checker.  It uses numpy, hashlib and the project's definition of the
gates (:func:`exactsyn.library.make_library`, simulation by :class:`exactsyn.circuit.Circuit`);
it imports nothing of the table builder or engine (no kernels, no shared key helpers), and
every operation is written out here in plain vectorised numpy.

Keys: a permutation ``p`` of ``0..15`` is ``Σ p[i]·16^i``; a class is the set of
``π_σ∘p^{±1}∘π_σ⁻¹`` over the 24 relabellings ``σ`` of the lines; its canonical key is the
least key of the class.  A level file holds ``mix(canonical key)``, sorted.

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
in levels ``0..L−1`` (all 48 members of each class).  Closure alone makes this a proof:
a circuit of ``d' < d`` gates would split into ``A`` (its first ``max(0, d'−R)`` gates,
in a level ``≤ L − 1``) and ``f∘A⁻¹`` (at most ``R`` gates, in some level).

Trusted: numpy, hashlib, the Python interpreter, the project's gate definitions, and
this file; the claim check also trusts that the table passed :func:`verify_table` (it
says whether this table's content hash has a verification stamp).
"""

from __future__ import annotations

import hashlib
import json
import multiprocessing
import os
import time
from collections.abc import Callable, Iterator, Sequence
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

CHECKER = "exactsyn.tables.verify/1"
STAMP = "verified.json"
CHUNK = 1 << 15  # classes per task of the closure test
Progress = Callable[[str, int, int], None]

_U = np.uint64
_IDENTITY = sum(i << (4 * i) for i in range(16))
_M1, _M2 = 0xBF58476D1CE4E5B9, 0x94D049BB133111EB
_M1_INV, _M2_INV = pow(_M1, -1, 1 << 64), pow(_M2, -1, 1 << 64)


# ----------------------------------------------------------------------------- keys (numpy)
def _pack(perm: Sequence[int]) -> int:
    return sum(int(v) << (4 * i) for i, v in enumerate(perm))


def _arr(values: Sequence[int] | np.ndarray) -> np.ndarray:
    return np.asarray(values, dtype=np.uint64)


def _nibble(keys: np.ndarray, i: int) -> np.ndarray:
    return (keys >> _U(4 * i)) & _U(15)


def _compose(f: np.ndarray, a: np.ndarray) -> np.ndarray:
    """``f∘a`` elementwise (``a`` first): nibble ``i`` is ``f[a[i]]``."""
    out = np.zeros(np.broadcast(f, a).shape, dtype=np.uint64)
    for i in range(16):
        out |= ((f >> (_nibble(a, i) * _U(4))) & _U(15)) << _U(4 * i)
    return out


def _inverse(keys: np.ndarray) -> np.ndarray:
    """``q[p[i]] = i`` elementwise."""
    out = np.zeros_like(keys)
    for i in range(16):
        out |= _U(i) << (_nibble(keys, i) * _U(4))
    return out


def _swap_masks(a: int, b: int) -> tuple[np.uint64, np.uint64, np.uint64, np.uint64]:
    """Conjugating by the transposition of lines ``a < b`` moves the nibble of state ``x`` to
    the state with bits ``a``, ``b`` exchanged, and swaps bits ``a``, ``b`` inside every
    nibble: two exchanges of bit groups, ``(mask, shift)`` each (the group under ``mask``
    trades places with the group ``shift`` bits higher)."""
    low_states = [x for x in range(16) if (x >> a) & 1 and not (x >> b) & 1]  # partner: x + 2^b − 2^a
    position_mask = _U(sum(0xF << (4 * x) for x in low_states))
    position_shift = _U(4 * ((1 << b) - (1 << a)))
    value_mask = _U(0x1111111111111111 << a)
    value_shift = _U(b - a)
    return position_mask, position_shift, value_mask, value_shift


def _exchange(w: np.ndarray, t: np.ndarray, mask: np.uint64, shift: np.uint64) -> None:
    """In place: ``t = ((w >> shift) ^ w) & mask; w ^= t ^ (t << shift)``."""
    np.right_shift(w, shift, out=t)
    np.bitwise_xor(t, w, out=t)
    np.bitwise_and(t, mask, out=t)
    np.bitwise_xor(w, t, out=w)
    np.left_shift(t, shift, out=t)
    np.bitwise_xor(w, t, out=w)


def _walk() -> list[tuple[int, int]]:
    """23 transpositions of adjacent lines whose running products are all 24 relabellings
    (Steinhaus–Johnson–Trotter); checked below, at import."""
    perm, dirs, out = [0, 1, 2, 3], [-1] * 4, []
    while True:
        mobile = max((v for i, v in enumerate(perm) if 0 <= i + dirs[v] < 4 and perm[i + dirs[v]] < v), default=-1)
        if mobile < 0:
            break
        i = perm.index(mobile)
        j = i + dirs[mobile]
        out.append((min(i, j), max(i, j)))
        perm[i], perm[j] = perm[j], perm[i]
        for v in range(mobile + 1, 4):
            dirs[v] = -dirs[v]
    return out


_WALK = _walk()
_seen: set[tuple[int, ...]] = {(0, 1, 2, 3)}
_cur = [0, 1, 2, 3]
for _a, _b in _WALK:
    _cur[_a], _cur[_b] = _cur[_b], _cur[_a]
    _seen.add(tuple(_cur))
assert len(_WALK) == 23 and len(_seen) == 24, "the relabelling walk must visit all 24 relabellings"
_MASKS = {pair: _swap_masks(*pair) for pair in set(_WALK)}


_BLOCK = 1 << 14  # keys per pass: the working arrays stay in the CPU cache


def _each_transform(keys: np.ndarray) -> Iterator[np.ndarray]:
    """All 48 transforms of a block of keys: 24 conjugates of ``k``, then 24 of ``k⁻¹``.

    The same buffer is yielded each time, overwritten by the next transform."""
    t = np.empty_like(keys)
    for start in (keys, _inverse(keys)):
        w = start.copy()
        yield w
        for a, b in _WALK:
            pm, ps, vm, vs = _MASKS[(a, b)]
            _exchange(w, t, pm, ps)
            _exchange(w, t, vm, vs)
            yield w


def _transforms(keys: np.ndarray) -> list[np.ndarray]:
    """All 48 transforms of every key, as 48 arrays."""
    return [w.copy() for w in _each_transform(keys)]


def canonical(keys: np.ndarray) -> np.ndarray:
    """Least key of the class of each key."""
    keys = np.ascontiguousarray(keys, dtype=np.uint64)
    best = keys.copy()
    for s in range(0, len(keys), _BLOCK):
        part = best[s : s + _BLOCK]
        for w in _each_transform(keys[s : s + _BLOCK]):
            np.minimum(part, w, out=part)
    return best


def _canonical_and_size(keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Canonical keys and class sizes (48 / number of transforms fixing the key)."""
    keys = np.ascontiguousarray(keys, dtype=np.uint64)
    best = keys.copy()
    fixed = np.zeros(len(keys), dtype=np.int64)
    for s in range(0, len(keys), _BLOCK):
        part, count, orig = best[s : s + _BLOCK], fixed[s : s + _BLOCK], keys[s : s + _BLOCK]
        for w in _each_transform(orig):
            np.minimum(part, w, out=part)
            count += w == orig
    return best, 48 // fixed


def _xorshift_inverse(y: np.ndarray, s: int) -> np.ndarray:
    x = y.copy()
    for _ in range(64 // s + 1):
        x = y ^ (x >> _U(s))
    return x


def mix(keys: np.ndarray) -> np.ndarray:
    """The SplitMix64 finaliser (Steele, Lea & Flood 2014); invertible."""
    x = keys ^ (keys >> _U(30))
    x = x * _U(_M1)
    x = x ^ (x >> _U(27))
    x = x * _U(_M2)
    return x ^ (x >> _U(31))


def unmix(vals: np.ndarray) -> np.ndarray:
    x = _xorshift_inverse(vals, 31) * _U(_M2_INV)
    x = _xorshift_inverse(x, 27) * _U(_M1_INV)
    return _xorshift_inverse(x, 30)


# ----------------------------------------------------------------------------- the table on disk
def _sorted_unique(keys: np.ndarray) -> np.ndarray:
    """Sorted keys without repeats (np.sort and a mask: np.unique is far slower here)."""
    s = np.sort(keys)
    if len(s) == 0:
        return s
    keep = np.empty(len(s), dtype=bool)
    keep[0] = True
    np.not_equal(s[1:], s[:-1], out=keep[1:])
    return s[keep]


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


def _directory(library: str, cache: Path | None) -> Path:
    if cache is None:
        env = os.environ.get("EXACTSYN_CACHE")
        if env:
            cache = Path(env).expanduser()
        else:
            xdg = os.environ.get("XDG_CACHE_HOME")
            cache = (Path(xdg).expanduser() if xdg else Path.home() / ".cache") / "exactsyn"
    return cache / "tables4-v1" / library


def _manifest(directory: Path) -> dict[str, Any]:
    try:
        data = json.loads((directory / "manifest.json").read_text())
    except (OSError, ValueError):
        raise ExactsynError(f"no readable table manifest in {directory}") from None
    if data.get("format") != "exactsyn-tables4" or data.get("format_version") != 1:
        raise ExactsynError(f"{directory}: not a table of format exactsyn-tables4 version 1")
    return dict(data)


@dataclass(frozen=True)
class _Level:
    """A level: sorted mixed keys, and the index ``index[q]`` = first position whose value has
    top bits ``≥ q`` (checked against the values by :func:`_index_problem` before use)."""

    vals: np.ndarray
    index: np.ndarray
    shift: int

    def __len__(self) -> int:
        return len(self.vals)

    def find(self, queries: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(found, position)``: position = number of values below the query (a binary
        search inside the query's bucket, all queries at once)."""
        n = len(self.vals)
        if n == 0:
            return np.zeros(len(queries), dtype=bool), np.zeros(len(queries), dtype=np.int64)
        bucket = (queries >> _U(self.shift)).astype(np.intp)
        lo = self.index[bucket].astype(np.int64)
        hi = self.index[bucket + 1].astype(np.int64)
        while True:
            active = lo < hi
            if not active.any():
                break
            mid = (lo + hi) >> 1
            below = self.vals[np.minimum(mid, n - 1)] < queries
            lo = np.where(active & below, mid + 1, lo)
            hi = np.where(active & ~below, mid, hi)
        found = self.vals[np.minimum(lo, n - 1)] == queries
        return found & (lo < n), lo


def _levels(directory: Path, manifest: dict[str, Any]) -> list[_Level]:
    out = []
    for lv in manifest["levels"]:
        n = int(lv["classes"])
        path = directory / lv["file"]
        if path.stat().st_size != 8 * n:
            raise ExactsynError(f"{path.name}: size does not match {n} classes")
        vals = np.asarray(np.memmap(path, dtype="<u8", mode="r", shape=(n,))) if n else np.zeros(0, np.uint64)
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
    for s in range(0, buckets, 1 << 20):
        q = np.arange(s, min(buckets, s + (1 << 20)), dtype=np.uint64)
        if not np.array_equal(np.searchsorted(level.vals, q << _U(level.shift)), level.index[s : s + len(q)]):
            return f"the index of level {j} does not match its values"
    if int(level.index[-1]) != len(level.vals):
        return f"the index of level {j} does not end at its size"
    return None


def _library_keys(library: str) -> tuple[tuple[Gate, ...], list[int]]:
    lib = make_library(library, 4)
    return tuple(lib.gates), [_pack(g.permutation(4)) for g in lib.gates]


def _check_gates(manifest: dict[str, Any]) -> list[str]:
    problems = []
    _, keys = _library_keys(str(manifest["library"]))
    if manifest["gate_keys"] != [f"{k:016x}" for k in keys]:
        problems.append("the table's gate list is not the library's")
    arr = _arr(keys)
    if not np.all(_compose(arr, arr) == _U(_IDENTITY)):
        problems.append("a gate is not its own inverse: classes under inversion are unsound")
    members = set(keys)
    for w in _transforms(arr)[:24]:
        if not set(int(v) for v in w) <= members:
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


def _neighbour_keys(reps: np.ndarray, gates: np.ndarray) -> np.ndarray:
    """Mixed canonical keys of ``g∘r`` and ``g∘r⁻¹`` for all gates and representatives."""
    r = unmix(reps)
    ri = _inverse(r)
    parts = []
    for g in gates:
        parts.append(_compose(_arr([g]), r))
        parts.append(_compose(_arr([g]), ri))
    return mix(canonical(np.concatenate(parts)))


def _closure_task(directory: str, level: int, lo: int, hi: int, marks_name: str | None) -> tuple[int, list[str]]:
    """Closure test for classes ``lo..hi`` of ``level``; marks the next level's classes reached."""
    d = Path(directory)
    manifest = _manifest(d)
    levels = _levels(d, manifest)
    _, keys = _library_keys(str(manifest["library"]))
    q = np.sort(_neighbour_keys(levels[level].vals[lo:hi], _arr(keys)))
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


def _class_task(directory: str, level: int, lo: int, hi: int) -> tuple[int, list[str], int]:
    """Canonical-key test and function count for classes ``lo..hi`` of ``level``."""
    d = Path(directory)
    levels = _levels(d, _manifest(d))
    keys = unmix(levels[level].vals[lo:hi])
    canon, size = _canonical_and_size(keys)
    problems = []
    if not np.array_equal(canon, keys):
        problems.append(f"level {level} stores {int(np.sum(canon != keys))} keys that are not canonical")
    return hi - lo, problems, int(size.sum())


def _run(tasks: list[tuple[Callable[..., Any], tuple[Any, ...]]], workers: int, progress: Progress,
         label: str) -> list[Any]:  # fmt: skip
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


def verify_table(
    library: str = "mct",
    cache: Path | None = None,
    workers: int = 2,
    progress: Progress | None = None,
    stamp: bool = True,
) -> TableCheck:
    """Re-check a cached table from scratch (see the module docstring for what is proven)."""
    report = progress or _noop
    directory = _directory(library, cache)
    manifest = _manifest(directory)
    seconds: dict[str, float] = {}
    problems: list[str] = []
    t = time.perf_counter()
    for lv in manifest["levels"]:
        for name, size, digest in _FILE_KEYS:
            path = directory / lv[name]
            report(f"hashing {lv[name]}", 0, 1)
            if not path.is_file() or path.stat().st_size != lv[size] or _sha256(path) != lv[digest]:
                problems.append(f"{lv[name]} does not match the manifest")
    if _content_hash(manifest) != manifest.get("content_hash"):
        problems.append("the content hash does not match the manifest")
    problems += _check_gates(manifest)
    seconds["hashes and gates"] = time.perf_counter() - t
    levels = _levels(directory, manifest)
    depth = len(levels) - 1
    if depth != int(manifest["depth"]):
        problems.append("the manifest's depth does not match its levels")

    t = time.perf_counter()
    if len(levels[0]) != 1 or int(levels[0].vals[0]) != int(mix(_arr([_IDENTITY]))[0]):
        problems.append("level 0 is not the identity alone")
    for j, lv in enumerate(levels):
        for s in range(0, len(lv), 1 << 24):
            part = lv.vals[s : s + (1 << 24) + 1]
            if np.any(part[1:] <= part[:-1]):
                problems.append(f"level {j} is not strictly increasing")
                break
        problem = _index_problem(j, lv)
        if problem:
            problems.append(problem)
    for j in range(len(levels)):
        for i in range(j):
            if np.any(levels[j].find(levels[i].vals)[0]):
                problems.append(f"levels {i} and {j} share a class")
    seconds["order and disjointness"] = time.perf_counter() - t

    t = time.perf_counter()
    functions = []
    for j, lv in enumerate(levels):
        tasks: list[tuple[Callable[..., Any], tuple[Any, ...]]] = [
            (_class_task, (str(directory), j, s, min(len(lv), s + 4 * CHUNK))) for s in range(0, len(lv), 4 * CHUNK)
        ]
        res = _run(tasks, workers, report, f"canonical keys and class sizes, level {j}")
        problems += [p for _, ps, _ in res for p in ps]
        functions.append(sum(n for _, _, n in res))
        if functions[-1] != int(manifest["levels"][j]["functions"]):
            problems.append(f"level {j}: class sizes give {functions[-1]} functions, the manifest says "
                            f"{manifest['levels'][j]['functions']}")  # fmt: skip
    seconds["canonical keys and class sizes"] = time.perf_counter() - t

    t = time.perf_counter()
    for j in range(depth):
        nxt = len(levels[j + 1])
        shm = shared_memory.SharedMemory(create=True, size=max(1, nxt))
        try:
            marks = np.ndarray((nxt,), dtype=np.uint8, buffer=shm.buf)
            marks[:] = 0
            lv = levels[j]
            closure_tasks: list[tuple[Callable[..., Any], tuple[Any, ...]]] = [
                (_closure_task, (str(directory), j, s, min(len(lv), s + CHUNK), shm.name))
                for s in range(0, len(lv), CHUNK)
            ]
            res = _run(closure_tasks, workers, report, f"closure of level {j}, descent of level {j + 1}")
            problems += [p for _, ps in res for p in ps]
            unreached = int(nxt - np.count_nonzero(marks))
            if unreached:
                problems.append(f"descent fails: {unreached} classes of level {j + 1} are not reached from level {j}")
            del marks
        finally:
            shm.close()
            shm.unlink()
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
    )
    if stamp and result.ok:
        data = {"checker": CHECKER, "content_hash": result.content_hash, "seconds": result.seconds,
                "functions": list(result.functions), "checked_at": time.strftime("%Y-%m-%dT%H:%M:%S")}  # fmt: skip
        tmp = directory / (STAMP + ".tmp")
        tmp.write_text(json.dumps(data, indent=2) + "\n")
        os.replace(tmp, directory / STAMP)
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


def _split_keys(directory: str, f: int, level: int, lo: int, hi: int) -> np.ndarray:
    """Mixed canonical keys of ``f∘A⁻¹`` for all 48 members ``A`` of the classes ``lo..hi`` of
    ``level``, sorted and without repeats."""
    d = Path(directory)
    levels = _levels(d, _manifest(d))
    reps = unmix(levels[level].vals[lo:hi])
    fa = _arr([f])
    members = np.concatenate(_transforms(reps))
    return _sorted_unique(mix(canonical(_compose(fa, _inverse(members)))))


def check_claim(
    library: str,
    perm: Sequence[int],
    gate_count: int,
    gates: Sequence[Gate] | None,
    cache: Path | None = None,
    content_hash: str | None = None,
    workers: int = 2,
    progress: Progress | None = None,
) -> ClaimCheck:
    """Re-check that ``gates`` is a circuit of ``gate_count`` gates for ``perm`` and that no
    shorter circuit exists, against the cached table (see the module docstring).

    With ``gates=None`` only the lower bound is checked: no circuit of fewer than
    ``gate_count`` gates computes ``perm``."""
    report = progress or _noop
    t0 = time.perf_counter()
    directory = _directory(library, cache)
    manifest = _manifest(directory)
    problems: list[str] = []
    if content_hash is not None and manifest.get("content_hash") != content_hash:
        problems.append("the cached table is not the one the claim names (content hash differs)")
    for lv in manifest["levels"]:
        for name, size, digest in _FILE_KEYS:
            path = directory / lv[name]
            if not path.is_file() or path.stat().st_size != lv[size] or _sha256(path) != lv[digest]:
                problems.append(f"{lv[name]} does not match the manifest")
    if _content_hash(manifest) != manifest.get("content_hash"):
        problems.append("the content hash does not match the manifest")
    perm_t = tuple(int(v) for v in perm)
    if sorted(perm_t) != list(range(16)):
        raise ExactsynError("the claim's function is not a permutation of 0..15")
    if gates is not None:
        lib_gates, _ = _library_keys(library)
        if any(g not in lib_gates for g in gates):
            problems.append(f"the circuit uses a gate outside {library}")
        if len(gates) != gate_count:
            problems.append(f"the circuit has {len(gates)} gates, not {gate_count}")
        if Circuit(4, tuple(gates)).permutation() != perm_t:
            problems.append("the circuit does not compute the function")
    tests = 0
    levels = _levels(directory, manifest)
    problems += [p for j, lv in enumerate(levels) if (p := _index_problem(j, lv))]
    if not problems:
        depth = len(levels) - 1
        f = _pack(perm_t)
        if gate_count <= depth:
            q = mix(canonical(_arr([f])))
            tests = 1
            if any(levels[j].find(q)[0][0] for j in range(gate_count)):
                problems.append(f"the function's class is in a level below {gate_count}")
        elif gate_count - depth - 1 > depth:
            problems.append(f"a claim of {gate_count} gates is beyond what a depth-{depth} table can check")
        else:
            extra = gate_count - depth
            hits = 0  # distinct classes f∘A⁻¹ found in some level
            for j in range(extra):  # level by level, so a false claim stops at its first hit
                tasks: list[tuple[Callable[..., Any], tuple[Any, ...]]] = [
                    (_split_keys, (str(directory), f, j, s, min(len(levels[j]), s + CHUNK)))
                    for s in range(0, len(levels[j]), CHUNK)
                ]
                res = _run(tasks, workers, report, f"no circuit below {gate_count} gates: classes of level {j}")
                # One sorted pass per table level (plain searchsorted; queries sorted, so the
                # accesses sweep each level in order).
                q = _sorted_unique(np.concatenate(res)) if res else np.zeros(0, dtype=np.uint64)
                del res
                tests += len(q)
                for level in levels:
                    if len(level) and len(q):
                        pos = np.minimum(np.searchsorted(level.vals, q), len(level) - 1)
                        hits += int(np.count_nonzero(level.vals[pos] == q))
                del q
                if hits:
                    problems.append(f"{hits} splits after level {j} give a circuit of fewer than {gate_count} gates")
                    break
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
