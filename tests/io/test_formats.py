"""Circuit input/output: JSON, OpenQASM 2.0 / 3.0 and the text drawing.

External references: qiskit reads our OpenQASM 2.0 and gives the unitary; the
``openqasm3`` reference parser reads our OpenQASM 3.0 (skipped where it is not
installed, required under CI: tests/optional.py); the operand order of control
modifiers is taken from the example in the OpenQASM 3 specification.
"""

from __future__ import annotations

import json
import random

import numpy as np
import pytest
from helpers import permutation_matrix
from optional import need_openqasm3_parser, need_qiskit

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io.draw import display_width, draw_text
from exactsyn.io.jsonio import (
    circuit_from_dict,
    circuit_to_dict,
    gate_from_dict,
    gate_to_dict,
    load_json_circuit,
)
from exactsyn.io.layout import Layout, apply_layout, layout_from_dict
from exactsyn.io.qasm import read_qasm, read_qasm_layout, to_qasm2, to_qasm3
from exactsyn.io.qasm_defs import STANDARD, definition_unitary, parse_definition

N_RANDOM = 120


# ---------------------------------------------------------------------------- helpers
def random_gate(rng: random.Random, lines: int) -> Gate:
    if rng.random() < 0.3:
        a, b = rng.sample(range(lines), 2)
        rest = [line for line in range(lines) if line not in (a, b)]
        used = rng.sample(rest, rng.randint(0, len(rest)))
        cut = rng.randint(0, len(used))
        return swap_gate(a, b, used[:cut], used[cut:])
    t = rng.randrange(lines)
    rest = [line for line in range(lines) if line != t]
    pos = rng.sample(rest, rng.randint(0, min(4, len(rest))))
    free = [line for line in rest if line not in pos]
    neg = rng.sample(free, rng.randint(0, len(free))) if rng.random() < 0.5 else []
    return x_gate(t, pos, neg)


def random_circuits() -> list[Circuit]:
    rng = random.Random(20240611)
    out = []
    for _ in range(N_RANDOM):
        lines = rng.randint(3, 5)
        out.append(Circuit(lines, tuple(random_gate(rng, lines) for _ in range(rng.randint(0, 8)))))
    return out


CIRCUITS = random_circuits()


def test_random_circuits_cover_the_cases() -> None:
    gates = [g for c in CIRCUITS for g in c.gates]
    assert any(g.family == "x" and len(g.controls) == 4 for g in gates)
    assert any(g.family == "x" and g.num_controls >= 3 and g.negative_controls for g in gates)
    assert any(g.family == "swap" and g.num_controls >= 2 for g in gates)
    assert any(g.family == "swap" and g.num_controls == 0 for g in gates)


# ---------------------------------------------------------------------------- JSON
def test_json_round_trip() -> None:
    for c in CIRCUITS:
        text = json.dumps(circuit_to_dict(c))
        back = load_json_circuit(text)
        assert back == c
    g = x_gate(2, [0], [1])
    assert gate_to_dict(g) == {"type": "x", "target": 2, "controls": [0], "negative_controls": [1]}
    s = swap_gate(3, 1, [0])
    assert gate_to_dict(s) == {"type": "swap", "targets": [1, 3], "controls": [0], "negative_controls": []}
    assert gate_from_dict(gate_to_dict(s)) == s


