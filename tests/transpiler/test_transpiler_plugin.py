"""The optimization-stage plugin ``exactsyn``, found and run by qiskit's ``transpile``.

The plugin is found through the package's entry points, so it needs the package
installed (``pip install -e .``); a source checkout on ``sys.path`` alone has none.
"""

from __future__ import annotations

import importlib.metadata

import pytest
from optional import missing, need_qiskit

qiskit = need_qiskit()  # the reference: transpile, its plugin manager and Operator
from qiskit import QuantumCircuit  # noqa: E402
from qiskit.quantum_info import Operator  # noqa: E402
from qiskit.transpiler import generate_preset_pass_manager  # noqa: E402
from qiskit.transpiler.preset_passmanagers.plugin import list_stage_plugins  # noqa: E402

from exactsyn.transpiler import PROPERTY_KEY  # noqa: E402
from exactsyn.transpiler.plugin import PLUGIN_NAME, control_cap  # noqa: E402

GROUP = "qiskit.transpiler.optimization"
BASIS = ["x", "cx", "ccx", "h", "rz"]


@pytest.fixture(scope="module", autouse=True)
def _installed() -> None:
    if not any(e.name == PLUGIN_NAME for e in importlib.metadata.entry_points(group=GROUP)):
        missing(f"the {GROUP} entry point {PLUGIN_NAME!r} is not installed (pip install -e .)")


def mixed() -> QuantumCircuit:
    """Hadamard and RZ gates around a reversible block that qiskit's level 3 leaves at 6 gates."""
    qc = QuantumCircuit(4)
    qc.h(3)
    qc.ccx(0, 1, 2)
    qc.cx(0, 1)
    qc.ccx(0, 1, 2)
    qc.cx(0, 1)  # q2 ^= q0
    qc.rz(0.25, 0)
    qc.ccx(1, 2, 3)
    qc.cx(3, 0)
    qc.h(2)
    return qc


def test_plugin_is_listed() -> None:
    assert PLUGIN_NAME in list_stage_plugins("optimization")


@pytest.mark.parametrize("level", [0, 1, 3])
def test_transpile_runs_qiskit_then_the_pass(level: int) -> None:
    qc = mixed()
    theirs = qiskit.transpile(qc, basis_gates=BASIS, optimization_level=level, seed_transpiler=3)
    ours = qiskit.transpile(
        qc, basis_gates=BASIS, optimization_level=level, optimization_method=PLUGIN_NAME, seed_transpiler=3
    )
    assert Operator(ours) == Operator(qc)
    assert set(ours.count_ops()) <= set(BASIS)
    assert ours.size() < theirs.size()
    assert ours.count_ops().get("h") == 2 and ours.count_ops().get("rz") == 1


def test_property_set_of_a_transpile_run() -> None:
    pm = generate_preset_pass_manager(optimization_level=3, basis_gates=BASIS, optimization_method=PLUGIN_NAME)
    out = pm.run(mixed())
    figures = pm.property_set[PROPERTY_KEY]
    assert figures is not None and figures.improved >= 1
    assert figures.after.gates < figures.before.gates
    assert figures.after.gates == sum(n for name, n in out.count_ops().items() if name in ("x", "cx", "ccx"))


def test_basis_without_toffoli_keeps_the_output_in_it() -> None:
    """A CNOT-only basis: the pass may not bring a Toffoli in (control cap 1)."""
    qc = QuantumCircuit(3)
    for a, b in [(0, 1), (1, 2), (0, 1), (2, 0), (1, 2), (0, 2)]:
        qc.cx(a, b)
    ours = qiskit.transpile(qc, basis_gates=["x", "cx"], optimization_level=3, optimization_method=PLUGIN_NAME)
    assert Operator(ours) == Operator(qc)
    assert set(ours.count_ops()) <= {"x", "cx"}
    assert (control_cap({"x", "cx"}), control_cap({"cx", "ccx"}), control_cap({"mcx"}), control_cap({"h"})) == (
        1,
        2,
        None,
        0,
    )


def test_with_a_coupling_map_only_qiskit_runs_and_says_so() -> None:
    qc = mixed()
    with pytest.warns(UserWarning, match="coupling map"):
        ours = qiskit.transpile(
            qc,
            basis_gates=["x", "cx", "h", "rz", "t", "tdg", "swap"],
            coupling_map=[[0, 1], [1, 2], [2, 3]],
            optimization_level=1,
            optimization_method=PLUGIN_NAME,
            seed_transpiler=5,
        )
    assert Operator.from_circuit(ours).equiv(Operator(qc))


def test_a_target_with_multiple_control_gates() -> None:
    """A target of x, cx, ccx and any mcx: the output keeps to it, and the pass may use mcx."""
    from qiskit.circuit.library import CCXGate, CXGate, MCXGate, XGate
    from qiskit.transpiler import Target

    target = Target(num_qubits=5)
    for gate in (XGate(), CXGate(), CCXGate()):
        target.add_instruction(gate)
    target.add_instruction(MCXGate, name="mcx")
    qc = QuantumCircuit(5)
    qc.ccx(0, 1, 3)
    qc.cx(0, 1)
    qc.ccx(0, 1, 3)
    qc.cx(0, 1)  # q3 ^= q0: one CNOT
    qc.barrier()
    qc.mcx([0, 1, 2, 3], 4)
    qc.mcx([0, 1, 2, 3], 4)  # a self-inverse gate twice: nothing
    theirs = qiskit.transpile(qc, target=target, optimization_level=3)
    pm = generate_preset_pass_manager(optimization_level=3, target=target, optimization_method=PLUGIN_NAME)
    out = pm.run(qc)
    assert Operator(out) == Operator(qc)
    assert dict(out.count_ops()) == {"cx": 1, "barrier": 1}
    assert out.size() < theirs.size()
    assert pm.property_set[PROPERTY_KEY].improved == 2
