"""Read a circuit back from our SVG drawings, from geometry alone (shared by the picture tests).

Which wire each symbol sits on, columns left to right; a group with a ``peres`` box is a
Peres gate (dot a, box b, ⊕ c).  Only a packed picture may put several gates in one
column, and then on disjoint spans.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate

SVG_NS = "{http://www.w3.org/2000/svg}"
MARKS = ("ctrl-pos", "ctrl-neg", "target", "swap", "peres")


def by_class(root: ET.Element, name: str) -> list[ET.Element]:
    return [el for el in root.iter() if name in el.get("class", "").split()]


def centre(el: ET.Element) -> tuple[float, float]:
    """Centre of a symbol from its geometry: circle centre, rectangle centre, path bounding box."""
    if el.tag == SVG_NS + "circle":
        return float(el.get("cx", "nan")), float(el.get("cy", "nan"))
    if el.tag == SVG_NS + "rect":
        return (
            float(el.get("x", "nan")) + float(el.get("width", "nan")) / 2,
            float(el.get("y", "nan")) + float(el.get("height", "nan")) / 2,
        )
    if el.tag == SVG_NS + "g":
        return centre(next(child for child in el if child.tag in (SVG_NS + "circle", SVG_NS + "rect")))
    nums = [float(v) for v in re.findall(r"-?\d+(?:\.\d+)?", el.get("d", ""))]
    xs, ys = nums[0::2], nums[1::2]
    return (min(xs) + max(xs)) / 2, (min(ys) + max(ys)) / 2


def read_back(svg_text: str, packed: bool = False) -> Circuit:
    """Rebuild the circuit from the picture's geometry (see the module docstring)."""
    root = ET.fromstring(svg_text)
    wires = [
        (float(w.get("y1", "nan")), float(w.get("x1", "nan")), float(w.get("x2", "nan")))
        for w in by_class(root, "wire")
    ]
    ys = sorted({y for y, _, _ in wires})
    labels = by_class(root, "label")
    blocks = len(labels) // len({label.text for label in labels}) if labels else 1
    n = len(ys) // blocks
    assert n * blocks == len(ys)

    def place(x: float, y: float) -> tuple[int, int]:
        hits = [i for i, wy in enumerate(ys) if abs(wy - y) < 0.01]
        assert len(hits) == 1, f"symbol at y={y} is on no wire"
        i = hits[0]
        assert any(abs(wy - y) < 0.01 and x1 < x < x2 for wy, x1, x2 in wires), "symbol off its wire's extent"
        return i // n, i % n  # block, line

    found: list[tuple[int, float, Gate]] = []
    for group in by_class(root, "gate"):
        marks: dict[str, list[int]] = {k: [] for k in MARKS}
        where = set()
        for kind in MARKS:
            for el in by_class(group, kind):
                x, y = centre(el)
                block, line = place(x, y)
                marks[kind].append(line)
                where.add((block, round(x, 2)))
        assert len(where) == 1, "one gate's symbols must share a column"
        ((block, x),) = where
        touched = [line for ms in marks.values() for line in ms]
        conns = by_class(group, "connector")
        assert len(conns) == (1 if len(set(touched)) > 1 else 0)
        for conn in conns:  # the connector joins the topmost and bottommost symbol
            top, bottom = place(x, float(conn.get("y1", "nan")))[1], place(x, float(conn.get("y2", "nan")))[1]
            assert (top, bottom) == (min(touched), max(touched))
        if marks["peres"]:
            (box,) = by_class(group, "peres")
            assert [t.text for t in box.iter(SVG_NS + "text")] == ["P"]
            assert not marks["ctrl-neg"] and not marks["swap"]
            ((a,), (b,), (c,)) = marks["ctrl-pos"], marks["peres"], marks["target"]
            gate = peres_gate(a, b, c)
        elif marks["swap"]:
            assert not marks["target"] and len(marks["swap"]) == 2
            gate = swap_gate(marks["swap"][0], marks["swap"][1], marks["ctrl-pos"], marks["ctrl-neg"])
        else:
            (t,) = marks["target"]
            gate = x_gate(t, marks["ctrl-pos"], marks["ctrl-neg"])
        found.append((block, x, gate))
    columns: dict[tuple[int, float], list[Gate]] = {}
    for b, x, g in found:
        columns.setdefault((b, x), []).append(g)
    for shared in columns.values():
        assert packed or len(shared) == 1, "two gates drawn in one column"
        spans = sorted((min(g.lines), max(g.lines)) for g in shared)
        assert all(hi < lo for (_, hi), (lo, _) in zip(spans, spans[1:], strict=False)), "gates overlap in a column"
    return Circuit(n, tuple(g for _, _, g in sorted(found, key=lambda t: (t[0], t[1]))))
