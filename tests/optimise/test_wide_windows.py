"""5-line windows of the optimiser: by SAT with a small gate bound, and from a small 5-line class table.

References: plain breadth-first search over the library's functions (tests/helpers.bfs_upto:
no SAT, no tables) for minimum gate counts, simulation of every output against its input
(Circuit.permutation, not the optimiser's own bit-sliced check), and the two answerers
against each other (a class table's meet in the middle against SAT).

The circuit that 4-line windows cannot shrink: a CNOT a→b on both sides of a 3-control
Toffoli that reads b is the Toffoli read on b and again on a, ``(b⊕a)·cd = b·cd ⊕ a·cd``
(common practice: a control conjugated by a CNOT), so 3 gates on 5 lines are 2 gates; no
4 of those lines hold two of the gates that do not commute, so only a 5-line window sees it.
"""

from __future__ import annotations

import dataclasses
import json
import random
from pathlib import Path

import pytest
from click.testing import CliRunner
from helpers import bfs_upto

from exactsyn import tables
from exactsyn.cli.main import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate
from exactsyn.core.library import make_library
from exactsyn.io.jsonio import circuit_to_dict
from exactsyn.optimise import optimise_circuit
from exactsyn.optimise import wide_windows as wide
from exactsyn.optimise.allowed_gates import gate_set
from exactsyn.optimise.class_windows import ClassTableResynthesis
from exactsyn.optimise.resynthesis import TableResynthesis, WindowProblem
from exactsyn.optimise.summary import qasm_header, summary_text
from exactsyn.optimise.windows import GatePool, scan_window
from exactsyn.sat.status import Status

MCT5 = make_library("mct", 5)
# lines 0..4 as in the module docstring (a = 0, b = 1, c, d = 2, 3, target 4), then gates on line 5 around it
CONJUGATED = (x_gate(5), x_gate(1, (0,)), x_gate(4, (1, 2, 3)), x_gate(1, (0,)), x_gate(5, (0,)))


def _random(rng: random.Random, library: str, gates: int) -> Circuit:
    lib = make_library(library, 5)
    return Circuit(5, tuple(lib.gates[rng.randrange(len(lib))] for _ in range(gates)))


def _window_function() -> tuple[int, ...]:
    return Circuit(5, CONJUGATED[1:4]).permutation()


def test_sat_windows_of_5_lines_shrink_what_4_line_windows_cannot() -> None:
    circuit = Circuit(6, CONJUGATED)
    four = optimise_circuit(circuit, library="mct", window=4)
    five = optimise_circuit(circuit, library="mct", window=5)
    assert four.output.gate_count == circuit.gate_count  # nothing on 4 lines to replace
    assert five.output.gate_count == circuit.gate_count - 1
    assert five.output.permutation() == circuit.permutation()
    # breadth-first search: the window's function is not one gate, so 2 gates are the minimum
    assert _window_function() not in bfs_upto(MCT5, 1)
    assert "SAT, 5-line windows of mct: the minimum" in five.resynthesis
    assert five.settled_lines == 5 and "up to 5 lines is optimal" in qasm_header(five)[1]


@pytest.mark.parametrize(("library", "seed"), [("mct", 1), ("nct", 2)])
def test_random_5_line_circuits_are_equal_after_sat_windows(library: str, seed: int) -> None:
    rng = random.Random(seed)
    circuit = _random(rng, library, 7)
    result = optimise_circuit(circuit, library=library, window=5)
    assert result.output.gate_count <= circuit.gate_count
    assert result.output.permutation() == circuit.permutation()
    assert all(make_library(library, 5).contains(g) for g in result.output.gates)


def test_a_smaller_k_that_timed_out_is_not_called_the_minimum(monkeypatch: pytest.MonkeyPatch) -> None:
    real = wide.run_query

    def k1_times_out(enc, options, **kw):  # type: ignore[no-untyped-def]
        answer = real(enc, options, **kw)
        if enc.k != 1:
            return answer
        return dataclasses.replace(answer, query=dataclasses.replace(answer.query, status=Status.UNKNOWN), circuit=None)

    monkeypatch.setattr(wide, "run_query", k1_times_out)
    result = optimise_circuit(Circuit(6, CONJUGATED), library="mct", window=5)
    assert result.output.gate_count == len(CONJUGATED) - 1  # fewer gates are still fewer gates
    assert "not proven minimal" in result.resynthesis and "the minimum" not in result.resynthesis
    assert result.settled_lines == 4 and "up to 4 lines is optimal" in qasm_header(result)[1]


