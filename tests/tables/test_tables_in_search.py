"""The class tables inside the gate search: API, synth, certificates, fallback, and the tables commands.

Small tables (tests/tables/conftest.py: mct depth 6, nct depth 5, mixed depth 4) are put
in the cache through EXACTSYN_CACHE; references are independent methods (SAT with cheap
bounds only, the numpy distance-table path) or published counts.
"""

from __future__ import annotations

import json
import random
import shutil
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from helpers import hwb

from exactsyn import synthesise
from exactsyn.cli.main import main
from exactsyn.core.library import make_library
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.options import SearchOptions
from exactsyn.search.fallback import replace_runs_from_table
from exactsyn.search.heuristic import transformation_based
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables import oracle, storage


@pytest.fixture
def cached(table_cache: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    return table_cache


@pytest.fixture
def empty_cache(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Path:
    monkeypatch.setenv("EXACTSYN_CACHE", str(tmp_path / "none"))
    return tmp_path / "none"


def _circuit_perm(rng: random.Random, library: str, length: int) -> list[int]:
    lib = make_library(library, 4)
    s = np.arange(16)
    for _ in range(length):
        s = lib.gates[rng.randrange(len(lib))].apply(s)
    return [int(v) for v in s]


def test_hwb4_is_proven_from_the_table_through_the_api(cached: Path) -> None:
    # hwb4 needs 11 MCT gates (Golubitsky, Falconer, Maslov DAC 2010, from memory); the
    # depth-6 table reaches it by meet in the middle (6 + 5).
    syn = synthesise(hwb(4), library="mct")
    assert syn.optimal and syn.gate_count == 11
    assert syn.gate_result.source == "class-table"
    claim = syn.gate_result.class_table
    assert claim is not None and claim.exact and claim.depth == 6 and claim.value == 11
    assert syn.circuit is not None and syn.circuit.permutation() == tuple(hwb(4))
    assert not syn.notes


@pytest.mark.parametrize("library", ["mct", "nct", "mixed"])
def test_table_optima_equal_sat(cached: Path, library: str) -> None:
    # Independent method: the SAT search with cheap bounds only (no table of any kind).
    rng = random.Random(12)
    lib = make_library(library, 4)
    for length in (3, 5) if library == "mixed" else (3, 5, 6):  # SAT on mixed is slower
        p = _circuit_perm(rng, library, length)
        got = synthesise(p, library=library)
        ref = minimise_gates(from_permutation(p), lib, SearchOptions(bounds="cheap"))
        assert got.optimal and ref.optimal and ref.circuit is not None
        assert got.gate_result.source == "class-table"
        assert got.gate_count == len(ref.circuit)


def test_beyond_the_table_the_search_goes_on_from_its_bound(cached: Path) -> None:
    # nct at depth 5 settles up to 10 gates by splits and 11 by peeling one gate off; a
    # function that needs more gets bound 12 (11 if the time limit stops the peel) and SAT
    # takes over from there (the time limit keeps this short).
    rng = random.Random(3)
    lib = make_library("nct", 4)
    for _ in range(20):
        p = _circuit_perm(rng, "nct", 40)
        res = minimise_gates(from_permutation(p), lib, SearchOptions(time_limit=3))
        claim = res.class_table
        assert claim is not None
        if not claim.exact:
            assert claim.value in (11, 12) and res.lower_bound >= claim.value
            assert res.circuit is not None and res.circuit.permutation() == tuple(p)
            return
    pytest.fail("no seeded NCT function needed more than 10 gates")


def test_a_coupled_library_gets_the_table_bound(cached: Path) -> None:
    # On the chain 0-1-2-3 every gate is an MCT gate, so the MCT optimum is a lower bound.
    p = list(hwb(4))
    chain = make_library("mct", 4, None, "0-1,1-2,2-3")
    res = minimise_gates(from_permutation(p), chain, SearchOptions(time_limit=3))
    assert res.class_table is not None and not res.class_table.exact
    assert res.class_table.value == 11 and res.lower_bound >= 11


def test_without_tables_synth_says_once_how_to_get_them(empty_cache: Path) -> None:
    p = _circuit_perm(random.Random(1), "mct", 4)
    syn = synthesise(p, library="mct")
    assert syn.optimal and syn.gate_result.source != "class-table"
    assert [n for n in syn.notes if "exactsyn tables build" in n] == [oracle.HINT.format(library="mct")]
    assert "`exactsyn tables build --library mct`" in syn.notes[0]
    out = CliRunner().invoke(main, ["synth", "--perm", ",".join(map(str, p)), "--library", "mct"])
    assert out.exit_code == 0
    assert out.output.count("exactsyn tables build") == 1  # stdout header or stderr summary, once
    # the note names the library, which `tables build` does not build unless asked (mixed)
    flip = [v ^ 1 for v in range(16)]
    assert synthesise(flip, library="mixed").notes == (oracle.HINT.format(library="mixed"),)
    assert "`exactsyn tables build --library mixed`" in oracle.HINT.format(library="mixed")
    # no hint where no table could help (3 lines)
    assert not synthesise([1, 0, 3, 2, 5, 7, 4, 6], library="mct").notes


def test_table_certificate_is_rechecked_and_tampering_rejected(cached: Path, tmp_path: Path) -> None:
    cert = tmp_path / "cert"
    syn = synthesise(hwb(4), library="mct", certificate=cert)
    data = json.loads((cert / "result.json").read_text())
    assert data["class_table"]["content_hash"] == syn.gate_result.class_table.content_hash  # type: ignore[union-attr]
    assert data["class_table"]["depth"] == 6 and data["queries"] == []
    report = check_certificate(cert)
    assert report.ok, report.lines
    assert any(line.what == "class table" and "optimum" in line.detail for line in report.lines)

    def tampered(change: dict[str, object], name: str) -> Path:
        d = tmp_path / name
        shutil.copytree(cert, d)
        new = json.loads((d / "result.json").read_text())
        new["class_table"].update(change)
        (d / "result.json").write_text(json.dumps(new))
        return d

    # a claim as written before tables of other line counts: no "lines", "format" exactsyn-tables4/1
    assert data["class_table"]["lines"] == 4 and data["class_table"]["format"] == "exactsyn-tables4/1"
    old = tmp_path / "old"
    shutil.copytree(cert, old)
    del data["class_table"]["lines"]
    (old / "result.json").write_text(json.dumps(data))
    assert check_certificate(old).ok
    # another table named
    assert not check_certificate(tampered({"content_hash": "0" * 64}, "hash")).ok
    # an optimum claimed for a longer circuit: a shorter split exists
    longer = tmp_path / "longer"
    shutil.copytree(cert, longer)
    new = json.loads((longer / "result.json").read_text())
    x0 = {"type": "x", "target": 0, "controls": [], "negative_controls": []}  # the certificate's gate form
    new["circuit"] += [x0, x0]
    new["gate_count"] = 13
    new["class_table"]["value"] = 13
    new["lower_bound"] = 13
    (longer / "result.json").write_text(json.dumps(new))
    rep = check_certificate(longer)
    lines = {line.what: line for line in rep.lines}
    assert lines["circuit"].ok, lines["circuit"]  # a well-formed 13-gate circuit of the function...
    table = lines["class table"]
    assert not rep.ok and not table.ok and "fewer than 13 gates" in table.detail, table  # ...refuted by the table
    # a bound claim stronger than the truth
    rep = check_certificate(tampered({"exact": False, "value": 12}, "bound"))
    assert not rep.ok


def test_a_tampered_table_is_rejected_by_check(
    table_cache: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    cert = tmp_path / "cert"
    synthesise(hwb(4), library="mct", certificate=cert)
    copy = tmp_path / "cache"
    shutil.copytree(storage.table_dir("mct", table_cache), storage.table_dir("mct", copy))
    path = storage.table_dir("mct", copy) / storage.level_file(5)
    data = bytearray(path.read_bytes())
    data[800] ^= 0x10
    path.write_bytes(bytes(data))
    monkeypatch.setenv("EXACTSYN_CACHE", str(copy))
    rep = check_certificate(cert)
    assert not rep.ok and any("does not match the manifest" in line.detail for line in rep.lines)
    # and without any table the check names the fix
    monkeypatch.setenv("EXACTSYN_CACHE", str(tmp_path / "nothing"))
    rep = check_certificate(cert)
    assert not rep.ok and any("exactsyn tables build" in line.detail for line in rep.lines)


def test_bound_claims_of_a_coupled_search_are_rechecked(cached: Path, tmp_path: Path) -> None:
    cert = tmp_path / "cert"
    p = _circuit_perm(random.Random(8), "mct", 3)
    syn = synthesise(p, library="mct", coupling="0-1,1-2,2-3", certificate=cert)
    claim = syn.gate_result.class_table
    assert claim is not None and not claim.exact
    rep = check_certificate(cert)
    assert rep.ok, rep.lines
    assert any(line.what == "class table" and line.ok for line in rep.lines)


def test_the_fallback_replaces_runs_of_gates_from_the_table(cached: Path) -> None:
    rng = random.Random(4)
    lib = make_library("mct", 4)
    shorter = 0
    for _ in range(5):
        p = _circuit_perm(rng, "mct", 30)
        raw = transformation_based(tuple(p), 4)
        inner = oracle.table_roles(lib).inner
        assert inner is not None and inner.describe() == "4-line class table of mct"
        got = replace_runs_from_table(raw, lib, inner)
        if got is not None:
            shorter += 1
            assert len(got) < len(raw) and got.permutation() == tuple(p)
            assert all(lib.contains(g) for g in got.gates)
    assert shorter


def test_tables_commands(cached: Path) -> None:
    runner = CliRunner()
    info = runner.invoke(main, ["tables", "info"])
    assert info.exit_code == 0 and "mct" in info.output and "depth 6" in info.output
    assert "peak memory" in info.output  # the build's peak, from the manifest
    d = storage.table_dir("mct", cached)
    before = {p.name: p.stat().st_mtime_ns for p in d.iterdir()}
    again = runner.invoke(main, ["tables", "build", "--library", "mct", "--depth", "6", "-q"])
    assert again.exit_code == 0 and "depth 6" in again.output
    assert {p.name: p.stat().st_mtime_ns for p in d.iterdir()} == before  # idempotent
    counts = runner.invoke(main, ["tables", "counts", "--library", "mct"])
    assert counts.exit_code == 0
    # Golubitsky, Falconer, Maslov (DAC 2010): 4-bit MCT functions needing k = 0..6 gates
    # (k = 6 from memory).
    rows = [line.split() for line in counts.output.splitlines()[2:]]
    published = [1, 32, 784, 16204, 294507, 4807552, 70763560]
    assert [int(r[2].replace(",", "")) for r in rows] == published
    checked = runner.invoke(main, ["tables", "verify", "--library", "nct", "-j", "1", "-q"])
    assert checked.exit_code == 0 and "nct: OK, depth 5" in checked.output
    bad = runner.invoke(main, ["tables", "build", "--library", "toffoli"])
    assert bad.exit_code == 2 and bad.stderr.count("\n") == 1


def test_tables_commands_without_tables(empty_cache: Path) -> None:
    out = CliRunner().invoke(main, ["tables", "counts"])
    assert out.exit_code == 2 and "exactsyn tables build" in out.stderr
    out = CliRunner().invoke(main, ["tables", "info"])
    assert out.exit_code == 0 and "not built" in out.output