def test_json_reads_a_result_with_other_keys() -> None:
    c = Circuit(3, (x_gate(0, [1, 2]), swap_gate(0, 2)))
    result = {"status": "optimal", "lines": 3, "gates": circuit_to_dict(c)["gates"], "elapsed": 0.5}
    assert circuit_from_dict(result) == c


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ('{"lines": 3, "gates": [', "malformed JSON"),
        ("[1, 2]", "JSON object"),
        ('{"gates": []}', "'lines'"),
        ('{"lines": 0, "gates": []}', "'lines'"),
        ('{"lines": true, "gates": []}', "'lines'"),
        ('{"lines": 3, "gates": {}}', "'gates'"),
        ('{"lines": 3, "gates": [{"type": "y", "target": 0}]}', "'type'"),
        ('{"lines": 3, "gates": [{"type": "x"}]}', "'target'"),
        ('{"lines": 3, "gates": [{"type": "x", "target": "0"}]}', "'target'"),
        ('{"lines": 3, "gates": [{"type": "x", "target": 5}]}', "outside"),
        ('{"lines": 3, "gates": [{"type": "x", "target": 0, "controls": [0]}]}', "twice"),
        ('{"lines": 3, "gates": [{"type": "x", "target": 0, "negative_control": [1]}]}', "unknown key"),
        ('{"lines": 3, "gates": [{"type": "swap", "targets": [0]}]}', "exactly 2"),
        ('{"lines": 3, "gates": [{"type": "swap", "target": 0}]}', "unknown key"),
    ],
)
def test_json_errors(text: str, fragment: str) -> None:
    with pytest.raises(ExactsynError) as info:
        load_json_circuit(text)
    message = str(info.value)
    assert fragment in message
    assert "\n" not in message


# ---------------------------------------------------------------------------- OpenQASM
def test_qasm2_matches_qiskit_unitary() -> None:
    qiskit = need_qiskit()
    from qiskit.quantum_info import Operator

    for c in CIRCUITS:
        text = to_qasm2(c)
        # qiskit as reference reader; its legacy instruction set is the qelib1.inc that has
        # swap and cswap (the file of the 2017 paper has neither)
        qc = qiskit.qasm2.loads(text, custom_instructions=qiskit.qasm2.LEGACY_CUSTOM_INSTRUCTIONS)
        # qiskit's basis index is little-endian (q[0] least significant): our state integer
        assert np.allclose(Operator(qc).data, permutation_matrix(c)), text


@pytest.mark.parametrize("m", [3, 4, 5, 6])
def test_qasm2_multi_control_definitions_are_exact(m: int) -> None:
    qiskit = need_qiskit()
    from qiskit.quantum_info import Operator

    c = Circuit(m + 1, (x_gate(m, list(range(m))),))
    swaps = Circuit(m + 1, (swap_gate(0, m, list(range(1, m))),))
    for circuit in (c, swaps):
        # qiskit as reference reader, strict mode where no swap appears at top level
        text = to_qasm2(circuit)
        if circuit is c:
            qc = qiskit.qasm2.loads(text)
        else:
            qc = qiskit.QuantumCircuit.from_qasm_str(text)
        # exact equality, global phase included (no up-to-phase comparison)
        assert np.allclose(Operator(qc).data, permutation_matrix(circuit))
    assert f"gate xc{m} " in to_qasm2(c)
    assert "gate xc" not in to_qasm2(Circuit(m + 1, (x_gate(m, [0, 1]),)))


def test_read_back_both_versions() -> None:
    for c in CIRCUITS:
        assert read_qasm(to_qasm2(c)).permutation() == c.permutation()
        back3 = read_qasm(to_qasm3(c))
        assert back3 == c  # version 3 keeps every gate as it was
    # qasm2 negative controls come back as x gates around the gate (same function)
    c = Circuit(3, (x_gate(2, [0], [1]),))
    assert [g.num_controls for g in read_qasm(to_qasm2(c)).gates] == [0, 2, 0]


