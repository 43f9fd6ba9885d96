"""Breadth-first search over classes: the levels of the class tables, for any key layout.

Level ``j`` is the set of classes (canonical keys, :mod:`exactsyn.tables.keys`) whose
functions need exactly ``j`` gates.  Level ``j + 1`` is every neighbour class of level
``j`` (the classes of ``g∘r`` and ``g∘r⁻¹`` for a representative ``r`` and a gate ``g``)
that is not in level ``j`` or ``j − 1``: a gate changes the gate count by at most one,
so a neighbour of level ``j`` lies in level ``j − 1``, ``j`` or ``j + 1``.  This is the
breadth-first search over symmetry classes of Golubitsky, Falconer & Maslov ("Synthesis
of the optimal 4-bit reversible circuits", DAC 2010), who keep every function up to 9
gates; here one representative per class is kept, and the number of functions per level
comes from the class sizes (``2·n! / |stabiliser|``).  Everything that touches a key's bits
is a kernel of the layout (:class:`~exactsyn.tables.kernel_api.TableKernels`); this module
only holds key arrays, so it serves every line count the engine has.

Memory: the keys found in one step go into an open-addressing set (``TableKernels.insert``)
sized from the growth of the previous levels and enlarged when it fills.  When the set
would exceed ``memory`` bytes the step runs in ``2^p`` passes, each keeping the keys of
one range of top bits (the expansion is recomputed per pass; it is the cheap part).
Each finished level is written to disk and memory-mapped for the next step.
"""

from __future__ import annotations

import math
import resource
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

from exactsyn.tables import storage
from exactsyn.tables.gate_keys import GateSet
from exactsyn.tables.keys import PROFILE_FROM

#: ``progress(description, done, total)``; ``total`` may change between levels.
BuildProgress = Callable[[str, int, int], None]

LOAD = 0.72  # target fill of the open-addressing set
PAD = 4096  # slots after each region, so probes never wrap
REGION_SLOTS = 1 << 18  # about 2 MiB per region: one thread's working set stays in cache
CANDIDATE_BYTES = 64 << 20  # neighbour keys computed per chunk
DEFAULT_MEMORY = 4 << 30  # bytes for the set of one pass


def _noop(description: str, done: int, total: int) -> None:
    return None


def _estimate(sizes: list[int], gates: int) -> int:
    """Guess the size of the next set (new level plus neighbours in the two current levels)."""
    cur = sizes[-1]
    prev = sizes[-2] if len(sizes) > 1 else 0
    ratio = cur / prev if prev else float(gates)
    return max(1024, int(cur * ratio * 1.05) + cur + prev)


def _geometry(keys: int, passes_bits: int) -> tuple[int, int]:
    """``(region_bits, width)`` for a set of about ``keys`` keys in one pass."""
    slots = keys / LOAD
    region_bits = 1
    while slots / (1 << region_bits) > REGION_SLOTS and region_bits + passes_bits < 30:
        region_bits += 1
    width = int(slots / (1 << region_bits)) + 1
    return region_bits, width


