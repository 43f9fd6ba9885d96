"""Certificates: produced for 3-line functions, re-checked, and rejected after tampering."""

from __future__ import annotations

import gzip
import json
import random
import shutil
from pathlib import Path

import pytest
from helpers import INSTANCES, edit, random_perm, rejected

from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.proof.certificate import proof_writer, write_result
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.options import Hooks, SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.bfs import optimal_sizes

NCT3 = make_library("nct", 3)


def certify(perm: list[int], directory: Path, library=NCT3) -> Path:  # type: ignore[no-untyped-def]
    hooks = Hooks(proof=proof_writer(directory))
    res = minimise_gates(from_permutation(perm), library, SearchOptions(bounds="cheap"), hooks)
    assert res.optimal
    return write_result(directory, res)


def test_certificates_of_3bit_functions_check_and_match_breadth_first(tmp_path: Path) -> None:
    # Independent reference: breadth-first optimum (exactsyn.tables.bfs, checked against
    # Shende et al., IEEE TCAD 2003).  A sample of random and of the hardest functions.
    table = optimal_sizes(NCT3)
    rng = random.Random(11)
    perms = [random_perm(rng, 3) for _ in range(40)]
    perms += [[int(v) for v in row] for row in table.permutations()[table.sizes == 8][:15]]
    for i, p in enumerate(perms):
        d = tmp_path / f"c{i}"
        certify(p, d)
        rep = check_certificate(d)
        assert rep.ok, [line for line in rep.lines if not line.ok]
        assert rep.optimal_claim and rep.gate_count == table.size(p)
        data = json.loads((d / "result.json").read_text())
        refuted = sorted(q["k"] for q in data["queries"] if q["status"] == "unsat")
        assert refuted == list(range(data["initial_bound"]["value"], rep.gate_count))


@pytest.fixture
def cert(tmp_path: Path) -> Path:
    d = tmp_path / "cert"
    # One of the 577 functions that need 8 NCT gates (Shende et al. 2003), found by
    # breadth-first search: several k are refuted.
    table = optimal_sizes(NCT3)
    certify([int(v) for v in table.permutations()[table.sizes == 8][0]], d)
    data = json.loads((d / "result.json").read_text())
    assert len([q for q in data["queries"] if q["status"] == "unsat"]) >= 2
    return d


def test_untouched_certificate_checks(cert: Path) -> None:
    assert check_certificate(cert).ok


def test_changed_spec_is_rejected(cert: Path) -> None:
    def swap_two_outputs(data: dict) -> None:  # type: ignore[type-arg]
        o = data["spec"]["outputs"]
        o[0], o[1] = o[1], o[0]

    edit(cert, swap_two_outputs)
    assert rejected(cert)


def test_changed_library_is_rejected(cert: Path) -> None:
    def to_mct(data: dict) -> None:  # type: ignore[type-arg]
        lib = make_library("mct", 3, 1)
        data["library"]["preset"], data["library"]["max_controls"] = "mct", 1
        from exactsyn.io.jsonio import gate_to_dict

        data["library"]["gates"] = [gate_to_dict(g) for g in lib.gates]

    edit(cert, to_mct)
    assert rejected(cert)


def test_changed_encoding_options_are_rejected(cert: Path) -> None:
    edit(cert, lambda data: data["encoding"].update(symmetry=["no-repeat"]))
    assert rejected(cert)


def test_missing_proof_for_a_k_is_rejected(cert: Path) -> None:
    data = json.loads((cert / "result.json").read_text())
    k = min(q["k"] for q in data["queries"] if q["status"] == "unsat")
    (cert / f"k{k:02d}.lrat.gz").unlink()
    assert rejected(cert)


def test_dropped_query_entry_breaks_the_optimality_claim(cert: Path) -> None:
    edit(cert, lambda data: data.update(queries=data["queries"][1:]))
    assert rejected(cert)