def _interpret_openqasm3_ast(program: object) -> Circuit:
    """Our own walk over the reference parser's AST (independent of read_qasm)."""
    from openqasm3 import ast

    assert isinstance(program, ast.Program)
    lines = 0
    gates = []
    base = {"x": ("x", 0), "cx": ("x", 1), "ccx": ("x", 2), "swap": ("swap", 0), "cswap": ("swap", 1)}
    for st in program.statements:
        if isinstance(st, ast.QubitDeclaration):
            assert isinstance(st.size, ast.IntegerLiteral)
            lines = st.size.value
        elif isinstance(st, ast.QuantumGate):
            qubits = []
            for q in st.qubits:
                assert isinstance(q, ast.IndexedIdentifier) and q.name.name == "q"
                (index,) = q.indices[0]  # type: ignore[misc]
                assert isinstance(index, ast.IntegerLiteral)
                qubits.append(index.value)
            pos, neg, at = [], [], 0
            for mod in st.modifiers:
                count = 1 if mod.argument is None else mod.argument.value  # type: ignore[attr-defined]
                if mod.modifier == ast.GateModifierName.negctrl:
                    neg += qubits[at : at + count]
                else:
                    assert mod.modifier == ast.GateModifierName.ctrl
                    pos += qubits[at : at + count]
                at += count
            kind, k = base[st.name.name]
            pos += qubits[at : at + k]
            targets = qubits[at + k :]
            gates.append(x_gate(targets[0], pos, neg) if kind == "x" else swap_gate(targets[0], targets[1], pos, neg))
        else:
            assert isinstance(st, ast.Include)
    return Circuit(lines, tuple(gates))


def test_qasm3_accepted_by_reference_parser() -> None:
    openqasm3 = need_openqasm3_parser()
    for c in CIRCUITS:
        # openqasm3 reference parser (ANTLR grammar of the specification) as reference reader
        program = openqasm3.parse(to_qasm3(c))
        assert _interpret_openqasm3_ast(program).permutation() == c.permutation()


def test_qasm3_modifier_operand_order_from_spec() -> None:
    # Operand order as in the specification's example, "Quantum gate modifiers" section
    # of the OpenQASM 3 language reference (gates.rst), here on one register:
    # negctrl @ ctrl(2) @ negctrl @ x a[0], b[0], a[2], a[1], b[2]
    text = "OPENQASM 3;\nqubit[6] q;\nnegctrl @ ctrl(2) @ negctrl @ x q[0], q[3], q[2], q[1], q[5];\n"
    (g,) = read_qasm(text).gates
    assert g == x_gate(5, [3, 2], [0, 1])
    text = "qubit[6] q;\nctrl @ negctrl (2) @ cswap q[4], q[0], q[1], q[2], q[3], q[5];\n"
    (g,) = read_qasm(text).gates
    assert g == swap_gate(3, 5, [4, 2], [0, 1])


