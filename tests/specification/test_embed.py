"""Functions beyond permutations: embedding, don't-cares, solver-chosen constants and
output lines, circuits as input — checked by simulation, enumeration and qiskit."""

from __future__ import annotations

import json
import subprocess
import sys
import tomllib
from itertools import permutations
from pathlib import Path

import numpy as np
import pytest
from helpers import DATA, INSTANCES, ROOT
from optional import need, need_qiskit

from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.io.jsonio import gate_from_dict
from exactsyn.io.qasm import read_qasm
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.boolean import function_from_mapping
from exactsyn.specification.embed import embed, multiplicity
from exactsyn.specification.loader import load_any
from exactsyn.specification.reversible import Spec
from exactsyn.tables.bfs import optimal_sizes


def solve(mapping: dict, library: str = "nct"):  # type: ignore[no-untyped-def,type-arg]
    fn = function_from_mapping(mapping, "test")
    spec, emb = embed(fn)
    res = minimise_gates(spec, make_library(library, spec.lines), SearchOptions(bounds="cheap"))
    assert res.optimal and res.circuit is not None
    return fn, spec, emb, res


def outputs_of(fn, spec: Spec, emb, circuit):  # type: ignore[no-untyped-def]
    """Simulate the circuit on every function input (constants as chosen)."""
    d = emb.describe(spec, circuit.permutation())
    consts = sum(v << int(line) for line, v in d["constants"].items())
    m = len(fn.inputs)
    perm = circuit.permutation()
    table = {}
    for x in range(1 << m):
        y = perm[x | consts]
        table[x] = tuple(y >> d["outputs"][name] & 1 for name in fn.outputs)
    return table


def test_full_adder_embeds_in_four_lines_and_needs_four_gates() -> None:
    # Full adder: 4 NCT gates (two Toffoli, two CNOT) on 4 lines, common practice; an
    # output pattern occurs 3 times, so 2 garbage outputs (Maslov & Dueck 2004).
    data = tomllib.loads((INSTANCES / "full-adder.toml").read_text())
    fn, spec, emb, res = solve(data)
    assert multiplicity(fn) == 3 and emb.min_garbage == 2 and spec.lines == 4
    assert len(res.circuit) == 4
    assert sorted(g.name() for g in res.circuit.gates) == ["CNOT", "CNOT", "Toffoli", "Toffoli"]
    # SAT proved that 3 gates are impossible.
    assert [s.k for s in res.steps if s.status == "unsat"][-1] == 3
    # Independent check: integer addition.
    for (a_b_c), (s, c) in outputs_of(fn, spec, emb, res.circuit).items():
        total = (a_b_c & 1) + (a_b_c >> 1 & 1) + (a_b_c >> 2 & 1)
        assert (s, c) == (total & 1, total >> 1)


def test_output_placement_by_the_solver_helps_the_full_adder() -> None:
    data = tomllib.loads((INSTANCES / "full-adder.toml").read_text())
    fixed = dict(data, output_lines=[0, 1])
    assert len(solve(fixed)[3].circuit) == 5  # measured: the fixed placement costs one more gate


def base(expr: dict, lines: int = 3, const: object = 0) -> dict:  # type: ignore[type-arg]
    return {
        "inputs": ["a", "b"],
        "outputs": list(expr),
        "expressions": expr,
        "lines": lines,
        "constants": {"2": const},
        "output_lines": [2],
    }


def test_reversible_and_is_one_toffoli_onto_a_zero_line() -> None:
    # Reversible AND = Toffoli onto a constant-0 line (common practice).
    fn, spec, emb, res = solve(base({"y": "a & b"}))
    assert len(res.circuit) == 1 and res.circuit.gates[0].name() == "Toffoli"
    for x, (y,) in outputs_of(fn, spec, emb, res.circuit).items():
        assert y == ((x & 1) & (x >> 1))


def test_or_is_three_nct_gates_with_a_zero_line() -> None:
    # OR = a ^ b ^ ab: 3 NCT gates onto a constant-0 line (common practice).
    fn, spec, emb, res = solve(base({"y": "a | b"}))
    assert len(res.circuit) == 3
    for x, (y,) in outputs_of(fn, spec, emb, res.circuit).items():
        assert y == ((x & 1) | (x >> 1))


def test_solver_chosen_constant_is_reported_and_simulates() -> None:
    fn, spec, emb, res = solve(base({"y": "~(a & b)"}, const="?"))
    d = emb.describe(spec, res.circuit.permutation())
    assert d["constants_chosen_by_solver"] == [2]
    # NAND onto a constant-1 line is a single Toffoli; onto 0 it would need 2.
    assert len(res.circuit) == 1 and d["constants"]["2"] == 1
    for x, (y,) in outputs_of(fn, spec, emb, res.circuit).items():
        assert y == 1 - ((x & 1) & (x >> 1))


