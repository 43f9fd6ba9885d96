"""OpenQASM 2.0 / 3.0 output and a small reader for the same gate set.

Writers
-------
:func:`to_qasm3` uses ``x``, ``cx``, ``ccx``, ``swap``, ``cswap`` from ``stdgates.inc``
and the ``ctrl(m) @`` / ``negctrl(m) @`` gate modifiers of OpenQASM 3 for everything
else (Cross et al., "OpenQASM 3: A broader and deeper quantum assembly language",
ACM TQC 2022).  Control operands come first, in the order of the modifiers, then the
operands of the base gate.

:func:`to_qasm2` has only the ``qelib1.inc`` gates (Cross, Bishop, Smolin, Gambetta,
"Open quantum assembly language", 2017).  Negative controls are written as ``x`` gates
on both sides of the gate.  A gate with ``m >= 3`` controls (``m >= 2`` for a swap) is
applied through a ``gate`` definition of our own, written only when used:

* ``xc<m> c0,...,c<m-1>,t`` is ``h t`` . C^mZ . ``h t``.  The multiple-controlled Z on
  the ``k = m + 1`` qubits is the diagonal phase ``exp(i*pi*x0*x1*...*xm)``, and
  ``x0*x1*...*xm = 2**-m * sum over non-empty S of (-1)**(|S|+1) * parity_S(x)``
  (the Walsh expansion of AND).  Each parity is computed onto the highest qubit of
  ``S`` with CNOTs, taking the subsets with a common highest qubit in Gray-code order
  so that each next parity costs one CNOT, and gets ``u1(+-pi/2**m)``; the block
  ends by undoing the last CNOT.  This is the CNOT/phase construction of diagonal
  operators by Welch, Greenbaum, Mostame and Aspuru-Guzik, "Efficient quantum circuits
  for diagonal unitaries without ancillas", New J. Phys. 16 (2014) 033040.  The result
  equals the C^mX unitary exactly, global phase included, since ``h``, ``cx`` and
  ``u1(l) = diag(1, e^{il})`` are exact.
* ``swapc<m> c0,...,c<m-1>,a,b`` is ``cx b,a`` . ``xc<m+1> c...,a,b`` . ``cx b,a``
  (a controlled swap from a controlled NOT between two CNOTs; common practice, e.g.
  the Fredkin gate from a Toffoli gate).

Clifford+T circuits (:mod:`exactsyn.core.cliffordt`) are written by
:func:`clifford_t_to_qasm2` / :func:`clifford_t_to_qasm3` over ``h``, ``t``, ``tdg``,
``cx`` and ``x``, with a second register ``anc`` when the decomposition needs an ancilla.

Peres gates (both versions)
---------------------------
Neither include file has the Peres gate (:func:`exactsyn.core.gates.peres_gate`), so a
circuit with one gets, once, right after the include line::

    gate peres a, b, c { ccx a, b, c; cx a, b; }

(the Toffoli on ``c``, then the CNOT on ``b``: ``c ^= a·b``, then ``b ^= a``; Peres,
"Reversible logic and quantum computers", Phys. Rev. A 32, 1985), and each gate is the
call ``peres q[a], q[b], q[c]``.  ``ccx`` and ``cx`` have these names in both
``qelib1.inc`` and ``stdgates.inc``, so the definition is the same text in OpenQASM 2 and
3.  The writers never put modifiers on ``peres`` (the gate has no extra controls).

Reader
------
:func:`read_qasm` (and :func:`read_qasm_layout`, which also returns the register
:class:`~exactsyn.io.layout.Layout`) reads every gate that permutes basis states:

* ``x cx ccx swap cswap`` (and ``CX c3x c4x`` of ``qelib1.inc``) with the ``ctrl`` /
  ``negctrl`` / ``inv`` / integer ``pow`` modifiers of OpenQASM 3 in any combination;
* the ``xc<m>`` / ``swapc<m>`` / ``peres`` definitions above, accepted only when their
  body is token for token the one the writers write (``peres`` takes no modifiers);
* any other ``gate`` definition and standard gate, through
  :mod:`exactsyn.io.qasm_defs`: a body of reversible calls is that sequence of gates;
  otherwise the unitary is multiplied out, and the call is accepted when it is one
  reversible gate up to a global phase (an ``mcx`` written with ``h``, ``p`` and ``cx``,
  an ``rx(pi)``), and refused with the reason when not.

Any number of quantum registers (``qreg`` or ``qubit[n]``); lines are numbered register
after register in declaration order.  Comments and ``barrier`` are skipped, classical
registers alone are ignored.  Anything else raises
:class:`~exactsyn.errors.ExactsynError` with the line number.

A small reader of our own was written rather than depending on a maintained parser:
the reference ``openqasm3`` package needs its ANTLR runtime for parsing, a heavy
dependency for the install of a tool that reads five gates and two modifiers (the
tests use that parser as a reference, where it is installed).  qiskit's reader is a
test-only dependency for the same reason.
"""