def test_reader_skips_comments_and_barriers() -> None:
    text = """OPENQASM 2.0;
// a comment
include "qelib1.inc"; /* a block
comment */ qreg r[3];
creg c[3];
barrier r;
cx r[0],  r[1]; // trailing
barrier r[0], r[2];
ccx r[0],r[1],r[2];
"""
    c = read_qasm(text)
    assert c == Circuit(3, (x_gate(1, [0]), x_gate(2, [0, 1])))


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        (
            'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[2];\nx q[0];\nh q[1];\n',
            "unsupported gate 'h' at line 5",
        ),
        ("OPENQASM 3.0;\nqubit[2] q;\nbit[2] c;\nc[0] = measure q[0];\n", "unsupported statement"),
        ("OPENQASM 2.0;\nqreg q[2];\ncreg c[2];\nmeasure q[0] -> c[0];\n", "unsupported statement 'measure'"),
        ("OPENQASM 2.0;\nqreg q[2];\ncreg c[2];\nif (c==1) x q[0];\n", "unsupported statement 'if'"),
        ("OPENQASM 2.0;\nqreg q[2];\nqreg q[2];\n", "declared a second time"),
        ("OPENQASM 3.0;\nqubit[2] q;\nqubit[1] r;\ncx q[0], s[0];\n", "unknown register 's'"),
        ("OPENQASM 2.0;\nqreg q[2];\ncx q[0],q[2];\n", "out of range"),
        ("OPENQASM 2.0;\nqreg q[2];\ncx q[0],q[0];\n", "twice"),
        ("OPENQASM 2.0;\nqreg q[2];\ncx q[0];\n", "needs 2 qubits"),
        ("OPENQASM 2.0;\nqreg q[2];\nx q;\n", "whole register"),
        ("OPENQASM 2.0;\nqreg q[2];\nctrl @ x q[0], q[1];\n", "needs OpenQASM 3"),
        ("OPENQASM 3.0;\nqubit[2] q;\npow(0.5) @ x q[0];\n", "needs an integer"),
        ("OPENQASM 3.0;\nqubit[2] q;\nrx(0.5) q[0];\n", "unsupported gate 'rx' at line 3: its unitary is not"),
        ("OPENQASM 3.0;\nqubit[2] q;\nz q[0];\n", "different phases"),
        ("OPENQASM 2.0;\nqreg q[4];\nxc3 q[0],q[1],q[2],q[3];\n", "unsupported gate 'xc3'"),
        ("OPENQASM 2.0;\nqreg q[2];\ngate foo a { h a; }\nfoo q[1];\n", "unsupported gate 'foo' at line 4"),
        ("OPENQASM 2.0;\nqreg q[2];\ngate foo a { bar a; }\n", "calls 'bar', which is neither"),
        ("OPENQASM 2.0;\nqreg q[2];\ngate foo a { x b; }\n", "'b' is not one of its qubit arguments"),
        ("OPENQASM 2.0;\nqreg q[2];\ngate foo a,b { cx a,b; }\nfoo q[0];\n", "needs 2 qubits, not 1"),
        ("OPENQASM 2.0;\nqreg q[3];\ngate f a,b { swap a,b; cx a,b; }\nh q[0];\n", "unsupported gate 'h'"),
        ("OPENQASM 3.0;\nqubit[3] q;\ngate f a,b,c { h c; h c; cx a,c; cx b,c; }\nf q[0],q[1],q[2];\n", "not as one"),
        ("OPENQASM 3.0;\nqubit[2] q;\nrx(pi/0) q[0];\n", "no finite value"),
        ("OPENQASM 3.0;\nqubit[2] q;\nrx(__import__) q[0];\n", "unknown name"),
        ("OPENQASM 4.0;\nqreg q[2];\n", "version"),
        ('OPENQASM 2.0;\ninclude "other.inc";\nqreg q[2];\n', "include"),
        ("OPENQASM 2.0;\nx q[0];\nqreg q[2];\n", "before any quantum register"),
        ("OPENQASM 2.0;\nqreg q[2];\nx q[0]\n", "does not end with ';'"),
        ("OPENQASM 2.0;\nqreg q[2];\n/* open\nx q[0];\n", "unterminated"),
        ("OPENQASM 2.0;\ncreg c[2];\n", "no quantum register"),
    ],
)
def test_qasm_errors(text: str, fragment: str) -> None:
    with pytest.raises(ExactsynError) as info:
        read_qasm(text)
    message = str(info.value)
    assert fragment in message
    assert "\n" not in message


def test_tampered_definition_is_rejected() -> None:
    c = Circuit(4, (x_gate(3, [0, 1, 2]),))
    text = to_qasm2(c)
    assert read_qasm(text) == c
    tampered = text.replace("u1(-pi/8) c1;", "u1(pi/8) c1;", 1)
    assert tampered != text
    with pytest.raises(ExactsynError, match="differs from the one exactsyn writes"):
        read_qasm(tampered)
    swaps = Circuit(4, (swap_gate(2, 3, [0, 1]),))
    text = to_qasm2(swaps)
    assert read_qasm(text) == swaps
    start = text.index("gate xc3")
    end = text.index("}", start) + 1
    with pytest.raises(ExactsynError, match="not defined before it"):
        read_qasm(text[:start] + text[end:])