def test_corrupted_proof_is_rejected(cert: Path) -> None:
    data = json.loads((cert / "result.json").read_text())
    q = max((q for q in data["queries"] if q["status"] == "unsat"), key=lambda q: q["k"])
    p = cert / q["proof"]
    lines = gzip.decompress(p.read_bytes()).decode().splitlines()
    # Drop the last addition step (the one deriving the empty clause).
    adds = [i for i, line in enumerate(lines) if " d " not in line]
    del lines[adds[-1]]
    p.write_bytes(gzip.compress(("\n".join(lines) + "\n").encode()))
    assert rejected(cert)


def test_wrong_circuit_is_rejected(cert: Path) -> None:
    edit(cert, lambda data: data["circuit"].reverse())
    # The reversed circuit computes the inverse, which differs for this function.
    assert rejected(cert)


def test_inflated_gate_count_or_bound_is_rejected(tmp_path: Path, cert: Path) -> None:
    other = tmp_path / "other"
    shutil.copytree(cert, other)
    edit(cert, lambda data: data.update(lower_bound=data["lower_bound"] + 3))
    assert rejected(cert)
    edit(other, lambda data: data["initial_bound"].update(value=data["initial_bound"]["value"] + 1))
    assert rejected(other)


def test_not_a_certificate_is_a_clear_error(tmp_path: Path) -> None:
    (tmp_path / "result.json").write_text("{}")
    with pytest.raises(ExactsynError, match="not an exactsyn certificate"):
        check_certificate(tmp_path)


def test_table_bound_certificate_for_hwb4(tmp_path: Path) -> None:
    # hwb4 needs 11 MCT gates (Golubitsky, Falconer, Maslov, DAC 2010; from memory).
    from helpers import hwb

    d = tmp_path / "hwb4"
    hooks = Hooks(proof=proof_writer(d))
    res = minimise_gates(from_permutation(hwb(4)), make_library("mct", 4), SearchOptions(), hooks)
    write_result(d, res)
    rep = check_certificate(d)
    assert rep.ok and rep.gate_count == 11
    assert any(line.what == "table" and line.ok for line in rep.lines)
    # A table bound claimed beyond what the table gives is rejected.
    edit(d, lambda data: data["table_bound"].update(value=12, exact=False))
    assert rejected(d)


def test_raced_queries_give_a_checkable_certificate(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # Force every query into the two-formulation race; each refutation names the
    # symmetry rules of the CNF it refutes, and the checker re-derives that CNF.
    import exactsyn.sat.query as query

    monkeypatch.setattr(query, "QUICK_SECONDS", 0.0)
    table = optimal_sizes(NCT3)
    p = [int(v) for v in table.permutations()[table.sizes == 7][3]]
    d = tmp_path / "raced"
    res = minimise_gates(from_permutation(p), NCT3, SearchOptions(bounds="cheap", jobs=2), Hooks(proof=proof_writer(d)))
    write_result(d, res)
    rep = check_certificate(d)
    assert rep.ok and rep.gate_count == 7


def test_certificate_of_an_embedded_function_with_solver_choices(tmp_path: Path) -> None:
    # Full adder with the outputs placed by the solver: 4 gates (common practice).
    import tomllib

    from exactsyn.specification.boolean import function_from_mapping
    from exactsyn.specification.embed import embed

    fn = function_from_mapping(tomllib.loads((INSTANCES / "full-adder.toml").read_text()), "fa")
    spec, _ = embed(fn)
    d = tmp_path / "fa"
    res = minimise_gates(spec, make_library("nct", 4), SearchOptions(bounds="cheap"), Hooks(proof=proof_writer(d)))
    write_result(d, res)
    rep = check_certificate(d)
    assert rep.ok and rep.gate_count == 4
    # Removing the solver's freedom to place outputs changes the CNF: rejected.
    edit(d, lambda data: data["spec"].update(output_candidates=[0, 1, 2]))
    assert rejected(d)
