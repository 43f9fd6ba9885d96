"""Clifford+T decompositions multiplied out as unitaries and read back by qiskit.

The matrices of h, t, tdg, x and cx are built here from their definitions (Nielsen &
Chuang 2000, Sect. 4.2-4.3), independently of the code under test, and each
decomposition must equal the permutation matrix of its gate exactly (global phase
included).  qiskit is the second, outside reader of the OpenQASM text.
"""

from __future__ import annotations

import cmath
import itertools
import random
from functools import cache

import numpy as np
import pytest
from optional import need

from exactsyn.core.circuit import Circuit
from exactsyn.core.cliffordt import (
    CliffordT,
    decompose,
    decompose_gate,
    gate_cnot_count,
    gate_t_count,
)
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io.qasm import clifford_t_to_qasm2 as to_qasm2
from exactsyn.io.qasm import clifford_t_to_qasm3 as to_qasm3

OMEGA = cmath.exp(1j * cmath.pi / 4)
ONE_QUBIT = {
    "h": np.array([[1, 1], [1, -1]], dtype=complex) / np.sqrt(2),
    "t": np.diag([1, OMEGA]),
    "tdg": np.diag([1, OMEGA.conjugate()]),
    "x": np.array([[0, 1], [1, 0]], dtype=complex),
}
P0 = np.diag([1, 0]).astype(complex)
P1 = np.diag([0, 1]).astype(complex)
I2 = np.eye(2, dtype=complex)


def _kron_lines(factors: dict[int, np.ndarray], n: int) -> np.ndarray:
    """Tensor product with qubit 0 as the least significant index bit (qiskit's order)."""
    out = np.eye(1, dtype=complex)
    for q in reversed(range(n)):  # the leftmost factor is the most significant qubit
        out = np.kron(out, factors.get(q, I2))
    return out


@cache
def op_matrix(name: str, qubits: tuple[int, ...], n: int) -> np.ndarray:
    if name == "cx":
        c, t = qubits
        return _kron_lines({c: P0}, n) + _kron_lines({c: P1, t: ONE_QUBIT["x"]}, n)
    (q,) = qubits
    return _kron_lines({q: ONE_QUBIT[name]}, n)


def _apply(name: str, qubits: tuple[int, ...], n: int, cols: np.ndarray) -> np.ndarray:
    """``op_matrix(name, qubits, n) @ cols`` without the full matrix: the 2x2 factor acts on
    the index axis of its qubit (axis ``n - 1 - q`` of the row index in C order)."""
    t = cols.reshape((2,) * n + (cols.shape[1],))
    if name == "cx":
        c, tq = qubits
        ac, at = n - 1 - c, n - 1 - tq
        out = t.copy()
        on = [slice(None)] * (n + 1)
        on[ac] = slice(1, 2)
        out[tuple(on)] = np.flip(t[tuple(on)], axis=at)  # x on the target where the control is 1
        return out.reshape(cols.shape)
    (q,) = qubits
    out = np.moveaxis(np.tensordot(ONE_QUBIT[name], t, axes=([1], [n - 1 - q])), 0, n - 1 - q)
    return out.reshape(cols.shape)


def unitary(ct: CliffordT, full: bool = False) -> np.ndarray:
    """The circuit's matrix; only the columns with every ancilla in |0> unless ``full``."""
    cols = np.eye(1 << ct.qubits, dtype=complex)
    if not full:
        cols = cols[:, : 1 << ct.lines]
    for name, qubits in ct.ops:
        cols = _apply(name, qubits, ct.qubits, cols)
    return cols


def perm_matrix(perm: tuple[int, ...] | list[int]) -> np.ndarray:
    m = np.zeros((len(perm), len(perm)), dtype=complex)
    for i, j in enumerate(perm):
        m[j, i] = 1
    return m


def assert_implements(u: np.ndarray, lines: int, perm: tuple[int, ...] | list[int]) -> None:
    """Exact equality on the ancilla = |0> subspace (ancillas are the high bits), and no
    amplitude leaves it: the ancilla comes back to |0>."""
    size = 1 << lines
    assert np.allclose(u[:size, :size], perm_matrix(perm), atol=1e-9)
    assert np.allclose(u[size:, :size], 0, atol=1e-9)