# ---------------------------------------------------------------------------- drawing
@pytest.mark.parametrize("ascii_only", [False, True])
def test_drawing_symbols_and_widths(ascii_only: bool) -> None:
    sym = "*o+x" if ascii_only else "●○⊕×"
    for c in CIRCUITS:
        width = 40
        text = draw_text(c, width=width, ascii=ascii_only)
        body = text.replace("q", "").translate(str.maketrans("", "", "0123456789"))  # labels out
        assert body.count(sym[0]) == sum(len(g.controls) for g in c.gates)
        assert body.count(sym[1]) == sum(len(g.negative_controls) for g in c.gates)
        assert body.count(sym[2]) == sum(1 for g in c.gates if g.family == "x")
        assert body.count(sym[3]) == sum(2 for g in c.gates if g.family == "swap")
        blocks = text.rstrip("\n").split("\n\n")
        assert len(blocks) == max(1, -(-len(c.gates) // ((width - 5) // 3)))
        for block in blocks:
            rows = block.split("\n")
            assert len(rows) == 2 * c.lines - 1
            widths = {display_width(row) for row in rows}
            assert len(widths) == 1 and widths.pop() <= width


def test_drawing_layout_and_labels() -> None:
    c = Circuit(4, (x_gate(3, [0], [1]), swap_gate(0, 2)))
    rows = draw_text(c, labels=["a", "long", "mid", "z"]).rstrip("\n").split("\n")
    assert rows[0] == "a    ──●──×──"
    assert rows[1] == "       │  │  "
    assert rows[2] == "long ──○──┼──"
    assert rows[4] == "mid  ──┼──×──"
    assert rows[6] == "z    ──⊕─────"
    wide = draw_text(c, labels=["数", "b", "c", "d"]).split("\n")
    assert len({display_width(row) for row in wide if row}) == 1
    with pytest.raises(ExactsynError):
        draw_text(c, labels=["a"])


def test_reads_what_qiskit_writes() -> None:
    qiskit = need_qiskit()
    from qiskit.quantum_info import Operator

    # qiskit as reference writer: its exporters for OpenQASM 2 and 3 on our gate set
    qc = qiskit.QuantumCircuit(4)
    qc.x(0)
    qc.cx(0, 2)
    qc.ccx(2, 0, 3)
    qc.swap(1, 3)
    qc.cswap(3, 0, 1)
    qc.barrier()
    expected = Operator(qc).data
    for text in (qiskit.qasm2.dumps(qc), qiskit.qasm3.dumps(qc)):
        assert np.allclose(permutation_matrix(read_qasm(text)), expected), text


# ---------------------------------------------------------------------------- files other tools write
QISKIT_WARNINGS = "ignore::DeprecationWarning"


def _qiskit_mcx(controls: int) -> object:
    qiskit = pytest.importorskip("qiskit")
    qc = qiskit.QuantumCircuit(controls + 2)
    qc.mcx(list(range(controls)), controls + 1)
    qc.mcx(list(range(1, controls + 1)), 0)  # a second call reuses the definition
    return qc


@pytest.mark.filterwarnings(QISKIT_WARNINGS)
@pytest.mark.parametrize("controls", [2, 3, 4, 5])
def test_qiskit_mcx_definitions_read_as_the_right_gates(controls: int) -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    qc = _qiskit_mcx(controls)
    expected = (x_gate(controls + 1, list(range(controls))), x_gate(0, list(range(1, controls + 1))))
    # qiskit as the outside writer: its OpenQASM 2 and 3 exporters define mcx through h, p/cp, crx, cx
    for text in (qiskit.qasm2.dumps(qc), qiskit.qasm3.dumps(qc)):
        assert (controls > 2) == ("gate mcx" in text)
        c = read_qasm(text)
        assert c.gates == expected, text
        assert np.allclose(permutation_matrix(c), Operator(qc).data)


@pytest.mark.filterwarnings(QISKIT_WARNINGS)
def test_qiskit_open_controls_and_phase_gates_that_are_permutations() -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    qc = qiskit.QuantumCircuit(4)
    qc.mcx([0, 1], 2, ctrl_state="01")  # qiskit writes a definition with x around a ccx
    qc.mcx([0, 1, 2], 3, ctrl_state="100")
    qc.rx(np.pi, 1)  # −i·X: a NOT up to a global phase
    for text in (qiskit.qasm2.dumps(qc), qiskit.qasm3.dumps(qc)):
        c = read_qasm(text)
        got = permutation_matrix(c)
        ref = Operator(qc).data
        # equal up to the global phase of rx(pi)
        assert np.allclose(got * ref[np.argmax(np.abs(ref[:, 0])), 0], ref), text
    qc.cz(0, 3)  # a permutation with two phases: refused, each call is judged on its own
    for text in (qiskit.qasm2.dumps(qc), qiskit.qasm3.dumps(qc)):
        with pytest.raises(ExactsynError, match="unsupported gate 'cz' at line .*different phases"):
            read_qasm(text)


def test_phase_bodies_become_gates_or_are_refused() -> None:
    text = """OPENQASM 3.0;
include "stdgates.inc";
gate hcz a, b { h b; cz a, b; h b; }
gate negated a, b { x a; hcz a, b; x a; }
gate both(theta) a, b { rz(theta) a; rz(-theta) a; ctrl @ x a, b; }
qubit[1] c;
qubit[2] r;
hcz c, r[1];
negated r[0], r[1];
both(0.25) r[1], c;
inv @ ctrl @ negated r[0], c, r[1];
"""
    c = read_qasm(text)
    assert c.gates == (
        x_gate(2, [0]),  # h·cz·h is a CNOT (common practice)
        x_gate(2, [], [1]),  # a CNOT between x gates: negative control; the definition is rebuilt as one gate
        x_gate(0, [2]),
        x_gate(2, [1], [0]),  # the ctrl operand r[0] is line 1; negated's control c is line 0
    )
    half = text.replace("gate hcz a, b { h b; cz a, b; h b; }", "gate hcz a, b { h b; cz a, b; }")
    with pytest.raises(ExactsynError, match="unsupported gate 'hcz' at line 8: .*superpositions"):
        read_qasm(half)


@pytest.mark.filterwarnings(QISKIT_WARNINGS)
@pytest.mark.parametrize("name", [n for n, (_, q, _f) in STANDARD.items() if q > 0])
def test_standard_gate_matrices_are_qiskits(name: str) -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    nparams, nq, _ = STANDARD[name]
    values = "(" + ",".join(str(v) for v in (0.3, -1.1, 0.7, 2.0)[:nparams]) + ")" if nparams else ""
    args = ",".join("abcde"[:nq])
    defn = parse_definition(1, f"gate w {args} {{ {name}{values} {args}; }}", lambda n: None, lambda n: None)
    ours = definition_unitary(defn, (), lambda n: None, lambda n: None)
    ops = ",".join(f"q[{i}]" for i in range(nq))
    checked = 0
    # qiskit as reference reader, each version with its include file; a gate it does not know is skipped
    for head, load in (
        ('OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[%d];\n', "qasm2"),
        ('OPENQASM 3.0;\ninclude "stdgates.inc";\nqubit[%d] q;\n', "qasm3"),
    ):
        text = head % nq + f"{name}{values} {ops};\n"
        try:
            if load == "qasm2":
                qc = qiskit.qasm2.loads(text, custom_instructions=qiskit.qasm2.LEGACY_CUSTOM_INSTRUCTIONS)
            else:
                qc = qiskit.qasm3.loads(text)
        except Exception:  # noqa: BLE001  (a name outside that include file)
            continue
        assert np.allclose(Operator(qc).data, ours), (name, load)  # global phase included
        checked += 1
    assert checked >= 1, f"qiskit read {name} in neither version"


@pytest.mark.filterwarnings(QISKIT_WARNINGS)
def test_relative_phase_toffolis_match_qiskit() -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    from exactsyn.io.qasm import _prelude

    for name, defn in _prelude().items():
        ops = ",".join(f"q[{i}]" for i in range(defn.arity))
        text = f'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[{defn.arity}];\n{name} {ops};\n'
        qc = qiskit.qasm2.loads(text, custom_instructions=qiskit.qasm2.LEGACY_CUSTOM_INSTRUCTIONS)
        assert np.allclose(Operator(qc).data, definition_unitary(defn, (), lambda n: None, lambda n: None))


def _lowered_adders() -> list[object]:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.circuit.library import CDKMRippleCarryAdder, VBERippleCarryAdder

    return [
        qiskit.transpile(cls(2), basis_gates=["x", "cx", "ccx"], optimization_level=0)
        for cls in (CDKMRippleCarryAdder, VBERippleCarryAdder)
    ]


@pytest.mark.filterwarnings(QISKIT_WARNINGS)
def test_several_registers_read_in_declaration_order_and_written_back() -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    for qc in _lowered_adders():
        names = [(r.name, r.size) for r in qc.qregs]  # type: ignore[attr-defined]
        assert len(names) >= 4
        for text in (qiskit.qasm2.dumps(qc), qiskit.qasm3.dumps(qc)):
            c, layout = read_qasm_layout(text)
            assert list(layout.registers) == names
            assert np.allclose(permutation_matrix(c), Operator(qc).data)
            for written in (apply_layout(to_qasm2(c), layout), apply_layout(to_qasm3(c), layout)):
                back = qiskit.qasm2.loads(written) if written.startswith("OPENQASM 2") else qiskit.qasm3.loads(written)
                assert [(r.name, r.size) for r in back.qregs] == names, written
                assert np.allclose(Operator(back).data, Operator(qc).data)
                assert read_qasm_layout(written) == (c, layout)


def test_layout_in_json_and_its_errors() -> None:
    c = Circuit(3, (x_gate(2, [0, 1]),))
    layout = Layout((("a", 2), ("carry", 1)))
    data = circuit_to_dict(c) | {"registers": layout.to_dict()}
    back = json.loads(json.dumps(data))
    assert circuit_from_dict(back) == c
    assert layout_from_dict(back["registers"], 3) == layout
    assert layout.labels() == ["a[0]", "a[1]", "carry[0]"]
    with pytest.raises(ExactsynError, match="hold 3 qubits but the circuit has 4"):
        layout_from_dict(back["registers"], 4)
    with pytest.raises(ExactsynError, match="not an identifier"):
        layout_from_dict([{"name": "1a", "size": 3}], 3)
    with pytest.raises(ExactsynError, match="clashes"):
        apply_layout(to_qasm2(c), Layout((("cx", 2), ("b", 1))))


def test_apply_draw_and_synth_read_several_registers(tmp_path) -> None:  # type: ignore[no-untyped-def]
    from exactsyn.io.formats import read_circuit as load_circuit
    from exactsyn.specification.loader import load_any

    text = 'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg a[2];\nqreg c[1];\nccx a[0],a[1],c[0];\ncx c[0],a[0];\n'
    path = tmp_path / "two.qasm"
    path.write_text(text)
    c = load_circuit(path)  # what apply and draw call
    assert c == Circuit(3, (x_gate(2, [0, 1]), x_gate(0, [2])))
    spec, _ = load_any(path)  # what synth FILE.qasm calls
    assert spec.permutation == c.permutation()


def test_definitions_of_reversible_gates_expand_to_their_gates() -> None:
    # MAJ(a, b, c) -> (a^c, b^c, maj(a, b, c)) in 3 gates (Cuccaro, Draper, Kutin, Moulton 2004)
    text = """OPENQASM 3.0;
qubit[3] q;
gate maj(unused) a, b, c { cx c, b; cx c, a; ccx a, b, c; }
gate there_and_back a, b, c { maj(0.5) a, b, c; inv @ maj(1) a, b, c; }
maj(pi) q[0], q[1], q[2];
there_and_back q[2], q[1], q[0];
"""
    c = read_qasm(text)
    assert c.gates[:3] == (x_gate(1, [2]), x_gate(0, [2]), x_gate(2, [0, 1]))
    assert len(c.gates) == 9 and Circuit(3, c.gates[3:]).permutation() == tuple(range(8))
    for x in range(8):
        a, b, cc = x & 1, x >> 1 & 1, x >> 2 & 1
        y = Circuit(3, c.gates[:3]).permutation()[x]
        assert (y & 1, y >> 1 & 1, y >> 2 & 1) == (a ^ cc, b ^ cc, int(a + b + cc >= 2))
    with pytest.raises(ExactsynError, match="'maj' takes 1 parameter"):
        read_qasm(text.replace("maj(pi) q[0]", "maj q[0]"))
