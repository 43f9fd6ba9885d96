"""OpenQASM gate calls and ``gate`` definitions: their unitary, and the reversible gates they are.

The reader of :mod:`exactsyn.io.qasm` keeps circuits of reversible gates only.  Files
written by other tools define multiple-control gates through ``gate`` blocks whose
bodies use phase and Hadamard gates (an ``mcx`` built from ``h``, ``p`` and ``cx``, for
example).  This module gives such a definition its meaning:

* **Gate sequences.**  A body made only of reversible calls (``x cx ccx swap cswap``,
  ``CX c3x c4x``, earlier definitions of this kind, with ``ctrl`` / ``negctrl`` /
  ``inv`` / integer ``pow`` modifiers) is expanded call by call: the definition *is*
  that sequence of gates.
* **Unitaries.**  Any other body is multiplied out with numpy on its few qubits
  (at most :data:`MAX_UNITARY_QUBITS`).  When the unitary is a permutation matrix up to
  one global phase (tolerance :data:`TOLERANCE`) and that permutation is one gate of the
  NOT / CNOT / MCT family (mixed polarity allowed), the swap family or the Peres gate, the
  call is that gate; otherwise it is refused with the reason.

Conventions (those of the OpenQASM specifications and of qiskit, which writes such
files): operand ``j`` of a gate is bit ``j`` of the basis index of its matrix (the first
operand is the least significant bit), ``U(θ, φ, λ) = [[cos θ/2, −e^{iλ} sin θ/2],
[e^{iφ} sin θ/2, e^{i(φ+λ)} cos θ/2]]`` (Cross, Bishop, Smolin, Gambetta, "Open quantum
assembly language", 2017), ``ctrl @`` / ``negctrl @`` put their control operands first,
``inv @`` is the adjoint and ``pow(k) @`` the k-th power (Cross et al., "OpenQASM 3: A
broader and deeper quantum assembly language", ACM TQC 2022).  The standard gates take
the matrices qiskit gives them (``rz(λ) = diag(e^{−iλ/2}, e^{iλ/2})``, ``u3 = U``,
``cu(θ, φ, λ, γ)`` = controlled ``e^{iγ} U(θ, φ, λ)``); where the two include files differ
from these only by a global phase, nothing a reversible reading can see changes, and
under a control modifier these are the matrices the qiskit reader uses.

Parameter expressions are evaluated by a whitelist over Python's ``ast`` (numbers,
``pi`` / ``π``, ``tau`` / ``τ``, ``euler`` / ``ℇ``, ``+ − * / ^ **`` and the functions of
the specifications: ``sin cos tan exp ln sqrt arcsin arccos arctan``), never ``eval``.
"""

from __future__ import annotations

import ast
import cmath
import math
import re
import warnings
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from itertools import permutations

import numpy as np

from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.core.words import count
from exactsyn.errors import ExactsynError
from exactsyn.io.limits import MAX_GATES, MAX_LINES, check_power, reduced_power

#: Largest gate whose unitary is multiplied out (a 2^10 × 2^10 complex matrix is 16 MiB).
MAX_UNITARY_QUBITS = 10
#: Entries of a permutation matrix up to a global phase are this close to 0 or to one phase.
TOLERANCE = 1e-9

_IDENT = r"[A-Za-z_\u0080-\uffff][\w\u0080-\uffff]*"


# ---------------------------------------------------------------------------- expressions
_CONSTANTS = {"pi": math.pi, "π": math.pi, "tau": math.tau, "τ": math.tau, "euler": math.e, "ℇ": math.e}
_FUNCTIONS: dict[str, Callable[[float], float]] = {
    "sin": math.sin,
    "cos": math.cos,
    "tan": math.tan,
    "exp": math.exp,
    "ln": math.log,
    "sqrt": math.sqrt,
    "arcsin": math.asin,
    "arccos": math.acos,
    "arctan": math.atan,
}
_BINARY: dict[type, Callable[[float, float], float]] = {
    ast.Add: lambda a, b: a + b,
    ast.Sub: lambda a, b: a - b,
    ast.Mult: lambda a, b: a * b,
    ast.Div: lambda a, b: a / b,
    ast.Pow: lambda a, b: a**b,
}


