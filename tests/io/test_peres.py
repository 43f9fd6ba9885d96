"""The Peres gate in every circuit format: JSON, OpenQASM 2 / 3, SVG, PNG and the text drawing.

References outside the code under test: the Peres map itself, (a, b, c) -> (a, a xor b,
c xor a·b) (Peres, Phys. Rev. A 32, 1985; from memory), checked as a truth table and
against qiskit's own ``ccx`` then ``cx``; qiskit reads our OpenQASM 2 and 3 back and its
``Operator`` must be our permutation matrix; the ``openqasm3`` reference parser must
accept our OpenQASM 3; the pictures are read back from their geometry alone (SVG symbol
classes and positions, characters of the text drawing) and simulated with
exactsyn.core.circuit, so a wrong symbol, line or order changes the permutation; the PNG is
decoded by Pillow.
"""

from __future__ import annotations

import io
import json
import random
import re
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from click.testing import CliRunner
from helpers import permutation_matrix
from optional import need_openqasm3_parser, need_qiskit
from svg_readback import MARKS, SVG_NS, by_class, centre, read_back

import exactsyn.cli.pictures  # noqa: F401  (registers the draw command)
from exactsyn.cli import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io.diagram import gate_title
from exactsyn.io.draw import draw_text
from exactsyn.io.jsonio import circuit_to_dict, gate_from_dict, gate_to_dict, load_json_circuit
from exactsyn.io.png import to_png
from exactsyn.io.qasm import PERES_DEFINITION, read_qasm, to_qasm2, to_qasm3
from exactsyn.io.svg import to_svg

# qiskit's OpenQASM 3 importer builds multiple-controlled swaps through an argument qiskit itself deprecates
QISKIT_INTERNAL = "ignore:.*argument ``annotated`` is deprecated:DeprecationWarning"


# ------------------------------------------------------------------ circuits
def random_gate(rng: random.Random, lines: int) -> Gate:
    """Peres, swap (with positive and negative controls) or x (with both kinds of control)."""
    order = rng.sample(range(lines), lines)
    r = rng.random()
    if r < 0.3:
        return peres_gate(*order[:3])
    if r < 0.55:
        a, b, rest = order[0], order[1], order[2:]
        ctl = rest[: rng.randint(0, len(rest))]
        split = rng.randint(0, len(ctl))
        return swap_gate(a, b, ctl[:split], ctl[split:])
    t, rest = order[0], order[1:]
    ctl = rest[: rng.randint(0, len(rest))]
    split = rng.randint(0, len(ctl))
    return x_gate(t, ctl[:split], ctl[split:])


def random_circuits(seed: int, count: int, most: int = 8) -> list[Circuit]:
    rng = random.Random(seed)
    out = []
    for _ in range(count):
        lines = rng.randint(3, 4)
        out.append(Circuit(lines, tuple(random_gate(rng, lines) for _ in range(rng.randint(1, most)))))
    return out


CIRCUITS = random_circuits(1985, 80)

# a hand-made circuit with every kind of symbol: Peres both ways round, Toffoli on the same
# lines as a Peres gate, negative controls on an x gate and on a swap
SHOWCASE = Circuit(
    4,
    (
        peres_gate(0, 1, 2),
        x_gate(2, [0, 1]),  # the Toffoli on the Peres gate's lines: must look different
        peres_gate(3, 2, 0),
        x_gate(1, [0], [3]),
        swap_gate(0, 2, [], [1]),
        peres_gate(1, 3, 2),
    ),
)


def test_random_circuits_cover_the_cases() -> None:
    gates = [g for c in CIRCUITS for g in c.gates]
    assert sum(g.family == "peres" for g in gates) >= 40
    assert any(g.family == "x" and g.negative_controls and g.controls for g in gates)
    assert any(g.family == "x" and g.num_controls == 3 for g in gates)  # needs xc3 in OpenQASM 2
    assert any(g.family == "swap" and g.controls for g in gates)
    assert any(g.family == "swap" and g.negative_controls for g in gates)
    assert any(c.lines == 3 for c in CIRCUITS) and any(c.lines == 4 for c in CIRCUITS)


