"""Terminal drawings of circuits.

One horizontal wire per line (line 0 at the top), one column per gate in application
order, left to right, in the usual circuit-diagram notation (common practice):
``●`` positive control, ``○`` negative control, ``⊕`` target of an x gate, ``×`` both
targets of a swap, ``│`` joining a gate's topmost and bottommost line and ``┼`` where
it crosses a wire the gate does not touch.  A Peres gate (``c ^= a·b``, then
``b ^= a``) is ``●`` on ``a``, ``P`` on ``b`` and ``⊕`` on ``c``, the same marks as its
SVG picture (:mod:`exactsyn.io.diagram`); a Toffoli gate would have a second ``●``
where the ``P`` is.  Long circuits wrap into blocks of at most ``width`` characters,
each block repeating the labels.  ``ascii=True`` uses ``* o + x P | -`` instead.
"""

from __future__ import annotations

import unicodedata
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.errors import ExactsynError


@dataclass(frozen=True)
class _Symbols:
    control: str
    negative: str
    target: str
    swap: str
    peres: str  # line b of a Peres gate
    vertical: str
    cross: str
    wire: str


UNICODE = _Symbols("●", "○", "⊕", "×", "P", "│", "┼", "─")
ASCII = _Symbols("*", "o", "+", "x", "P", "|", "|", "-")

_COLUMN = 3  # characters per gate column: wire, symbol, wire


def display_width(text: str) -> int:
    """Terminal columns taken by ``text`` (wide East Asian characters count 2, combining 0)."""
    width = 0
    for ch in text:
        if unicodedata.combining(ch):
            continue
        width += 2 if unicodedata.east_asian_width(ch) in ("W", "F") else 1
    return width


def _column(g: Gate, lines: int, s: _Symbols) -> tuple[list[str], list[str]]:
    """The cells of one gate: one per wire and one per gap between neighbouring wires."""
    touched = g.lines
    top, bottom = min(touched), max(touched)
    wires = []
    for line in range(lines):
        if line in g.controls:
            mark = s.control
        elif line in g.negative_controls:
            mark = s.negative
        elif g.family == "peres" and line == g.targets[0]:
            mark = s.peres
        elif line in g.targets:
            mark = s.target if g.family in ("x", "peres") else s.swap
        elif top < line < bottom:
            mark = s.cross
        else:
            mark = s.wire
        wires.append(s.wire + mark + s.wire)
    gaps = [(" " + s.vertical + " ") if top <= line < bottom else " " * _COLUMN for line in range(lines - 1)]
    return wires, gaps


def draw_text(circuit: Circuit, labels: list[str] | None = None, width: int = 100, ascii: bool = False) -> str:
    """Draw ``circuit``; ``labels`` name the lines (default ``q0``, ``q1``, ...)."""
    n = circuit.lines
    names = [f"q{i}" for i in range(n)] if labels is None else [str(label) for label in labels]
    if len(names) != n:
        raise ExactsynError(f"{len(names)} labels given for a circuit on {n} lines")
    if any("\n" in name or "\r" in name for name in names):
        raise ExactsynError("a line label must not contain a line break")
    if n == 0:
        return ""
    s = ASCII if ascii else UNICODE
    label_width = max(display_width(name) for name in names)
    padded = [name + " " * (label_width - display_width(name)) for name in names]
    # row = label, space, one lead-in wire char, the columns, one lead-out wire char
    fixed = label_width + 3
    per_block = max(1, (width - fixed) // _COLUMN)
    columns = [_column(g, n, s) for g in circuit.gates]
    blocks = [columns[i : i + per_block] for i in range(0, len(columns), per_block)] or [[]]
    out: list[str] = []
    for b, block in enumerate(blocks):
        if b:
            out.append("")
        for line in range(n):
            out.append(padded[line] + " " + s.wire + "".join(c[0][line] for c in block) + s.wire)
            if line < n - 1:
                out.append(" " * (label_width + 2) + "".join(c[1][line] for c in block) + " ")
    return "\n".join(out) + "\n"