def evaluate(text: str, env: Mapping[str, float] | None = None) -> float:
    """The value of a parameter expression; ``env`` holds the parameters of a definition."""
    env = env or {}
    source = text.strip().replace("^", "**")
    try:
        with warnings.catch_warnings():  # a SyntaxWarning would be a second line on stderr
            warnings.simplefilter("ignore")
            tree = ast.parse(source, mode="eval")
    except (SyntaxError, ValueError, RecursionError, MemoryError):
        raise ExactsynError(f"cannot read the parameter '{text.strip()}'") from None

    def walk(node: ast.AST) -> float:
        if isinstance(node, ast.Expression):
            return walk(node.body)
        if isinstance(node, ast.Constant) and isinstance(node.value, int | float) and not isinstance(node.value, bool):
            return float(node.value)
        if isinstance(node, ast.Name):
            if node.id in env:
                return env[node.id]
            if node.id in _CONSTANTS:
                return _CONSTANTS[node.id]
            raise ExactsynError(f"unknown name '{node.id}' in the parameter '{text.strip()}'")
        if isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.USub | ast.UAdd):
            value = walk(node.operand)
            return -value if isinstance(node.op, ast.USub) else value
        if isinstance(node, ast.BinOp) and type(node.op) in _BINARY:
            try:
                return _BINARY[type(node.op)](walk(node.left), walk(node.right))
            except (ZeroDivisionError, OverflowError):
                raise ExactsynError(f"the parameter '{text.strip()}' has no finite value") from None
        if (
            isinstance(node, ast.Call)
            and isinstance(node.func, ast.Name)
            and node.func.id in _FUNCTIONS
            and len(node.args) == 1
            and not node.keywords
        ):
            try:
                return _FUNCTIONS[node.func.id](walk(node.args[0]))
            except (ValueError, OverflowError):
                raise ExactsynError(f"the parameter '{text.strip()}' has no real value") from None
        raise ExactsynError(f"unsupported expression in the parameter '{text.strip()}'")

    value = walk(tree)
    if isinstance(value, complex) or not math.isfinite(value):
        raise ExactsynError(f"the parameter '{text.strip()}' has no finite real value")
    return value


# ---------------------------------------------------------------------------- matrices
Matrix = np.ndarray


def _u(theta: float, phi: float, lam: float) -> Matrix:
    c, s = math.cos(theta / 2), math.sin(theta / 2)
    return np.array(
        [[c, -cmath.exp(1j * lam) * s], [cmath.exp(1j * phi) * s, cmath.exp(1j * (phi + lam)) * c]], dtype=complex
    )


def _diag(*entries: complex) -> Matrix:
    return np.diag(np.array(entries, dtype=complex))


def controlled(matrix: Matrix, count: int = 1, negative: bool = False) -> Matrix:
    """``ctrl(count) @`` (or ``negctrl``): the control operands come first, i.e. are the low bits."""
    dc = 1 << count
    proj = np.zeros((dc, dc), dtype=complex)
    on = 0 if negative else dc - 1
    proj[on, on] = 1.0
    return np.kron(matrix, proj) + np.kron(np.eye(matrix.shape[0], dtype=complex), np.eye(dc) - proj)


_X = np.array([[0, 1], [1, 0]], dtype=complex)
_Y = np.array([[0, -1j], [1j, 0]], dtype=complex)
_H = np.array([[1, 1], [1, -1]], dtype=complex) / math.sqrt(2)
_SX = np.array([[1 + 1j, 1 - 1j], [1 - 1j, 1 + 1j]], dtype=complex) / 2
_SWAP = np.array([[1, 0, 0, 0], [0, 0, 1, 0], [0, 1, 0, 0], [0, 0, 0, 1]], dtype=complex)


def _rx(t: float) -> Matrix:
    return np.array([[math.cos(t / 2), -1j * math.sin(t / 2)], [-1j * math.sin(t / 2), math.cos(t / 2)]])


def _ry(t: float) -> Matrix:
    return np.array([[math.cos(t / 2), -math.sin(t / 2)], [math.sin(t / 2), math.cos(t / 2)]], dtype=complex)


def _rz(t: float) -> Matrix:
    return _diag(cmath.exp(-0.5j * t), cmath.exp(0.5j * t))


def _p(t: float) -> Matrix:
    return _diag(1, cmath.exp(1j * t))