def test_the_gate_bound_and_the_time_budget_leave_a_window_unsettled() -> None:
    gates = gate_set("mct", 5)
    problem = WindowProblem(_window_function(), 5, below=3)
    bounded = wide.SatWindowResynthesis(gates, 5, None, max_gates=1)
    assert bounded.optimum(problem) is None and bounded.unsettled == 1
    assert bounded.optimum(problem) is None and bounded.unsettled == 1  # remembered, not searched again
    hurried = wide.SatWindowResynthesis(gates, 5, None, seconds=0.0)
    assert hurried.optimum(problem) is None and hurried.unsettled == 1
    settled = wide.SatWindowResynthesis(gates, 5, None)
    assert settled.optimum(WindowProblem(_window_function(), 5, below=2)) is None  # 1 gate: refuted
    assert settled.unsettled == 0
    found = settled.optimum(problem)
    assert found is not None and found.gate_count == 2 and Circuit(5, found.gates).permutation() == problem.perm


def test_under_gates_then_cost_sat_takes_only_fewer_gates() -> None:
    circuit = Circuit(6, CONJUGATED)
    result = optimise_circuit(circuit, library="mct", objective="gates-then-cost", cost="t-count", window=5)
    assert result.output.gate_count == circuit.gate_count - 1
    assert result.output.permutation() == circuit.permutation()
    assert result.settled_lines is not None and result.settled_lines < 5  # the least cost is not searched
    assert "not every wider one was settled" in summary_text(
        dataclasses.replace(result, replaced=())
    )  # the wording when nothing was replaced


@pytest.fixture(scope="module")
def five_depth_2(tmp_path_factory: pytest.TempPathFactory) -> Path:
    cache = tmp_path_factory.mktemp("tables-5-small")
    tables.build("mct", depth=2, cache=cache, lines=5)
    return cache


def test_5_line_windows_from_a_small_class_table(five_depth_2: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(five_depth_2))
    circuit = Circuit(6, CONJUGATED)
    result = optimise_circuit(circuit, library="mct", window=5)
    assert result.output.gate_count == circuit.gate_count - 1
    assert result.output.permutation() == circuit.permutation()
    assert "5-line class table of mct (depth 2" in result.resynthesis and "SAT" not in result.resynthesis
    assert result.settled_lines == 5


def test_a_small_class_table_and_sat_agree_beyond_its_depth(
    five_depth_2: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(five_depth_2))
    gates = gate_set("mct", 5)
    table = ClassTableResynthesis(gates, 5, None, TableResynthesis(gates, 5, None), lines=5)
    sat = wide.SatWindowResynthesis(gates, 5, None, seconds=30.0)
    rng = random.Random(4)
    for _ in range(2):
        perm = _random(rng, "mct", 4).permutation()  # up to 4 gates: depth 2 and a meet of up to 2 more
        a = table.optimum(WindowProblem(perm, 5))
        b = sat.optimum(WindowProblem(perm, 5, below=5))
        assert a is not None and b is not None and "the minimum" in b.method
        assert a.gate_count == b.gate_count
        assert Circuit(5, a.gates).permutation() == perm


def test_a_5_line_window_is_grown_to_at_most_its_gate_cap() -> None:
    gates = gate_set("mct", 5)
    circuit = _random(random.Random(6), "mct", 20)
    pool = GatePool()
    seq = [pool.intern(g) for g in circuit.gates]
    whole, _ = scan_window(seq, pool, 0, 5, 24)
    capped, stop = scan_window(seq, pool, 0, 5, 24, max_gates=4)
    assert whole is not None and len(whole.members) == 20  # on 5 lines every gate joins
    assert capped is not None and capped.members == (0, 1, 2, 3) and stop == 4
    answerer = wide.WideResynthesis(TableResynthesis(gates, 5, None), sat=wide.SatWindowResynthesis(gates, 5, None))
    assert answerer.window_gates == wide.SAT_MAX_GATES + 1
    short = Circuit(5, circuit.gates[:9])  # a run of the optimiser: two windows' worth of SAT, not ten
    result = optimise_circuit(short, library="mct", window=5)
    assert result.output.permutation() == short.permutation()


def test_the_command_takes_window_5_and_refuses_6(tmp_path: Path) -> None:
    src = tmp_path / "c.json"
    src.write_text(json.dumps(circuit_to_dict(Circuit(6, CONJUGATED))))
    out = tmp_path / "o.json"
    res = CliRunner().invoke(main, ["optimise", str(src), "-o", str(out), "--library", "mct", "--window", "5"])
    assert res.exit_code == 0, res.stderr
    assert "windows of up to 5 lines" in res.stdout
    log = json.loads(out.with_suffix(".log.json").read_text())
    assert log["after"]["gates"] == len(CONJUGATED) - 1 and log["windows_settled_lines"] == 5
    bad = CliRunner().invoke(main, ["optimise", str(src), "-o", str(tmp_path / "p.json"), "--window", "6"])
    assert bad.exit_code == 2 and not (tmp_path / "p.json").exists()
