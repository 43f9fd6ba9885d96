"""Pictures: SVG and PNG circuit diagrams and the draw command, the SVG also checked in headless Chromium.

References outside the code under test: the circuit is read back from the SVG's geometry
alone (wire positions and symbol classes, tests/svg_readback.py) and simulated with
exactsyn.core.circuit, so a wrong symbol, line or order changes the permutation; packed
layers are compared with Circuit.depth(); the PNG is decoded by Pillow; the SVG is
rendered by Chromium (tests/browser.py), which measures the rendered label text.
(The HTML batch report is tested in tests/batch/test_report.py.)
"""

from __future__ import annotations

import json
import random
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from browser import Browser, needs_chromium
from click.testing import CliRunner
from helpers import png_grey
from svg_readback import SVG_NS, centre, read_back

import exactsyn.cli.pictures  # noqa: F401  (registers the draw command)
from exactsyn.cli import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import render
from exactsyn.io.jsonio import circuit_to_dict
from exactsyn.io.qasm import read_qasm, to_qasm2, to_qasm3
from exactsyn.io.svg import to_svg


# ------------------------------------------------------------------ circuits
def random_circuit(rng: random.Random, lines: int, gates: int) -> Circuit:
    out: list[Gate] = []
    for _ in range(gates):
        order = rng.sample(range(lines), lines)
        if rng.random() < 0.25 and lines >= 2:
            a, b, rest = order[0], order[1], order[2:]
            ctl = rest[: rng.randint(0, len(rest))]
            split = rng.randint(0, len(ctl))
            out.append(swap_gate(a, b, ctl[:split], ctl[split:]))
        else:
            t, rest = order[0], order[1:]
            ctl = rest[: rng.randint(0, len(rest))]
            split = rng.randint(0, len(ctl))
            out.append(x_gate(t, ctl[:split], ctl[split:]))
    return Circuit(lines, tuple(out))


MIXED = Circuit(
    4,
    (
        x_gate(2, [0, 1]),  # Toffoli
        x_gate(0, [], [3]),  # CNOT on a negative control
        swap_gate(1, 3, [0]),  # Fredkin
        x_gate(3),
        x_gate(1, [0], [2]),
        swap_gate(0, 2),
        x_gate(0, [1]),
    ),
)


def cls(el: ET.Element) -> str:
    return el.get("class", "")


def by_class(root: ET.Element, name: str) -> list[ET.Element]:
    return [el for el in root.iter() if name in cls(el).split()]


def expected_counts(c: Circuit) -> dict[str, int]:
    return {
        "ctrl-pos": sum(len(g.controls) for g in c.gates),
        "ctrl-neg": sum(len(g.negative_controls) for g in c.gates),
        "target": sum(1 for g in c.gates if g.family == "x"),
        "swap": sum(2 for g in c.gates if g.family == "swap"),
    }


# ------------------------------------------------------------------ SVG
def test_svg_parses_and_counts_every_symbol_of_random_circuits() -> None:
    rng = random.Random(11)
    for trial in range(120):
        lines = rng.randint(1, 6)
        c = random_circuit(rng, lines, rng.randint(0, 14))
        packed, wrap = trial % 2 == 1, rng.choice([None, 1, 3, 8])
        svg = to_svg(c, packed=packed, wrap=wrap)
        root = ET.fromstring(svg)  # well-formed XML
        assert root.tag == SVG_NS + "svg"
        for kind, count in expected_counts(c).items():
            assert len(by_class(root, kind)) == count, (kind, c)
        assert len(by_class(root, "gate")) == len(c)
        # read back from geometry alone: the same function (packed: gates of a layer commute)
        back = read_back(svg, packed)
        assert back.permutation() == c.permutation()
        if not packed:
            assert back.gates == c.gates  # unpacked: exactly the gates, in application order


def test_negative_controls_are_drawn_differently_from_positive_ones() -> None:
    root = ET.fromstring(to_svg(MIXED))
    pos, neg = by_class(root, "ctrl-pos"), by_class(root, "ctrl-neg")
    assert pos and neg
    pos_fill = {el.get("fill") for el in pos}
    neg_fill = {el.get("fill") for el in neg}
    paper = {r.get("fill") for r in by_class(root, "background")}
    assert len(pos_fill) == len(neg_fill) == 1 and pos_fill != neg_fill
    assert neg_fill == paper and pos_fill != paper  # hollow: filled with the background colour
    # a hollow dot needs an outline: its group strokes it in the ink colour
    gate_of = {id(el): g for g in by_class(root, "gate") for el in g.iter()}
    assert all(gate_of[id(el)].get("stroke") not in (None, "none") and el.get("stroke") is None for el in neg)


