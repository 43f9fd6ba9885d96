"""qiskit instructions as exactsyn gates and back: which operations are classical-reversible.

An operation of a qiskit circuit is *reversible* here when it acts on qubits only, carries
no classical condition and no free parameter, and its unitary is a permutation matrix
times one global phase ``e^{iφ}``.  Such an operation is read as a sequence of exactsyn
gates on the positions of its qubit arguments (position ``j`` is line ``j``, the bit order
of qiskit's ``Operator``, little-endian, which is also exactsyn's) plus the phase ``φ``:

1. by name: ``x``, ``cx``, ``ccx``, the ``mcx`` family (``C3X``, ``C4X``, ``MCXGate`` …),
   ``swap``, ``cswap`` and any controlled X or SWAP, with its control state (mixed
   polarity becomes negative controls), phase 0;
2. by matrix, for at most :data:`exactsyn.io.qasm_defs.MAX_UNITARY_QUBITS` qubits: qiskit's
   ``Operator`` is tested with :func:`exactsyn.io.qasm_defs.as_permutation`; when
   :func:`~exactsyn.io.qasm_defs.gates_of_permutation` finds one gate, that gate;
3. by definition: when every instruction of the operation's ``definition`` is reversible
   by these rules (recursively), the concatenation, with the definition's global phase.

A Peres gate (from rule 2) is written as its Toffoli and CNOT, because qiskit has no
Peres gate; exactsyn's output gates are then only of the X and SWAP families, and
:func:`to_qiskit` writes each as one qiskit gate.  Every other operation (``h``, ``rz``,
``measure``, ``reset``, ``barrier``, parametrised or conditioned gates, control flow) is not
reversible and is left to qiskit.
"""

from __future__ import annotations

import cmath
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from qiskit.circuit import ControlledGate, Instruction
from qiskit.circuit import Gate as QiskitGate
from qiskit.circuit.library import SwapGate, XGate
from qiskit.quantum_info import Operator

from exactsyn.core.gates import Gate, swap_gate, x_gate
from exactsyn.io.qasm_defs import MAX_UNITARY_QUBITS, as_permutation, gates_of_permutation

#: How deep rule 3 follows definitions inside definitions.
MAX_DEFINITION_DEPTH = 8


@dataclass(frozen=True)
class Reversible:
    """An operation read as gates on its argument positions, up to the global phase ``phase``."""

    gates: tuple[Gate, ...]
    phase: float


def _controls(op: ControlledGate) -> tuple[tuple[int, ...], tuple[int, ...]]:
    """Positive and negative control positions: controls are the first arguments, bit ``i``
    of ``ctrl_state`` is control ``i`` (qiskit's convention)."""
    count = op.num_ctrl_qubits
    state = int(op.ctrl_state)
    pos = tuple(i for i in range(count) if state >> i & 1)
    neg = tuple(i for i in range(count) if not state >> i & 1)
    return pos, neg


def _by_name(op: Instruction) -> tuple[Gate, ...] | None:
    if op.name == "x" and op.num_qubits == 1 and not isinstance(op, ControlledGate):
        return (x_gate(0),)
    if op.name == "swap" and op.num_qubits == 2 and not isinstance(op, ControlledGate):
        return (swap_gate(0, 1),)
    if not isinstance(op, ControlledGate) or op.base_gate is None:
        return None
    base, count = op.base_gate.name, op.num_ctrl_qubits
    if base == "x" and op.num_qubits == count + 1:
        pos, neg = _controls(op)
        return (x_gate(count, pos, neg),)
    if base == "swap" and op.num_qubits == count + 2:
        pos, neg = _controls(op)
        return (swap_gate(count, count + 1, pos, neg),)
    return None


def _peres_free(gates: Sequence[Gate]) -> tuple[Gate, ...]:
    out: list[Gate] = []
    for g in gates:
        if g.family == "peres":  # c ^= a·b, then b ^= a (exactsyn.core.gates)
            a, (b, c) = g.controls[0], g.targets
            out += [x_gate(c, (a, b)), x_gate(b, (a,))]
        else:
            out.append(g)
    return tuple(out)


def _by_matrix(op: Instruction) -> Reversible | bool:
    """One gate and the phase; False when the matrix is no permutation up to one phase (or
    qiskit has none); True when it is one but no single gate (rule 3 may still read it)."""
    try:
        matrix = Operator(op).data
    except Exception:  # noqa: BLE001 - qiskit raises several kinds when an operation has no matrix
        return True  # no matrix: the definition decides
    perm, _ = as_permutation(np.asarray(matrix))
    if perm is None:
        return False
    gates = gates_of_permutation(perm, op.num_qubits)
    if gates is None:
        return True
    return Reversible(_peres_free(gates), cmath.phase(complex(matrix[perm[0], 0])))


def _by_definition(op: Instruction, depth: int) -> Reversible | None:
    definition = op.definition
    if definition is None or depth >= MAX_DEFINITION_DEPTH:
        return None
    position = {q: i for i, q in enumerate(definition.qubits)}
    gates: list[Gate] = []
    phase = float(definition.global_phase)
    for item in definition.data:
        if item.clbits:
            return None
        inner = reversible(item.operation, depth + 1)
        if inner is None:
            return None
        lines = [position[q] for q in item.qubits]
        gates += [_moved(g, lines) for g in inner.gates]
        phase += inner.phase
    return Reversible(tuple(gates), phase)


def _moved(g: Gate, lines: Sequence[int]) -> Gate:
    def at(t: tuple[int, ...]) -> tuple[int, ...]:
        return tuple(lines[i] for i in t)

    if g.family == "x":
        return x_gate(lines[g.target], at(g.controls), at(g.negative_controls))
    return swap_gate(lines[g.targets[0]], lines[g.targets[1]], at(g.controls), at(g.negative_controls))


def reversible(op: Instruction, depth: int = 0) -> Reversible | None:
    """The operation as gates on its argument positions and a phase, or None (module docstring)."""
    if not isinstance(op, QiskitGate) or getattr(op, "condition", None) is not None:
        return None
    if op.is_parameterized():
        return None
    named = _by_name(op)
    if named is not None:
        return Reversible(named, 0.0)
    if op.num_qubits <= MAX_UNITARY_QUBITS:
        found = _by_matrix(op)
        if isinstance(found, Reversible):
            return found
        if found is False:
            return None
    return _by_definition(op, depth)


def placed(g: Gate, qubits: Sequence[int]) -> Gate:
    """Gate ``g`` of an operation moved from argument positions to the lines ``qubits``."""
    return _moved(g, qubits)


def to_qiskit(g: Gate) -> tuple[QiskitGate, tuple[int, ...]]:
    """One exactsyn gate (X or SWAP family) as a qiskit gate and its arguments (controls first)."""
    controls = tuple(sorted(g.controls + g.negative_controls))
    state = sum(1 << i for i, c in enumerate(controls) if c in g.controls)
    if g.family == "x":
        base: QiskitGate = XGate()
    elif g.family == "swap":
        base = SwapGate()
    else:
        raise ValueError(f"qiskit has no gate for the {g.family} gate {g}")
    op = base.control(len(controls), ctrl_state=state) if controls else base
    return op, controls + g.targets