def all_gates(n: int) -> list[Gate]:
    """Every x gate and swap with every mix of positive / negative / no control, and every Peres gate."""
    gates: list[Gate] = []
    for t in range(n):
        others = [q for q in range(n) if q != t]
        for roles in itertools.product((None, "+", "-"), repeat=len(others)):
            pos = [q for q, r in zip(others, roles, strict=True) if r == "+"]
            neg = [q for q, r in zip(others, roles, strict=True) if r == "-"]
            gates.append(x_gate(t, pos, neg))
    for a, b in itertools.combinations(range(n), 2):
        others = [q for q in range(n) if q not in (a, b)]
        for roles in itertools.product((None, "+", "-"), repeat=len(others)):
            pos = [q for q, r in zip(others, roles, strict=True) if r == "+"]
            neg = [q for q, r in zip(others, roles, strict=True) if r == "-"]
            gates.append(swap_gate(a, b, pos, neg))
    for a, b, c in itertools.permutations(range(n), 3):
        gates.append(peres_gate(a, b, c))
    return gates


def random_circuit(rng: random.Random, n: int, size: int) -> Circuit:
    pool = all_gates(n)
    return Circuit(n, tuple(rng.choice(pool) for _ in range(size)))


# ---------------------------------------------------------------------------- published counts
def test_toffoli_is_the_textbook_circuit() -> None:
    # Nielsen & Chuang 2000, Fig. 4.9: 7 T/T-dagger, 6 CNOT, 2 H, no ancilla.
    ct = decompose_gate(x_gate(2, (0, 1)), 3)
    assert (ct.t_count, ct.cnot_count, ct.h_count, ct.ancillas) == (7, 6, 2, 0)
    assert set(ct.counts()) == {"h", "t", "tdg", "cx"}
    assert_implements(unitary(ct), 3, x_gate(2, (0, 1)).permutation(3))


def test_c3x_with_a_borrowed_line_is_four_toffolis() -> None:
    # Barenco et al. 1995, Sect. 7: C^3X from 4 Toffoli gates around one borrowed line
    # (from memory for the lemma number); 4 x 7 T-count follows from N&C Fig. 4.9.
    assert gate_t_count(x_gate(4, (0, 1, 2)), 5) == 4 * 7
    assert gate_cnot_count(x_gate(4, (0, 1, 2)), 5) == 4 * 6


def test_peres_cancels_the_meeting_cnots() -> None:
    # The textbook Toffoli ends with cx a,b (N&C Fig. 4.9) and the Peres gate's CNOT is cx a,b.
    ct = decompose_gate(peres_gate(0, 1, 2), 3)
    assert (ct.t_count, ct.cnot_count) == (7, 5)


def test_negative_controls_cost_two_x_each() -> None:
    pos = decompose_gate(x_gate(3, (0, 1, 2)), 5)
    mixed = decompose_gate(x_gate(3, (0,), (1, 2)), 5)
    assert mixed.t_count == pos.t_count and mixed.cnot_count == pos.cnot_count
    assert mixed.x_count == pos.x_count + 4


# ---------------------------------------------------------------------------- exact unitaries
@pytest.mark.parametrize("n", [3, 4, 5])
def test_every_gate_multiplies_out_to_its_permutation(n: int) -> None:
    for g in all_gates(n):
        ct = decompose_gate(g, n)
        assert ct.lines == n
        assert_implements(unitary(ct), n, g.permutation(n))


@pytest.mark.parametrize("n", [3, 4, 5])
def test_random_circuits_multiply_out(n: int) -> None:
    rng = random.Random(100 + n)
    for _ in range(15):
        circ = random_circuit(rng, n, rng.randrange(1, 8))
        ct = decompose(circ)
        assert ct.ancillas == max(decompose_gate(g, n).ancillas for g in circ.gates)
        assert_implements(unitary(ct), n, circ.permutation())
        assert ct.t_count == sum(gate_t_count(g, n) for g in circ.gates)
        assert ct.cnot_count == sum(gate_cnot_count(g, n) for g in circ.gates)


