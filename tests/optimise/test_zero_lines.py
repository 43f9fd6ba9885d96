"""Ancilla context (``zero_lines``) against checks outside the optimiser.

* plain integer simulation in the test itself (bit operations, not the optimiser's
  bit-parallel check) over every input with the zero lines 0;
* qiskit's ``Operator`` of input and output, restricted to the columns of those inputs;
* partial window optima against plain breadth-first enumeration written in the tests
  (:func:`tests.helpers.bfs_upto`): the least gate count of any circuit that agrees with the
  window on its honoured states;
* the command line: a false claim and a line out of range are one error line, exit 2,
  nothing written.
"""

from __future__ import annotations

import json
import random
import warnings
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from exactsyn.cli.optimise import optimise
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, x_gate
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.io.qasm import to_qasm2, to_qasm3
from exactsyn.optimise import TableResynthesis, WindowProblem, ZeroLineError, gate_set, optimise_circuit, reachable
from exactsyn.optimise.distance_windows import CombinedResynthesis, MeetResynthesis
from exactsyn.optimise.partial_windows import PartialResynthesis
from exactsyn.optimise.resynthesis import honoured_states
from tests.helpers import bfs_upto


def run_plain(circuit: Circuit, state: int) -> int:
    """One input through the gates by integer bit operations (x gates with controls only)."""
    for g in circuit.gates:
        assert g.family == "x"
        if all(state >> c & 1 for c in g.controls) and not any(state >> c & 1 for c in g.negative_controls):
            state ^= 1 << g.targets[0]
    return state


def honoured_inputs(lines: int, zero: tuple[int, ...]) -> list[int]:
    mask = sum(1 << z for z in zero)
    return [s for s in range(1 << lines) if not s & mask]


def agrees_on_honoured(before: Circuit, after: Circuit, zero: tuple[int, ...]) -> None:
    mask = sum(1 << z for z in zero)
    for s in honoured_inputs(before.lines, zero):
        out = run_plain(before, s)
        assert run_plain(after, s) == out, f"differs on input {s}"
        assert not out & mask  # the zero lines come back clean


def bennett(rng: random.Random, inputs: int, zero: int, outputs: int, gates: int) -> Circuit:
    """Compute into ancillas, copy out, uncompute (Bennett, "Logical reversibility of
    computation", IBM J. Res. Dev. 17(6), 1973): the ancillas end at 0 on every input with
    them 0.  Compute gates target ancillas only; copy gates target output lines only."""
    n = inputs + zero + outputs
    anc = list(range(inputs, inputs + zero))
    outs = list(range(inputs + zero, n))
    compute: list[Gate] = []
    for _ in range(gates):
        t = rng.choice(anc)
        pool = [line for line in range(inputs + zero) if line != t]
        compute.append(x_gate(t, rng.sample(pool, rng.choice((1, 2)))))
    copy = [x_gate(rng.choice(outs), rng.sample(range(inputs + zero), rng.choice((1, 2)))) for _ in range(2)]
    return Circuit(n, tuple(compute + copy + compute[::-1]))


# ------------------------------------------------------------------ gains only the context gives
def test_a_toffoli_controlled_by_a_fresh_ancilla_goes() -> None:
    c = Circuit(4, (x_gate(0, [1]), x_gate(2, [3, 0]), x_gate(1, [0])))
    plain = optimise_circuit(c, window=3)
    assert plain.output.gate_count == 3  # without the context nothing goes
    res = optimise_circuit(c, window=3, zero_lines=(3,))
    assert res.output.gates == (x_gate(0, [1]), x_gate(1, [0]))
    agrees_on_honoured(c, res.output, (3,))
    assert res.check.zero_lines == (3,) and res.check.inputs == 8


def test_a_gate_after_the_uncompute_controlled_by_the_ancilla_goes() -> None:
    # the ancilla (line 2) is returned to 0 by the second Toffoli: after its last target it is 0
    c = Circuit(4, (x_gate(2, [0, 1]), x_gate(3, [2]), x_gate(2, [0, 1]), x_gate(0, [2, 3])))
    res = optimise_circuit(c, window=3, zero_lines=(2,))
    agrees_on_honoured(c, res.output, (2,))
    assert x_gate(0, [2, 3]) not in res.output.gates
    assert optimise_circuit(c, window=3).output.gate_count == 4


def test_compute_copy_uncompute_on_four_lines_becomes_one_toffoli() -> None:
    # ancilla 3 := a·b, c ^= ancilla, ancilla uncomputed: on inputs with line 3 = 0 this is c ^= a·b
    c = Circuit(4, (x_gate(3, [0, 1]), x_gate(2, [3]), x_gate(3, [0, 1])))
    res = optimise_circuit(c, window=4, zero_lines=(3,), library="nct")
    assert res.output.gates == (x_gate(2, [0, 1]),)
    agrees_on_honoured(c, res.output, (3,))
    assert optimise_circuit(c, window=3, library="nct").output.gate_count == 3