def test_the_peres_map_is_the_published_one() -> None:
    # (a, b, c) -> (a, a xor b, c xor a·b): Peres 1985 (from memory); line 0 = a, 1 = b, 2 = c
    expected = []
    for state in range(8):
        a, b, c = state & 1, state >> 1 & 1, state >> 2 & 1
        expected.append(a | (a ^ b) << 1 | (c ^ (a & b)) << 2)
    assert Circuit(3, (peres_gate(0, 1, 2),)).permutation() == tuple(expected)
    qiskit = need_qiskit()
    from qiskit.quantum_info import Operator

    for a, b, c in ((0, 1, 2), (2, 0, 3), (3, 2, 1), (1, 3, 0)):
        qc = qiskit.QuantumCircuit(4)  # qiskit's own gates, in the definition's order
        qc.ccx(a, b, c)
        qc.cx(a, b)
        assert np.allclose(Operator(qc).data, permutation_matrix(Circuit(4, (peres_gate(a, b, c),))))


# ------------------------------------------------------------------ JSON
def test_json_round_trip_and_form() -> None:
    for c in CIRCUITS:
        assert load_json_circuit(json.dumps(circuit_to_dict(c))) == c
    g = peres_gate(3, 0, 2)
    assert gate_to_dict(g) == {"type": "peres", "controls": [3], "targets": [0, 2]}
    assert gate_from_dict({"type": "peres", "targets": [0, 2], "controls": [3]}) == g
    # the order of the targets is the gate's meaning: [b, c] and [c, b] are different gates
    other = gate_from_dict({"type": "peres", "controls": [3], "targets": [2, 0]})
    assert other == peres_gate(3, 2, 0) and other.permutation(4) != g.permutation(4)


@pytest.mark.parametrize(
    ("gate", "fragment"),
    [
        ({"type": "peres", "targets": [1, 2]}, "needs 'controls'"),
        ({"type": "peres", "controls": [0]}, "needs 'targets'"),
        ({"type": "peres", "controls": [], "targets": [1, 2]}, "exactly 1 line,"),
        ({"type": "peres", "controls": [0, 3], "targets": [1, 2]}, "exactly 1 line,"),
        ({"type": "peres", "controls": [0], "targets": [1]}, "exactly 2 lines"),
        ({"type": "peres", "controls": [0], "targets": [1, 2, 3]}, "exactly 2 lines"),
        ({"type": "peres", "controls": 0, "targets": [1, 2]}, "'controls' must be a list"),
        ({"type": "peres", "controls": [0], "targets": [1, "2"]}, "'targets' must be a non-negative integer"),
        ({"type": "peres", "controls": [0], "targets": [1, -2]}, "'targets' must be a non-negative integer"),
        ({"type": "peres", "controls": [True], "targets": [1, 2]}, "'controls' must be a non-negative integer"),
        ({"type": "peres", "controls": [1], "targets": [1, 2]}, "twice"),
        ({"type": "peres", "controls": [0], "targets": [1, 2], "negative_controls": []}, "no negative controls"),
        ({"type": "peres", "controls": [0], "targets": [1, 2], "negative_controls": [3]}, "no negative controls"),
        ({"type": "peres", "controls": [0], "target": 1}, "unknown key 'target'"),
        ({"type": "peres", "controls": [0], "targets": [1, 2], "angle": 1}, "unknown key 'angle'"),
        ({"type": "peres", "controls": [0], "targets": [1, 5]}, "outside 0..3"),
        ({"type": "Peres", "controls": [0], "targets": [1, 2]}, "'type' must be"),
        ({"type": ["peres"], "controls": [0], "targets": [1, 2]}, "'type' must be"),
    ],
)
def test_bad_json_peres_gates_are_one_line_errors(gate: dict[str, Any], fragment: str) -> None:
    text = json.dumps({"lines": 4, "gates": [{"type": "x", "target": 0}, gate]})
    with pytest.raises(ExactsynError) as info:
        load_json_circuit(text)
    message = str(info.value)
    assert fragment in message and message.startswith("gate 1: ")
    assert "\n" not in message