def test_dont_cares_give_the_best_completion() -> None:
    # Rows 0..3 specified (x -> x xor 1 on line 0, then a CNOT-like pattern), rows 4..7 free.
    outputs = [1, 0, 3, 2, 0, 0, 0, 0]
    care = [7, 7, 7, 7, 0, 0, 0, 0]
    spec = Spec(3, tuple(outputs), tuple(care), "partial")
    res = minimise_gates(spec, make_library("nct", 3), SearchOptions(bounds="cheap"))
    assert res.optimal and res.circuit is not None and spec.accepts(res.circuit.permutation())
    # Independent: enumerate every completion and take its breadth-first optimum.
    table = optimal_sizes(make_library("nct", 3))
    rest = [v for v in range(8) if v not in outputs[:4]]
    best = min(table.size(outputs[:4] + list(p)) for p in permutations(rest))
    assert len(res.circuit) == best
    # ... and strictly smaller than the completion that leaves rows 4..7 unchanged.
    assert len(res.circuit) < table.size([1, 0, 3, 2, 4, 5, 6, 7])


def test_contradictory_partial_spec_is_refused() -> None:
    from exactsyn.errors import NoCircuitError

    spec = Spec(2, (1, 1, 0, 0), (3, 3, 0, 0), "clash")  # rows 0 and 1 both must give 1
    with pytest.raises(NoCircuitError, match="distinct"):
        minimise_gates(spec, make_library("mct", 2))


@pytest.mark.parametrize("name", ["mixed.qasm", "modifiers.qasm"])
def test_circuit_files_are_resynthesised_to_the_same_function(name: str) -> None:
    text = (DATA / name).read_text()
    ours = read_qasm(text)
    # qiskit as the reference reader (OpenQASM 2: qiskit.qasm2; 3: qiskit.qasm3).
    qiskit = need_qiskit()
    from qiskit.quantum_info import Operator

    if "OPENQASM 3" in text:
        need("qiskit_qasm3_import", "qiskit's OpenQASM 3 reader: pip install qiskit-qasm3-import")
        qc = qiskit.qasm3.loads(text)
    else:
        qc = qiskit.QuantumCircuit.from_qasm_str(text)
    u = Operator(qc).data
    theirs = [int(np.argmax(np.abs(u[:, i]))) for i in range(u.shape[0])]
    assert theirs == list(ours.permutation())
    spec, _ = load_any(DATA / name)
    res = minimise_gates(spec, make_library("mct", spec.lines))
    # (the files use swaps and negative controls, outside mct, so no size comparison)
    assert res.circuit is not None and res.optimal and res.circuit.permutation() == ours.permutation()


def run(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, "-m", "exactsyn", *args], capture_output=True, text=True, cwd=ROOT)


def test_synth_reads_a_function_file_and_reports_the_embedding() -> None:
    r = run("synth", "instances/half-adder.toml", "--format", "json", "-q")
    assert r.returncode == 0, r.stderr
    data = json.loads(r.stdout)
    assert data["optimal"] and data["embedding"]["outputs"].keys() == {"sum", "carry"}
    # a Toffoli onto the 0 line, then a CNOT (common practice); breadth-first search agrees
    spec, _ = load_any(INSTANCES / "half-adder.toml")
    by_size = sorted(optimal_sizes(make_library("nct", 3)).as_dict().items(), key=lambda item: item[1])
    best = next(k for p, k in by_size if spec.accepts(p))
    assert data["gate_count"] == best == 2
    # the printed circuit computes sum and carry on the lines it names (integer addition)
    perm = Circuit(3, tuple(gate_from_dict(g) for g in data["gates"])).permutation()
    at = data["embedding"]["outputs"]
    for x in range(4):
        y = perm[x]  # line 2 starts at 0
        assert (y >> at["sum"] & 1, y >> at["carry"] & 1) == ((x & 1) ^ (x >> 1), (x & 1) & (x >> 1))


BAD = {
    "contradictory.toml": 'inputs = ["a"]\noutputs = ["y"]\ntable = ["0 1", "0 0"]\n',
    "width.toml": 'inputs = ["a", "b"]\noutputs = ["y"]\ntable = ["0 1", "01 0"]\n',
    "unknown-name.toml": 'inputs = ["a"]\noutputs = ["y"]\n[expressions]\ny = "a & z"\n',
    "import.toml": 'inputs = ["a"]\noutputs = ["y"]\n[expressions]\ny = "__import__(\'os\')"\n',
    "attribute.toml": 'inputs = ["a"]\noutputs = ["y"]\n[expressions]\ny = "a.real"\n',
    "call.toml": 'inputs = ["a"]\noutputs = ["y"]\n[expressions]\ny = "open(a)"\n',
    "twice.toml": 'inputs = ["a"]\noutputs = ["y"]\nlines = 3\n[expressions]\ny = "a"\n[constants]\n1 = 0\n01 = 1\n',
}


@pytest.mark.parametrize("name", sorted(BAD))
def test_bad_function_files_exit_2_with_one_line(tmp_path: Path, name: str) -> None:
    f = tmp_path / name
    f.write_text(BAD[name])
    r = run("synth", str(f))
    assert r.returncode == 2 and r.stdout == ""
    assert len(r.stderr.strip().splitlines()) == 1 and "Traceback" not in r.stderr


def test_unsupported_qasm_gate_exits_2() -> None:
    r = run("synth", str(DATA / "unsupported.qasm"))
    assert r.returncode == 2 and "unsupported gate 'h'" in r.stderr