def test_a_gate_between_two_uses_of_a_returned_ancilla_goes_by_simulation(monkeypatch: pytest.MonkeyPatch) -> None:
    # ancilla 3 computed and uncomputed twice; between the blocks it is 0 again, which only
    # the simulation of the prefix knows (the line is targeted before and after that point)
    block = [x_gate(3, [0, 1]), x_gate(2, [3]), x_gate(3, [0, 1])]
    c = Circuit(5, (*block, x_gate(4, [3]), *block))
    res = optimise_circuit(c, window=3, zero_lines=(3,))
    assert x_gate(4, [3]) not in res.output.gates
    agrees_on_honoured(c, res.output, (3,))
    monkeypatch.setattr(reachable, "MAX_FREE_LINES", -1)  # the two rules alone
    assert x_gate(4, [3]) in optimise_circuit(c, window=3, zero_lines=(3,)).output.gates


# ------------------------------------------------------------------ independent checks
@pytest.mark.parametrize("mode", ["simulated", "rules"])
@pytest.mark.parametrize("seed", range(4))
def test_random_bennett_circuits_agree_on_honoured_inputs(
    seed: int, mode: str, monkeypatch: pytest.MonkeyPatch
) -> None:
    if mode == "rules":
        monkeypatch.setattr(reachable, "MAX_FREE_LINES", -1)
    rng = random.Random(seed)
    c = bennett(rng, 3, 2, 2, 5)
    zero = (3, 4)
    res = optimise_circuit(c, window=3, zero_lines=zero)
    agrees_on_honoured(c, res.output, zero)
    assert res.output.gate_count <= optimise_circuit(c, window=3).output.gate_count
    assert "with lines 3, 4 = 0" in res.check.describe() and res.check.equal


def test_qiskit_operators_agree_on_the_honoured_subspace() -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    c = bennett(random.Random(5), 2, 2, 1, 4)
    zero = (2, 3)
    res = optimise_circuit(c, window=3, zero_lines=zero)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DeprecationWarning)
        a = Operator(qiskit.qasm3.loads(to_qasm3(c))).data
        b = Operator(qiskit.qasm3.loads(to_qasm3(res.output))).data
    cols = honoured_inputs(c.lines, zero)  # qiskit's basis index: qubit i is bit i, as ours
    assert np.allclose(a[:, cols], b[:, cols])
    assert res.output.gate_count < c.gate_count  # something was removed: the comparison is not vacuous


def _partial_minimum(lines: int, perm: tuple[int, ...], honoured: tuple[int, ...], depth: int) -> int | None:
    dist = bfs_upto(make_library("nct", lines), depth)
    found = [d for p, d in dist.items() if all(p[s] == perm[s] for s in honoured)]
    return min(found) if found else None


@pytest.mark.parametrize("seed", range(6))
def test_three_line_partial_optimum_is_the_least_completion(seed: int) -> None:
    rng = random.Random(seed)
    lib = make_library("nct", 3)
    perm = Circuit(3, tuple(rng.choice(lib.gates) for _ in range(7))).permutation()
    zero = rng.choice((1, 2, 4, 6))
    honoured = honoured_states(3, zero)
    answer = PartialResynthesis(TableResynthesis(gate_set("nct", 3), 3), gate_set("nct", 3), 3).optimum(
        WindowProblem(perm, 3, (), None, honoured)
    )
    assert answer is not None
    got = Circuit(3, answer.gates).permutation()
    assert all(got[s] == perm[s] for s in honoured)
    assert answer.gate_count == _partial_minimum(3, perm, honoured, 8)  # 3-line NCT needs at most 8 gates


@pytest.mark.parametrize("seed", range(3))
def test_four_line_partial_optimum_by_sat_matches_enumeration(seed: int) -> None:
    rng = random.Random(seed)
    gates = gate_set("nct", 4)
    lib = make_library("nct", 4)
    perm = Circuit(4, tuple(rng.choice(lib.gates) for _ in range(3))).permutation()
    honoured = honoured_states(4, 1 << 3)
    answer = PartialResynthesis(TableResynthesis(gates, 4), gates, 4).optimum(
        WindowProblem(perm, 4, (), 4, honoured)
    )
    assert answer is not None
    got = Circuit(4, answer.gates).permutation()
    assert all(got[s] == perm[s] for s in honoured)
    assert answer.gate_count == _partial_minimum(4, perm, honoured, 3)


# ------------------------------------------------------------------ false claims and bad input
def test_a_line_the_circuit_leaves_at_one_is_refused() -> None:
    c = Circuit(3, (x_gate(2, [0]), x_gate(1, [2])))  # line 2 ends as line 0: not clean
    with pytest.raises(ZeroLineError, match=r"line 2 is declared zero.*input 1\b"):
        optimise_circuit(c, zero_lines=(2,))
    with pytest.raises(ExactsynError, match="zero line 3 is not a line"):
        optimise_circuit(c, zero_lines=(3,))


