"""The command line for gate libraries, coupling, objectives, enumeration and Clifford+T output."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from click.testing import CliRunner
from helpers import ROOT, dijkstra, layer_depths, naive_bfs, optimal_words, trace_normal_form
from optional import need_qiskit

from exactsyn.cli import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate
from exactsyn.core.library import make_library
from exactsyn.io.jsonio import gate_from_dict
from exactsyn.tables.bfs import optimal_sizes

NCT3 = make_library("nct", 3)


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
    assert code == 0, err

    # Reference: breadth-first search over NCT (no SAT), least size of any function that
    # gives a, b, a or b on every row where line 2 starts at 1.
    def meets(p: tuple[int, ...]) -> bool:
        return all(p[r] == (r & 1) | (r & 2) | ((r & 1) | (r >> 1 & 1)) << 2 for r in range(4, 8))

    best = min(k for p, k in optimal_sizes(NCT3).as_dict().items() if meets(p))
    assert json.loads(out)["gate_count"] == best > 1


def test_kind_list_and_peres_in_json() -> None:
    perm = ",".join(map(str, Circuit(3, (x_gate(2, (0, 1)), x_gate(1, (0,)))).permutation()))
    data = synth_json("--perm", perm, "--library", "not,cnot,toffoli,peres")
    assert data["gate_count"] == 1 and data["gates"][0]["type"] == "peres"
    assert synth_json("--perm", perm, "--library", "nct")["gate_count"] == 2


def test_coupling_changes_the_answer_and_bad_coupling_exits_2() -> None:
    # SWAP of lines 0 and 2: 3 CNOTs with free interaction (common practice); on the chain
    # 0-1-2, plain breadth-first search over the chain's gates (no SAT) says 8.
    free = synth_json("--cycles", "(1 4)(3 6)")
    chain = synth_json("--cycles", "(1 4)(3 6)", "--coupling", "0-1-2")
    lib = make_library("nct", 3, coupling="0-1-2")
    bfs = naive_bfs([g.permutation(3) for g in lib.gates], 8)
    assert free["gate_count"] == 3
    assert chain["gate_count"] == bfs[tuple(chain["permutation"])] == 8 and chain["optimal"]
    assert "@0-1,1-2" in chain["library"]
    assert all(lib.contains(gate_from_dict(g)) for g in chain["gates"])
    code, _, err = run("synth", "--cycles", "(1 4)(3 6)", "--coupling", "0-7")
    assert code == 2 and err.count("\n") == 1 and "outside" in err


def test_the_readme_chain_example_says_what_breadth_first_search_finds() -> None:
    text = " ".join((ROOT / "README.md").read_text().split())
    found = re.search(
        r"SWAP of lines 0 and 2 is (\d+) CNOTs with free interaction and (\d+) gates on the chain 0-1-2", text
    )
    assert found, "the README's coupling example is gone or reworded; update this test with it"
    lib = make_library("nct", 3, coupling="0-1-2")
    bfs = naive_bfs([g.permutation(3) for g in lib.gates], 8)
    swap02 = tuple((x & 2) | (x & 1) << 2 | (x >> 2 & 1) for x in range(8))
    assert (int(found[1]), int(found[2])) == (optimal_sizes(NCT3).size(swap02), bfs[swap02])


def test_objectives_in_json() -> None:
    perm = (7, 0, 1, 2, 3, 4, 5, 6)
    data = synth_json("--perm", ",".join(map(str, perm)), "--objective", "cost")
    assert data["objective"]["name"] == "cost" and data["objective"]["optimal"] is True
    # NCV quantum cost NOT 1, CNOT 1, Toffoli 5 (Barenco et al. 1995): Dijkstra over all
    # 3-line functions (no SAT) gives the least cost
    ncv = tuple(5 if len(g.controls) == 2 else 1 for g in NCT3.gates)
    assert data["objective"]["value"] == data["costs"]["ncv"] == dijkstra(NCT3, ncv)[perm]
    depth = synth_json("--perm", ",".join(map(str, perm)), "--objective", "depth")
    # breadth-first search whose steps are whole layers of gates on disjoint lines (no SAT)
    assert depth["objective"]["value"] == layer_depths(NCT3)[perm]


def test_count_and_all_agree_with_breadth_first_enumeration() -> None:
    # Reference: every optimal gate sequence from the breadth-first size table, one per class
    # of sequences that differ only by swapping adjacent commuting gates (helpers).
    perm = (1, 0, 3, 2, 5, 7, 4, 6)
    sizes = optimal_sizes(NCT3).as_dict()
    classes = {trace_normal_form(w, NCT3) for w in optimal_words(perm, NCT3, sizes)}
    listed = synth_json("--perm", ",".join(map(str, perm)), "--optima", "all")
    counted = synth_json("--perm", ",".join(map(str, perm)), "--optima", "count")
    assert listed["count"] == counted["count"] == len(listed["circuits"]) == len(classes) > 1
    got = {trace_normal_form([NCT3.index(gate_from_dict(g)) for g in c], NCT3) for c in listed["circuits"]}
    assert got == classes
    assert "circuits" not in counted


def test_cost_table_file(tmp_path: Path) -> None:
    table = tmp_path / "costs.toml"
    table.write_text("NOT = 1\nCNOT = 2\nToffoli = 9\n")
    data = synth_json("--perm", "7,0,1,2,3,4,5,6", "--objective", "gates-then-cost", "--cost", str(table))
    assert data["objective"]["cost_model"] and data["objective"]["optimal"]
    # Reference: the cheapest of all minimum-gate sequences (breadth-first table), at the
    # table's costs written out here
    mine = [(1, 2, 9)[len(g.controls)] for g in NCT3.gates]
    sizes = optimal_sizes(NCT3).as_dict()
    words = optimal_words((7, 0, 1, 2, 3, 4, 5, 6), NCT3, sizes)
    assert data["gate_count"] == sizes[(7, 0, 1, 2, 3, 4, 5, 6)]
    assert data["objective"]["value"] == min(sum(mine[j] for j in w) for w in words)
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
        ["--objective", "depth", "--optima", "all"],
        ["--optima", "all", "--format", "qasm2"],
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
    assert data["clifford_t"]["t-count"] == ops.get("t", 0) + ops.get("tdg", 0) == data["costs"]["t-count"]
    assert data["clifford_t"]["cnot-count"] == ops.get("cx", 0) == data["costs"]["cnot-count"]
