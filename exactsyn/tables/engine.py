"""Exact synthesis from the class tables (any line count): lookup, then meet in the middle.

Let ``T_j`` be level ``j`` of a table of depth ``R`` (the classes needing exactly ``j``
gates) and ``d`` the optimum of ``f``.

* **Lookup.**  If the class of ``f`` is in ``T_j``, then ``d = j``.  A circuit comes by
  walking down: some gate ``g`` has ``g∘f`` in ``T_{j−1}`` (the last gate of an optimal
  circuit), so ``f`` is a circuit of ``g∘f`` followed by ``g``.
* **Meet in the middle.**  Otherwise ``d > R``.  For ``L = 1, 2, …`` test every
  function ``A`` needing exactly ``L`` gates (the members of the classes of ``T_L``):
  is the class of ``f∘A⁻¹`` in ``T_R``?  If ``d = R + L``, splitting an optimal circuit
  after its first ``L`` gates gives such an ``A`` (both parts are optimal, else ``f``
  would be shorter); if ``d > R + L`` no ``A`` can hit (``f = (f∘A⁻¹)∘A`` would need at
  most ``R + L`` gates).  So the first ``L`` with a hit gives ``d = R + L``, and every
  ``L`` scanned without a hit proves the lower bound ``d ≥ R + L + 1``.  The circuit is
  ``A``'s followed by ``f∘A⁻¹``'s, both from the lookup.  This is the bidirectional
  search of Golubitsky, Falconer & Maslov (DAC 2010).

The scan does not expand classes: for a representative ``a`` and the conjugates
``f_σ = π_σ∘f∘π_σ⁻¹`` it looks up ``canon(f_σ∘a)`` and ``canon(f_σ∘a⁻¹)``, which are the
classes of ``f∘A⁻¹`` for ``A = π_σ⁻¹∘a^{∓1}∘π_σ``, i.e. for every member ``A`` of the
class of ``a``.  Equal conjugates are tested once.  Every circuit is simulated against
``f`` before it is returned.  Keys and their kernels come from the table's layout
(:mod:`exactsyn.tables.keys`, :class:`~exactsyn.tables.kernel_api.TableKernels`).
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import Any

import numpy as np

from exactsyn.core.gates import Gate
from exactsyn.errors import ExactsynError
from exactsyn.tables import storage
from exactsyn.tables.deep import DEFAULT_CHUNK, ScanResult, ScanSettings, scan_level, worth_filter
from exactsyn.tables.gate_keys import GateSet, gate_set
from exactsyn.tables.keys import check_lines

#: ``progress(what, classes done, classes in the level)`` of a meet in the middle.
MeetProgress = Callable[[str, int, int], None]


@dataclass(frozen=True)
class Level:
    """One memory-mapped level: sorted mixed keys and their bucket index."""

    number: int
    vals: np.ndarray
    index: np.ndarray
    shift: int
    functions: int

    def __len__(self) -> int:
        return len(self.vals)


@dataclass(frozen=True)
class TableAnswer:
    """Result of :meth:`Tables.synthesise`.

    ``gate_count`` and ``gates`` (application order) are set when the optimum is proven
    (``optimal``); otherwise ``lower_bound`` is the proven bound reached.  For a layer table
    (``mct-layers``, …) the counts are layers: ``gate_count`` is the minimum depth and
    ``gates`` a circuit of that depth.  ``detail``
    holds the method and its numbers (table depth, meet-in-the-middle level, timings).
    """

    library: str
    perm: tuple[int, ...]
    optimal: bool
    lower_bound: int
    gate_count: int | None
    gates: tuple[Gate, ...] | None
    method: str
    table_hash: str
    seconds: float
    detail: dict[str, Any] = field(default_factory=dict)


class Tables:
    """A loaded class table (memory-mapped; cheap to open)."""

    def __init__(self, directory: Path, manifest: dict[str, Any], gs: GateSet) -> None:
        self.directory = directory
        self.manifest = manifest
        self.gates = gs
        self.layout = gs.layout
        self.lines = gs.lines
        self.library = gs.library
        self.depth = int(manifest["depth"])
        self.complete = bool(manifest.get("complete"))
        self.content_hash = str(manifest["content_hash"])
        words = self.layout.words
        levels = []
        for lv in manifest["levels"]:
            vals = storage.read_array(directory / lv["file"], np.uint64, int(lv["classes"]), words)
            idx_dtype = np.uint32 if lv["index_file"].endswith(".u32") else np.uint64
            index = storage.read_array(directory / lv["index_file"], idx_dtype, (1 << int(lv["index_bits"])) + 1)
            levels.append(Level(int(lv["level"]), vals, index, 64 - int(lv["index_bits"]), int(lv["functions"])))
        self.levels = tuple(levels)

    # ------------------------------------------------------------------ lookups
    def _level_of_canonical(self, mixed: np.ndarray, candidates: Sequence[int]) -> np.ndarray:
        K = self.layout.kernels()
        out = np.full(len(mixed), -1, dtype=np.int64)
        for j in candidates:
            lv = self.levels[j]
            hit = K.contains_many(lv.vals, lv.index, lv.shift, mixed)
            out[(out < 0) & hit] = j
        return out

    def levels_of(self, keys: np.ndarray, candidates: Sequence[int] | None = None) -> np.ndarray:
        """Level of each key's class (−1 when the class is deeper than the table); ``keys`` a key array."""
        K = self.layout.kernels()
        mixed = K.mix_many(K.canon_many(keys))
        return self._level_of_canonical(mixed, range(len(self.levels)) if candidates is None else candidates)

    def level_of(self, perm: Sequence[int]) -> int | None:
        """Exact gate count of ``perm`` if it is at most the table depth, else None."""
        j = int(self.levels_of(self.layout.array([self.layout.pack(perm)]))[0])
        return None if j < 0 else j

    def _walk(self, key: int, level: int) -> list[int]:
        """Library indices of an optimal circuit (application order) of a function at ``level``:
        at each level the first step ``g`` (library order) with ``g∘x`` one level lower."""
        lay = self.layout
        steps = self._step_rows
        out: list[int] = []
        x = lay.unpack_keys(lay.array([key]))[0]
        for j in range(level, 0, -1):
            cands = steps[:, x]  # row g is g∘x: entry i is g[x[i]]
            lv = self.levels_of(lay.pack_rows(cands), [j - 1])
            hit = np.flatnonzero(lv == j - 1)
            if len(hit) == 0:
                raise RuntimeError(f"internal error: no way down from level {j} (corrupt table?)")
            g = int(hit[0])
            out.append(g)
            x = cands[g]
        if not np.array_equal(x, np.arange(lay.size)):
            raise RuntimeError("internal error: the walk down did not end at the identity")
        return out[::-1]

    @cached_property
    def _step_rows(self) -> np.ndarray:
        """The steps as permutations, one row each (``(steps, 2^n)``)."""
        return self.layout.unpack_keys(self.gates.key_array())

    # ------------------------------------------------------------------ synthesis
    def synthesise(
        self,
        perm: Sequence[int],
        max_extra: int | None = None,
        time_limit: float | None = None,
        scan: ScanSettings | None = None,
        progress: MeetProgress | None = None,
        known: int | None = None,
    ) -> TableAnswer:
        """Optimal circuit of a permutation of the table's lines, or the lower bound reached.

        ``known``: the caller holds a circuit of that many gates; once every split below it
        has failed, the bound is returned (the caller's circuit is then optimal) instead of
        scanning on for a circuit of the same size.
        ``max_extra`` caps the meet-in-the-middle level ``L`` (default: the table depth);
        ``time_limit`` (seconds) stops the scan between chunks; ``scan`` says where the
        chunks run and where their state is kept (:mod:`exactsyn.tables.deep`);
        ``progress(what, done, total)`` hears of every chunk.  Raises
        :class:`ExactsynError` when the permutation is not realisable over the library.
        """
        t0 = time.perf_counter()
        p = self.layout.check_perm(perm)
        f = self.layout.pack(p)
        if self.gates.all_even and self.layout.is_odd(f):
            raise ExactsynError(
                f"an odd permutation is not realisable with {self.library} gates on {self.lines} lines "
                "(every gate is an even permutation; Shende, Prasad, Markov & Hayes 2003)"
            )
        j = self.level_of(p)
        if j is not None:
            gates = self._walk(f, j)
            return self._answer(p, gates, t0, "table lookup", {"depth": self.depth, "level": j})
        if self.complete:
            raise ExactsynError(f"the permutation is not realisable over {self.library}")
        extra = self.depth if max_extra is None else min(max_extra, self.depth)
        deadline = None if time_limit is None else t0 + time_limit
        return self._meet(p, f, t0, extra, _Scan(self, scan, deadline, progress), known)

    def _conjugates(self, targets: Sequence[int]) -> tuple[np.ndarray, list[tuple[int, tuple[int, ...]]]]:
        """Key array of the distinct conjugates of all targets, and per conjugate (target, σ).

        A conjugate shared by two targets is scanned once, for the first: a split of it is a
        split of that target (the peel's targets ``g∘f`` share all their conjugates when
        ``f`` has symmetries: ``π_σ∘(g∘f)∘π_σ⁻¹ = g'∘f`` for ``σ`` fixing ``f``)."""
        lay = self.layout
        conj: dict[int, tuple[int, tuple[int, ...]]] = {}
        for j, t in enumerate(targets):
            for sigma in lay.relabellings:
                conj.setdefault(lay.conjugate(t, sigma), (j, sigma))
        return lay.array(list(conj)), list(conj.values())

    def _split(self, target: int, L: int, position: int, lane: int, sigma: tuple[int, ...]) -> list[int]:
        """An optimal circuit of ``target`` from a hit of the scan of level ``L`` against level ``R``."""
        lay = self.layout
        a = lay.ints(lay.kernels().unmix_many(self.levels[L].vals[position : position + 1]))[0]
        x = a if lane % 2 == 0 else lay.inverse(a)
        a_key = lay.conjugate(lay.inverse(x), lay.inverse_relabelling(sigma))  # A = π_σ⁻¹ ∘ x⁻¹ ∘ π_σ
        b_key = lay.compose(target, lay.inverse(a_key))  # B = target ∘ A⁻¹
        return self._walk(a_key, L) + self._walk(b_key, self.depth)

    def _meet(
        self, p: tuple[int, ...], f: int, t0: float, max_extra: int, scan: _Scan, known: int | None = None
    ) -> TableAnswer:
        R = self.depth
        fkeys, whose = self._conjugates([f])
        scanned: list[dict[str, Any]] = []
        tests = 0
        for L in range(1, max_extra + 1):
            res = scan.level(L, R, fkeys, f"split after {L} gates")
            scanned.append({"L": L, "classes": res.classes, "seconds": round(res.seconds, 3),
                            **({"resumed_chunks": res.resumed} if res.resumed else {})})  # fmt: skip
            tests += res.classes * len(fkeys) * 2
            if res.hit is not None:
                position, lane = res.hit
                gates = self._split(f, L, position, lane, whose[lane // 2][1])
                detail = {"depth": R, "extra": L, "levels": scanned, "tests": tests}
                return self._answer(p, gates, t0, "meet in the middle", detail)
            if not res.complete:
                return self._bound(p, R + L, t0, {"depth": R, "levels": scanned, "tests": tests, "timeout": True})
            if known is not None and R + L + 1 >= known:  # the caller's circuit meets the bound
                return self._bound(p, R + L + 1, t0, {"depth": R, "levels": scanned, "tests": tests, "known": known})
        if max_extra < R:
            return self._bound(p, R + max_extra + 1, t0, {"depth": R, "levels": scanned, "tests": tests})
        return self._peel(p, f, t0, scan, {"depth": R, "levels": scanned, "tests": tests})

    def _peel(self, p: tuple[int, ...], f: int, t0: float, scan: _Scan, detail: dict[str, Any]) -> TableAnswer:
        """Every split up to ``2R`` gates failed, so the optimum is at least ``2R + 1``; it is
        ``2R + 1`` exactly when some ``g∘f`` (``g`` a gate) needs ``2R``, i.e. splits into two
        functions of level ``R``: the last gate of an optimal circuit peeled off.  One scan of
        level ``R`` for all ``g∘f`` at once; the first hit gives a circuit of ``2R + 1`` gates,
        exhausting it proves ``2R + 2``."""
        R, lay = self.depth, self.layout
        targets = sorted({lay.compose(g, f) for g in self.gates.keys})
        fkeys, whose = self._conjugates(targets)
        res = scan.level(R, R, fkeys, f"one gate and a split after {R}")
        detail["peel"] = {"targets": len(targets), "classes": res.classes, "seconds": round(res.seconds, 3)}
        if res.hit is not None:
            position, lane = res.hit
            j, sigma = whose[lane // 2]
            t = targets[j]
            g = next(i for i, k in enumerate(self.gates.keys) if lay.compose(k, f) == t)
            gates = self._split(t, R, position, lane, sigma) + [g]  # f = g∘t: t first, then g
            return self._answer(p, gates, t0, "meet in the middle, one gate peeled", detail)
        bound = 2 * R + 2 if res.complete else 2 * R + 1
        return self._bound(p, bound, t0, {**detail, **({} if res.complete else {"timeout": True})})

    def _answer(
        self, p: tuple[int, ...], idx: list[int], t0: float, method: str, detail: dict[str, Any]
    ) -> TableAnswer:
        gates = tuple(g for i in idx for g in self.gates.steps[i])  # a layer table's steps are layers
        if self.gates.circuit_key(gates) != self.layout.pack(p):
            raise RuntimeError("internal error: the table circuit does not compute the function")
        return TableAnswer(
            self.library,
            p,
            True,
            len(idx),
            len(idx),
            gates,
            method,
            self.content_hash,
            time.perf_counter() - t0,
            detail,
        )

    def _bound(self, p: tuple[int, ...], lower: int, t0: float, detail: dict[str, Any]) -> TableAnswer:
        return TableAnswer(
            self.library,
            p,
            False,
            lower,
            None,
            None,
            "meet in the middle (incomplete)",
            self.content_hash,
            time.perf_counter() - t0,
            detail,
        )

    def distribution(self) -> list[int]:
        """Number of functions needing exactly ``0..depth`` gates (from class sizes)."""
        return [lv.functions for lv in self.levels]


class _Scan:
    """The scans of one synthesis: the table, where chunks run, the deadline, progress."""

    def __init__(
        self, table: Tables, settings: ScanSettings | None, deadline: float | None, progress: MeetProgress | None
    ) -> None:
        self.table, self.settings, self.deadline, self.progress = table, settings, deadline, progress

    def level(self, level: int, top: int, fkeys: np.ndarray, what: str) -> ScanResult:
        t = self.table
        report = None
        if self.progress is not None:
            progress = self.progress

            def report(done: int, total: int) -> None:
                progress(what, done, total)

        return scan_level(t.library, t.lines, t.content_hash, t.directory.parent.parent, level,
                          len(t.levels[level]), top, fkeys, self.settings, self.deadline, report)  # fmt: skip


def load(library: str = "mct", cache: Path | None = None, verify_hashes: bool = False, lines: int = 4) -> Tables:
    """Open the cached ``lines``-line table of ``library``; :class:`ExactsynError` (with the fix) if absent."""
    gs = gate_set(library, check_lines(lines))
    directory = storage.table_dir(gs.library, cache, lines)
    manifest = storage.read_manifest(directory, lines)
    option = "" if lines == 4 else f" --lines {lines}"
    hint = f"build it with `exactsyn tables build --library {gs.library}{option}`"
    if manifest is None:
        raise ExactsynError(f"no {lines}-line table for {gs.library} in {directory.parent}; {hint}")
    problem = storage.check_directory(directory, verify_hashes, lines)
    if not problem.ok:
        raise ExactsynError(f"the cached {gs.library} table is damaged ({problem.reasons[0]}); {hint}")
    if manifest["gate_keys"] != [gs.layout.hex(k) for k in gs.keys]:
        raise ExactsynError(f"the cached {gs.library} table was built for other gates; {hint}")
    return Tables(directory, manifest, gs)


class TableLookup:
    """The :class:`exactsyn.tables.descent.Lookup` of a loaded table, with the compiled kernels."""

    def __init__(self, table: Tables) -> None:
        self.table = table
        self.layout = table.layout
        self.depth = table.depth
        self.identity = table.layout.identity
        self.gate_keys = tuple(int(k) for k in table.gates.keys)

    def compose(self, f: int, a: int) -> int:
        return self.layout.compose(f, a)

    def inverse(self, key: int) -> int:
        return self.layout.inverse(key)

    def compose_grid(self, fs: Sequence[int], as_: Sequence[int]) -> list[int]:
        if self.layout.words != 1:
            return [self.layout.compose(f, a) for f in fs for a in as_]
        n, m = np.uint64(self.layout.lines), np.uint64(self.layout.size - 1)
        f = np.asarray(list(fs), dtype=np.uint64)[:, None]
        a = np.asarray(list(as_), dtype=np.uint64)[None, :]
        out = np.zeros((f.shape[0], a.shape[1]), dtype=np.uint64)
        for i in range(self.layout.size):
            shift = np.uint64(self.layout.lines * i)
            out |= ((f >> (((a >> shift) & m) * n)) & m) << shift
        return [int(v) for v in out.ravel()]

    def at_level(self, keys: Sequence[int], level: int) -> list[bool]:
        if not keys:
            return []
        if not 0 <= level <= self.depth:
            return [False] * len(keys)
        got = self.table.levels_of(self.layout.array(keys), [level])
        return [bool(v == level) for v in got]

    def split(self, f: int, level: int) -> frozenset[int]:
        """Scan every class of ``level``; each class with a hit contributes its members ``A``."""
        lay, t = self.layout, self.table
        K = lay.kernels()
        conj = lay.array(sorted({lay.conjugate(f, s) for s in lay.relabellings}))
        top = t.levels[self.depth]
        reps = t.levels[level].vals
        hits: list[int] = []
        out = np.empty(min(DEFAULT_CHUNK, max(1, len(reps))), dtype=np.int64)
        filtered = worth_filter(len(reps), len(conj))
        for start in range(0, len(reps), DEFAULT_CHUNK):
            stop = min(len(reps), start + DEFAULT_CHUNK)
            o = out[: stop - start]
            K.scan(reps, start, stop, conj, top.vals, top.index, top.shift, o, filtered=filtered)
            found = np.flatnonzero(o >= 0)
            if len(found):
                hits += lay.ints(K.unmix_many(reps[start + found]))
        members = sorted({m for a in hits for m in lay.class_members(a)})
        rests = [lay.compose(f, lay.inverse(a)) for a in members]
        return frozenset(a for a, ok in zip(members, self.at_level(rests, self.depth), strict=True) if ok)