# ------------------------------------------------------------------ OpenQASM
def test_qasm_writes_the_definition_once_and_one_call_per_gate() -> None:
    for c in CIRCUITS:
        peres = [g for g in c.gates if g.family == "peres"]
        for text in (to_qasm2(c), to_qasm3(c)):
            lines = text.splitlines()
            assert lines.count(PERES_DEFINITION) == (1 if peres else 0)
            if peres:  # before the register, right after the include
                assert lines.index(PERES_DEFINITION) == 2
            calls = [line for line in lines if line.startswith("peres ")]
            assert len(calls) == len(peres)
            for line, g in zip(calls, peres, strict=True):
                assert [int(i) for i in re.findall(r"q\[(\d+)\]", line)] == [*g.controls, *g.targets]
    assert PERES_DEFINITION == "gate peres a, b, c { ccx a, b, c; cx a, b; }"
    assert "peres q[2], q[0], q[1];" in to_qasm3(Circuit(3, (peres_gate(2, 0, 1),)))
    assert "gate peres" not in to_qasm3(Circuit(3, (x_gate(2, [0, 1]),)))


def test_qasm_round_trip_through_our_reader() -> None:
    for c in CIRCUITS:
        assert read_qasm(to_qasm3(c)) == c  # version 3 keeps every gate, Peres included
        back2 = read_qasm(to_qasm2(c))
        assert back2.permutation() == c.permutation()
        # version 2 writes negative controls as x gates around the gate; Peres gates stay Peres gates
        assert [g for g in back2.gates if g.family == "peres"] == [g for g in c.gates if g.family == "peres"]
        if not any(g.negative_controls for g in c.gates):
            assert back2 == c


@pytest.mark.filterwarnings(QISKIT_INTERNAL)
def test_qiskit_reads_our_qasm2_and_qasm3_as_the_same_operator() -> None:
    qiskit = need_qiskit()
    from qiskit.quantum_info import Operator

    for c in CIRCUITS:
        expected = permutation_matrix(c)
        # qiskit as reference reader; its legacy instruction set is the qelib1.inc with swap and cswap
        qc2 = qiskit.qasm2.loads(to_qasm2(c), custom_instructions=qiskit.qasm2.LEGACY_CUSTOM_INSTRUCTIONS)
        # qiskit's basis index is little-endian (q[0] least significant): our state integer
        assert np.allclose(Operator(qc2).data, expected), to_qasm2(c)
        qc3 = qiskit.qasm3.loads(to_qasm3(c))
        assert np.allclose(Operator(qc3).data, expected), to_qasm3(c)


def test_qasm3_is_accepted_by_the_reference_parser() -> None:
    openqasm3 = need_openqasm3_parser()
    from openqasm3 import ast

    for c in CIRCUITS[:20]:
        program = openqasm3.parse(to_qasm3(c))  # the specification's grammar
        defs = [st for st in program.statements if isinstance(st, ast.QuantumGateDefinition)]
        calls = [st for st in program.statements if isinstance(st, ast.QuantumGate) and st.name.name == "peres"]
        assert len(defs) == (1 if any(g.family == "peres" for g in c.gates) else 0)
        assert len(calls) == sum(g.family == "peres" for g in c.gates)
        assert all(not call.modifiers and len(call.qubits) == 3 for call in calls)