def invoke(*args: str) -> tuple[int, str]:
    res = CliRunner().invoke(optimise, list(args))
    return res.exit_code, res.stderr


def test_cli_false_claim_is_one_error_and_nothing_is_written(tmp_path: Path) -> None:
    src = tmp_path / "c.qasm"
    src.write_text(to_qasm2(Circuit(3, (x_gate(2, [0]), x_gate(1, [2]), x_gate(1, [0])))))
    out = tmp_path / "out.qasm"
    code, err = invoke(str(src), "-o", str(out), "--zero-lines", "2")
    assert code == 2 and err.count("\n") == 1 and "line 2 is declared zero" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["c.qasm"]
    for bad, says in (("7", "not a line of the circuit"), ("q[9]", "not a line number"), ("1,,2", "empty entry")):
        code, err = invoke(str(src), "-o", str(out), "--zero-lines", bad)
        assert code == 2 and err.count("\n") == 1 and says in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["c.qasm"]


def test_cli_records_the_zero_lines_and_the_scope(tmp_path: Path) -> None:
    src = tmp_path / "c.qasm"
    c = Circuit(4, (x_gate(0, [1]), x_gate(2, [3, 0]), x_gate(1, [0])))
    src.write_text(to_qasm2(c))
    out = tmp_path / "out.qasm"
    code, err = invoke(str(src), "-o", str(out), "--zero-lines", "q[3]", "--window", "3")
    assert code == 0, err
    log = json.loads((tmp_path / "out.log.json").read_text())
    assert log["zero_lines"] == [3] and log["equivalence"]["zero_lines"] == [3]
    assert "8 input states with lines 3 = 0" in log["equivalence"]["description"]
    assert log["after"]["gates"] == 2


def test_window_states_are_the_states_reached_by_plain_simulation() -> None:
    c = bennett(random.Random(11), 3, 2, 2, 6)
    zero = (3, 4)
    pool = [*dict.fromkeys(c.gates)]
    seq = [pool.index(g) for g in c.gates]
    states = reachable.ReachableStates(c.lines, zero, seq, pool)
    rng = random.Random(3)
    for _ in range(20):
        start = rng.randrange(len(seq))
        lines = tuple(sorted(rng.sample(range(c.lines), 3)))
        prefix = Circuit(c.lines, c.gates[:start])
        want = set()
        for s in honoured_inputs(c.lines, zero):
            out = run_plain(prefix, s)
            want.add(sum((out >> line & 1) << i for i, line in enumerate(lines)))
        assert states.window_states(start, (), lines) == tuple(sorted(want))


def test_gates_then_cost_with_zero_lines_keeps_the_function_on_honoured_inputs() -> None:
    for seed in range(3):
        c = bennett(random.Random(20 + seed), 3, 2, 2, 5)
        res = optimise_circuit(c, window=3, zero_lines=(3, 4), objective="gates-then-cost", cost="t-count")
        agrees_on_honoured(c, res.output, (3, 4))
        assert (res.after.gates, res.after.t_count) <= (res.before.gates, res.before.t_count)


@pytest.mark.parametrize("seed", range(3))
def test_four_line_window_with_few_completions_asks_the_table_for_each(seed: int) -> None:
    rng = random.Random(100 + seed)
    gates = gate_set("nct", 4)
    lib = make_library("nct", 4)
    perm = Circuit(4, tuple(rng.choice(lib.gates) for _ in range(4))).permutation()
    honoured = tuple(sorted(rng.sample(range(16), 13)))  # 3 states free: 6 completions
    full = CombinedResynthesis(TableResynthesis(gates, 4), MeetResynthesis(gates))
    answer = PartialResynthesis(full, gates, 4).optimum(WindowProblem(perm, 4, (), 5, honoured))
    assert answer is not None and answer.method.startswith("least of 6 completions")
    got = Circuit(4, answer.gates).permutation()
    assert all(got[s] == perm[s] for s in honoured)
    assert answer.gate_count == _partial_minimum(4, perm, honoured, 4)


def test_cli_takes_a_register_name_for_its_lines(tmp_path: Path) -> None:
    src = tmp_path / "c.qasm"
    src.write_text(
        'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg v[3];\nqreg w[1];\n'
        "ccx v[0],v[1],w[0];\ncx w[0],v[2];\nccx v[0],v[1],w[0];\n"
    )
    out = tmp_path / "out.qasm"
    code, err = invoke(str(src), "-o", str(out), "--zero-lines", "w", "--window", "4", "--library", "nct")
    assert code == 0, err
    assert json.loads((tmp_path / "out.log.json").read_text())["zero_lines"] == [3]
    assert "ccx v[0],v[1],v[2];" in out.read_text() and "w[0]" not in out.read_text().split("qreg w[1];")[1]