from __future__ import annotations

import functools
import re
from collections.abc import Sequence
from dataclasses import dataclass, field

from exactsyn.core.circuit import Circuit
from exactsyn.core.cliffordt import CliffordT
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io.layout import Layout
from exactsyn.io.limits import MAX_GATES, MAX_LINES, WHO_HANDLES, check_lines
from exactsyn.io.qasm_defs import (
    MAX_UNITARY_QUBITS,
    PRELUDE,
    STANDARD,
    Call,
    Definition,
    as_permutation,
    call_matrix,
    evaluate,
    gates_of_permutation,
    modified_gates,
    parse_call,
    parse_definition,
    reversible_meaning,
)

SUPPORTED = (
    "exactsyn reads gates that permute basis states (x, cx, ccx, swap, cswap, with ctrl/negctrl/inv/pow "
    "modifiers) and gate definitions whose unitary is such a gate"
)

# The Peres gate as our own definition (module docstring); the same text in both versions.
PERES_DEFINITION = "gate peres a, b, c { ccx a, b, c; cx a, b; }"

# Largest control count accepted in an xc<m> / swapc<m> name (its definition has 2**(m+2) lines).
_MAX_DEFINED_CONTROLS = 40


# ---------------------------------------------------------------------------- writing
def _q(i: int) -> str:
    return f"q[{i}]"


def _angle(sign: int, m: int) -> str:
    text = "pi" if m == 0 else f"pi/{1 << m}"
    return text if sign > 0 else "-" + text


def _xc_definition(m: int) -> list[str]:
    """Lines of ``gate xc<m>``: an exact C^mX in ``h``, ``cx``, ``u1`` (module docstring)."""
    names = [f"c{i}" for i in range(m)] + ["t"]
    body = ["h t;"]
    for j in range(m + 1):
        top = names[j]
        body.append(f"u1({_angle(1, m)}) {top};")  # S = {j}
        prev = 0
        for step in range(1, 1 << j):
            gray = step ^ (step >> 1)
            i = (gray ^ prev).bit_length() - 1
            prev = gray
            body.append(f"cx {names[i]},{top};")
            size = 1 + bin(gray).count("1")
            body.append(f"u1({_angle(1 if size % 2 else -1, m)}) {top};")
        if j > 0:  # the reflected Gray code ends on the single subset {j-1}
            body.append(f"cx {names[j - 1]},{top};")
    body.append("h t;")
    return [f"gate xc{m} {','.join(names)}", "{", *("  " + line for line in body), "}"]


def _swapc_definition(m: int) -> list[str]:
    """Lines of ``gate swapc<m>``: a swap with ``m`` controls through ``xc<m+1>``."""
    ctl = [f"c{i}" for i in range(m)]
    args = ",".join([*ctl, "a", "b"])
    body = ["cx b,a;", f"xc{m + 1} {args};", "cx b,a;"]
    return [f"gate swapc{m} {args}", "{", *("  " + line for line in body), "}"]


def _qasm2_name(g: Gate) -> str:
    m = g.num_controls
    if g.family == "peres":
        return "peres"
    if g.family == "x":
        return {0: "x", 1: "cx", 2: "ccx"}.get(m, f"xc{m}")
    return {0: "swap", 1: "cswap"}.get(m, f"swapc{m}")


def _peres_header(circuit: Circuit) -> list[str]:
    """The Peres definition when the circuit has a Peres gate (written once), else nothing."""
    return [PERES_DEFINITION] if any(g.family == "peres" for g in circuit.gates) else []