def test_packed_layers_are_the_circuit_depth_and_narrower() -> None:
    rng = random.Random(3)
    for _ in range(40):
        c = random_circuit(rng, 5, 12)
        flat, packed = ET.fromstring(to_svg(c)), ET.fromstring(to_svg(c, packed=True))
        layers = len(by_class(packed, "layer-sep")) + 1 if c.gates else 0
        assert layers == c.depth()  # Circuit.depth: greedy as-soon-as-possible layers
        assert float(packed.get("width", "0")) <= float(flat.get("width", "0"))
    wide = Circuit(4, (x_gate(0), x_gate(1), x_gate(2), x_gate(3)))  # one layer of four NOT gates
    assert float(ET.fromstring(to_svg(wide, packed=True)).get("width", "0")) < float(
        ET.fromstring(to_svg(wide)).get("width", "0")
    )


def test_long_circuits_wrap_into_blocks_of_bounded_width() -> None:
    c = random_circuit(random.Random(7), 3, 100)
    svg = to_svg(c, labels=["a", "b", "c"], wrap=30)
    root = ET.fromstring(svg)
    first30 = ET.fromstring(to_svg(Circuit(3, c.gates[:30]), labels=["a", "b", "c"]))
    assert root.get("width") == first30.get("width")  # width stops growing at the wrap width
    assert len(by_class(root, "label")) == 3 * 4  # 4 blocks, labels repeated in each
    assert read_back(svg).gates == c.gates


def test_labels_of_any_length_end_before_the_wires() -> None:
    names = ["a", "carry_in_with_a_rather_long_name_" + "x" * 40, "数据线", "WWWWWWWW"]
    root = ET.fromstring(to_svg(MIXED, labels=names))
    texts = by_class(root, "label")
    assert [t.text for t in texts] == names
    wire_start = min(float(w.get("x1", "nan")) for w in by_class(root, "wire"))
    for t in texts:  # right-aligned at the wire start, with a gap (the browser test measures real text)
        assert t.get("text-anchor") in (None, "end") and float(t.get("x", "nan")) < wire_start
    with pytest.raises(ExactsynError, match="3 labels given for a circuit on 4 lines"):
        to_svg(MIXED, labels=["a", "b", "c"])
    with pytest.raises(ExactsynError, match="line break"):
        to_svg(MIXED, labels=["a", "b\nc", "d", "e"])
    with pytest.raises(ExactsynError, match="control character"):
        to_svg(MIXED, labels=["a", "b\x00", "d", "e"])
    escaped = ET.fromstring(to_svg(Circuit(2, (x_gate(0, [1]),)), labels=["<a&b>", '"q"']))
    assert [t.text for t in by_class(escaped, "label")] == ["<a&b>", '"q"']


# ------------------------------------------------------------------ PNG
def test_png_shows_the_same_symbols_as_the_svg() -> None:
    from exactsyn.io.png import to_png

    scale = 2.0
    data = to_png(MIXED, scale=scale)
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    img = png_grey(data)
    root = ET.fromstring(to_svg(MIXED))
    w, h = float(root.get("width", "0")) * scale, float(root.get("height", "0")) * scale
    assert abs(img.size[0] - w) <= 1 and abs(img.size[1] - h) <= 1  # the SVG's size, at the scale

    def px(x: float, y: float) -> int:
        return int(img.getpixel((int(x * scale), int(y * scale))))

    hist = img.histogram()
    assert sum(hist[:100]) > 0.01 * img.size[0] * img.size[1]  # ink on at least 1 % of the picture
    for el in by_class(root, "ctrl-pos"):  # filled: dark at the centre
        assert px(*centre(el)) < 80
    for el in by_class(root, "ctrl-neg"):  # hollow: light inside, dark ring
        x, y = centre(el)
        assert px(x + 2, y - 2) > 200 and px(x, y - 5.5) < 120
    for el in by_class(root, "target"):  # circle with a cross: dark centre, light quadrants, dark rim
        x, y = centre(el)
        assert px(x, y) < 120 and px(x + 5, y - 5) > 200 and px(x + 11, y) < 120