@pytest.mark.filterwarnings(QISKIT_INTERNAL)
def test_negative_controls_are_exported_as_negative_controls() -> None:
    qiskit = need_qiskit()
    from qiskit.quantum_info import Operator

    c = Circuit(4, (x_gate(2, [0], [1]), swap_gate(0, 3, [2], [1]), peres_gate(1, 2, 3)))
    text3 = to_qasm3(c)
    # negctrl modifier first, its operand first (the OpenQASM 3 operand order of modifiers)
    assert "negctrl @ ctrl @ x q[1], q[0], q[2];" in text3
    assert "negctrl @ ctrl @ swap q[1], q[2], q[0], q[3];" in text3
    text2 = to_qasm2(c)
    # OpenQASM 2: x on the negative control before and after the gate
    assert "x q[1];\nccx q[0],q[1],q[2];\nx q[1];" in text2
    for qc in (
        qiskit.qasm2.loads(text2, custom_instructions=qiskit.qasm2.LEGACY_CUSTOM_INSTRUCTIONS),
        qiskit.qasm3.loads(text3),
    ):
        assert np.allclose(Operator(qc).data, permutation_matrix(c))
    # against qiskit's own negatively controlled gates (ctrl_state: a 0 bit is a negative control)
    ref = qiskit.QuantumCircuit(4)
    from qiskit.circuit.library import SwapGate, XGate

    ref.append(XGate().control(2, ctrl_state="01", annotated=False), [0, 1, 2])  # q0 = 1, q1 = 0
    ref.append(SwapGate().control(2, ctrl_state="10", annotated=False), [1, 2, 0, 3])  # q1 = 0, q2 = 1
    ref.ccx(1, 2, 3)
    ref.cx(1, 2)
    assert np.allclose(Operator(ref).data, permutation_matrix(c))


@pytest.mark.parametrize(
    ("change", "fragment"),
    [
        (("ccx a, b, c; cx a, b;", "cx a, b; ccx a, b, c;"), "differs from the one exactsyn writes"),  # its inverse
        (("ccx a, b, c;", "ccx b, a, c;"), "differs from the one exactsyn writes"),
        (("cx a, b;", "cx a, c;"), "differs from the one exactsyn writes"),
        (("gate peres a, b, c", "gate peres c, b, a"), "differs from the one exactsyn writes"),
        (("peres q[0], q[1], q[2];", "ctrl @ peres q[3], q[0], q[1], q[2];"), "modifiers on 'peres'"),
        (("peres q[0], q[1], q[2];", "peres q[0], q[1];"), "needs 3 qubits, not 2"),
        (("peres q[0], q[1], q[2];", "peres q[0], q[1], q[0];"), "uses a qubit twice"),
        (("peres q[0], q[1], q[2];", "peres q[0], q[1], q[9];"), "out of range"),
        (("qubit[4] q;", PERES_DEFINITION + "\nqubit[4] q;"), "defined a second time"),
        ((PERES_DEFINITION, ""), "unsupported gate 'peres'"),
    ],
)
def test_reader_accepts_only_our_peres_definition(change: tuple[str, str], fragment: str) -> None:
    text = to_qasm3(Circuit(4, (peres_gate(0, 1, 2),)))
    assert read_qasm(text) == Circuit(4, (peres_gate(0, 1, 2),))
    old, new = change
    assert old in text
    with pytest.raises(ExactsynError) as info:
        read_qasm(text.replace(old, new, 1))
    assert fragment in str(info.value) and "\n" not in str(info.value)
    # the same definition laid out differently is the same program
    spaced = text.replace(PERES_DEFINITION, "gate peres a,b,c\n{\n  ccx a,b,c;\n  cx a,b;\n}")
    assert read_qasm(spaced) == read_qasm(text)


# ------------------------------------------------------------------ SVG
def expected_counts(c: Circuit) -> dict[str, int]:
    return {
        "ctrl-pos": sum(len(g.controls) for g in c.gates),  # a Peres gate's a is a positive control
        "ctrl-neg": sum(len(g.negative_controls) for g in c.gates),
        "target": sum(1 for g in c.gates if g.family in ("x", "peres")),  # a Peres gate's c is a ⊕
        "swap": sum(2 for g in c.gates if g.family == "swap"),
        "peres": sum(1 for g in c.gates if g.family == "peres"),  # the P box on b
    }


