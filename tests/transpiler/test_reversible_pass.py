"""The qiskit pass over reversible blocks, checked with qiskit's own ``Operator`` (the reference).

Every test circuit has at most 10 qubits; input and output must have equal unitaries
(exactly, global phase included), and the operations the pass must not touch keep their
order on every qubit.
"""

from __future__ import annotations

import random
import subprocess
import sys

import numpy as np
import pytest
from helpers import bfs_upto
from optional import need_qiskit

from exactsyn.core.library import make_library

qiskit = need_qiskit()  # the reference: Operator equality, DAG and pass manager
from qiskit import AncillaRegister, ClassicalRegister, QuantumCircuit, QuantumRegister  # noqa: E402
from qiskit.circuit import ControlledGate  # noqa: E402
from qiskit.circuit.library import UnitaryGate, XGate  # noqa: E402
from qiskit.converters import circuit_to_dag  # noqa: E402
from qiskit.quantum_info import Operator  # noqa: E402
from qiskit.transpiler import PassManager  # noqa: E402
from qiskit.transpiler.exceptions import TranspilerError  # noqa: E402

from exactsyn.transpiler import PROPERTY_KEY, PassFigures, ReversibleBlockOptimiser  # noqa: E402
from exactsyn.transpiler.blocks import convex, reversible_blocks  # noqa: E402


def is_reversible(op: object) -> bool:
    """X and SWAP with any controls and control states: the gates the pass writes."""
    if isinstance(op, ControlledGate):
        return op.base_gate.name in ("x", "swap")
    return getattr(op, "name", "") in ("x", "swap")


def run_pass(qc: QuantumCircuit, **options: object) -> tuple[QuantumCircuit, PassFigures]:
    pm = PassManager([ReversibleBlockOptimiser(**options)])
    out = pm.run(qc)
    return out, pm.property_set[PROPERTY_KEY]


def untouched_by_qubit(qc: QuantumCircuit) -> dict[int, list[tuple[object, ...]]]:
    """For every qubit, the operations that are not classical-reversible, in wire order."""
    dag = circuit_to_dag(qc)
    out: dict[int, list[tuple[object, ...]]] = {i: [] for i in range(qc.num_qubits)}
    for node in dag.topological_op_nodes():
        if is_reversible(node.op):
            continue
        name = node.op.name
        where = tuple(qc.find_bit(q).index for q in node.qargs)
        clbits = tuple(qc.find_bit(c).index for c in node.cargs)
        for q in where:
            out[q].append((name, where, clbits, tuple(node.op.params)))
    return out


def reversible_count(qc: QuantumCircuit) -> int:
    return sum(1 for item in qc.data if is_reversible(item.operation))


def random_mixed(rng: random.Random, n: int, length: int) -> QuantumCircuit:
    """Reversible gates (mixed polarity, swaps, controlled swaps) with h, rz and s between them."""
    qc = QuantumCircuit(n)
    for _ in range(length):
        r = rng.random()
        if r < 0.12:
            getattr(qc, rng.choice(["h", "s"]))(rng.randrange(n))
        elif r < 0.18:
            qc.rz(rng.uniform(0, 6.28), rng.randrange(n))
        elif r < 0.25 and n >= 2:
            a, b = rng.sample(range(n), 2)
            qc.swap(a, b)
        elif r < 0.3 and n >= 3:
            a, b, c = rng.sample(range(n), 3)
            qc.cswap(a, b, c)
        else:
            k = rng.randrange(0, min(n - 1, 3) + 1)
            lines = rng.sample(range(n), k + 1)
            state = rng.randrange(1 << k) if rng.random() < 0.2 else (1 << k) - 1
            qc.append(XGate().control(k, ctrl_state=state) if k else XGate(), lines)
    return qc


def test_mixed_circuits_keep_unitary_and_order_of_other_gates() -> None:
    rng = random.Random(2023)
    improved = 0
    for n in (2, 3, 4, 5, 6):
        for _ in range(3):
            qc = random_mixed(rng, n, 40)
            out, figures = run_pass(qc)
            assert Operator(out) == Operator(qc)  # exact, global phase included
            assert untouched_by_qubit(out) == untouched_by_qubit(qc)
            assert figures.after.gates <= figures.before.gates
            improved += figures.improved
    assert improved > 0  # the random circuits hold cancelling gates: something was replaced


