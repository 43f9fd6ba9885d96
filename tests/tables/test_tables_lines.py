"""Class tables of 2 and 3 lines through the same engine: counts, optima, search, certificates, commands.

References: the published 3-line NCT distribution (Shende, Prasad, Markov & Hayes, IEEE
TCAD 22(6), 2003) and breadth-first search over all functions (exactsyn.tables.bfs, no
classes, no kernels, no SAT).
"""

from __future__ import annotations

import json
import random
import shutil
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from helpers import random_perm

from exactsyn import synthesise, tables
from exactsyn.cli.main import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables import storage, verify
from exactsyn.tables.bfs import distribution, optimal_sizes

# Shende, Prasad, Markov & Hayes, "Synthesis of reversible logic circuits", IEEE TCAD
# 22(6), 2003, Table: the 8! = 40320 3-bit reversible functions by the number of NCT
# gates they need (0..8).
SHENDE_NCT3 = [1, 12, 102, 625, 2780, 8921, 17049, 10253, 577]


@pytest.fixture(scope="module")
def small_cache(tmp_path_factory: pytest.TempPathFactory) -> Path:
    cache = tmp_path_factory.mktemp("tables-2-3")
    for library in ("nct", "mixed"):
        tables.build(library, cache=cache, lines=3)  # default depth: until a level is empty
    tables.build("nct", cache=cache, lines=2)
    return cache


