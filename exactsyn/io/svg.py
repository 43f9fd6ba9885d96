"""Circuit diagrams as SVG text (W3C, Scalable Vector Graphics 1.1).

:func:`to_svg` is a pure function: circuit in, one ``<svg>`` element out, with no
external references, no scripts and no ids, so the same text is a standalone ``.svg``
file and can be inlined any number of times in an HTML page.  The geometry is
:func:`exactsyn.io.diagram.layout` (notation, packing, wrapping and label margin are
described there).  Every drawn element carries a class, so the picture can be styled
and counted:

========================  =====================================================
``wire`` / ``label``      one horizontal wire per line and block, its name
``gate``                  a group per gate, with a ``<title>`` (hover text)
``connector``             the vertical line joining a gate's controls and targets
``ctrl-pos``              filled dot: positive control
``ctrl-neg``              hollow dot: negative control
``target``                ``⊕``: target of an x gate, or line ``c`` of a Peres gate
                          (a group: circle and cross)
``swap``                  ``×``: one of the two targets of a swap
``peres``                 square box with the letter ``P``: line ``b`` of a Peres gate
                          (a group: ``rect`` and ``text``); see :mod:`exactsyn.io.diagram`
``layer-sep``             dashed rule between packed layers
========================  =====================================================

Styles are presentation attributes rather than CSS, so every SVG reader draws the
same picture.
"""

from __future__ import annotations

from xml.sax.saxutils import escape, quoteattr

from exactsyn.core.circuit import Circuit
from exactsyn.io import diagram as d

INK = "#111"
PAPER = "#fff"
FONT_FAMILY = "DejaVu Sans Mono, Liberation Mono, Menlo, Consolas, monospace"


def _n(v: float) -> str:
    text = f"{v:.2f}".rstrip("0").rstrip(".")
    return "0" if text == "-0" else text


def _mark(m: d.Mark) -> str:
    """One symbol; stroke colour and width come from the enclosing gate group."""
    x, y = _n(m.x), _n(m.y)
    if m.symbol == "ctrl-pos":
        return f'<circle class="ctrl-pos" cx="{x}" cy="{y}" r="{_n(d.CONTROL_RADIUS)}" fill="{INK}" stroke="none"/>'
    if m.symbol == "ctrl-neg":
        return f'<circle class="ctrl-neg" cx="{x}" cy="{y}" r="{_n(d.CONTROL_RADIUS)}" fill="{PAPER}"/>'
    if m.symbol == "peres":
        h, size = d.PERES_HALF, d.PERES_FONT_SIZE
        return (
            f'<g class="peres"><rect x="{_n(m.x - h)}" y="{_n(m.y - h)}" width="{_n(2 * h)}" height="{_n(2 * h)}" '
            f'fill="{PAPER}"/><text x="{x}" y="{_n(m.y + 0.35 * size)}" text-anchor="middle" '
            f'font-family="{FONT_FAMILY}" font-size="{_n(size)}" font-weight="bold" fill="{INK}" '
            f'stroke="none">{escape(d.PERES_LETTER)}</text></g>'
        )
    if m.symbol == "target":
        r = d.TARGET_RADIUS
        return (
            f'<g class="target"><circle cx="{x}" cy="{y}" r="{_n(r)}" fill="{PAPER}"/>'
            f'<path d="M{_n(m.x - r)} {y}H{_n(m.x + r)}M{x} {_n(m.y - r)}V{_n(m.y + r)}"/></g>'
        )
    h = d.SWAP_HALF
    return (
        f'<path class="swap" d="M{_n(m.x - h)} {_n(m.y - h)}L{_n(m.x + h)} {_n(m.y + h)}'
        f'M{_n(m.x - h)} {_n(m.y + h)}L{_n(m.x + h)} {_n(m.y - h)}" stroke-width="{_n(d.STROKE + 0.4)}" '
        'stroke-linecap="round"/>'
    )


def layout_to_svg(lay: d.Layout, title: str | None = None) -> str:
    """SVG text for a computed layout."""
    names = tuple(label.text for label in lay.labels[: lay.lines])
    count = len(lay.gates)
    caption = title or f"circuit on {lay.lines} line{'s' * (lay.lines != 1)}, {count} gate{'s' * (count != 1)}"
    w, h = _n(lay.width), _n(lay.height)
    out = [
        f'<svg xmlns="http://www.w3.org/2000/svg" class="exactsyn-circuit" width="{w}" height="{h}" '
        f'viewBox="0 0 {w} {h}" role="img" aria-label={quoteattr(caption)}>',
        f"<title>{escape(caption)}</title>",
        f'<rect class="background" x="0" y="0" width="{w}" height="{h}" fill="{PAPER}"/>',
        f'<g class="labels" font-family="{FONT_FAMILY}" font-size="{_n(d.FONT_SIZE)}" fill="{INK}" text-anchor="end">',
    ]
    for label in lay.labels:
        out.append(f'<text class="label" x="{_n(label.x)}" y="{_n(label.baseline)}">{escape(label.text)}</text>')
    out.append("</g>")
    out.append(f'<g class="wires" stroke="{INK}" stroke-width="1.5">')
    for wire in lay.wires:
        out.append(f'<line class="wire" x1="{_n(wire.x1)}" y1="{_n(wire.y)}" x2="{_n(wire.x2)}" y2="{_n(wire.y)}"/>')
    out.append("</g>")
    if lay.separators:
        out.append('<g class="separators" stroke="#9a9a9a" stroke-width="1" stroke-dasharray="3 3">')
        for s in lay.separators:
            out.append(f'<line class="layer-sep" x1="{_n(s.x)}" y1="{_n(s.top)}" x2="{_n(s.x)}" y2="{_n(s.bottom)}"/>')
        out.append("</g>")
    for f in lay.gates:
        out.append(
            f'<g class="gate" stroke="{INK}" stroke-width="{_n(d.STROKE)}" fill="none">'
            f"<title>{escape(f'gate {f.index + 1}, ' + d.gate_title(f.gate, names))}</title>"
        )
        if f.bottom > f.top:
            out.append(f'<line class="connector" x1="{_n(f.x)}" y1="{_n(f.top)}" x2="{_n(f.x)}" y2="{_n(f.bottom)}"/>')
        out.extend(_mark(m) for m in f.marks)
        out.append("</g>")
    out.append("</svg>")
    return "\n".join(out) + "\n"


def to_svg(
    circuit: Circuit,
    labels: list[str] | tuple[str, ...] | None = None,
    packed: bool = False,
    wrap: int | None = None,
    title: str | None = None,
) -> str:
    """The diagram of ``circuit`` as SVG text.

    ``labels`` name the lines (default ``q0``, ``q1``, ...); ``packed`` draws parallel
    layers; ``wrap`` is the most gate columns per row of the picture (``None``: one row).
    """
    return layout_to_svg(d.layout(circuit, labels, packed, wrap), title)