def _two(pauli: Matrix, t: float) -> Matrix:
    """exp(−i t/2 P⊗P) for a Pauli matrix P (rxx, rzz)."""
    pp = np.kron(pauli, pauli)
    return math.cos(t / 2) * np.eye(4, dtype=complex) - 1j * math.sin(t / 2) * pp


# name -> (parameter count, qubit count, matrix builder)
STANDARD: dict[str, tuple[int, int, Callable[..., Matrix]]] = {
    "id": (0, 1, lambda: np.eye(2, dtype=complex)),
    "x": (0, 1, lambda: _X),
    "y": (0, 1, lambda: _Y),
    "z": (0, 1, lambda: _diag(1, -1)),
    "h": (0, 1, lambda: _H),
    "s": (0, 1, lambda: _diag(1, 1j)),
    "sdg": (0, 1, lambda: _diag(1, -1j)),
    "t": (0, 1, lambda: _diag(1, cmath.exp(0.25j * math.pi))),
    "tdg": (0, 1, lambda: _diag(1, cmath.exp(-0.25j * math.pi))),
    "sx": (0, 1, lambda: _SX),
    "sxdg": (0, 1, lambda: _SX.conj().T),
    "rx": (1, 1, _rx),
    "ry": (1, 1, _ry),
    "rz": (1, 1, _rz),
    "p": (1, 1, _p),
    "phase": (1, 1, _p),
    "u1": (1, 1, _p),
    "u2": (2, 1, lambda phi, lam: _u(math.pi / 2, phi, lam)),
    "u3": (3, 1, _u),
    "u": (3, 1, _u),
    "U": (3, 1, _u),
    "gphase": (1, 0, lambda g: np.array([[cmath.exp(1j * g)]])),
    "cx": (0, 2, lambda: controlled(_X)),
    "CX": (0, 2, lambda: controlled(_X)),
    "cy": (0, 2, lambda: controlled(_Y)),
    "cz": (0, 2, lambda: controlled(_diag(1, -1))),
    "ch": (0, 2, lambda: controlled(_H)),
    "csx": (0, 2, lambda: controlled(_SX)),
    "cp": (1, 2, lambda t: controlled(_p(t))),
    "cphase": (1, 2, lambda t: controlled(_p(t))),
    "cu1": (1, 2, lambda t: controlled(_p(t))),
    "crx": (1, 2, lambda t: controlled(_rx(t))),
    "cry": (1, 2, lambda t: controlled(_ry(t))),
    "crz": (1, 2, lambda t: controlled(_rz(t))),
    "cu3": (3, 2, lambda t, p, la: controlled(_u(t, p, la))),
    "cu": (4, 2, lambda t, p, la, g: controlled(cmath.exp(1j * g) * _u(t, p, la))),
    "swap": (0, 2, lambda: _SWAP),
    "rxx": (1, 2, lambda t: _two(_X, t)),
    "rzz": (1, 2, lambda t: _two(_diag(1, -1), t)),
    "ccx": (0, 3, lambda: controlled(_X, 2)),
    "cswap": (0, 3, lambda: controlled(_SWAP)),
    "c3x": (0, 4, lambda: controlled(_X, 3)),
    "c4x": (0, 5, lambda: controlled(_X, 4)),
}

# The relative-phase Toffoli gates of qiskit's qelib1.inc, which its OpenQASM 2 writer
# calls without defining them: U / CX forms written from the gates' published circuits
# (Maslov, "Advantages of using relative-phase Toffoli gates", Phys. Rev. A 93, 2016);
# the tests compare them with qiskit's matrices.
PRELUDE = """
gate rccx a,b,c { u2(0,pi) c; u1(pi/4) c; cx b,c; u1(-pi/4) c; cx a,c; u1(pi/4) c; cx b,c; u1(-pi/4) c; u2(0,pi) c; }
gate rc3x a,b,c,d { u2(0,pi) d; u1(pi/4) d; cx c,d; u1(-pi/4) d; u2(0,pi) d; cx a,d; u1(pi/4) d; cx b,d;
  u1(-pi/4) d; cx a,d; u1(pi/4) d; cx b,d; u1(-pi/4) d; u2(0,pi) d; u1(pi/4) d; cx c,d; u1(-pi/4) d; u2(0,pi) d; }
"""