def _comments(header: Sequence[str]) -> list[str]:
    """Header lines as ``//`` comments, written right after the version and include lines."""
    return [f"// {line}" for line in header]


def to_qasm2(circuit: Circuit, header: Sequence[str] = ()) -> str:
    """OpenQASM 2.0 text (``qelib1.inc`` gates plus our definitions where needed)."""
    xc: set[int] = set()
    swapc: set[int] = set()
    for g in circuit.gates:
        m = g.num_controls
        if g.family == "x" and m >= 3:
            xc.add(m)
        elif g.family == "swap" and m >= 2:
            swapc.add(m)
            xc.add(m + 1)
    out = ["OPENQASM 2.0;", 'include "qelib1.inc";', *_comments(header), *_peres_header(circuit)]
    for m in sorted(xc):
        out += _xc_definition(m)
    for m in sorted(swapc):
        out += _swapc_definition(m)
    out.append(f"qreg q[{circuit.lines}];")
    for g in circuit.gates:
        flips = [f"x {_q(n)};" for n in g.negative_controls]
        operands = ",".join(_q(i) for i in (*g.controls, *g.negative_controls, *g.targets))
        out += [*flips, f"{_qasm2_name(g)} {operands};", *flips]
    return "\n".join(out) + "\n"


def _modifier(name: str, count: int) -> str:
    if count == 0:
        return ""
    return f"{name} @ " if count == 1 else f"{name}({count}) @ "


def _qasm3_statement(g: Gate) -> str:
    pos, neg = len(g.controls), len(g.negative_controls)
    if g.family == "peres":  # operands a, b, c as in the definition
        return f"peres {', '.join(_q(i) for i in (*g.controls, *g.targets))};"
    if neg == 0 and g.family == "x" and pos <= 2:
        head = ("x", "cx", "ccx")[pos]
    elif neg == 0 and g.family == "swap" and pos <= 1:
        head = ("swap", "cswap")[pos]
    else:
        head = _modifier("negctrl", neg) + _modifier("ctrl", pos) + g.family
        # operand order follows the modifiers: negative controls, positive, targets
        operands = (*g.negative_controls, *g.controls, *g.targets)
        return f"{head} {', '.join(_q(i) for i in operands)};"
    return f"{head} {', '.join(_q(i) for i in (*g.controls, *g.targets))};"


def to_qasm3(circuit: Circuit, header: Sequence[str] = ()) -> str:
    """OpenQASM 3.0 text (``stdgates.inc`` gates and ``ctrl`` / ``negctrl`` modifiers)."""
    out = ["OPENQASM 3.0;", 'include "stdgates.inc";', *_comments(header), *_peres_header(circuit)]
    out.append(f"qubit[{circuit.lines}] q;")
    out += [_qasm3_statement(g) for g in circuit.gates]
    return "\n".join(out) + "\n"


# ---------------------------------------------------------------------------- writing Clifford+T
def _ct_operand(ct: CliffordT, q: int) -> str:
    return f"q[{q}]" if q < ct.lines else f"anc[{q - ct.lines}]"


def _ct_header(ct: CliffordT) -> list[str]:
    out = [
        f"// Clifford+T (h, t, tdg, cx, x) on {ct.lines} lines: T-count {ct.t_count}, "
        f"CNOT count {ct.cnot_count}, T-depth {ct.t_depth}",
        "// line l is q[l]; basis state i has bit l = q[l]",
    ]
    if ct.ancillas:
        plural = "s" if ct.ancillas > 1 else ""
        out.append(f"// anc: {ct.ancillas} clean ancilla qubit{plural}, each starts in |0> and is returned to |0>")
    return out


def _ct_body(ct: CliffordT) -> list[str]:
    return [f"{name} {','.join(_ct_operand(ct, q) for q in qubits)};" for name, qubits in ct.ops]


def clifford_t_to_qasm2(ct: CliffordT, header: Sequence[str] = ()) -> str:
    """OpenQASM 2.0 text over ``qelib1.inc``: register ``q``, plus ``anc`` when ancillas are used."""
    out = ["OPENQASM 2.0;", 'include "qelib1.inc";', *_comments(header), *_ct_header(ct), f"qreg q[{ct.lines}];"]
    if ct.ancillas:
        out.append(f"qreg anc[{ct.ancillas}];")
    return "\n".join(out + _ct_body(ct)) + "\n"


