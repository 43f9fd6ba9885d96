"""Certificates written before the package was reorganised still check, and tampered copies do not.

The certificates in tests/data/certificates-v1/ (see the README there) were written by the
tool before the reorganisation and are kept as written.  Each must pass
``check_certificate``, and what it claims is compared with searches that use no SAT:
breadth-first search for gate counts, the cheapest of all optimal gate sequences for
gates-then-cost, breadth-first search over layers for depth.  T-counts per gate: NOT and
CNOT 0, Toffoli 7 (Nielsen & Chuang 2000, Fig. 4.9).
"""

from __future__ import annotations

import gzip
import json
import shutil
from pathlib import Path
from typing import Any

import pytest
from helpers import DATA, INSTANCES, layer_depths, naive_bfs, optimal_words

from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.proof.certificate import spec_to_dict
from exactsyn.proof.checker import check_certificate
from exactsyn.specification.loader import load_any
from exactsyn.tables.bfs import optimal_sizes

OLD = DATA / "certificates-v1"
NAMES = [
    "gates-nct3",
    "table-cnot-chain4",
    "gates-then-cost-tcount",
    "depth",
    "embedded-half-adder",
    "embedded-chosen-constant",
]


def _data(directory: Path) -> dict[str, Any]:
    return dict(json.loads((directory / "result.json").read_text()))


def _proofs(data: dict[str, Any]) -> list[str]:
    queries = list(data["queries"]) + list((data.get("objective") or {}).get("queries", []))
    return [q["proof"] for q in queries if q.get("status") == "unsat"]


def test_every_old_certificate_is_listed_and_small() -> None:
    on_disk = sorted(p.name for p in OLD.iterdir() if p.is_dir())
    assert on_disk == sorted(NAMES)
    assert sum(p.stat().st_size for p in OLD.rglob("*") if p.is_file()) < 300_000


@pytest.mark.parametrize("name", NAMES)
def test_old_certificate_still_checks(name: str) -> None:
    d = OLD / name
    data = _data(d)
    assert data["format"] == "exactsyn-certificate" and data["format_version"] == 1
    # nothing stripped: every refutation the certificate names is there
    assert sorted(_proofs(data)) == sorted(p.name for p in d.glob("*.lrat.gz"))
    rep = check_certificate(d)
    assert rep.ok, [line for line in rep.lines if not line.ok]
    assert rep.optimal_claim and rep.gate_count == data["gate_count"]


# ------------------------------------------------------------------ their claims, by searches without SAT
NCT3 = make_library("nct", 3)


def _bfs_nct3(perm: list[int]) -> int:
    return optimal_sizes(NCT3).size(perm)


def test_gate_counts_of_the_permutations_match_breadth_first_search() -> None:
    for name in ("gates-nct3", "gates-then-cost-tcount", "depth"):
        data = _data(OLD / name)
        assert data["library"]["name"] == "nct"
        assert data["gate_count"] == _bfs_nct3(data["spec"]["outputs"]), name
    chain = make_library("cnot", 4, coupling="chain")
    data = _data(OLD / "table-cnot-chain4")
    sizes = naive_bfs([g.permutation(4) for g in chain.gates], 16)
    assert data["gate_count"] == sizes[tuple(data["spec"]["outputs"])] == 9
    assert data["table_bound"]["value"] == 9 and any(
        line.what == "table" and line.ok for line in check_certificate(OLD / "table-cnot-chain4").lines
    )


def test_least_t_count_among_minimum_gate_circuits_matches_enumeration() -> None:
    data = _data(OLD / "gates-then-cost-tcount")
    perm = tuple(data["spec"]["outputs"])
    t_count = [7 if len(g.controls) == 2 else 0 for g in NCT3.gates]
    sizes = optimal_sizes(NCT3).as_dict()
    best = min(sum(t_count[j] for j in w) for w in optimal_words(perm, NCT3, sizes))
    assert data["objective"]["name"] == "gates-then-cost" and data["objective"]["cost_model"] == "t-count"
    assert data["objective"]["value"] == best == 7


def test_least_depth_matches_layer_search() -> None:
    data = _data(OLD / "depth")
    assert data["objective"]["name"] == "depth"
    assert data["objective"]["value"] == layer_depths(NCT3)[tuple(data["spec"]["outputs"])] == 3