# ------------------------------------------------------------------ draw command
def test_draw_reads_json_and_openqasm_and_writes_svg_png_text(tmp_path: Path) -> None:
    runner = CliRunner()
    saved = {
        "c.json": json.dumps(circuit_to_dict(MIXED)),
        "c2.qasm": to_qasm2(MIXED),
        "c3.qasm": to_qasm3(MIXED),
    }
    for name, text in saved.items():
        (tmp_path / name).write_text(text)
        out = tmp_path / f"{name}.svg"
        res = runner.invoke(main, ["draw", str(tmp_path / name), "-o", str(out), "--labels", "a,b,c,d"])
        assert res.exit_code == 0, res.output
        svg = out.read_text(encoding="utf-8")
        root = ET.fromstring(svg)
        # OpenQASM 2 has no negative controls: they come back as x gates around the gate
        saved_circuit = read_qasm(text) if name.endswith(".qasm") else MIXED
        for kind, count in expected_counts(saved_circuit).items():
            assert len(by_class(root, kind)) == count
        assert read_back(svg).gates == saved_circuit.gates
        assert saved_circuit.permutation() == MIXED.permutation()
        assert [t.text for t in by_class(root, "label")] == ["a", "b", "c", "d"]
    src = str(tmp_path / "c.json")
    drawn = runner.invoke(main, ["draw", src])
    assert drawn.exit_code == 0 and "⊕" in drawn.output and "○" in drawn.output
    packed = runner.invoke(main, ["draw", src, "--format", "svg", "--packed"])
    assert packed.exit_code == 0 and len(by_class(ET.fromstring(packed.output), "layer-sep")) == MIXED.depth() - 1
    png = runner.invoke(main, ["draw", src, "-o", str(tmp_path / "c.png")])
    assert png.exit_code == 0 and (tmp_path / "c.png").read_bytes()[:4] == b"\x89PNG"
    piped = runner.invoke(main, ["draw", src, "--format", "png"])  # stdout is not a terminal here
    assert piped.exit_code == 0 and piped.stdout_bytes == (tmp_path / "c.png").read_bytes()
    for args, message in (
        (["draw", src, "--labels", "a,b"], "2 labels given for a circuit on 4 lines"),
        (["draw", src, "--labels", "a,,c,d"], "non-empty name"),
        (["draw", src, "--wrap", "-1"], "--wrap"),
        (["draw", src, "--packed"], "--packed is for svg and png"),
        (["draw", str(tmp_path / "missing.json"), "--format", "svg"], "cannot read circuit file"),
    ):
        res = runner.invoke(main, args)
        assert res.exit_code == 2 and message in res.output and len(res.output.strip().splitlines()) == 1, res.output
    (tmp_path / "bad.json").write_text('{"lines": 2, "gates": [{"type": "y"}]}')
    res = runner.invoke(main, ["draw", str(tmp_path / "bad.json"), "--format", "svg"])
    assert res.exit_code == 2 and "'type'" in res.output


def test_synth_result_json_draws_and_render_gives_text_or_bytes(tmp_path: Path) -> None:
    runner = CliRunner()
    out = tmp_path / "toffoli.json"
    res = runner.invoke(main, ["synth", "--perm", "0,1,2,3,4,5,7,6", "--format", "json", "-o", str(out), "-q"])
    assert res.exit_code == 0, res.output
    drawn = runner.invoke(main, ["draw", str(out), "--format", "svg"])
    root = ET.fromstring(drawn.output)
    assert (len(by_class(root, "ctrl-pos")), len(by_class(root, "target"))) == (2, 1)  # one Toffoli gate
    svg, text, png = render(MIXED, "svg"), render(MIXED, "text"), render(MIXED, "png")
    assert isinstance(svg, str) and read_back(svg).gates == MIXED.gates  # read back from geometry alone
    assert isinstance(text, str)
    body = "".join(row.split(" ", 1)[1] for row in text.splitlines() if row.startswith("q"))
    assert [body.count(s) for s in "●○⊕×"] == list(expected_counts(MIXED).values())
    assert isinstance(png, bytes)
    root = ET.fromstring(svg)
    w, h = float(root.get("width", "0")), float(root.get("height", "0"))
    assert png_grey(png).size == (round(2 * w), round(2 * h))  # decoded by Pillow: the SVG at PNG scale 2
    with pytest.raises(ExactsynError, match="unknown format"):
        render(MIXED, "gif")


# ------------------------------------------------------------------ in headless Chromium
def test_svg_labels_measured_in_chromium_end_before_their_wires(tmp_path: Path) -> None:
    needs_chromium()
    names = ["a", "carry_in_with_a_rather_long_name_" + "x" * 40, "数据线", "WWWWWWWWWWWW"]
    c = random_circuit(random.Random(5), 4, 60)
    svg = tmp_path / "c.svg"
    svg.write_text(to_svg(c, labels=names, wrap=25), encoding="utf-8")
    with Browser(1600, 900) as b:
        b.load(svg.as_uri())
        problems = b.problems()
        measured = b.evaluate(
            "JSON.stringify({labels: [...document.querySelectorAll('text.label')].map(t => {"
            " const r = t.getBBox(); return [t.textContent, r.x, r.x + r.width]; }),"
            " wire: Math.min(...[...document.querySelectorAll('line.wire')].map(l => l.x1.baseVal.value))})"
        )
    assert problems == []
    data = json.loads(measured)
    assert len(data["labels"]) == 4 * 3  # 60 gates at 25 per row: 3 blocks
    for text, left, right in data["labels"]:
        assert text in names
        assert right < data["wire"] - 2, f"label {text!r} runs into its wire ({right} >= {data['wire']})"
        assert left >= 0, f"label {text!r} is cut off on the left ({left})"