def clifford_t_to_qasm3(ct: CliffordT, header: Sequence[str] = ()) -> str:
    """OpenQASM 3.0 text over ``stdgates.inc``: register ``q``, plus ``anc`` when ancillas are used."""
    out = ["OPENQASM 3.0;", 'include "stdgates.inc";', *_comments(header), *_ct_header(ct), f"qubit[{ct.lines}] q;"]
    if ct.ancillas:
        out.append(f"qubit[{ct.ancillas}] anc;")
    return "\n".join(out + _ct_body(ct)) + "\n"


# ---------------------------------------------------------------------------- reading
_TOKEN = re.compile(r"[A-Za-z_]\w*|\d+(?:\.\d*)?|\S")
_COMMENT = re.compile(r"//[^\n]*|/\*.*?\*/", re.S)
_IDENT = r"[A-Za-z_]\w*"
_OPERAND = re.compile(rf"({_IDENT})\s*\[\s*(\d+)\s*\]")
_NOT_GATES = frozenset(
    "measure reset if else for while opaque def defcal defcalgrammar cal let const input output box "
    "delay extern return switch break continue end array int uint float angle bool complex duration "
    "stretch durationof qubit qreg creg bit".split()
)
_INCLUDES = ("qelib1.inc", "stdgates.inc")


@dataclass(frozen=True)
class _Register:
    name: str
    size: int
    offset: int = 0  # the line of qubit 0 (registers are numbered in declaration order)


def _strip_comments(text: str) -> str:
    """Remove ``//`` and ``/* */`` comments, keeping every newline (for line numbers)."""
    stripped = _COMMENT.sub(lambda m: "\n" * m.group(0).count("\n"), text)
    pos = stripped.find("/*")
    if pos >= 0:
        raise ExactsynError(f"unterminated /* comment at line {stripped.count(chr(10), 0, pos) + 1}")
    return stripped


def _statements(text: str) -> list[tuple[int, str]]:
    """Split into ``(line number, statement)``; a statement ends at ``;`` or a closing ``}``."""
    out: list[tuple[int, str]] = []
    buf: list[str] = []
    depth, line = 0, 1
    start: int | None = None
    for ch in _strip_comments(text):
        if start is None and not ch.isspace():
            start = line
        if ch == "\n":
            line += 1
        buf.append(ch)
        end = False
        if ch == "{":
            depth += 1
        elif ch == "}":
            depth -= 1
            if depth < 0:
                raise ExactsynError(f"unmatched '}}' at line {line}")
            end = depth == 0
        elif ch == ";" and depth == 0:
            end = True
        if end:
            stmt = " ".join("".join(buf).split())  # one line, for messages
            if stmt.endswith(";"):
                stmt = stmt[:-1].strip()
            assert start is not None
            if not stmt:
                raise ExactsynError(f"empty statement (a ';' with nothing before it) at line {start}")
            out.append((start, stmt))
            buf, start = [], None
    if start is not None:
        what = "'{' is never closed" if depth else "does not end with ';'"
        raise ExactsynError(f"the statement at line {start} {what}")
    return out


def _tokens(text: str) -> list[str]:
    return _TOKEN.findall(text)


def _expected_statements(name: str, m: int) -> int:
    return (1 << (m + 2)) - 1 if name.startswith("xc") else 3


