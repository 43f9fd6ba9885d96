"""Whole-circuit optimisation against outside references.

* qiskit reads every output of at most 10 qubits back from OpenQASM and its ``Operator``
  must equal the input's (qiskit as the reference simulator);
* plain integer simulation of every input state (``Circuit.apply``, not the optimiser's
  bit-parallel check) for seeded random circuits up to 20 lines;
* worked facts of the trade; 3-line optima proven by SAT (an engine the tables do not use).
"""

from __future__ import annotations

import random
import warnings

import numpy as np
import pytest

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import COST_MODELS
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.io.qasm import to_qasm3
from exactsyn.optimise import (
    MAX_LINES,
    EquivalenceError,
    OptimiseResult,
    Optimum,
    ProgressEvent,
    TableResynthesis,
    WindowProblem,
    gate_set,
    optimise_circuit,
)
from exactsyn.optimise.summary import result_to_dict, summary_text
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation

QISKIT_QUBITS = 10


def qiskit_agrees(before: Circuit, after: Circuit) -> None:
    """qiskit reads the output back (OpenQASM 3) and its operator equals the input's permutation matrix."""
    if before.lines > QISKIT_QUBITS:
        return
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DeprecationWarning)
        qc = qiskit.qasm3.loads(to_qasm3(after))
    perm = before.permutation()
    expected = np.zeros((len(perm), len(perm)))
    expected[list(perm), np.arange(len(perm))] = 1.0
    assert np.allclose(Operator(qc).data, expected)


def run(circuit: Circuit, **options: object) -> OptimiseResult:
    res = optimise_circuit(circuit, **options)  # type: ignore[arg-type]
    assert res.output.permutation() == circuit.permutation() if circuit.lines <= 12 else True
    qiskit_agrees(circuit, res.output)
    return res


# ------------------------------------------------------------------ worked facts
@pytest.mark.parametrize(
    "gate",
    [x_gate(2), x_gate(0, [3]), x_gate(1, [0, 3]), x_gate(3, [0, 1, 2]), x_gate(4, [0, 1], [2]), swap_gate(0, 2, [1])],
)
def test_adjacent_identical_self_inverse_gates_cancel(gate: Gate) -> None:
    # common practice: every x and swap gate is its own inverse
    lines = 5
    res = run(Circuit(lines, (gate, gate)))
    assert res.output.gates == ()
    # also with a gate in between that commutes with both (disjoint lines)
    other = x_gate(max(gate.lines) + 1 if max(gate.lines) + 1 < lines else min(set(range(lines)) - gate.lines))
    res = run(Circuit(lines, (gate, other, gate)))
    assert res.output.gates == (other,)


def test_three_alternating_cnots_are_a_swap() -> None:
    # common practice: CNOT(0->1) CNOT(1->0) CNOT(0->1) exchanges lines 0 and 1
    three = Circuit(2, (x_gate(1, [0]), x_gate(0, [1]), x_gate(1, [0])))
    with_swap = run(three, library="nct-swap")
    assert with_swap.output.gates == (swap_gate(0, 1),)
    plain = run(three, library="nct")
    assert plain.output.gate_count == 3 and plain.replaced == ()


def test_a_peres_pair_shrinks_to_its_optimum() -> None:
    # two Peres gates: c ^= a·b, b ^= a, then c ^= a·(b ^ a), b ^= a  ->  c ^= a: one CNOT
    # (Peres, Phys. Rev. A 32, 1985, for the gate; the product worked out by hand)
    pair = Circuit(3, (peres_gate(0, 1, 2), peres_gate(0, 1, 2)))
    assert run(pair, library="nct-peres").output.gates == (x_gate(2, [0]),)
    as_nct = Circuit(3, (x_gate(2, [0, 1]), x_gate(1, [0]), x_gate(2, [0, 1]), x_gate(1, [0])))
    assert run(as_nct).output.gates == (x_gate(2, [0]),)


def test_long_three_line_circuits_shrink_to_the_sat_optimum() -> None:
    rng = random.Random(17)
    lib = make_library("nct", 3)
    for _ in range(3):
        c = Circuit(3, tuple(rng.choice(lib.gates) for _ in range(25)))
        res = run(c)
        # independent engine: SAT with refutations for every smaller k, no distance tables
        ref = minimise_gates(from_permutation(list(c.permutation())), lib, SearchOptions(bounds="cheap"))
        assert ref.optimal and ref.circuit is not None and res.output.gate_count == len(ref.circuit)


def test_gates_then_cost_lowers_cost_at_the_same_gate_count() -> None:
    # SWAP then CNOT is two CNOTs (common practice): 2 gates either way, NCV cost 4 -> 2
    c = Circuit(3, (swap_gate(1, 2), x_gate(1, [2])))
    assert run(c, library="nct-swap").output == c  # objective gates: nothing to gain
    res = run(c, library="nct-swap", objective="gates-then-cost", cost="ncv")
    assert res.output.gate_count == 2 and res.after.ncv == 2 and res.before.ncv == 4
    # Toffoli then CNOT -> CNOT then Peres: NCV 6 -> 5 (Peres costs 4; see exactsyn.core.costs)
    c = Circuit(3, (x_gate(0, [1, 2]), x_gate(0, [2])))
    res = run(c, library="nct-peres", objective="gates-then-cost", cost="ncv")
    assert res.output.gate_count == 2 and res.after.ncv == 5
    assert any(g.family == "peres" for g in res.output.gates)