# Reversible standard gates: name -> the gates on its operands 0..k-1 (operand j = local line j).
REVERSIBLE: dict[str, tuple[int, tuple[Gate, ...]]] = {
    "x": (1, (x_gate(0),)),
    "cx": (2, (x_gate(1, [0]),)),
    "CX": (2, (x_gate(1, [0]),)),
    "ccx": (3, (x_gate(2, [0, 1]),)),
    "c3x": (4, (x_gate(3, [0, 1, 2]),)),
    "c4x": (5, (x_gate(4, [0, 1, 2, 3]),)),
    "swap": (2, (swap_gate(0, 1),)),
    "cswap": (3, (swap_gate(1, 2, [0]),)),
}


# ---------------------------------------------------------------------------- calls
@dataclass(frozen=True)
class Modifier:
    word: str  # ctrl | negctrl | inv | pow
    arg: str | None  # the text in parentheses, if any


@dataclass(frozen=True)
class Call:
    """One gate call: ``modifiers @ name(params) operands``, each part as text."""

    modifiers: tuple[Modifier, ...]
    name: str
    params: tuple[str, ...]
    operands: tuple[str, ...]


_MOD = re.compile(r"\s*(ctrl|negctrl|inv|pow)\s*(?:\(\s*([^()]*?)\s*\))?\s*@\s*")


def _split_top(text: str) -> list[str]:
    """Split at commas outside parentheses."""
    out: list[str] = []
    buf: list[str] = []
    depth = 0
    for ch in text:
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth -= 1
        if ch == "," and depth == 0:
            out.append("".join(buf).strip())
            buf = []
        else:
            buf.append(ch)
    out.append("".join(buf).strip())
    return out


def parse_call(stmt: str) -> Call | None:
    """A gate call, or None when ``stmt`` does not have the shape of one."""
    rest = stmt
    mods: list[Modifier] = []
    while m := _MOD.match(rest):
        mods.append(Modifier(m.group(1), m.group(2)))
        rest = rest[m.end() :]
    head = re.match(rf"\s*({_IDENT})\s*", rest)
    if not head:
        return None
    name, rest = head.group(1), rest[head.end() :]
    params: tuple[str, ...] = ()
    if rest.startswith("("):
        depth, i = 0, 0
        for i, ch in enumerate(rest):  # noqa: B007  (i is the closing parenthesis after the loop)
            depth += ch == "("
            depth -= ch == ")"
            if depth == 0:
                break
        else:
            return None
        params = tuple(_split_top(rest[1:i]))
        if params == ("",):
            params = ()
        rest = rest[i + 1 :]
    if not rest.strip() and name != "gphase":
        return None
    operands = tuple(p.strip() for p in rest.split(",")) if rest.strip() else ()
    if any(not p for p in operands) or "=" in rest or "->" in rest:
        return None
    return Call(tuple(mods), name, params, operands)


def modifier_count(mod: Modifier, env: Mapping[str, float] | None = None) -> int:
    """The integer of ``ctrl(n)``, ``negctrl(n)`` or ``pow(k)`` (1 when omitted), bounded before use:
    a control count by the lines a circuit may have, an exponent by :data:`~exactsyn.io.limits.MAX_POWER`."""
    if mod.arg is None:
        if mod.word == "pow":
            raise ExactsynError("'pow @' needs an exponent, e.g. pow(2) @")
        return 1
    literal = re.fullmatch(r"\s*([+-]?)\s*(\d{1,19})\s*", mod.arg)
    if literal:  # exact, also beyond the 2^53 where floats stop counting by one
        count = int(literal.group(1) + literal.group(2))
    else:
        value = evaluate(mod.arg, env)
        if value != int(value) or abs(value) > 2**53:
            raise ExactsynError(f"'{mod.word}({mod.arg})' needs an integer")
        count = int(value)
    if mod.word in ("ctrl", "negctrl"):
        if count < 1:
            raise ExactsynError(f"'{mod.word}({mod.arg})': the control count must be a positive integer")
        if count > MAX_LINES:
            raise ExactsynError(f"'{mod.word}({mod.arg})': {count} controls; a circuit has at most {MAX_LINES} lines")
    else:
        check_power(count, f"'pow({mod.arg})'")
    return count