def _check_definition(ln: int, stmt: str, defined: dict[str, tuple[str, int]]) -> tuple[str, str, int]:
    """Accept ``gate xc<m>`` / ``gate swapc<m>`` / ``gate peres`` only as the writers write them."""
    head = re.match(rf"gate\s+({_IDENT})", stmt)
    name = head.group(1) if head else "?"
    if name == "peres":
        if name in defined:
            raise ExactsynError(f"gate '{name}' is defined a second time at line {ln}")
        if _tokens(stmt) != _tokens(PERES_DEFINITION):
            raise ExactsynError(
                f"gate definition 'peres' at line {ln} differs from the one exactsyn writes ({PERES_DEFINITION})"
            )
        return name, "peres", 0
    own = re.fullmatch(r"(xc|swapc)([1-9]\d*)", name)
    if not own:
        raise ExactsynError(
            f"unsupported gate definition '{name}' at line {ln}; exactsyn reads only the "
            "xc<m> / swapc<m> / peres definitions it writes"
        )
    family, m = own.group(1), int(own.group(2))
    lowest = 3 if family == "xc" else 2
    if not lowest <= m <= _MAX_DEFINED_CONTROLS:
        raise ExactsynError(
            f"gate definition '{name}' at line {ln}: exactsyn writes {family}<m> "
            f"only for {lowest} <= m <= {_MAX_DEFINED_CONTROLS}"
        )
    if name in defined:
        raise ExactsynError(f"gate '{name}' is defined a second time at line {ln}")
    if family == "swapc" and f"xc{m + 1}" not in defined:
        raise ExactsynError(f"gate definition '{name}' at line {ln} uses xc{m + 1}, which is not defined before it")
    body = stmt[stmt.find("{") :]
    if body.count(";") != _expected_statements(family, m):
        raise ExactsynError(f"gate definition '{name}' at line {ln} differs from the one exactsyn writes")
    expected = _xc_definition(m) if family == "xc" else _swapc_definition(m)
    if _tokens(stmt) != _tokens("\n".join(expected)):
        raise ExactsynError(f"gate definition '{name}' at line {ln} differs from the one exactsyn writes")
    return name, ("x" if family == "xc" else "swap"), m


def _number(ln: int, digits: str, what: str) -> int:
    """A register size or qubit index: decimal, no leading zero (OpenQASM 2.0: ``[1-9][0-9]*|0``),
    at most :data:`~exactsyn.io.limits.MAX_LINES` (checked before it is converted)."""
    if len(digits) > 1 and digits.startswith("0"):
        raise ExactsynError(f"the number '{digits[:12]}' at line {ln} has a leading zero")
    if len(digits) > len(str(MAX_LINES)) or int(digits) > MAX_LINES:
        shown = digits if len(digits) <= 12 else f"{digits[:9]}… ({len(digits)} digits)"
        raise ExactsynError(
            f"{what} {shown} at line {ln}: exactsyn reads circuits of at most {MAX_LINES:,} lines ({WHO_HANDLES})"
        )
    return int(digits)


def _operand(ln: int, text: str, regs: dict[str, _Register]) -> int:
    m = _OPERAND.fullmatch(text)
    if not m:
        reg = regs.get(text)
        if reg is not None and reg.size == 1:
            return reg.offset  # a one-qubit register (qubit a;) named without an index
        if re.fullmatch(_IDENT, text):
            if reg is None:
                raise ExactsynError(f"unknown register '{text}' at line {ln}; {_declared(regs)}")
            raise ExactsynError(
                f"operand '{text}' at line {ln}: a whole register is not supported; index each qubit, e.g. {text}[0]"
            )
        first = next(iter(regs))
        raise ExactsynError(f"cannot read operand '{text}' at line {ln}; expected e.g. {first}[0]")
    name, idx = m.group(1), _number(ln, m.group(2), "qubit index")
    reg = regs.get(name)
    if reg is None:
        raise ExactsynError(f"unknown register '{name}' at line {ln}; {_declared(regs)}")
    if idx >= reg.size:
        raise ExactsynError(
            f"qubit {name}[{idx}] at line {ln} is out of range; register '{name}' has {reg.size} qubits"
        )
    return reg.offset + idx


def _declared(regs: dict[str, _Register]) -> str:
    names = [f"'{r}'" for r in regs]
    return ("the quantum register is " if len(names) == 1 else "the quantum registers are ") + ", ".join(names)


def _own_gates(entry: tuple[str, int]) -> tuple[int, tuple[Gate, ...]]:
    """One of exactsyn's own definitions as (operand count, gate on operands 0..k-1)."""
    kind, m = entry
    if kind == "peres":
        return 3, (peres_gate(0, 1, 2),)
    if kind == "x":
        return m + 1, (x_gate(m, list(range(m))),)
    return m + 2, (swap_gate(m, m + 1, list(range(m))),)


@functools.cache
def _prelude() -> dict[str, Definition]:
    """The relative-phase Toffoli gates that qiskit's qelib1.inc has (module qasm_defs)."""
    out: dict[str, Definition] = {}
    for ln, stmt in _statements(PRELUDE):
        d = parse_definition(ln, stmt, out.get, lambda name: None)
        out[d.name] = d
    return out


