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
:func:`read_qasm` reads back exactly this gate set: ``x cx ccx swap cswap``, the
``ctrl`` / ``negctrl`` modifiers (OpenQASM 3) in any combination on them, and the
``xc<m>`` / ``swapc<m>`` / ``peres`` definitions above, which are accepted only when
their body is token for token the one the writers write (``peres`` takes no modifiers).
One quantum register (``qreg`` or ``qubit[n]``); comments and ``barrier`` are skipped.
Anything else raises :class:`~exactsyn.errors.ExactsynError` with the line number.

A small reader of our own was written rather than depending on a maintained parser:
the reference ``openqasm3`` package needs its ANTLR runtime for parsing, a heavy
dependency for the install of a tool that reads five gates and two modifiers (the
tests use that parser as a reference, where it is installed).  qiskit's reader is a
test-only dependency for the same reason.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.cliffordt import CliffordT
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError

SUPPORTED = (
    "exactsyn reads x, cx, ccx, swap, cswap, ctrl/negctrl modifiers "
    "and the xc<m> / swapc<m> / peres definitions it writes"
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
_MODIFIER = re.compile(r"(ctrl|negctrl|inv|pow)\s*(?:\(\s*([^)]*?)\s*\))?\s*@\s*")
_CALL = re.compile(rf"({_IDENT})\s*(?:\(\s*([^)]*?)\s*\))?\s*(.*)", re.S)
_OPERAND = re.compile(rf"({_IDENT})\s*\[\s*(\d+)\s*\]")
_BASE_GATES: dict[str, tuple[str, int]] = {
    "x": ("x", 0),
    "cx": ("x", 1),
    "ccx": ("x", 2),
    "swap": ("swap", 0),
    "cswap": ("swap", 1),
}
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
            if stmt:
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


def _operand(ln: int, text: str, reg: _Register) -> int:
    m = _OPERAND.fullmatch(text)
    if not m:
        if re.fullmatch(_IDENT, text):
            raise ExactsynError(
                f"operand '{text}' at line {ln}: a whole register is not supported; index each qubit, e.g. {text}[0]"
            )
        raise ExactsynError(f"cannot read operand '{text}' at line {ln}; expected e.g. {reg.name}[0]")
    name, idx = m.group(1), int(m.group(2))
    if name != reg.name:
        raise ExactsynError(f"unknown register '{name}' at line {ln}; the quantum register is '{reg.name}'")
    if idx >= reg.size:
        raise ExactsynError(
            f"qubit {name}[{idx}] at line {ln} is out of range; register '{name}' has {reg.size} qubits"
        )
    return idx


def _gate_call(ln: int, stmt: str, version: int, reg: _Register | None, defined: dict[str, tuple[str, int]]) -> Gate:
    rest = stmt
    mods: list[tuple[bool, int]] = []  # (negative?, count), in operand order
    while m := _MODIFIER.match(rest):
        word, arg = m.group(1), m.group(2)
        if word in ("inv", "pow"):
            raise ExactsynError(f"unsupported gate modifier '{word}' at line {ln}; {SUPPORTED}")
        if version == 2:
            raise ExactsynError(f"gate modifier '{word} @' at line {ln} needs OpenQASM 3; the header says 2.0")
        if arg is None:
            count = 1
        elif re.fullmatch(r"[1-9]\d*", arg):
            count = int(arg)
        else:
            raise ExactsynError(f"'{word}({arg})' at line {ln}: the control count must be a positive integer")
        mods.append((word == "negctrl", count))
        rest = rest[m.end() :]
    call = _CALL.fullmatch(rest)
    if not call or not call.group(3).strip() or "=" in rest or "->" in rest:
        snippet = stmt if len(stmt) <= 30 else stmt[:27] + "..."
        raise ExactsynError(f"unsupported statement '{snippet}' at line {ln}; {SUPPORTED}")
    name, params, operand_text = call.group(1), call.group(2), call.group(3)
    base = _BASE_GATES.get(name) or defined.get(name)
    if base is None or params:
        raise ExactsynError(f"unsupported gate '{name}' at line {ln}; {SUPPORTED}")
    if reg is None:
        raise ExactsynError(f"gate '{name}' at line {ln} comes before any quantum register is declared")
    qubits = [_operand(ln, part.strip(), reg) for part in operand_text.split(",")]
    kind, base_controls = base
    if kind == "peres":
        if mods:
            raise ExactsynError(f"gate modifiers on 'peres' at line {ln} are not supported; {SUPPORTED}")
        if len(qubits) != 3:
            raise ExactsynError(f"'{stmt}' at line {ln} needs 3 qubits, not {len(qubits)}")
        try:
            return peres_gate(*qubits)
        except ExactsynError:
            raise ExactsynError(f"'{stmt}' at line {ln} uses a qubit twice") from None
    need = sum(c for _, c in mods) + base_controls + (1 if kind == "x" else 2)
    if len(qubits) != need:
        raise ExactsynError(f"'{stmt}' at line {ln} needs {need} qubits, not {len(qubits)}")
    pos: list[int] = []
    neg: list[int] = []
    at = 0
    for negative, count in mods:
        (neg if negative else pos).extend(qubits[at : at + count])
        at += count
    pos.extend(qubits[at : at + base_controls])
    targets = qubits[at + base_controls :]
    try:
        if kind == "x":
            return x_gate(targets[0], pos, neg)
        return swap_gate(targets[0], targets[1], pos, neg)
    except ExactsynError:
        raise ExactsynError(f"'{stmt}' at line {ln} uses a qubit twice") from None


def _register(ln: int, stmt: str) -> _Register:
    m = re.fullmatch(rf"qreg\s+({_IDENT})\s*\[\s*(\d+)\s*\]", stmt) or re.fullmatch(
        rf"qubit\s*\[\s*(\d+)\s*\]\s*({_IDENT})", stmt
    )
    if m:
        a, b = m.group(1), m.group(2)
        name, size = (a, int(b)) if stmt.startswith("qreg") else (b, int(a))
    else:
        single = re.fullmatch(rf"qubit\s+({_IDENT})", stmt)
        if not single:
            raise ExactsynError(f"cannot read the register declaration '{stmt}' at line {ln}")
        name, size = single.group(1), 1
    if size < 1:
        raise ExactsynError(f"register '{name}' at line {ln} has no qubits")
    return _Register(name, size)


def read_qasm(text: str) -> Circuit:
    """Read OpenQASM 2.0 or 3.0 text written in exactsyn's gate set (module docstring)."""
    version = 3  # OpenQASM 3 allows the version statement to be left out
    reg: _Register | None = None
    defined: dict[str, tuple[str, int]] = {}
    gates: list[Gate] = []
    for index, (ln, stmt) in enumerate(_statements(text)):
        word_match = re.match(_IDENT, stmt)
        word = word_match.group(0) if word_match else ""
        if word == "OPENQASM":
            v = re.fullmatch(r"OPENQASM\s+(\d+)(?:\.\d+)?", stmt)
            if index != 0:
                raise ExactsynError(f"the OPENQASM header at line {ln} must be the first statement")
            if not v or v.group(1) not in ("2", "3"):
                raise ExactsynError(f"unsupported OpenQASM version '{stmt}' at line {ln}; exactsyn reads 2.0 and 3.0")
            version = int(v.group(1))
        elif word == "include":
            inc = re.fullmatch(r'include\s+"([^"]*)"', stmt)
            if not inc or inc.group(1) not in _INCLUDES:
                raise ExactsynError(f"unsupported include at line {ln}; exactsyn reads {' and '.join(_INCLUDES)}")
        elif word in ("qreg", "qubit"):
            new = _register(ln, stmt)
            if reg is not None:
                raise ExactsynError(
                    f"a second quantum register '{new.name}' at line {ln}; exactsyn reads circuits on one register"
                )
            reg = new
        elif word in ("creg", "bit") and re.fullmatch(
            rf"(creg\s+{_IDENT}\s*\[\s*\d+\s*\]|bit\s*(\[\s*\d+\s*\])?\s*{_IDENT})", stmt
        ):
            continue  # a classical register alone does not change the circuit
        elif word == "barrier":
            continue
        elif word == "gate":
            name, kind, m = _check_definition(ln, stmt, defined)
            defined[name] = (kind, m)
        elif word in _NOT_GATES or not word:
            shown = word or stmt[:20]
            raise ExactsynError(f"unsupported statement '{shown}' at line {ln}; {SUPPORTED}")
        else:
            gates.append(_gate_call(ln, stmt, version, reg, defined))
    if reg is None:
        raise ExactsynError("no quantum register is declared (qreg q[n]; or qubit[n] q;)")
    return Circuit(reg.size, tuple(gates))