def test_svg_counts_and_reads_back_circuits_with_peres_gates() -> None:
    rng = random.Random(4)
    for trial, c in enumerate([SHOWCASE, *CIRCUITS]):
        packed, wrap = trial % 2 == 1, rng.choice([None, 1, 3])
        svg = to_svg(c, packed=packed, wrap=wrap)
        root = ET.fromstring(svg)
        for kind, count in expected_counts(c).items():
            assert len(by_class(root, kind)) == count, (kind, c)
        assert len(by_class(root, "gate")) == len(c)
        back = read_back(svg, packed)
        assert back.permutation() == c.permutation()  # packed: gates of one layer commute
        if not packed:
            assert back.gates == c.gates


def test_svg_hover_text_spells_out_the_peres_map() -> None:
    names = ["x", "y", "z", "w"]
    root = ET.fromstring(to_svg(SHOWCASE, labels=names))
    titles = [g.find(SVG_NS + "title") for g in by_class(root, "gate")]
    texts = [t.text if t is not None else "" for t in titles]
    assert texts[0] == "gate 1, Peres: z ^= x·y, then y ^= x"
    assert texts[1] == "gate 2, Toffoli: target z; controls x, y"
    assert texts[2] == "gate 3, Peres: x ^= w·z, then z ^= w"
    assert texts[3] == "gate 4, Toffoli: target y; controls x, ¬w"
    assert gate_title(peres_gate(0, 1, 2), ("a", "b", "c")) == "Peres: c ^= a·b, then b ^= a"


def test_peres_and_toffoli_on_the_same_lines_draw_differently() -> None:
    for g, h in ((peres_gate(0, 1, 2), x_gate(2, [0, 1])), (peres_gate(0, 1, 2), peres_gate(0, 2, 1))):
        svgs = [to_svg(Circuit(3, (gate,))) for gate in (g, h)]
        assert svgs[0] != svgs[1]
        assert [read_back(s).gates for s in svgs] == [(g,), (h,)]
        texts = [draw_text(Circuit(3, (gate,))) for gate in (g, h)]
        assert texts[0] != texts[1]


def test_negative_controls_are_open_circles() -> None:
    root = ET.fromstring(to_svg(SHOWCASE))
    neg, pos = by_class(root, "ctrl-neg"), by_class(root, "ctrl-pos")
    assert (
        (len(neg), len(pos)) == (2, 6) == (expected_counts(SHOWCASE)["ctrl-neg"], expected_counts(SHOWCASE)["ctrl-pos"])
    )
    paper = {r.get("fill") for r in by_class(root, "background")}
    assert all(el.tag == SVG_NS + "circle" for el in neg + pos)
    assert {el.get("fill") for el in neg} == paper  # hollow: the background colour inside
    assert paper.isdisjoint({el.get("fill") for el in pos})  # filled
    gate_of = {id(el): g for g in by_class(root, "gate") for el in g.iter()}
    assert all(gate_of[id(el)].get("stroke") not in (None, "none") and el.get("stroke") is None for el in neg)


# ------------------------------------------------------------------ PNG
def test_png_draws_the_peres_box_the_target_and_hollow_negative_controls() -> None:
    from PIL import Image

    scale = 2.0
    img: Any = Image.open(io.BytesIO(to_png(SHOWCASE, scale=scale))).convert("L")
    root = ET.fromstring(to_svg(SHOWCASE))
    assert abs(img.size[0] - float(root.get("width", "0")) * scale) <= 1

    def px(x: float, y: float) -> int:
        return int(img.getpixel((int(x * scale), int(y * scale))))

    boxes = by_class(root, "peres")
    assert len(boxes) == 3
    for el in boxes:  # a square: dark corners and edges, light inside, a dark letter in the middle
        x, y = centre(el)
        half = float(next(el.iter(SVG_NS + "rect")).get("width", "0")) / 2
        assert all(px(x + sx * half, y + sy * half) < 120 for sx in (-1, 1) for sy in (-1, 1))
        assert px(x + half - 2.5, y - half + 2.5) > 200
        letter = [px(x + dx / 2, y + dy / 2) for dx in range(-10, 11) for dy in range(-10, 11)]
        assert min(letter) < 100 and max(letter) > 200
    for el in by_class(root, "target"):  # circle with a cross: light where a box would have its corner
        x, y = centre(el)
        assert px(x, y) < 120 and px(x + 5, y - 5) > 200 and px(x + 10, y - 10) > 200
    for el in by_class(root, "ctrl-neg"):  # hollow: light inside, dark ring
        x, y = centre(el)
        assert px(x + 2, y - 2) > 200 and px(x, y - 5.5) < 120
    for el in by_class(root, "ctrl-pos"):
        assert px(*centre(el)) < 80