# ------------------------------------------------------------------ random circuits
def random_circuit(rng: random.Random, n: int, count: int, kinds: tuple[str, ...] = ("x",)) -> Circuit:
    gates: list[Gate] = []
    for _ in range(count):
        kind = rng.choice(kinds)
        if kind == "swap":
            a, b = rng.sample(range(n), 2)
            rest = [x for x in range(n) if x not in (a, b)]
            gates.append(swap_gate(a, b, rng.sample(rest, rng.randint(0, min(1, len(rest))))))
        elif kind == "neg":
            t, *ctl = rng.sample(range(n), rng.randint(1, min(3, n)))
            neg = ctl[: rng.randint(0, len(ctl))]
            gates.append(x_gate(t, [x for x in ctl if x not in neg], neg))
        else:
            t, *ctl = rng.sample(range(n), rng.randint(1, min(3, n)))
            gates.append(x_gate(t, ctl))
    return Circuit(n, tuple(gates))


@pytest.mark.parametrize(("n", "count", "kinds"), [(4, 60, ("x",)), (6, 120, ("x", "neg")), (8, 150, ("x", "swap"))])
def test_random_small_circuits_equal_by_qiskit(n: int, count: int, kinds: tuple[str, ...]) -> None:
    rng = random.Random(n * 1000 + count)
    for window in (3, 4):
        c = random_circuit(rng, n, count, kinds)
        if window == 4 and "neg" in kinds:
            window = 3  # the 4-line table is built for NCT here to keep the test short
        res = run(c, window=window)
        assert res.after.gates <= res.before.gates
        assert all(gate_set(res.library, n).allows(g) for g in res.output.gates)
        again = optimise_circuit(res.output, library=res.library, window=window)
        assert again.output.gate_count == res.output.gate_count  # a fixpoint: nothing left to replace


@pytest.mark.parametrize(("n", "count"), [(12, 300), (16, 300), (20, 150)])
def test_random_circuits_up_to_20_lines_equal_on_every_input(n: int, count: int) -> None:
    rng = random.Random(n)
    c = random_circuit(rng, n, count, ("x", "neg"))
    res = optimise_circuit(c)
    assert res.check.method == "exhaustive" and res.check.inputs == 1 << n
    assert res.output.gate_count < c.gate_count
    states = np.arange(1 << n, dtype=np.int64)
    # plain integer simulation of all 2^n inputs, independent of the bit-parallel check
    assert np.array_equal(c.apply(states), res.output.apply(states))


def test_coupling_is_respected() -> None:
    rng = random.Random(4)
    n = 7
    gates = []
    for _ in range(150):  # gates on consecutive lines: all allowed on the chain 0-1-...-6
        size = rng.randint(1, 3)
        first = rng.randrange(n - size + 1)
        lines = list(range(first, first + size))
        rng.shuffle(lines)
        gates.append(x_gate(lines[0], lines[1:]))
    c = Circuit(n, tuple(gates))
    res = run(c, coupling="chain")
    edges = {(i, i + 1) for i in range(n - 1)}
    for g in res.output.gates:
        ls = sorted(g.lines)
        assert all((a, b) in edges for a, b in zip(ls, ls[1:], strict=False)), g
    free = run(c)
    assert free.output.gate_count <= res.output.gate_count
    with pytest.raises(ExactsynError, match="not connected in the coupling graph"):
        optimise_circuit(Circuit(3, (x_gate(2, [0]),)), coupling="chain")


def test_wide_circuit_uses_the_random_check() -> None:
    rng = random.Random(30)
    c = random_circuit(rng, 40, 400, ("x",))
    res = optimise_circuit(c, seed=7)
    assert res.check.method == "random" and res.check.inputs >= 100_000 and res.check.seed == 7
    assert res.output.gate_count < c.gate_count
    # plain integer simulation of 2000 random inputs (40 bits fit an int64)
    xs = np.array([rng.getrandbits(40) for _ in range(2000)], dtype=np.int64)
    assert np.array_equal(c.apply(xs), res.output.apply(xs))


# ------------------------------------------------------------------ qiskit's adders
ADDERS = [("CDKM", "full", 2), ("CDKM", "full", 4), ("CDKM", "half", 3), ("VBE", "full", 2), ("VBE", "full", 3)]