@dataclass
class _Reader:
    """State of one read: registers, definitions, and the meaning of each gate called so far."""

    version: int = 3  # OpenQASM 3 allows the version statement to be left out
    regs: dict[str, _Register] = field(default_factory=dict)
    lines: int = 0
    own: dict[str, tuple[str, int]] = field(default_factory=dict)
    user: dict[str, Definition] = field(default_factory=dict)
    meanings: dict[tuple[str, tuple[float, ...]], tuple[Gate, ...] | str] = field(default_factory=dict)

    def lookup(self, name: str) -> Definition | None:
        return self.user.get(name) or _prelude().get(name)

    def base(self, name: str) -> tuple[int, tuple[Gate, ...]] | None:
        entry = self.own.get(name)
        return None if entry is None else _own_gates(entry)

    def declare(self, ln: int, stmt: str) -> None:
        new = _register(ln, stmt)
        if new.name in self.regs:
            raise ExactsynError(f"register '{new.name}' at line {ln} is declared a second time")
        check_lines(self.lines + new.size, f"register '{new.name}' at line {ln} makes")
        self.regs[new.name] = _Register(new.name, new.size, self.lines)
        self.lines += new.size

    def define(self, ln: int, stmt: str) -> None:
        head = re.match(rf"gate\s+({_IDENT})", stmt)
        name = head.group(1) if head else "?"
        if name in self.own or name in self.user:
            raise ExactsynError(f"gate '{name}' is defined a second time at line {ln}")
        if re.fullmatch(r"(xc|swapc)\d+|peres", name):
            got, kind, m = _check_definition(ln, stmt, self.own)
            self.own[got] = (kind, m)
        else:
            self.user[name] = parse_definition(ln, stmt, self.lookup, self.base)

    def call(self, ln: int, stmt: str, budget: int = MAX_GATES) -> tuple[Gate, ...]:
        """The gates of one call statement, at most ``budget`` of them (checked before they are made)."""
        call = parse_call(stmt)
        if call is None:
            snippet = stmt if len(stmt) <= 30 else stmt[:27] + "..."
            raise ExactsynError(f"unsupported statement '{snippet}' at line {ln}; {SUPPORTED}")
        name = call.name
        if call.modifiers and self.version == 2:
            word = call.modifiers[0].word
            raise ExactsynError(f"gate modifier '{word} @' at line {ln} needs OpenQASM 3; the header says 2.0")
        if name in self.own and self.own[name][0] == "peres" and call.modifiers:
            raise ExactsynError(f"gate modifiers on 'peres' at line {ln} are not supported; {SUPPORTED}")
        defn = self.lookup(name)
        known = name in STANDARD or name in self.own or defn is not None
        if not known:
            raise ExactsynError(
                f"unsupported gate '{name}' at line {ln}: neither a standard gate nor defined before it; {SUPPORTED}"
            )
        if not self.regs:
            raise ExactsynError(f"gate '{name}' at line {ln} comes before any quantum register is declared")
        qubits = [self.operand(ln, part) for part in call.operands]
        try:
            plain = reversible_meaning(call, self.lookup, self.base)
            if plain is not None:
                return modified_gates(plain[1], plain[0], call.modifiers, qubits, budget)
            return self.unitary_call(ln, call, qubits)
        except ExactsynError as e:
            if e.message.startswith(("needs ", "uses a qubit twice", "acts on ", "expands to ")):
                raise ExactsynError(f"'{stmt}' at line {ln} {e.message}") from None
            if " at line " in e.message:
                raise
            raise ExactsynError(f"gate '{name}' at line {ln}: {e.message}") from None

    def unitary_call(self, ln: int, call: Call, qubits: list[int]) -> tuple[Gate, ...]:
        """A call that is not a plain reversible gate: multiply out its unitary (module qasm_defs)."""
        k = len(qubits)
        if k > MAX_UNITARY_QUBITS:
            raise ExactsynError(
                f"gate '{call.name}' at line {ln} acts on {k} qubits; exactsyn multiplies out the unitary of "
                f"gates on at most {MAX_UNITARY_QUBITS} qubits"
            )
        values = tuple(evaluate(p) for p in call.params)
        mods = tuple((m.word, m.arg) for m in call.modifiers)
        key = (repr((call.name, mods)), values)
        if key not in self.meanings:
            matrix = call_matrix(call, {}, self.lookup, self.base, k)
            perm, reason = as_permutation(matrix)
            if perm is None:
                self.meanings[key] = reason
            else:
                gates = gates_of_permutation(perm, k)
                self.meanings[key] = (
                    "it permutes basis states, but not as one NOT/CNOT/Toffoli/MCT, swap or Peres gate; "
                    "write it as a sequence of such gates"
                    if gates is None
                    else gates
                )
        meaning = self.meanings[key]
        if isinstance(meaning, str):
            raise ExactsynError(f"unsupported gate '{call.name}' at line {ln}: {meaning}")
        if len(set(qubits)) != len(qubits):
            raise ExactsynError("uses a qubit twice")
        return modified_gates(meaning, k, (), qubits)

    def operand(self, ln: int, text: str) -> int:
        return _operand(ln, text, self.regs)