def too_long() -> ExactsynError:
    """The refusal of an expansion past the gate budget (:data:`~exactsyn.io.limits.MAX_GATES`);
    the caller puts the statement in front."""
    return ExactsynError(
        f"expands past {MAX_GATES:,} gates, the most a circuit read by exactsyn may have (counted after "
        "every definition, modifier and power is expanded)"
    )


# ---------------------------------------------------------------------------- reversible meaning
def _add_controls(gates: Sequence[Gate], pos: Sequence[int], neg: Sequence[int]) -> tuple[Gate, ...]:
    made: dict[Gate, tuple[Gate, ...]] = {}  # a long expansion repeats few distinct gates

    def controlled_gate(g: Gate) -> tuple[Gate, ...]:
        parts: Sequence[Gate] = (g,)
        if g.family == "peres":  # the Toffoli, then the CNOT (exactsyn.core.gates)
            (a,), (b, c) = g.controls, g.targets
            parts = (x_gate(c, [a, b]), x_gate(b, [a]))
        return tuple(
            x_gate(h.target, (*h.controls, *pos), (*h.negative_controls, *neg))
            if h.family == "x"
            else swap_gate(h.targets[0], h.targets[1], (*h.controls, *pos), (*h.negative_controls, *neg))
            for h in parts
        )

    out: list[Gate] = []
    for g in gates:
        if g not in made:
            made[g] = controlled_gate(g)
        out.extend(made[g])
    return tuple(out)


def _inverse(gates: Sequence[Gate]) -> tuple[Gate, ...]:
    return tuple(h for g in reversed(gates) for h in g.inverse_gates())


def _relabel(gates: Sequence[Gate], lines: Sequence[int]) -> tuple[Gate, ...]:
    """The gates with local line ``i`` moved to ``lines[i]`` (nothing to do for ``0, 1, 2, ...``)."""
    if all(line == i for i, line in enumerate(lines)):
        return tuple(gates)
    made: dict[Gate, Gate] = {}  # a long expansion repeats few distinct gates

    def moved(g: Gate) -> Gate:
        targets = tuple(lines[t] for t in g.targets)
        pos = [lines[c] for c in g.controls]
        neg = [lines[c] for c in g.negative_controls]
        if g.family == "x":
            return x_gate(targets[0], pos, neg)
        if g.family == "swap":
            return swap_gate(targets[0], targets[1], pos, neg)
        return peres_gate(pos[0], targets[0], targets[1])

    out = []
    for g in gates:
        h = made.get(g)
        if h is None:
            h = made[g] = moved(g)
        out.append(h)
    return tuple(out)


def modified_gates(
    base: Sequence[Gate],
    arity: int,
    modifiers: Sequence[Modifier],
    lines: Sequence[int],
    budget: int = MAX_GATES,
) -> tuple[Gate, ...]:
    """The gates of ``modifiers @ base`` on operand ``lines`` (control operands first).

    ``base`` acts on local lines ``0..arity-1``.  A control modifier adds its operands as
    controls of every gate (a controlled product is the product of the controlled gates);
    ``inv`` reverses the sequence and inverts each gate; ``pow(k)`` repeats it ``k`` modulo
    the order of its permutation (k < 0: the inverse, :func:`~exactsyn.io.limits.reduced_power`).
    Raises :class:`ExactsynError` on a wrong operand count, a qubit used twice, or a result
    longer than ``budget`` gates — each checked before the gates are made (messages without
    a line number: the caller adds it)."""
    need = arity + sum(modifier_count(m) for m in modifiers if m.word in ("ctrl", "negctrl"))
    if len(lines) != need:
        raise ExactsynError(f"needs {need} qubits, not {len(lines)}")
    if len(set(lines)) != len(lines):
        raise ExactsynError("uses a qubit twice")
    if len(base) > budget:
        raise too_long()
    at = need - arity
    gates = _relabel(base, lines[at:])
    for mod in reversed(modifiers):  # innermost first
        if mod.word in ("ctrl", "negctrl"):
            count = modifier_count(mod)
            at -= count
            ctl = lines[at : at + count]
            gates = _add_controls(gates, ctl if mod.word == "ctrl" else (), ctl if mod.word == "negctrl" else ())
            if len(gates) > budget:  # a controlled Peres gate is two gates
                raise too_long()
        elif mod.word == "inv":
            gates = _inverse(gates)
        else:
            times, inverse = reduced_power(gates, modifier_count(mod))
            if len(gates) * times > budget:
                raise too_long()
            gates = (_inverse(gates) if inverse else gates) * times
    return gates


