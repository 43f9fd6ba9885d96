"""Clifford+T decomposition of reversible circuits, written as OpenQASM 2 and 3.

Every gate of a :class:`~exactsyn.core.circuit.Circuit` (kinds ``x``, ``swap`` and
``peres``, see :mod:`exactsyn.core.gates`) becomes a sequence of the five operations
``h``, ``t``, ``tdg``, ``cx`` and ``x``.  The result equals the gate's permutation
matrix exactly, global phase included (the tests multiply it out).  Line ``l`` is
qubit ``q[l]``: basis state ``i`` has bit ``l`` equal to ``q[l]`` (qiskit's order).

Rules, gate by gate
-------------------
* NOT → ``x``; CNOT → ``cx control,target``.
* Toffoli ``(a, b → c)``: the circuit of Nielsen & Chuang, "Quantum Computation and
  Quantum Information" (2000), Fig. 4.9: 7 T/T†, 6 CNOT and 2 H.  A T-count of 7 is
  optimal for the Toffoli gate (Gosset, Kliuchnikov, Mosca, Russo, "An algorithm for
  the T-count", 2014); a version of T-depth 3 exists (Amy, Maslov, Mosca, Roetteler,
  "A meet-in-the-middle algorithm for fast synthesis of depth-optimal quantum
  circuits", IEEE TCAD 32(6), 2013), but the textbook circuit is the one used here.
* Negative controls: ``x`` on the control line before and after the gate, which then
  has that control positive (common practice).
* SWAP → three ``cx``.  A swap of ``(a, b)`` with controls ``C`` is
  ``cx b,a`` · C^{|C|+1}X(C ∪ {a} → b) · ``cx b,a`` (common practice; with no
  controls this is the three-CNOT SWAP, with one the Fredkin gate from a Toffoli).
* Peres ``(a; b, c)`` → Toffoli ``(a, b → c)`` then ``cx a,b`` (the definition in
  :mod:`exactsyn.core.gates`).  The textbook Toffoli ends with ``cx a,b``, so the two
  CNOTs meet and cancel (see *Cancellation*): 7 T/T† and 5 CNOT.
* C^cX with ``c >= 3`` controls: the construction of Barenco et al., "Elementary
  gates for quantum computation", Phys. Rev. A 52 (1995), Sect. 7 (Lemma 7.3, from
  memory for the numbering): split the controls into ``A`` (the first ⌈c/2⌉) and
  ``B`` (the rest) and borrow one line ``d`` the gate does not touch, in any state
  δ (a "dirty" line)::

      C^|A|X(A → d) · C^{|B|+1}X(B ∪ {d} → t) · C^|A|X(A → d) · C^{|B|+1}X(B ∪ {d} → t)

  The target gets ``B·(δ ⊕ A) ⊕ B·δ = A·B`` and ``d`` is restored.  Both parts have
  fewer than ``c`` controls (``c >= 3``), and each part leaves lines free to borrow
  (the part on ``d`` may borrow ``t`` or a line of ``B``, the part on ``t`` a line of
  ``A``), so the recursion never needs an extra qubit.  C^3X costs 4 Toffoli gates.

Ancilla
-------
When the gate touches every line (C^{n-1}X on ``n`` lines, or C^{n-2}SWAP, whose
C^{n-1}X is such a gate) there is no line to borrow, and for ``n >= 4`` no
ancilla-free Clifford+T circuit exists at all, by the determinant argument of Giles
& Selinger, "Exact synthesis of multiqubit Clifford+T circuits", Phys. Rev. A 87
(2013).  With ω = e^{iπ/4}: a one-qubit gate ``G`` acting on one of ``n`` qubits is
``G ⊗ I`` with ``I`` of size 2^(n-1), so its determinant is ``det(G)^(2^(n-1))``:
T gives ω^(2^(n-1)), T† gives ω^(-2^(n-1)), and H and X (det −1) give
(−1)^(2^(n-1)).  CNOT on two of ``n`` qubits is a 4×4 matrix of det −1 tensored with
an identity of size 2^(n-2): (−1)^(2^(n-2)).  For ``n >= 4`` all exponents are
multiples of 8 (for ω) or of 2 (for −1), so every operation, and every product of
them, has determinant 1.  C^{n-1}X is a single transposition of basis states:
determinant −1.  Hence one extra qubit is needed; it is a *clean* ancilla ``anc[0]``,
started in |0> and returned to |0>::

      C^|A|X(A → anc) · C^{|B|+1}X(B ∪ {anc} → t) · C^|A|X(A → anc)

(compute, use, uncompute).  On ``n + 1`` qubits the gate is two transpositions
(determinant 1), so the obstruction is gone.  For ``n = 3`` (T has determinant
ω^4 = −1 there) no ancilla is needed: the Toffoli gate is decomposed directly.  A
circuit uses at most one ancilla; every gate that needs one reuses ``anc[0]``.

Cancellation
------------
Within the decomposition of one gate, an operation directly followed by its inverse
on the same qubits (``h h``, ``x x``, ``cx cx``, ``t tdg``, ``tdg t``) is removed,
repeatedly (a stack, no commutation rules).  Nothing is cancelled across gates, so
the counts of a circuit are the sums of the counts of its gates — the per-gate costs
of :mod:`exactsyn.core.costs` add up to what :func:`exactsyn.io.qasm.clifford_t_to_qasm2` writes.

Counts
------
``t_count`` counts ``t`` and ``tdg``; ``cnot_count`` counts ``cx``; ``t_depth`` is
the largest number of T/T† operations on any path through the circuit in the order
written (each qubit keeps the T-count of its deepest path so far; a ``cx`` joins
its two qubits at the larger value).  This is the number of T-layers of an
as-soon-as-possible schedule in which only T/T† operations take time; no commutation
rules are applied.  It equals qiskit's ``QuantumCircuit.depth`` filtered to ``t``
and ``tdg``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from exactsyn.caches import memo
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import GATE_FAMILIES, Gate
from exactsyn.errors import ExactsynError

Op = tuple[str, tuple[int, ...]]

OP_ARITY = {"h": 1, "t": 1, "tdg": 1, "x": 1, "cx": 2}
_INVERSE = {"h": "h", "x": "x", "cx": "cx", "t": "tdg", "tdg": "t"}


@dataclass(frozen=True)
class CliffordT:
    """A Clifford+T circuit: ``lines`` data qubits ``0..lines-1``, then ``ancillas``
    clean ancilla qubits (index ``lines + i`` is ``anc[i]``), and the ops in order.

    An op is ``(name, qubits)`` with ``name`` one of ``h t tdg x cx``; ``cx`` has
    ``(control, target)``."""

    lines: int
    ancillas: int
    ops: tuple[Op, ...]

    def __post_init__(self) -> None:
        if self.lines < 1 or self.ancillas < 0:
            raise ExactsynError("a Clifford+T circuit needs at least one line and no negative ancilla count")
        size = self.qubits
        for name, qubits in self.ops:
            if OP_ARITY.get(name) != len(qubits):
                raise ExactsynError(f"bad Clifford+T op {name}{qubits}: use h, t, tdg, x (1 qubit) or cx (2)")
            if len(set(qubits)) != len(qubits) or any(not 0 <= q < size for q in qubits):
                raise ExactsynError(f"Clifford+T op {name}{qubits} uses a qubit outside 0..{size - 1} or twice")

    @property
    def qubits(self) -> int:
        """Data lines plus ancillas."""
        return self.lines + self.ancillas

    def count(self, *names: str) -> int:
        """How many ops have one of ``names``."""
        return sum(1 for name, _ in self.ops if name in names)

    @property
    def t_count(self) -> int:
        return self.count("t", "tdg")

    @property
    def cnot_count(self) -> int:
        return self.count("cx")

    @property
    def h_count(self) -> int:
        return self.count("h")

    @property
    def x_count(self) -> int:
        return self.count("x")

    @property
    def t_depth(self) -> int:
        """Most T/T† ops on one path through the circuit (module docstring, *Counts*)."""
        level = [0] * self.qubits
        for name, qubits in self.ops:
            if name in ("t", "tdg"):
                level[qubits[0]] += 1
            elif name == "cx":
                a, b = qubits
                level[a] = level[b] = max(level[a], level[b])
        return max(level, default=0)

    def counts(self) -> dict[str, int]:
        """Op name → how often it occurs (names that occur only)."""
        out: dict[str, int] = {}
        for name, _ in self.ops:
            out[name] = out.get(name, 0) + 1
        return out


# ---------------------------------------------------------------------------- building blocks
def _toffoli(a: int, b: int, c: int) -> tuple[Op, ...]:
    """Toffoli (a, b → c): Nielsen & Chuang (2000), Fig. 4.9."""
    return (
        ("h", (c,)),
        ("cx", (b, c)),
        ("tdg", (c,)),
        ("cx", (a, c)),
        ("t", (c,)),
        ("cx", (b, c)),
        ("tdg", (c,)),
        ("cx", (a, c)),
        ("t", (b,)),
        ("t", (c,)),
        ("h", (c,)),
        ("cx", (a, b)),
        ("t", (a,)),
        ("tdg", (b,)),
        ("cx", (a, b)),
    )


def _split(controls: tuple[int, ...]) -> tuple[tuple[int, ...], tuple[int, ...]]:
    k = (len(controls) + 1) // 2
    return controls[:k], controls[k:]


@memo(maxsize=4096)
def _mcx(controls: tuple[int, ...], target: int, qubits: int) -> tuple[Op, ...]:
    """C^cX with positive ``controls``, borrowing an untouched line of ``range(qubits)``
    when ``c >= 3`` (Barenco et al. 1995; module docstring).  The caller guarantees a
    free line exists."""
    c = len(controls)
    if c == 0:
        return (("x", (target,)),)
    if c == 1:
        return (("cx", (controls[0], target)),)
    if c == 2:
        return _toffoli(controls[0], controls[1], target)
    touched = set(controls) | {target}
    free = [q for q in range(qubits) if q not in touched]
    if not free:  # unreachable from the public functions, which add an ancilla first
        raise ExactsynError(f"internal: C{c}X on {qubits} qubits has no line to borrow")
    d = free[0]
    a_part, b_part = _split(controls)
    first = _mcx(a_part, d, qubits)
    second = _mcx(b_part + (d,), target, qubits)
    return first + second + first + second


def _mcx_top(controls: tuple[int, ...], target: int, lines: int) -> tuple[tuple[Op, ...], int]:
    """C^cX on ``lines`` lines: (ops, ancillas used); a clean ancilla only when no line is free."""
    if len(controls) <= 2 or len(controls) + 1 < lines:
        return _mcx(controls, target, lines), 0
    anc = lines
    a_part, b_part = _split(controls)
    compute = _mcx(a_part, anc, lines + 1)
    return compute + _mcx(b_part + (anc,), target, lines + 1) + compute, 1


def _cancel(ops: tuple[Op, ...]) -> tuple[Op, ...]:
    """Drop an op directly followed by its inverse on the same qubits, repeatedly."""
    stack: list[Op] = []
    for op in ops:
        if stack and stack[-1] == (_INVERSE[op[0]], op[1]):
            stack.pop()
        else:
            stack.append(op)
    return tuple(stack)


def _gate_ops(gate: Gate, lines: int) -> tuple[tuple[Op, ...], int]:
    if gate.family == "peres":
        (a,), (b, c) = gate.controls, gate.targets
        return _toffoli(a, b, c) + (("cx", (a, b)),), 0
    flips: tuple[Op, ...] = tuple(("x", (q,)) for q in gate.negative_controls)
    controls = tuple(sorted(gate.controls + gate.negative_controls))
    if gate.family == "x":
        core, anc = _mcx_top(controls, gate.target, lines)
    else:
        a, b = gate.targets
        inner, anc = _mcx_top(tuple(sorted(controls + (a,))), b, lines)
        core = (("cx", (b, a)),) + inner + (("cx", (b, a)),)
    return flips + core + flips, anc


def _check_gate(gate: Gate, lines: int) -> None:
    if isinstance(lines, bool) or not isinstance(lines, int) or lines < 1:
        raise ExactsynError(f"line count must be a positive integer, not {lines!r}")
    if gate.family not in GATE_FAMILIES:
        raise ExactsynError(f"unknown gate family {gate.family!r}; expected one of {', '.join(GATE_FAMILIES)}")
    if any(line >= lines for line in gate.lines):
        raise ExactsynError(f"gate {gate} uses a line outside 0..{lines - 1}")


# ---------------------------------------------------------------------------- public API
@memo(maxsize=8192)
def decompose_gate(gate: Gate, lines: int) -> CliffordT:
    """One gate on ``lines`` lines as Clifford+T (cached)."""
    _check_gate(gate, lines)
    ops, anc = _gate_ops(gate, lines)
    return CliffordT(lines, anc, _cancel(ops))


def decompose(circuit: Circuit) -> CliffordT:
    """The whole circuit: the gates' decompositions in order, sharing one ancilla if any needs it."""
    parts = [decompose_gate(g, circuit.lines) for g in circuit.gates]
    ops: tuple[Op, ...] = tuple(op for part in parts for op in part.ops)
    return CliffordT(circuit.lines, max((p.ancillas for p in parts), default=0), ops)