def _register(ln: int, stmt: str) -> _Register:
    m = re.fullmatch(rf"qreg\s+({_IDENT})\s*\[\s*(\d+)\s*\]", stmt) or re.fullmatch(
        rf"qubit\s*\[\s*(\d+)\s*\]\s*({_IDENT})", stmt
    )
    if m:
        a, b = m.group(1), m.group(2)
        name, digits = (a, b) if stmt.startswith("qreg") else (b, a)
        size = _number(ln, digits, "register size")
    else:
        single = re.fullmatch(rf"qubit\s+({_IDENT})", stmt)
        if not single:
            raise ExactsynError(f"cannot read the register declaration '{stmt}' at line {ln}")
        name, size = single.group(1), 1
    if size < 1:
        raise ExactsynError(f"register '{name}' at line {ln} has no qubits")
    return _Register(name, size)


def read_qasm_layout(text: str) -> tuple[Circuit, Layout]:
    """Read OpenQASM 2.0 or 3.0 (module docstring): the circuit and its register layout.

    Lines are numbered register after register in declaration order; a byte-order mark at
    the start is skipped."""
    text = text.removeprefix("\ufeff")
    r = _Reader()
    gates: list[Gate] = []
    for index, (ln, stmt) in enumerate(_statements(text)):
        word_match = re.match(_IDENT, stmt)
        word = word_match.group(0) if word_match else ""
        if word == "OPENQASM":
            v = re.fullmatch(r"OPENQASM\s+(2)\.0|OPENQASM\s+(3)(?:\.[01])?", stmt)
            if index != 0:
                raise ExactsynError(f"the OPENQASM header at line {ln} must be the first statement")
            if not v:
                raise ExactsynError(f"unsupported OpenQASM version '{stmt}' at line {ln}; exactsyn reads 2.0 and 3.0")
            r.version = int(v.group(1) or v.group(2))
        elif word == "include":
            inc = re.fullmatch(r'include\s+"([^"]*)"', stmt)
            if not inc or inc.group(1) not in _INCLUDES:
                raise ExactsynError(f"unsupported include at line {ln}; exactsyn reads {' and '.join(_INCLUDES)}")
        elif word in ("qreg", "qubit"):
            r.declare(ln, stmt)
        elif word in ("creg", "bit") and re.fullmatch(
            rf"(creg\s+{_IDENT}\s*\[\s*\d+\s*\]|bit\s*(\[\s*\d+\s*\])?\s*{_IDENT})", stmt
        ):
            continue  # a classical register alone does not change the circuit
        elif word == "barrier":
            continue
        elif word == "gate":
            r.define(ln, stmt)
        elif word in _NOT_GATES or not word:
            shown = word or stmt[:20]
            raise ExactsynError(f"unsupported statement '{shown}' at line {ln}; {SUPPORTED}")
        else:
            gates.extend(r.call(ln, stmt, MAX_GATES - len(gates)))
    if not r.regs:
        raise ExactsynError("no quantum register is declared (qreg q[n]; or qubit[n] q;)")
    layout = Layout(tuple((reg.name, reg.size) for reg in r.regs.values()))
    return Circuit(r.lines, tuple(gates)), layout


def read_qasm(text: str) -> Circuit:
    """Read OpenQASM 2.0 or 3.0 (module docstring); the register names are dropped."""
    return read_qasm_layout(text)[0]