@pytest.mark.filterwarnings("ignore::DeprecationWarning")
@pytest.mark.parametrize(("family", "kind", "bits"), ADDERS)
def test_qiskit_library_adders_round_trip(family: str, kind: str, bits: int) -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.circuit.library import CDKMRippleCarryAdder, VBERippleCarryAdder
    from qiskit.quantum_info import Operator

    from exactsyn.io.formats import render
    from exactsyn.io.qasm import read_qasm_layout

    cls = CDKMRippleCarryAdder if family == "CDKM" else VBERippleCarryAdder
    adder = cls(bits, kind=kind)
    lowered = qiskit.transpile(adder, basis_gates=["x", "cx", "ccx"], optimization_level=0)
    theirs = qiskit.transpile(adder, basis_gates=["x", "cx", "ccx"], optimization_level=3)
    assert lowered.num_qubits <= QISKIT_QUBITS
    reference = Operator(lowered).data
    for fmt, dump in (("qasm2", qiskit.qasm2.dumps), ("qasm3", qiskit.qasm3.dumps)):
        circuit, layout = read_qasm_layout(dump(lowered))
        for window in (3, 4):
            res = optimise_circuit(circuit, window=window)
            assert res.output.gate_count <= theirs.size()  # never more gates than qiskit's level 3
            text = str(render(res.output, fmt, layout=layout))
            back = qiskit.qasm2.loads(text) if fmt == "qasm2" else qiskit.qasm3.loads(text)
            assert [r.name for r in back.qregs] == [r.name for r in lowered.qregs]
            assert np.allclose(Operator(back).data, reference)


# ------------------------------------------------------------------ bad input, progress, report
def test_bad_input_is_refused_with_one_line() -> None:
    cases = [
        (Circuit(4, (x_gate(3, [0, 1, 2]),)), {"library": "nct"}, "not in the gate set: library nct has no C3X"),
        (Circuit(4, ()), {}, "no gates"),
        (Circuit(MAX_LINES + 1, (x_gate(0),)), {}, f"at most {MAX_LINES} lines"),
        (Circuit(3, (x_gate(0),)), {"window": 6}, "1 to 5 lines"),
        (Circuit(4, (x_gate(0),)), {"window": 4, "objective": "gates-then-cost"}, "need the cached class tables"),
        (Circuit(3, (x_gate(0),)), {"objective": "depth"}, "unknown objective"),
        (Circuit(3, (x_gate(0, [1], [2]),)), {"library": "nct"}, "no negative controls"),
    ]
    for circuit, options, fragment in cases:
        with pytest.raises(ExactsynError) as info:
            optimise_circuit(circuit, **options)  # type: ignore[arg-type]
        assert fragment in str(info.value) and "\n" not in str(info.value)


def test_progress_and_report() -> None:
    events: list[ProgressEvent] = []
    rng = random.Random(1)
    c = random_circuit(rng, 8, 2200, ("x",))
    res = optimise_circuit(c, progress=events.append)
    qiskit_agrees(c, res.output)
    assert any(e.phase == "optimise" for e in events) and any(e.phase == "check" for e in events)
    log = result_to_dict(res, input="in.qasm")
    assert log["before"]["gates"] == 2200 and log["after"]["gates"] == res.output.gate_count
    assert set(log["before"]) == {"gates", "ncv", "t-count", "cnot-count", "depth"}
    assert sum(w["gates_removed"] for w in log["windows_replaced"]) == 2200 - res.output.gate_count
    assert log["equivalence"]["method"] == "exhaustive" and log["equivalence"]["equal"] is True
    assert log["input"] == "in.qasm"
    text = summary_text(res)
    assert "T-count" in text and "exhaustive simulation of all 256 input states" in text
    # the measures are those of exactsyn.core.costs on the circuits
    assert res.after.t_count == sum(COST_MODELS["t-count"].cost(g, 8) for g in res.output.gates)


# ------------------------------------------------------------------ the safety net
class WrongAnswers:
    """A window answerer with a bug: it drops the last gate of every true optimum."""

    def __init__(self, inner: TableResynthesis) -> None:
        self.inner = inner

    @property
    def max_lines(self) -> int:
        return 3

    def optimum(self, problem: WindowProblem) -> Optimum | None:
        best = self.inner.optimum(problem)
        if best is None or not best.gates:
            return best
        return Optimum(best.gates[:-1], best.gate_count - 1, best.cost - 1, "a buggy table")


def test_a_wrong_replacement_is_caught_before_it_is_used() -> None:
    c = Circuit(3, (x_gate(2, [0, 1]), x_gate(1, [0]), x_gate(2, [0, 1]), x_gate(1, [0]), x_gate(0)))
    buggy = WrongAnswers(TableResynthesis(gate_set("nct", 3), 3))
    with pytest.raises(EquivalenceError, match="does not compute its window's function"):
        optimise_circuit(c, resynthesis=buggy)


def test_a_wrong_reordering_is_caught_by_the_whole_circuit_check(monkeypatch: pytest.MonkeyPatch) -> None:
    import exactsyn.optimise.windows as windows

    # a bug in commutation: every pair "commutes", so gates are moved past gates they do not
    monkeypatch.setattr(windows, "commute", lambda a, b: True)
    # the CNOT pair on (0, 1) cannot cancel: the Toffoli between them reads line 1
    c = Circuit(3, (x_gate(1, [0]), x_gate(2, [0, 1]), x_gate(1, [0])))
    with pytest.raises(EquivalenceError, match="differs from the input on input"):
        optimise_circuit(c, window=2)