def hand_circuit() -> QuantumCircuit:
    """Three reversible blocks split by Hadamards on every qubit; each block can shrink."""
    qc = QuantumCircuit(4)
    qc.ccx(0, 1, 2)
    qc.cx(0, 1)
    qc.ccx(0, 1, 2)
    qc.cx(0, 1)  # the four gates compute q2 ^= q0: one CNOT
    qc.h(range(4))
    qc.cx(2, 3)
    qc.cx(3, 2)
    qc.cx(2, 3)
    qc.swap(2, 3)  # the identity
    qc.x(0)
    qc.h(range(4))
    qc.x(2)
    qc.cx(2, 0)
    qc.x(2)  # q0 ^= not q2: two gates in NCT
    return qc


def test_figures_in_the_property_set_match_the_circuits() -> None:
    qc = hand_circuit()
    out, figures = run_pass(qc)
    assert Operator(out) == Operator(qc)
    # blocks: {ccx,cx,ccx,cx} on 0-2; {cx,cx,cx,swap} on 2-3 and {x} on 0 (split, disjoint); {x,cx,x} on 0, 2
    assert figures.blocks == 4
    assert figures.optimised == 3 and figures.improved == 3
    assert figures.before.gates == reversible_count(qc) == 12
    assert figures.after.gates == reversible_count(out)
    ccx_before = sum(1 for item in qc.data if item.operation.name == "ccx")
    ccx_after = sum(1 for item in out.data if item.operation.name == "ccx")
    assert figures.before.t_count == 7 * ccx_before  # 7 T gates a Toffoli (Nielsen & Chuang 2000)
    assert figures.after.t_count == 7 * ccx_after
    assert figures.after.gates == 1 + 0 + 1 + 2  # the block minima stated in hand_circuit
    assert figures.seconds >= 0 and figures.skipped == ()
    assert figures.to_dict()["before"]["gates"] == 12


def test_measure_reset_conditions_and_barriers_stay_in_place() -> None:
    q, c = QuantumRegister(3), ClassicalRegister(2)
    qc = QuantumCircuit(q, c)
    qc.cx(0, 1)
    qc.cx(0, 1)
    qc.measure(0, 0)
    qc.x(2)
    qc.barrier()
    qc.x(2)
    qc.reset(1)
    qc.cx(2, 1)
    qc.cx(2, 1)
    with qc.if_test((c[0], 1)):
        qc.x(1)
    qc.ccx(0, 1, 2)
    qc.ccx(0, 1, 2)
    qc.measure(2, 1)
    out, figures = run_pass(qc)
    assert untouched_by_qubit(out) == untouched_by_qubit(qc)
    # the CNOT and Toffoli pairs cancel inside their blocks; the barrier keeps the X pair apart
    assert reversible_count(out) == 2 and [item.operation.name for item in out.data].count("x") == 2
    assert figures.improved == 3 and figures.after.gates == 2


def test_permutation_gates_by_matrix_and_by_definition() -> None:
    """A unitary that is a Toffoli times a phase, a custom gate defined by CNOTs, and a CZ
    (diagonal with two phases: not a permutation up to one phase) between them."""
    toffoli = np.eye(8, dtype=complex)
    toffoli[[3, 7]] = toffoli[[7, 3]]
    sub = QuantumCircuit(3, name="shift")
    sub.cx(0, 1)
    sub.cx(1, 2)
    qc = QuantumCircuit(3)
    qc.append(UnitaryGate(np.exp(0.7j) * toffoli), [0, 1, 2])
    qc.append(sub.to_gate(), [0, 1, 2])
    qc.append(sub.to_gate().inverse(), [0, 1, 2])
    qc.ccx(0, 1, 2)
    qc.cz(0, 2)
    qc.cx(0, 1)
    out, figures = run_pass(qc)
    assert Operator(out) == Operator(qc)  # the phase e^{0.7i} is kept
    assert figures.before.gates == 1 + 2 + 2 + 1 + 1
    assert [item.operation.name for item in out.data] == ["cz", "cx"]