@pytest.mark.parametrize(
    ("name", "spec_file"),
    [
        ("embedded-half-adder", INSTANCES / "half-adder.toml"),
        ("embedded-chosen-constant", OLD / "or-xor-chosen-constant.toml"),
    ],
)
def test_embedded_functions_read_the_same_and_match_breadth_first_search(name: str, spec_file: Path) -> None:
    data = _data(OLD / name)
    spec, _ = load_any(spec_file)
    # today's reader makes the spec the old certificate records
    assert spec_to_dict(spec) == data["spec"]
    # the fewest NCT gates of any function that meets the spec, under any of its choices
    by_size = sorted(optimal_sizes(NCT3).as_dict().items(), key=lambda item: item[1])
    best = next(size for perm, size in by_size if spec.accepts(perm))
    assert data["gate_count"] == best
    # half adder: a Toffoli and a CNOT (common practice); the or/xor cell: 3 gates
    assert best == {"embedded-half-adder": 2, "embedded-chosen-constant": 3}[name]


# ------------------------------------------------------------------ tampered copies
def _copy(name: str, tmp_path: Path) -> Path:
    d = tmp_path / name
    shutil.copytree(OLD / name, d)
    return d


def _rejected(d: Path) -> list[str]:
    """The failing check lines (or the error) of a certificate that must be rejected."""
    try:
        rep = check_certificate(d)
    except ExactsynError as e:
        return [e.message]
    assert not rep.ok
    return [f"{line.what}: {line.detail}" for line in rep.lines if not line.ok]


@pytest.mark.parametrize("name", NAMES)
def test_one_changed_byte_in_the_final_step_of_a_proof_is_rejected(name: str, tmp_path: Path) -> None:
    # The last addition step is the only one that derives the empty clause (the solver
    # stops there).  Its first "0" ends its (empty) literal list; made "1", the step no
    # longer derives the empty clause, so whatever it now says, the refutation is gone.
    d = _copy(name, tmp_path)
    proof = max(_proofs(_data(d)), key=lambda p: (d / p).stat().st_size)
    lines = gzip.decompress((d / proof).read_bytes()).decode().splitlines()
    last = max(i for i, line in enumerate(lines) if line.split()[1] != "d")
    step, zero, rest = lines[last].split(" ", 2)
    assert zero == "0"
    lines[last] = f"{step} 1 {rest}"
    (d / proof).write_bytes(gzip.compress(("\n".join(lines) + "\n").encode()))
    assert any(f"LRAT step {last + 1} failed" in why for why in _rejected(d))


@pytest.mark.parametrize("name", NAMES)
def test_one_flipped_byte_in_a_compressed_proof_is_rejected(name: str, tmp_path: Path) -> None:
    # A byte of the gzip trailer's CRC-32 (RFC 1952): the file no longer reads back as written.
    d = _copy(name, tmp_path)
    proof = _proofs(_data(d))[0]
    raw = bytearray((d / proof).read_bytes())
    raw[-8] ^= 0x01
    (d / proof).write_bytes(bytes(raw))
    assert any(proof in why for why in _rejected(d))


def _library_gate_after(data: dict[str, Any]) -> None:
    """The spec's outputs followed by one more gate of its library: still reachable, another function."""
    from exactsyn.io.jsonio import gate_from_dict

    spec = data["spec"]
    gate = gate_from_dict(data["library"]["gates"][0]).permutation(spec["lines"])
    spec["outputs"] = [gate[y] for y in spec["outputs"]]


@pytest.mark.parametrize("name", NAMES)
def test_a_changed_spec_output_is_rejected(name: str, tmp_path: Path) -> None:
    d = _copy(name, tmp_path)
    data = _data(d)
    spec = data["spec"]
    if spec["output_targets"]:
        # a specified target bit of a solver-placed output, flipped
        row = next(r for r, v in enumerate(spec["output_targets"][0]) if v >= 0)
        spec["output_targets"][0][row] ^= 1
    else:
        before = list(spec["outputs"])
        _library_gate_after(data)
        assert spec["outputs"] != before
    (d / "result.json").write_text(json.dumps(data))
    assert _rejected(d)


# ------------------------------------------------------------------ damaged input is a clean rejection
def test_damaged_deflate_data_in_a_proof_is_a_clean_rejection(tmp_path: Path) -> None:
    d = _copy("table-cnot-chain4", tmp_path)
    raw = bytearray((d / "k04.lrat.gz").read_bytes())
    raw[len(raw) // 2] ^= 0x01  # inside the deflate stream: "invalid distance too far back"
    (d / "k04.lrat.gz").write_bytes(bytes(raw))
    try:
        rep = check_certificate(d)
    except ExactsynError:
        return
    assert not rep.ok


def test_a_spec_the_library_cannot_reach_is_a_clean_rejection(tmp_path: Path) -> None:
    d = _copy("table-cnot-chain4", tmp_path)
    data = _data(d)
    o = data["spec"]["outputs"]
    o[1], o[2] = o[2], o[1]  # one transposition: not a linear map, so no CNOT circuit computes it
    (d / "result.json").write_text(json.dumps(data))
    try:
        rep = check_certificate(d)
    except ExactsynError:
        return
    assert not rep.ok