# ---------------------------------------------------------------------------- definitions
@dataclass(frozen=True)
class Definition:
    """A ``gate`` block: its parameters, its qubit arguments and its body calls."""

    name: str
    params: tuple[str, ...]
    args: tuple[str, ...]
    body: tuple[Call, ...]
    line: int
    gates: tuple[Gate, ...] | None = None  # the body as gates on args 0..k-1, when every call is reversible
    _unitaries: dict[tuple[float, ...], Matrix] = field(default_factory=dict, compare=False, repr=False)

    @property
    def arity(self) -> int:
        return len(self.args)


Lookup = Callable[[str], "Definition | None"]
# A reversible gate the reader knows besides the standard ones (exactsyn's own definitions).
BaseLookup = Callable[[str], "tuple[int, tuple[Gate, ...]] | None"]


def parse_definition(ln: int, stmt: str, lookup: Lookup, base: BaseLookup) -> Definition:
    """Read ``gate name(params) a, b { body }`` (the statement as one line of text)."""
    m = re.fullmatch(rf"gate\s+({_IDENT})\s*(?:\(([^)]*)\))?\s*([^{{]*)\{{(.*)\}}", stmt, re.S)
    if not m:
        raise ExactsynError(f"cannot read the gate definition at line {ln}")
    name = m.group(1)
    params = tuple(p.strip() for p in (m.group(2) or "").split(",") if p.strip())
    args = tuple(a.strip() for a in m.group(3).split(",") if a.strip())
    where = f"gate definition '{name}' at line {ln}"
    for ident in (*params, *args):
        if not re.fullmatch(_IDENT, ident):
            raise ExactsynError(f"{where}: '{ident}' is not a name")
    if len(set(args)) != len(args) or len(set(params)) != len(params):
        raise ExactsynError(f"{where}: a name is used twice")
    if not args:
        raise ExactsynError(f"{where} has no qubit arguments")
    calls: list[Call] = []
    for part in m.group(4).split(";"):
        text = " ".join(part.split())
        if not text or re.fullmatch(r"barrier\b.*", text):
            continue
        call = parse_call(text)
        if call is None:
            raise ExactsynError(f"{where}: cannot read '{text}'")
        for op in call.operands:
            if op not in args:
                raise ExactsynError(f"{where}: '{op}' is not one of its qubit arguments ({', '.join(args)})")
        if call.name not in STANDARD and lookup(call.name) is None and base(call.name) is None:
            raise ExactsynError(f"{where} calls '{call.name}', which is neither a standard gate nor defined before it")
        calls.append(call)
    defn = Definition(name, params, args, tuple(calls), ln)
    try:
        gates = _as_gates(defn, lookup, base)
    except ExactsynError as e:
        raise ExactsynError(f"{where}: {e.message}") from None
    return Definition(name, params, args, tuple(calls), ln, gates)


def reversible_meaning(call: Call, lookup: Lookup, base: BaseLookup) -> tuple[int, tuple[Gate, ...]] | None:
    """``(operand count, gates on operands 0..k-1)`` when the called gate is a gate sequence
    whatever its parameters, else None.  Names resolve as in the reader: definitions of the
    file first, then exactsyn's own definitions, then the reversible standard gates."""
    defn = lookup(call.name)
    if defn is not None:
        if defn.gates is None or len(call.params) != len(defn.params):
            return None
        return defn.arity, defn.gates
    if call.params:
        return None
    own = base(call.name)
    return own if own is not None else REVERSIBLE.get(call.name)


def _as_gates(defn: Definition, lookup: Lookup, base: BaseLookup) -> tuple[Gate, ...] | None:
    """The body as one gate sequence, or None when some call is not a plain reversible gate."""
    out: list[Gate] = []
    index = {a: i for i, a in enumerate(defn.args)}
    for call in defn.body:
        known = reversible_meaning(call, lookup, base)
        if known is None:
            return None
        if any(m.arg is not None and not re.fullmatch(r"-?\d+", m.arg.strip()) for m in call.modifiers):
            return None
        arity, gates = known
        try:
            lines = [index[o] for o in call.operands]
            out.extend(modified_gates(gates, arity, call.modifiers, lines, MAX_GATES - len(out)))
        except ExactsynError as e:
            raise ExactsynError(f"'{call.name}' {e.message}") from None
    return tuple(out)