def test_fast_application_equals_the_kronecker_matrices() -> None:
    rng = np.random.default_rng(3)
    cols = rng.normal(size=(16, 16)) + 1j * rng.normal(size=(16, 16))
    for name in ("h", "t", "tdg", "x"):
        for q in range(4):
            assert np.allclose(_apply(name, (q,), 4, cols), op_matrix(name, (q,), 4) @ cols)
    for c, t in itertools.permutations(range(4), 2):
        assert np.allclose(_apply("cx", (c, t), 4, cols), op_matrix("cx", (c, t), 4) @ cols)


def test_only_the_five_ops_are_emitted() -> None:
    for g in all_gates(4):
        assert {name for name, _ in decompose_gate(g, 4).ops} <= {"h", "t", "tdg", "cx", "x"}


# ---------------------------------------------------------------------------- the ancilla
def test_determinant_argument_for_the_ancilla() -> None:
    # Giles & Selinger, Phys. Rev. A 87 (2013): for n >= 4 every Clifford+T op on n qubits
    # has determinant 1, while C^{n-1}X (one transposition) has determinant -1.
    n = 4
    for name in ("h", "t", "tdg", "x"):
        for q in range(n):
            assert np.isclose(np.linalg.det(op_matrix(name, (q,), n)), 1)
    for c, t in itertools.permutations(range(n), 2):
        assert np.isclose(np.linalg.det(op_matrix("cx", (c, t), n)), 1)
    assert np.isclose(np.linalg.det(perm_matrix(x_gate(3, (0, 1, 2)).permutation(4))), -1)
    # det(T on 1 of n qubits) = omega^(2^(n-1)): -1 on 3 qubits, so n = 3 has no such obstruction
    for k in range(1, 6):
        assert np.isclose(np.linalg.det(op_matrix("t", (0,), k)), OMEGA ** (2 ** (k - 1)))
    assert np.isclose(np.linalg.det(op_matrix("t", (0,), 3)), -1)


def test_ancilla_only_when_no_line_is_free() -> None:
    assert decompose_gate(x_gate(3, (0, 1, 2)), 4).ancillas == 1
    assert decompose_gate(x_gate(3, (0, 1, 2)), 5).ancillas == 0
    assert decompose_gate(x_gate(4, (0, 1, 2, 3)), 5).ancillas == 1
    assert decompose_gate(x_gate(2, (0, 1)), 3).ancillas == 0
    assert decompose_gate(swap_gate(0, 1, (2, 3)), 4).ancillas == 1  # its C^3X touches all 4 lines
    assert decompose_gate(swap_gate(0, 1, (2,)), 3).ancillas == 0
    # A whole 4-line circuit without such a gate has every op of determinant 1 and no ancilla.
    ct = decompose(Circuit(4, (x_gate(3, (0, 1)), swap_gate(0, 2, (1,)), peres_gate(3, 0, 1))))
    assert ct.ancillas == 0
    assert np.isclose(np.linalg.det(unitary(ct, full=True)), 1)


# ---------------------------------------------------------------------------- qiskit as reader
def _qiskit():  # type: ignore[no-untyped-def]
    """qiskit's OpenQASM 2 / 3 readers and Operator (test-only).

    The test is skipped without them, and fails under CI (tests/optional.py).
    """
    qasm2 = need("qiskit.qasm2", "qiskit is the test-only reference reader: pip install qiskit")
    qasm3 = need("qiskit.qasm3", "pip install qiskit")
    need("qiskit_qasm3_import", "qiskit.qasm3.loads needs it: pip install qiskit-qasm3-import")
    quantum_info = need("qiskit.quantum_info", "pip install qiskit")
    return qasm2, qasm3, quantum_info.Operator