def test_not_improvable_by_qiskit_level3_improved_to_a_proven_minimum() -> None:
    """A 4-line block that qiskit's level 3 leaves at 6 gates; the pass finds 3, and a plain
    breadth-first enumeration of NCT circuits on 4 lines (tests/helpers.py) shows that no
    circuit of 2 or fewer gates computes it."""
    qc = QuantumCircuit(4)
    qc.ccx(0, 1, 2)
    qc.cx(0, 1)
    qc.ccx(0, 1, 2)
    qc.cx(0, 1)
    qc.ccx(1, 2, 3)
    qc.cx(3, 0)
    theirs = qiskit.transpile(qc, basis_gates=["x", "cx", "ccx"], optimization_level=3, seed_transpiler=1)
    assert theirs.size() == 6
    out, _ = run_pass(qc)
    assert Operator(out) == Operator(qc)
    assert out.size() == 3
    u = Operator(qc).data
    perm = tuple(int(np.argmax(np.abs(u[:, i]))) for i in range(16))
    near = bfs_upto(make_library("nct", 4), 3)
    assert near[perm] == 3


def test_gates_then_cost_objective_and_library_option() -> None:
    qc = QuantumCircuit(3)
    qc.x(1)
    qc.ccx(0, 1, 2)
    qc.x(1)  # a Toffoli with a negative control on q1: three NCT gates
    out, figures = run_pass(qc, objective="gates-then-cost", cost="t-count", library="mixed")
    assert Operator(out) == Operator(qc)
    assert out.size() == 1 and figures.after.gates == 1
    nct, figures = run_pass(qc, library="nct")  # x(q0 and not q1) = ccx then cx
    assert Operator(nct) == Operator(qc)
    assert nct.size() == 2 and figures.improved == 1
    refused, figures = run_pass(qc, library="not,cnot")  # the Toffoli is outside this library
    assert refused == qc and len(figures.skipped) == 1


def test_bad_options_are_refused() -> None:
    for options in (
        {"objective": "depth"},
        {"library": "nct-peres"},
        {"library": "nope"},
        {"zero_qubits": [-1]},
        {"zero_qubits": [1, 1]},
        {"zero_qubits": [True]},
        {"zero_qubits": ["q0"]},
        {"horizon": 0},
    ):
        with pytest.raises(TranspilerError):
            ReversibleBlockOptimiser(**options)  # type: ignore[arg-type]
    with pytest.raises(TranspilerError, match="has 4 qubits"):
        run_pass(hand_circuit(), zero_qubits=[4])


def compute_copy_uncompute(ancilla_register: bool = False) -> QuantumCircuit:
    """t ^= a AND b through an ancilla: compute it, copy it, uncompute it, with an h around.

    With the ancilla (qubit 3) at |0⟩ this is one Toffoli onto t; on every input it needs two
    gates (t ^= anc, then t ^= a AND b).  Our own example."""
    data = QuantumRegister(3, "q")
    anc = AncillaRegister(1, "anc") if ancilla_register else QuantumRegister(1, "anc")
    qc = QuantumCircuit(data, anc)
    qc.h(0)
    qc.ccx(0, 1, 3)
    qc.cx(3, 2)
    qc.ccx(0, 1, 3)
    qc.h(0)
    return qc


def equal_where_zero(a: QuantumCircuit, b: QuantumCircuit, zero: list[int]) -> bool:
    """qiskit's unitaries of ``a`` and ``b`` agree on every basis input with the ``zero`` qubits
    at |0⟩ (qiskit numbers basis states with qubit i as bit i)."""
    ua, ub = Operator(a).data, Operator(b).data
    mask = sum(1 << q for q in zero)
    columns = [x for x in range(ua.shape[1]) if not x & mask]
    return bool(np.allclose(ua[:, columns], ub[:, columns]))