def _apply(state: Matrix, matrix: Matrix, qubits: Sequence[int], k: int) -> Matrix:
    """``matrix`` (operand j = its bit j) on ``qubits`` of a k-qubit state with one column per input."""
    m = len(qubits)
    if m == 0:
        return state * matrix[0, 0]
    t = state.reshape([2] * k + [-1])  # axis k-1-b holds bit b
    mt = matrix.reshape([2] * (2 * m))  # out bits m-1..0, then in bits m-1..0
    r = np.tensordot(mt, t, axes=([m + (m - 1 - j) for j in range(m)], [k - 1 - q for q in qubits]))
    r = np.moveaxis(r, [m - 1 - j for j in range(m)], [k - 1 - q for q in qubits])
    return r.reshape(state.shape)


def call_qubits(call: Call, env: Mapping[str, float], lookup: Lookup, base: BaseLookup) -> int:
    """How many operands a call takes: its gate's, plus the operands of its control modifiers."""
    defn = lookup(call.name)
    own = base(call.name)
    if defn is not None:
        arity = defn.arity
    elif own is not None:
        arity = own[0]
    elif call.name in STANDARD:
        arity = STANDARD[call.name][1]
    else:
        raise ExactsynError(f"unsupported gate '{call.name}'")
    return arity + sum(modifier_count(m, env) for m in call.modifiers if m.word in ("ctrl", "negctrl"))


def call_matrix(call: Call, env: Mapping[str, float], lookup: Lookup, base: BaseLookup, qubits: int) -> Matrix:
    """The unitary of one call on its ``qubits`` operands (operand j = bit j), modifiers applied.

    The operand count and the matrix size are checked before any matrix is built."""
    need = call_qubits(call, env, lookup, base)
    if need != qubits:
        raise ExactsynError(f"needs {need} qubits, not {qubits}")
    if need > MAX_UNITARY_QUBITS:
        raise ExactsynError(
            f"acts on {need} qubits; exactsyn multiplies out the unitary of gates on at most "
            f"{MAX_UNITARY_QUBITS} qubits"
        )
    values = tuple(evaluate(p, env) for p in call.params)
    defn = lookup(call.name)
    own = base(call.name)
    if defn is not None:
        matrix = definition_unitary(defn, values, lookup, base)
    elif own is not None:
        if values:
            raise ExactsynError(f"'{call.name}' takes no parameters")
        matrix = permutation_matrix(own[1], own[0])
    else:
        nparams, _, build = STANDARD[call.name]
        if len(values) != nparams:
            raise ExactsynError(f"'{call.name}' takes {count(nparams, 'parameter')}, not {len(values)}")
        matrix = build(*values)
    for mod in reversed(call.modifiers):
        if mod.word in ("ctrl", "negctrl"):
            matrix = controlled(matrix, modifier_count(mod, env), mod.word == "negctrl")
        elif mod.word == "inv":
            matrix = matrix.conj().T
        else:
            k = modifier_count(mod, env)
            matrix = np.linalg.matrix_power(matrix if k >= 0 else matrix.conj().T, abs(k))
    return matrix


def definition_unitary(defn: Definition, values: Sequence[float], lookup: Lookup, base: BaseLookup) -> Matrix:
    """The unitary of a definition for given parameter values (cached per values)."""
    key = tuple(values)
    if key in defn._unitaries:
        return defn._unitaries[key]
    if len(values) != len(defn.params):
        raise ExactsynError(f"'{defn.name}' takes {count(len(defn.params), 'parameter')}, not {len(values)}")
    k = defn.arity
    if k > MAX_UNITARY_QUBITS:
        raise ExactsynError(
            f"gate '{defn.name}' acts on {k} qubits; exactsyn multiplies out definitions of at most "
            f"{MAX_UNITARY_QUBITS} qubits"
        )
    if defn.gates is not None:
        result = permutation_matrix(defn.gates, k)
    else:
        env = dict(zip(defn.params, values, strict=True))
        index = {a: i for i, a in enumerate(defn.args)}
        state = np.eye(1 << k, dtype=complex)
        for call in defn.body:
            qubits = [index[o] for o in call.operands]
            if len(set(qubits)) != len(qubits):
                raise ExactsynError(f"'{call.name}' in '{defn.name}' uses a qubit twice")
            try:
                matrix = call_matrix(call, env, lookup, base, len(qubits))
            except ExactsynError as e:
                raise ExactsynError(f"'{call.name}' in '{defn.name}' {e.message}") from None
            state = _apply(state, matrix, qubits, k)
        result = state
    defn._unitaries[key] = result
    return result


