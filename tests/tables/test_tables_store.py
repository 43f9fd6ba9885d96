"""The table cache: location, idempotent and atomic builds, hashes, and tampering caught by the checker."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import numpy as np
import pytest
from helpers import hwb

from exactsyn import tables
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate
from exactsyn.errors import ExactsynError
from exactsyn.tables import kernels, storage, verify
from exactsyn.tables.keys import layout

K = layout(4).kernels()


def _copy_table(src_cache: Path, dst_cache: Path, library: str) -> Path:
    dst = storage.table_dir(library, dst_cache)
    shutil.copytree(storage.table_dir(library, src_cache), dst)
    return dst


@pytest.fixture(scope="module")
def depth4(tmp_path_factory: pytest.TempPathFactory) -> Path:
    cache = tmp_path_factory.mktemp("depth4")
    tables.build("mct", depth=4, cache=cache)
    return cache


def test_cache_directory_follows_the_environment(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(tmp_path / "mine"))
    assert tables.resolve_cache_dir() == tmp_path / "mine"
    info = tables.build("mct", depth=2)
    assert info.directory == tmp_path / "mine" / "tables4-v1" / "mct" and info.present
    monkeypatch.delenv("EXACTSYN_CACHE")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert tables.resolve_cache_dir() == tmp_path / "xdg" / "exactsyn"


def test_build_is_idempotent(depth4: Path) -> None:
    d = storage.table_dir("mct", depth4)
    before = {p.name: p.stat().st_mtime_ns for p in d.iterdir()}
    info = tables.build("mct", depth=4, cache=depth4)
    assert info.present and info.depth == 4
    assert {p.name: p.stat().st_mtime_ns for p in d.iterdir()} == before
    assert tables.build("mct", depth=3, cache=depth4).depth == 4  # a deeper table serves a shallower request


def test_an_interrupted_build_leaves_nothing_that_looks_complete(tmp_path: Path) -> None:
    def stop(description: str, done: int, total: int) -> None:
        if description == "level 3":
            raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        tables.build("mct", depth=4, cache=tmp_path, progress=stop)
    root = storage.tables_root(tmp_path)
    assert not (root / "mct").exists()
    assert not list(root.glob(".mct.build-*"))
    with pytest.raises(ExactsynError, match="exactsyn tables build"):
        tables.load("mct", cache=tmp_path)


def test_a_changed_byte_is_caught_and_rebuilt(depth4: Path, tmp_path: Path) -> None:
    d = _copy_table(depth4, tmp_path, "mct")
    path = d / storage.level_file(3)
    data = bytearray(path.read_bytes())
    data[100] ^= 0x01
    path.write_bytes(bytes(data))
    assert storage.check_directory(d, hashes=False).ok  # same size
    assert not storage.check_directory(d, hashes=True).ok
    with pytest.raises(ExactsynError, match="damaged"):
        tables.load("mct", cache=tmp_path, verify_hashes=True)
    report = verify.verify_table("mct", cache=tmp_path, workers=1, stamp=False)
    assert not report.ok and any("level-03.u64" in p for p in report.problems)
    assert not tables.info("mct", cache=tmp_path, hashes=True)[0].present
    good = json.loads((storage.table_dir("mct", depth4) / storage.MANIFEST).read_text())["content_hash"]
    assert tables.build("mct", depth=4, cache=tmp_path, force=True).content_hash == good
    assert storage.check_directory(d, hashes=True).ok


def _rewrite(d: Path, levels: list[np.ndarray]) -> None:
    """Write ``levels`` as a table with a consistent manifest (sizes, counts, hashes)."""
    manifest = json.loads((d / storage.MANIFEST).read_text())
    for j, vals in enumerate(levels):
        vals = np.ascontiguousarray(np.sort(vals), dtype=np.uint64)
        vals.tofile(d / storage.level_file(j))
        index, shift = K.make_index(vals)
        lv = manifest["levels"][j]
        (d / lv["index_file"]).unlink()
        lv["index_file"] = storage.index_file(j, index.dtype)
        index.tofile(d / lv["index_file"])
        lv["index_bits"] = 64 - shift
        lv["classes"] = len(vals)
        hist = K.class_size_histogram(vals)
        lv["functions"] = int((hist * np.arange(49)).sum())
        for name, size, digest in storage.FILE_KEYS:
            lv[size] = (d / lv[name]).stat().st_size
            lv[digest] = storage.sha256_file(d / lv[name])
    storage.write_manifest(d, manifest)


def _levels(d: Path) -> list[np.ndarray]:
    manifest = json.loads((d / storage.MANIFEST).read_text())
    return [np.fromfile(d / lv["file"], dtype="<u8") for lv in manifest["levels"]]


@pytest.mark.parametrize("change", ["move down", "move up", "drop"])
def test_a_consistently_rehashed_wrong_table_is_rejected(depth4: Path, tmp_path: Path, change: str) -> None:
    d = _copy_table(depth4, tmp_path, "mct")
    levels = _levels(d)
    if change == "move down":  # a 4-gate class filed under 3 gates
        levels[3] = np.append(levels[3], levels[4][7])
        levels[4] = np.delete(levels[4], 7)
    elif change == "move up":  # a 3-gate class filed under 4 gates
        levels[4] = np.append(levels[4], levels[3][5])
        levels[3] = np.delete(levels[3], 5)
    else:  # a 4-gate class missing
        levels[4] = np.delete(levels[4], 11)
    _rewrite(d, levels)
    assert storage.check_directory(d, hashes=True).ok  # the hashes cannot see it
    report = verify.verify_table("mct", cache=tmp_path, workers=1, stamp=False)
    assert not report.ok
    assert any("closure" in p or "descent" in p for p in report.problems)


def test_the_checker_accepts_a_good_table_with_two_workers(depth4: Path, tmp_path: Path) -> None:
    _copy_table(depth4, tmp_path, "mct")
    report = verify.verify_table("mct", cache=tmp_path, workers=2)
    assert report.ok, report.problems
    assert report.functions == (1, 32, 784, 16204, 294507)
    assert (storage.table_dir("mct", tmp_path) / verify.STAMP).is_file()


def test_claims_are_rechecked(table_cache: Path, mct6: tables.Tables) -> None:
    ans = mct6.synthesise(hwb(4))
    assert ans.gates is not None and ans.gate_count == 11
    ok = verify.check_claim("mct", hwb(4), 11, ans.gates, cache=table_cache, content_hash=ans.table_hash, workers=1)
    assert ok.ok and ok.tests > 0, ok.problems
    # a longer circuit claimed as optimal: the re-run finds shorter splits
    seven = (x_gate(0, [1]), x_gate(2, [0, 1]), x_gate(3), x_gate(1, [2, 3]), x_gate(0, [1, 2, 3]), x_gate(2, [3]))
    short = mct6.synthesise(Circuit(4, (*seven, x_gate(3, [0]))).permutation())
    assert short.gates is not None and short.gate_count is not None and short.gate_count <= 7
    claim = 11 if short.gate_count % 2 else 12  # pad with cancelling NOT pairs beyond the depth
    padded = (*short.gates, *([x_gate(0)] * (claim - short.gate_count)))
    bad = verify.check_claim("mct", short.perm, claim, padded, cache=table_cache, workers=1)
    assert not bad.ok and any(f"fewer than {claim}" in p for p in bad.problems)
    # a circuit that does not compute the function
    wrong = verify.check_claim("mct", hwb(4), 11, (*ans.gates[:-1], x_gate(3)), cache=table_cache, workers=1)
    assert not wrong.ok and any("does not compute" in p for p in wrong.problems)
    # a claim made with another table
    other = verify.check_claim("mct", hwb(4), 11, ans.gates, cache=table_cache, content_hash="0" * 64, workers=1)
    assert not other.ok


def test_lookup_claims_are_rechecked(table_cache: Path, mct6: tables.Tables) -> None:
    p = [1, 0, 3, 2, 5, 4, 7, 6, 9, 8, 11, 10, 13, 12, 15, 14]  # NOT on line 0
    ans = mct6.synthesise(p)
    assert ans.gate_count == 1 and ans.gates is not None
    assert verify.check_claim("mct", p, 1, ans.gates, cache=table_cache, workers=1).ok
    three = (x_gate(0), x_gate(1, [0]), x_gate(1, [0]))
    bad = verify.check_claim("mct", p, 3, three, cache=table_cache, workers=1)
    assert not bad.ok and any("level below 3" in p for p in bad.problems)


def test_multi_pass_and_growing_builds_give_the_same_table(
    depth4: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # A tiny memory budget splits every step into passes over ranges of keys; a tiny size
    # estimate makes the key set grow and re-insert.  Both must give the same files.
    from exactsyn.tables import levels

    good = tables.info("mct", cache=depth4)[0].content_hash
    calls: list[int] = []
    real_step = levels._level_step

    def counting_step(*args, **kwargs):  # type: ignore[no-untyped-def]
        calls.append(args[5])  # the memory budget reaches every step
        return real_step(*args, **kwargs)

    monkeypatch.setattr(levels, "_level_step", counting_step)
    few = tables.build("mct", depth=4, cache=tmp_path / "passes", memory=1 << 14)  # level 4 in 8 passes
    assert few.content_hash == good and calls == [1 << 14] * 4
    assert levels.passes_needed(6538, 1 << 14) == 8
    monkeypatch.setattr(levels, "_estimate", lambda sizes, gates: 1024)
    monkeypatch.setattr(levels, "PAD", 8)  # probes run off the end: the set must grow
    grows: list[int] = []
    real_reinsert = kernels.reinsert

    def counting_reinsert(*args):  # type: ignore[no-untyped-def]
        grows.append(1)
        return real_reinsert(*args)

    monkeypatch.setattr(kernels, "reinsert", counting_reinsert)
    grown = tables.build("mct", depth=4, cache=tmp_path / "grown")
    assert grown.content_hash == good and grows