def test_ancilla_context_removes_what_only_the_zero_qubit_allows() -> None:
    qc = compute_copy_uncompute()
    plain, figures = run_pass(qc, window=4)  # the block spans 4 qubits
    # on every input two gates are needed (no one gate maps t to t ^ anc ^ (a AND b))
    assert Operator(plain).equiv(Operator(qc)) and reversible_count(plain) >= 2 and figures.in_context == 0
    context, figures = run_pass(qc, zero_qubits=[3], window=4)
    assert reversible_count(context) == 1 and figures.in_context == 1
    assert equal_where_zero(context, qc, [3])  # the reference: qiskit's operators on the honoured inputs
    assert not Operator(context).equiv(Operator(qc))  # and only there: the context was used
    assert untouched_by_qubit(context) == untouched_by_qubit(qc)


def test_ancilla_registers_are_the_context_when_asked() -> None:
    qc = compute_copy_uncompute(ancilla_register=True)
    kept, _ = run_pass(qc, window=4)
    assert reversible_count(kept) >= 2 and Operator(kept).equiv(Operator(qc))  # not asked: kept on every input
    out, figures = run_pass(qc, ancillas_zero=True, window=4)
    assert reversible_count(out) == 1 and figures.in_context == 1 and equal_where_zero(out, qc, [3])


def test_no_context_where_the_zero_qubit_was_used_before_or_left_dirty() -> None:
    used = QuantumCircuit(4)
    used.h(3)  # the ancilla is no longer |0⟩ when the block starts
    used.compose(compute_copy_uncompute(), inplace=True)
    out, figures = run_pass(used, zero_qubits=[3], window=4)
    assert figures.in_context == 0 and Operator(out).equiv(Operator(used))
    dirty = compute_copy_uncompute()
    dirty.x(3)  # the block now leaves the ancilla at 1 on some inputs: not a clean ancilla
    out, figures = run_pass(dirty, zero_qubits=[3], window=4)
    assert figures.in_context == 0 and Operator(out).equiv(Operator(dirty))


def test_missing_qiskit_names_the_extra() -> None:
    code = (
        "import sys; sys.modules['qiskit'] = None\n"
        "import exactsyn.optimise  # the core works without qiskit\n"
        "try:\n"
        "    import exactsyn.transpiler\n"
        "except ImportError as e:\n"
        "    print(e)\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    assert 'pip install "exactsyn[qiskit]"' in done.stdout


def test_a_qubit_running_ahead_does_not_cut_a_block() -> None:
    """q1 skips a layer of Hadamards on q0 and q2: qiskit's greedy collector takes its first
    X into the earlier block; the merge puts x, cx, x back together (then two gates)."""
    qc = QuantumCircuit(3)
    qc.cx(0, 2)
    qc.h(0)
    qc.h(2)
    qc.x(1)
    qc.cx(1, 0)
    qc.x(1)  # q0 ^= not q1
    blocks = reversible_blocks(circuit_to_dag(qc))
    assert sorted(b.circuit.gate_count for b in blocks) == [1, 3]
    out, figures = run_pass(qc)
    assert Operator(out) == Operator(qc)
    assert figures.improved == 1 and reversible_count(out) == 3


def test_blocks_joined_only_through_a_gate_outside_stay_apart() -> None:
    """cx(0,1) and cx(1,0) meet on wire 0, but the H on q1 lies on a path between them."""
    qc = QuantumCircuit(2)
    qc.cx(0, 1)
    qc.h(1)
    qc.cx(1, 0)
    dag = circuit_to_dag(qc)
    blocks = reversible_blocks(dag)
    assert len(blocks) == 2
    assert not convex(dag, [n for b in blocks for n in b.nodes])
    out, _ = run_pass(qc)
    assert Operator(out) == Operator(qc)


def test_a_wrong_replacement_is_caught_before_it_is_substituted(monkeypatch: pytest.MonkeyPatch) -> None:
    """The pass's own check: a conversion that writes a CNOT the wrong way round is refused."""
    import exactsyn.transpiler.reversible_pass as module
    from exactsyn.optimise import InternalCheckError

    right = module.to_qiskit

    def flipped(g):  # type: ignore[no-untyped-def]
        op, args = right(g)
        return op, tuple(reversed(args)) if op.name == "cx" else args

    monkeypatch.setattr(module, "to_qiskit", flipped)
    qc = hand_circuit()
    before = qc.copy()
    with pytest.raises(InternalCheckError, match="differs"):
        run_pass(qc)
    assert qc == before