# ------------------------------------------------------------------ text drawing
def read_back_text(text: str, lines: int, ascii: bool) -> Circuit:
    """The circuit from a one-block text drawing: the symbol of each gate column on each wire."""
    control, negative, target, swap, peres = "*o+xP" if ascii else "●○⊕×P"
    rows = text.rstrip("\n").split("\n")
    assert len(rows) == 2 * lines - 1
    wires = [row.split(" ", 1)[1] for row in rows[0::2]]  # drop the label (q0, q1, ...)
    gates: list[Gate] = []
    for col in range(2, len(wires[0]) - 1, 3):
        cells = {line: wires[line][col] for line in range(lines)}
        get = {s: [line for line, ch in cells.items() if ch == s] for s in (control, negative, target, swap, peres)}
        if get[peres]:
            ((a,), (b,), (c,)) = get[control], get[peres], get[target]
            gates.append(peres_gate(a, b, c))
        elif get[swap]:
            gates.append(swap_gate(get[swap][0], get[swap][1], get[control], get[negative]))
        else:
            (t,) = get[target]
            gates.append(x_gate(t, get[control], get[negative]))
    return Circuit(lines, tuple(gates))


@pytest.mark.parametrize("ascii_only", [False, True])
def test_text_drawing_of_peres_gates_reads_back(ascii_only: bool) -> None:
    sym = "*o+xP" if ascii_only else "●○⊕×P"
    for c in [SHOWCASE, *CIRCUITS]:
        text = draw_text(c, width=200, ascii=ascii_only)
        body = "".join(row.split(" ", 1)[1] for row in text.splitlines() if row.startswith("q"))
        counts = expected_counts(c)
        assert [body.count(s) for s in sym] == [counts[k] for k in MARKS[:4]] + [counts["peres"]]
        assert read_back_text(text, c.lines, ascii_only).gates == c.gates


def test_text_drawing_of_a_peres_gate() -> None:
    rows = draw_text(Circuit(4, (peres_gate(3, 0, 2), x_gate(2, [0, 3]))), labels=["a", "b", "c", "d"]).splitlines()
    assert rows == [
        "a ──P──●──",
        "    │  │  ",
        "b ──┼──┼──",
        "    │  │  ",
        "c ──⊕──⊕──",
        "    │  │  ",
        "d ──●──●──",
    ]


# ------------------------------------------------------------------ draw command
def test_draw_command_reads_peres_gates_from_json_and_openqasm(tmp_path: Path) -> None:
    runner = CliRunner()
    files = {
        "c.json": json.dumps(circuit_to_dict(SHOWCASE)),
        "c2.qasm": to_qasm2(SHOWCASE),
        "c3.qasm": to_qasm3(SHOWCASE),
    }
    for name, text in files.items():
        (tmp_path / name).write_text(text, encoding="utf-8")
        res = runner.invoke(main, ["draw", str(tmp_path / name), "--format", "svg"])
        assert res.exit_code == 0, res.output
        back = read_back(res.output)
        assert back.permutation() == SHOWCASE.permutation()
        assert [g for g in back.gates if g.family == "peres"] == [g for g in SHOWCASE.gates if g.family == "peres"]
    (tmp_path / "bad.json").write_text(
        '{"lines": 3, "gates": [{"type": "peres", "controls": [0], "targets": [1, 2], "negative_controls": [0]}]}'
    )
    res = runner.invoke(main, ["draw", str(tmp_path / "bad.json"), "--format", "svg"])
    assert res.exit_code == 2 and "no negative controls" in res.output
