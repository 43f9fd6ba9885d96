"""The command line for gate libraries, coupling, objectives, enumeration and Clifford+T output."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner
from helpers import ROOT
from optional import need_qiskit

from exactsyn.cli.main import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate


def run(*args: str) -> tuple[int, str, str]:
    r = CliRunner().invoke(main, list(args))
    return r.exit_code, r.stdout, r.stderr


def synth_json(*args: str) -> dict:  # type: ignore[type-arg]
    code, out, err = run("synth", *args, "--format", "json", "-q")
    assert code == 0, err
    return json.loads(out)


def test_or_onto_constant_one_with_negative_controls(tmp_path: Path) -> None:
    # Our own cell: lines a, b and a line held at constant 1 that must end as a OR b
    # (OR from negations: a or b = not(not a and not b)); a and b pass through.
    spec = tmp_path / "or.toml"
    spec.write_text(
        'name = "or-onto-one"\ninputs = ["a", "b"]\noutputs = ["a_out", "b_out", "o"]\nlines = 3\n'
        'output_lines = [0, 1, 2]\n[constants]\n2 = 1\n[expressions]\na_out = "a"\nb_out = "b"\no = "a | b"\n'
    )
    code, out, err = run("synth", str(spec), "--library", "mixed", "--format", "json", "-q")
    assert code == 0, err
    data = json.loads(out)
    assert data["gate_count"] == 1 and data["gates"][0]["negative_controls"] == [0, 1]
    code, out, err = run("synth", str(spec), "--library", "nct", "--format", "json", "-q")
    assert code == 0 and json.loads(out)["gate_count"] > 1


def test_kind_list_and_peres_in_json() -> None:
    perm = ",".join(map(str, Circuit(3, (x_gate(2, (0, 1)), x_gate(1, (0,)))).permutation()))
    data = synth_json("--perm", perm, "--library", "not,cnot,toffoli,peres")
    assert data["gate_count"] == 1 and data["gates"][0]["type"] == "peres"
    assert synth_json("--perm", perm, "--library", "nct")["gate_count"] == 2


def test_coupling_changes_the_answer_and_bad_coupling_exits_2() -> None:
    free = synth_json("--cycles", "(1 4)(3 6)")
    chain = synth_json("--cycles", "(1 4)(3 6)", "--coupling", "0-1-2")
    assert free["gate_count"] == 3 and chain["gate_count"] > 3 and chain["optimal"]
    assert "@0-1,1-2" in chain["library"]
    code, _, err = run("synth", "--cycles", "(1 4)(3 6)", "--coupling", "0-7")
    assert code == 2 and err.count("\n") == 1 and "outside" in err


def test_objectives_in_json() -> None:
    data = synth_json("--perm", "7,0,1,2,3,4,5,6", "--objective", "cost")
    assert data["objective"]["name"] == "cost" and data["objective"]["optimal"] is True
    assert data["objective"]["value"] == data["costs"]["ncv"]
    depth = synth_json("--perm", "7,0,1,2,3,4,5,6", "--objective", "depth")
    assert depth["objective"]["value"] <= depth["gate_count"]


def test_count_and_all_agree() -> None:
    listed = synth_json("--perm", "1,0,3,2,5,7,4,6", "--all")
    counted = synth_json("--perm", "1,0,3,2,5,7,4,6", "--count")
    assert listed["count"] == counted["count"] == len(listed["circuits"]) >= 1
    assert "circuits" not in counted


def test_cost_table_file(tmp_path: Path) -> None:
    table = tmp_path / "costs.toml"
    table.write_text("NOT = 1\nCNOT = 2\nToffoli = 9\n")
    data = synth_json("--perm", "7,0,1,2,3,4,5,6", "--objective", "gates-then-cost", "--cost", str(table))
    assert data["objective"]["cost_model"] and data["objective"]["optimal"]
    table.write_text("NOT = 1\nCNOT = 0.5\nToffoli = 9\n")
    code, _, err = run("synth", "--perm", "7,0,1,2,3,4,5,6", "--objective", "cost", "--cost", str(table))
    assert code == 2 and err.count("\n") == 1


@pytest.mark.parametrize("fmt", ["qasm2", "qasm3"])
def test_clifford_t_output_is_read_by_qiskit(fmt: str) -> None:
    qiskit = need_qiskit()
    from qiskit.quantum_info import Operator

    code, out, err = run("synth", "--perm", "1,0,3,2,5,7,4,6", "--format", fmt, "--clifford-t", "-q")
    assert code == 0, err
    if fmt == "qasm2":
        qc = qiskit.qasm2.loads(out)
    else:
        qc = qiskit.qasm3.loads(out)
    assert set(qc.count_ops()) <= {"h", "t", "tdg", "cx", "x"}
    u = Operator(qc).data
    perm = [1, 0, 3, 2, 5, 7, 4, 6]
    for i, j in enumerate(perm):
        assert abs(u[j, i] - 1) < 1e-9


def test_option_misuse_exits_2() -> None:
    for args in (
        ["--clifford-t"],
        ["--objective", "depth", "--all"],
        ["--all", "--format", "qasm2"],
        ["--objective", "cost", "--cost", "t-count"],
        ["--library", "tofoli"],
    ):
        code, _, err = run("synth", "--perm", "1,0,3,2,5,7,4,6", *args)
        assert code == 2 and err.count("\n") == 1, (args, err)


def test_every_runnable_example_in_synth_help_runs(monkeypatch: pytest.MonkeyPatch) -> None:
    import shlex

    code, out, _ = run("synth", "--help")
    assert code == 0
    examples = [ln.strip().split("#")[0] for ln in out.splitlines() if ln.strip().startswith("exactsyn synth")]
    runnable = [e for e in examples if "..." not in e and " -o " not in e and "--certificate" not in e]
    assert len(runnable) >= 8
    monkeypatch.chdir(ROOT)  # examples name files under instances/
    for example in runnable:
        code, _, err = run(*shlex.split(example)[1:], "-q")
        assert code == 0, (example, err)


def test_json_reports_the_clifford_t_counts_of_the_emitted_decomposition() -> None:
    qiskit = need_qiskit()
    data = synth_json("--perm", "1,0,3,2,5,7,4,6")
    code, out, _ = run("synth", "--perm", "1,0,3,2,5,7,4,6", "--format", "qasm2", "--clifford-t", "-q")
    ops = qiskit.qasm2.loads(out).count_ops()
    assert data["clifford_t"]["t_count"] == ops.get("t", 0) + ops.get("tdg", 0) == data["costs"]["t-count"]
    assert data["clifford_t"]["cnot_count"] == ops.get("cx", 0) == data["costs"]["cnot-count"]