def _level_step(
    gs: GateSet,
    cur: np.ndarray,
    prev: np.ndarray,
    estimate: int,
    out_path: Path,
    memory: int,
    progress: BuildProgress,
    label: str,
) -> int:
    """Write the sorted mixed keys of the next level to ``out_path``; return their number."""
    K = gs.layout.kernels()
    key_bytes = 8 * gs.layout.words
    gates = gs.key_array()
    lanes = 2 * len(gates)
    chunk = max(1, CANDIDATE_BYTES // key_bytes // lanes)
    passes_bits = 0
    while estimate / LOAD * key_bytes / (1 << passes_bits) > memory and passes_bits < 6:
        passes_bits += 1
    passes = 1 << passes_bits
    cand = gs.layout.empty(chunk * lanes)
    part = np.empty_like(cand)
    total_work = passes * len(cur)
    written = 0
    with open(out_path, "wb") as fh:
        for p in range(passes):
            # this pass keeps the keys whose leading word has the top bits p
            lo = p << (64 - passes_bits) if passes_bits else 0
            hi = ((p + 1) << (64 - passes_bits)) - 1 if passes_bits else (1 << 64) - 1
            region_bits, width = _geometry(max(1024, estimate // passes), passes_bits)
            slots = K.new_set(1 << region_bits, width + PAD)
            for start in range(0, len(cur), chunk):
                reps = np.ascontiguousarray(cur[start : start + chunk])
                block = cand[: len(reps) * lanes]
                K.expand(reps, gates, block)
                offsets = K.partition(block, lo, hi, passes_bits, region_bits, part)
                while K.insert(slots, passes_bits, region_bits, width, part, offsets) < 0:
                    width = int(width * 1.5) + 1
                    bigger = K.new_set(1 << region_bits, width + PAD)
                    if not K.reinsert(slots, bigger, passes_bits, region_bits, width):
                        raise RuntimeError("internal error: the enlarged key set overflowed")
                    slots = bigger
                    del bigger
                progress(label, p * len(cur) + start + len(reps), total_work)
            counts = K.finish_regions(slots, passes_bits, region_bits, cur, prev)
            for q in range(len(counts)):
                if counts[q]:
                    slots[q, : counts[q]].tofile(fh)
            written += int(counts.sum())
            del slots
    return written


def _finish_level(gs: GateSet, directory: Path, level: int, count: int) -> dict[str, Any]:
    """Index and class-size counts of a written level; its manifest entry."""
    K = gs.layout.kernels()
    words = gs.layout.words
    vals = storage.read_array(directory / storage.level_file(level, words), np.uint64, count, words)
    index, shift = K.make_index(vals)
    name = storage.index_file(level, index.dtype)
    index.astype(index.dtype.newbyteorder("<")).tofile(directory / name)
    hist = K.class_size_histogram(vals)
    entry = {
        "level": level,
        "classes": count,
        "file": storage.level_file(level, words),
        "index_file": name,
        "index_bits": 64 - shift,
        "functions": int((hist * np.arange(len(hist))).sum()),
        "class_sizes": {str(s): int(c) for s, c in enumerate(hist) if c},
    }
    return entry


def build_levels(
    gs: GateSet,
    depth: int | None,
    directory: Path,
    progress: BuildProgress | None = None,
    memory: int = DEFAULT_MEMORY,
) -> list[dict[str, Any]]:
    """Levels ``0..depth`` into ``directory`` (``depth=None``: until a level comes out empty,
    i.e. every function the library generates); one manifest entry per level."""
    lay = gs.layout
    K = lay.kernels()
    words = lay.words
    report = progress or _noop
    K.mix_many(lay.array([lay.identity])).tofile(directory / storage.level_file(0, words))
    sizes = [1]
    entries: list[dict[str, Any]] = []
    level = 0
    while depth is None or level <= depth:
        path = directory / storage.level_file(level, words)
        if level > 0:
            cur = storage.read_array(directory / storage.level_file(level - 1, words), np.uint64, sizes[-1], words)
            prev = (
                storage.read_array(directory / storage.level_file(level - 2, words), np.uint64, sizes[-2], words)
                if level > 1
                else lay.empty(0)
            )
            n = _level_step(gs, cur, prev, _estimate(sizes, len(gs)), path, memory, report, f"level {level}")
            if n == 0:
                path.unlink()
                break
            sizes.append(n)
        report(f"index {level}", 0, 1)
        entries.append(_finish_level(gs, directory, level, sizes[level]))
        level += 1
    return entries


def build_table(
    gs: GateSet,
    depth: int | None,
    directory: Path,
    progress: BuildProgress | None = None,
    memory: int = DEFAULT_MEMORY,
) -> dict[str, Any]:
    """Build every level, hash the files and write the manifest (the last file written)."""
    report = progress or _noop
    lay = gs.layout
    t0 = time.perf_counter()
    levels = build_levels(gs, depth, directory, report, memory)
    for lv in levels:
        report(f"hashing level {lv['level']}", 0, 1)
        for name_key, size_key, hash_key in storage.FILE_KEYS:
            path = directory / lv[name_key]
            lv[size_key] = path.stat().st_size
            lv[hash_key] = storage.sha256_file(path)
    # an empty level came before the depth asked for: every realisable function is in the table
    complete = depth is None or len(levels) <= depth
    relabellings = lay.symmetries // 2
    manifest: dict[str, Any] = {
        "format": storage.format_name(lay.lines),
        "format_version": storage.FORMAT_VERSION,
        "library": gs.library,
        "lines": lay.lines,
        "gates": gs.describe(),
        "gate_keys": [lay.hex(k) for k in gs.keys],
        "depth": len(levels) - 1,
        "complete": complete,
        "symmetry": f"{relabellings} line relabellings and inversion ({lay.symmetries} transforms)",
        "key": _KEY_TEXT.get(lay.lines, f"bits {lay.lines}i..{lay.lines}i+{lay.lines - 1} hold p[i]")
        + (
            "; canonical form = least key of the class"
            if lay.lines < PROFILE_FROM
            else "; canonical form = least member of the class by line profile, then key"
        ),
        "mix": lay.kernels().mix_name,
        "levels": levels,
        "built": {
            "seconds": round(time.perf_counter() - t0, 1),
            # the process's peak so far: it includes earlier work done by the same process
            "process_peak_rss_bytes": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024,
            "memory_budget_bytes": memory,
        },
    }
    storage.write_manifest(directory, manifest)
    return manifest


#: How a manifest describes the packing (the 4-line wording is the one manifests always had).
_KEY_TEXT = {4: "nibble i holds p[i]"}


def passes_needed(keys: int, memory: int) -> int:
    """Passes a step over about ``keys`` new keys takes under ``memory`` bytes (for planning)."""
    return 1 << max(0, math.ceil(math.log2(max(1.0, keys / LOAD * 8 / memory))))