@pytest.fixture
def cached3(small_cache: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.setenv("EXACTSYN_CACHE", str(small_cache))
    return small_cache


def test_3_line_nct_counts_equal_the_published_table(small_cache: Path) -> None:
    info = tables.info("nct", cache=small_cache, lines=3)[0]
    assert info.present and info.lines == 3 and info.manifest is not None
    assert list(info.functions) == SHENDE_NCT3
    assert info.manifest["complete"] and info.manifest["lines"] == 3 and info.depth == 8
    assert info.manifest["format"] == "exactsyn-tables3"
    assert info.directory == small_cache / "tables3-v1" / "nct"
    assert tables.info("nct", cache=small_cache)[0].manifest is None  # the 4-line tables are elsewhere


@pytest.mark.parametrize(("library", "lines"), [("mixed", 3), ("nct", 2)])
def test_level_counts_equal_breadth_first_search(small_cache: Path, library: str, lines: int) -> None:
    # Independent method: breadth-first search over every function of the library.
    t = tables.load(library, cache=small_cache, lines=lines)
    assert t.distribution() == distribution(make_library(library, lines))
    assert t.complete


@pytest.mark.parametrize("library", ["nct", "mixed"])
def test_3_line_optima_equal_breadth_first_search(small_cache: Path, library: str) -> None:
    t = tables.load(library, cache=small_cache, lines=3)
    lib = make_library(library, 3)
    sizes = optimal_sizes(lib)
    rng = random.Random(31)
    for _ in range(60):
        p = random_perm(rng, 3)  # every 3-line function is realisable (the Toffoli gate is odd)
        ans = t.synthesise(p)
        assert ans.optimal and ans.gates is not None and ans.gate_count == sizes.size(p)
        assert Circuit(3, ans.gates).permutation() == tuple(p) and all(g in lib.gates for g in ans.gates)


def test_a_3_line_table_answers_the_search_and_its_certificate_checks(cached3: Path, tmp_path: Path) -> None:
    p = random_perm(random.Random(5), 3)
    lib = make_library("mixed", 3)
    cert = tmp_path / "cert"
    syn = synthesise(p, library="mixed", certificate=cert)
    claim = syn.gate_result.class_table
    assert syn.optimal and syn.gate_result.source == "class-table"
    assert claim is not None and claim.exact and claim.lines == 3
    ref = minimise_gates(from_permutation(p), lib, SearchOptions(bounds="cheap"))  # SAT with cheap bounds only
    assert ref.optimal and ref.circuit is not None and syn.gate_count == len(ref.circuit)
    data = json.loads((cert / "result.json").read_text())
    assert data["class_table"]["lines"] == 3 and data["class_table"]["format"] == "exactsyn-tables3/1"
    report = check_certificate(cert)
    assert report.ok, report.lines
    assert any(line.what == "class table" and "3-line" in line.detail for line in report.lines)

    def tampered(change: dict[str, object], name: str) -> Path:
        d = tmp_path / name
        shutil.copytree(cert, d)
        new = json.loads((d / "result.json").read_text())
        new["class_table"].update(change)
        (d / "result.json").write_text(json.dumps(new))
        return d

    # a bound above the optimum, another table, a table of another line count
    assert not check_certificate(tampered({"exact": False, "value": len(ref.circuit) + 1}, "bound")).ok
    assert not check_certificate(tampered({"content_hash": "0" * 64}, "hash")).ok
    assert not check_certificate(tampered({"lines": 4, "format": "exactsyn-tables4/1"}, "lines")).ok
    with pytest.raises(ExactsynError, match="class_table"):
        check_certificate(tampered({"format": "exactsyn-tables4/1"}, "format"))  # lines and format disagree


def test_a_longer_3_line_circuit_claimed_optimal_is_rejected(cached3: Path, tmp_path: Path) -> None:
    p = random_perm(random.Random(9), 3)
    cert = tmp_path / "cert"
    syn = synthesise(p, library="mixed", certificate=cert)
    assert syn.gate_count is not None
    new = json.loads((cert / "result.json").read_text())
    x0 = {"family": "x", "targets": [0], "controls": [], "negative_controls": []}
    new["circuit"] += [x0, x0]
    for key in ("gate_count", "lower_bound"):
        new[key] = syn.gate_count + 2
    new["class_table"]["value"] = syn.gate_count + 2
    (cert / "result.json").write_text(json.dumps(new))
    rep = check_certificate(cert)
    assert not rep.ok and any(line.what == "class table" and not line.ok for line in rep.lines)


def test_3_line_claims_are_rechecked_directly(small_cache: Path) -> None:
    t = tables.load("nct", cache=small_cache, lines=3)
    hardest = [p for p in (random_perm(random.Random(s), 3) for s in range(200)) if t.level_of(p) == 8][:2]
    assert hardest  # 577 of 40320 functions need 8 gates
    for p in hardest:
        ans = t.synthesise(p)
        assert ans.gates is not None
        ok = verify.check_claim("nct", p, 8, ans.gates, cache=small_cache, workers=1, lines=3)
        assert ok.ok and ok.tests == 1, ok.problems
        low = verify.check_claim("nct", p, 9, None, cache=small_cache, workers=1, lines=3)
        assert not low.ok  # no function needs 9: the class is in level 8
    with pytest.raises(ExactsynError):
        verify.check_claim("nct", list(range(16)), 0, None, cache=small_cache, lines=3)


def test_the_3_line_checker_accepts_the_table_and_catches_a_moved_class(small_cache: Path, tmp_path: Path) -> None:
    report = verify.verify_table("nct", cache=small_cache, workers=1, stamp=False, lines=3)
    assert report.ok, report.problems
    assert list(report.functions) == SHENDE_NCT3
    d = storage.table_dir("nct", tmp_path, 3)
    shutil.copytree(storage.table_dir("nct", small_cache, 3), d)
    manifest = json.loads((d / storage.MANIFEST).read_text())
    kernels = tables.load("nct", cache=small_cache, lines=3).layout.kernels()
    levels = [np.fromfile(d / lv["file"], dtype="<u8") for lv in manifest["levels"]]
    levels[4], levels[5] = np.append(levels[4], levels[5][3]), np.delete(levels[5], 3)  # a 5-gate class under 4
    for j in (4, 5):
        vals = np.sort(levels[j])
        vals.tofile(d / manifest["levels"][j]["file"])
        index, _ = kernels.make_index(vals)
        index.tofile(d / manifest["levels"][j]["index_file"])
        hist = kernels.class_size_histogram(vals)
        lv = manifest["levels"][j]
        lv["classes"], lv["functions"] = len(vals), int((hist * np.arange(len(hist))).sum())
        for name, size, digest in storage.FILE_KEYS:
            lv[size], lv[digest] = (d / lv[name]).stat().st_size, storage.sha256_file(d / lv[name])
    storage.write_manifest(d, manifest)
    assert storage.check_directory(d, True, 3).ok  # consistent hashes: only the checker can tell
    bad = verify.verify_table("nct", cache=tmp_path, workers=1, stamp=False, lines=3)
    assert not bad.ok and any("closure" in p or "descent" in p for p in bad.problems)


def test_tables_commands_take_the_line_count(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(tmp_path))
    runner = CliRunner()
    built = runner.invoke(main, ["tables", "build", "--lines", "3", "--library", "nct", "-q"])
    assert built.exit_code == 0 and "3 lines, depth 8" in built.output
    assert (tmp_path / "tables3-v1" / "nct" / "manifest.json").is_file()
    info = runner.invoke(main, ["tables", "info", "--lines", "3", "--library", "nct"])
    assert info.exit_code == 0 and "every function" in info.output
    counts = runner.invoke(main, ["tables", "counts", "--lines", "3", "--library", "nct"])
    assert counts.exit_code == 0
    rows = [line.split() for line in counts.output.splitlines()[2:]]
    assert [int(r[2].replace(",", "")) for r in rows] == SHENDE_NCT3  # Shende et al. 2003
    checked = runner.invoke(main, ["tables", "verify", "--lines", "3", "--library", "nct", "-j", "1", "-q"])
    assert checked.exit_code == 0 and "nct: OK, depth 8" in checked.output
    missing = runner.invoke(main, ["tables", "counts", "--lines", "3", "--library", "mct"])
    assert missing.exit_code == 2 and "--lines 3" in missing.stderr
    for args in (["build", "--lines", "6"], ["info", "--lines", "6"]):
        bad = runner.invoke(main, ["tables", *args])
        assert bad.exit_code == 2 and bad.stderr.count("\n") == 1 and "2, 3, 4, 5 lines" in bad.stderr
    assert not (tmp_path / "tables6-v1").exists()