def simulate(ct: CliffordT) -> np.ndarray:
    """The decomposition's action on every basis input with the ancillas at |0>: column ``i``
    is the output state vector for input ``i`` (numpy, complex; ancilla qubits above the lines)."""
    dim, inputs = 1 << ct.qubits, 1 << ct.lines
    state = np.zeros((dim, inputs), dtype=complex)
    state[np.arange(inputs), np.arange(inputs)] = 1.0
    index = np.arange(dim)
    phase = np.exp(1j * np.pi / 4)
    for name, qs in ct.ops:
        if name == "x":
            state = state[index ^ (1 << qs[0])]
        elif name == "cx":
            c, t = qs
            state = state[np.where(index >> c & 1, index ^ (1 << t), index)]
        elif name == "h":
            bit = 1 << qs[0]
            low, high = state[index & ~bit], state[index | bit]
            state = np.where((index & bit)[:, None] != 0, low - high, low + high) / np.sqrt(2)
        else:  # t or tdg
            factor = phase if name == "t" else np.conj(phase)
            state = np.where((index >> qs[0] & 1)[:, None] == 1, state * factor, state)
    return state


def check_clifford_t(ct: CliffordT, circuit: Circuit) -> None:
    """Refuse a decomposition that does not map every input ``|i>|0>`` exactly to ``|p[i]>|0>``."""
    out = simulate(ct)
    perm = circuit.permutation()
    expected = np.zeros_like(out)
    expected[list(perm), np.arange(len(perm))] = 1.0
    if not np.allclose(out, expected, atol=1e-9):
        raise RuntimeError("internal error: the Clifford+T decomposition does not compute the circuit")


def gate_t_count(gate: Gate, lines: int) -> int:
    """T/T† count of the gate's decomposition on ``lines`` lines."""
    return decompose_gate(gate, lines).t_count


def gate_cnot_count(gate: Gate, lines: int) -> int:
    """CNOT count of the gate's decomposition on ``lines`` lines."""
    return decompose_gate(gate, lines).cnot_count