def permutation_matrix(gates: Sequence[Gate], k: int) -> Matrix:
    """The unitary of reversible gates on k lines: column i has its 1 in row p[i]."""
    states = np.arange(1 << k, dtype=np.int64)
    out = states
    for g in gates:
        out = g.apply(out)
    matrix = np.zeros((1 << k, 1 << k), dtype=complex)
    matrix[out, states] = 1.0
    return matrix


# ---------------------------------------------------------------------------- unitary -> gate
def as_permutation(matrix: Matrix, tol: float = TOLERANCE) -> tuple[tuple[int, ...] | None, str]:
    """``(p, "")`` when the matrix is a permutation matrix times one phase, else ``(None, reason)``."""
    size = matrix.shape[0]
    cols = np.arange(size)
    rows = np.argmax(np.abs(matrix), axis=0)
    top = matrix[rows, cols]
    rest = np.abs(matrix).copy()
    rest[rows, cols] = 0.0
    if not np.allclose(np.abs(top), 1.0, atol=tol, rtol=0) or rest.max(initial=0.0) > tol:
        return None, "its unitary is not a permutation matrix (it creates superpositions)"
    if len(set(rows.tolist())) != size:
        return None, "its unitary is not a permutation matrix"
    if not np.allclose(top, top[0], atol=tol, rtol=0):
        return None, "its unitary permutes basis states but with different phases (not one global phase)"
    return tuple(int(r) for r in rows), ""


def _literals(states: Sequence[int], free: int, k: int, size: int) -> tuple[list[int], list[int]] | None:
    """Positive and negative lines of the conjunction of literals (on the lines outside the
    mask ``free``) that every state meets, when exactly ``size`` states meet it, else None.

    The states share the literals, so they lie inside the conjunction's set; with the sizes
    equal the two sets are the same."""
    full = (1 << k) - 1
    both = full & ~free
    and_all, or_all = full, 0
    for s in states:
        and_all &= s
        or_all |= s
    pos = and_all & both
    neg = ~or_all & both
    fixed = bin(pos).count("1") + bin(neg).count("1")
    if len(states) != size >> fixed:
        return None
    return [b for b in range(k) if pos >> b & 1], [b for b in range(k) if neg >> b & 1]


def gates_of_permutation(perm: Sequence[int], k: int) -> tuple[Gate, ...] | None:
    """The permutation as at most one gate on lines 0..k-1 (x family with mixed polarity, swap
    family, Peres), ``()`` for the identity, None when it is no single gate."""
    moved = [i for i, p in enumerate(perm) if p != i]
    if not moved:
        return ()
    diffs = {i ^ perm[i] for i in moved}
    if len(diffs) == 1:
        d = diffs.pop()
        bits = [b for b in range(k) if d >> b & 1]
        if len(bits) == 1:
            cube = _literals(moved, d, k, 1 << k)  # the target line takes both values
            if cube is not None:
                return (x_gate(bits[0], cube[0], cube[1]),)
        if len(bits) == 2:
            a, b = bits
            if all((i >> a & 1) != (i >> b & 1) for i in moved):
                cube = _literals(moved, d, k, 1 << (k - 1))  # lines a, b take the values 01 and 10
                if cube is not None:
                    return (swap_gate(a, b, cube[0], cube[1]),)
    if len(diffs) == 2 and k >= 3:
        states = np.arange(1 << k, dtype=np.int64)
        target = np.asarray(perm, dtype=np.int64)
        for a, b, c in permutations(range(k), 3):
            g = peres_gate(a, b, c)
            if np.array_equal(g.apply(states), target):
                return (g,)
    return None