def _check_with_qiskit(ct: CliffordT, perm: tuple[int, ...]) -> None:
    qasm2, qasm3, Operator = _qiskit()
    for text, loads in ((to_qasm2(ct), qasm2.loads), (to_qasm3(ct), qasm3.loads)):
        qc = loads(text)
        assert qc.num_qubits == ct.qubits  # q first, then anc: the ancilla is the high bit
        assert_implements(Operator(qc).data, ct.lines, perm)
        ops = qc.count_ops()
        assert ops.get("t", 0) + ops.get("tdg", 0) == ct.t_count
        assert ops.get("cx", 0) == ct.cnot_count
        assert ops.get("h", 0) == ct.h_count
        assert qc.depth(filter_function=lambda ins: ins.operation.name in ("t", "tdg")) == ct.t_depth


@pytest.mark.parametrize("n", [3, 4])
def test_qiskit_reads_back_every_gate(n: int) -> None:
    for g in all_gates(n):
        _check_with_qiskit(decompose_gate(g, n), g.permutation(n))


def test_qiskit_reads_back_a_sample_of_five_line_gates() -> None:
    rng = random.Random(5)
    gates = all_gates(5)
    for g in [
        *rng.sample(gates, 60),
        x_gate(4, (0, 1, 2, 3)),
        x_gate(0, (1, 3), (2, 4)),
        swap_gate(1, 3, (0, 2), (4,)),
    ]:
        _check_with_qiskit(decompose_gate(g, 5), g.permutation(5))


def test_qiskit_reads_back_circuits_with_and_without_ancilla() -> None:
    rng = random.Random(7)
    for n in (3, 4, 5):
        for _ in range(4):
            circ = random_circuit(rng, n, 5)
            _check_with_qiskit(decompose(circ), circ.permutation())
    with_anc = Circuit(4, (x_gate(3, (0, 1), (2,)), x_gate(0, (1, 2, 3))))
    ct = decompose(with_anc)
    assert ct.ancillas == 1 and "qreg anc[1];" in to_qasm2(ct) and "qubit[1] anc;" in to_qasm3(ct)
    _check_with_qiskit(ct, with_anc.permutation())


def test_toffoli_t_depth_matches_qiskit() -> None:
    qasm2, _, _ = _qiskit()
    ct = decompose_gate(x_gate(2, (0, 1)), 3)
    qc = qasm2.loads(to_qasm2(ct))
    assert qc.depth(filter_function=lambda ins: ins.operation.name in ("t", "tdg")) == ct.t_depth


# ---------------------------------------------------------------------------- bad input
def test_bad_input_raises() -> None:
    with pytest.raises(ExactsynError, match="outside"):
        decompose_gate(x_gate(3, (0, 1)), 3)
    with pytest.raises(ExactsynError, match="family"):
        decompose_gate(Gate("y", (0,)), 2)
    with pytest.raises(ExactsynError, match="line count"):
        decompose_gate(x_gate(0), 0)
    with pytest.raises(ExactsynError, match="bad Clifford"):
        CliffordT(2, 0, (("ccx", (0, 1)),))
    with pytest.raises(ExactsynError, match="outside"):
        CliffordT(2, 0, (("cx", (0, 2)),))


def test_runtime_simulation_agrees_with_the_matrix_product_and_can_fail() -> None:
    # The CLI simulates every Clifford+T decomposition before printing it; here that
    # simulation is checked against the independent Kronecker-product matrices above.
    from exactsyn.core.cliffordt import check_clifford_t, simulate

    rng = random.Random(21)
    for n in (3, 4, 5):
        for _ in range(6):
            c = random_circuit(rng, n, rng.randint(1, 6))
            ct = decompose(c)
            assert np.allclose(simulate(ct), unitary(ct), atol=1e-9)
            check_clifford_t(ct, c)
    tof = Circuit(3, (x_gate(2, (0, 1)),))
    ct = decompose(tof)
    broken = CliffordT(ct.lines, ct.ancillas, ct.ops[:-1])  # one operation dropped
    with pytest.raises(RuntimeError):
        check_clifford_t(broken, tof)
