"""Geometry of a circuit diagram, shared by the SVG and PNG writers.

The picture follows the usual circuit-diagram notation (common practice): one
horizontal wire per line, line 0 at the top, labelled with its name on the left; gates
in application order from left to right, each a vertical connector joining its topmost
and bottommost line, a filled dot on each positive control, a hollow dot on each
negative control, ``⊕`` (a circle with a cross) on the target of an x gate and a ``×``
on both targets of a swap.

A Peres gate (:func:`exactsyn.core.gates.peres_gate`: ``c ^= a·b``, then ``b ^= a``) takes
one column like every other gate, with a mark of its own on each of its three lines:
a filled dot on ``a`` (its control), ``⊕`` on ``c`` (the line flipped by ``a·b``) and,
on ``b``, a square box with the letter ``P`` (mark symbol ``peres``).  A Toffoli gate has
a dot where the Peres gate has the box, so the two cannot be mistaken for each other,
and the box tells ``b`` from ``c`` (Peres(a, b, c) and Peres(a, c, b) are different
gates).  The box is ours (no standard symbol exists); the hover text of every Peres
gate spells the map out with the line names (:func:`gate_title`, e.g.
``Peres: q2 ^= q0·q1, then q1 ^= q0``).

Packed layers (``packed=True``) put gates side by side in one layer when they touch
disjoint lines, layer by layer as soon as possible — the same greedy packing as
:meth:`exactsyn.core.circuit.Circuit.depth`, so there are exactly ``depth()`` layers.  Two
gates of one layer whose connectors would overlap (a gate on lines 0 and 2 beside one
on line 1) are drawn in sub-columns of the layer, and dashed separators mark where one
layer ends.  Drawing layer by layer is a valid application order, since gates of one
layer commute (they act on disjoint lines).

Long circuits wrap (``wrap`` = most gate columns per block): blocks are stacked top to
bottom, each with its own labelled wires; a packed layer is never split.  Labels are
right-aligned against a margin sized from their terminal display width
(:func:`exactsyn.io.draw.display_width`) at a generous monospace advance, so names of
any length end before their wire starts.

All coordinates are in pixels (SVG user units), ``y`` growing downwards.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.errors import ExactsynError
from exactsyn.io.draw import display_width

FONT_SIZE = 14.0  # label font size
CHAR_WIDTH = 0.62 * FONT_SIZE  # monospace advance used to size the label margin (fonts: ~0.60 em)
MARGIN = 12.0
LABEL_GAP = 10.0  # between a label's right end and its wire
LEAD = 14.0  # wire before the first and after the last gate column
COLUMN = 36.0  # horizontal pitch of gate columns
ROW = 36.0  # vertical pitch of wires
BLOCK_GAP = 22.0  # between wrapped blocks
CONTROL_RADIUS = 5.5
TARGET_RADIUS = 11.0
SWAP_HALF = 6.5  # half the size of a swap cross
PERES_HALF = 10.0  # half the side of the Peres box on the gate's middle line b
PERES_LETTER = "P"  # the letter inside it
PERES_FONT_SIZE = 13.0
STROKE = 2.0
PAD = TARGET_RADIUS + 6.0  # above the first and below the last wire of a block

#: The most wires (one per line and row) and gate symbols a picture may hold: at the limit an
#: SVG file of about 40 MB, written in about 4 s on 2 shared cores (``scripts/bench_readers.py
#: --pictures`` measures it).
MAX_ELEMENTS = 100_000

MARK_KINDS = ("ctrl-pos", "ctrl-neg", "target", "swap", "peres")


@dataclass(frozen=True)
class Mark:
    """A symbol centred on a wire: ``ctrl-pos``, ``ctrl-neg``, ``target``, ``swap`` or ``peres``
    (the P box on a Peres gate's middle line; its ``c`` line has a ``target``)."""

    symbol: str
    x: float
    y: float
    line: int


@dataclass(frozen=True)
class GateFigure:
    index: int  # position of the gate in the circuit (application order)
    gate: Gate
    block: int
    x: float
    top: float  # y of the connector's ends (equal for a gate on one line)
    bottom: float
    marks: tuple[Mark, ...]


@dataclass(frozen=True)
class Wire:
    line: int
    block: int
    x1: float
    x2: float
    y: float


@dataclass(frozen=True)
class Label:
    line: int
    block: int
    text: str
    x: float  # right end of the text (anchor)
    baseline: float


@dataclass(frozen=True)
class Separator:
    """A dashed vertical rule between two packed layers."""

    block: int
    x: float
    top: float
    bottom: float


@dataclass(frozen=True)
class Layout:
    lines: int
    width: float
    height: float
    wire_start: float  # x where every wire starts
    labels: tuple[Label, ...]
    wires: tuple[Wire, ...]
    gates: tuple[GateFigure, ...]
    separators: tuple[Separator, ...]
    blocks: int
    layers: int | None  # packed layers (None when not packed)


def check_labels(labels: list[str] | tuple[str, ...] | None, lines: int) -> tuple[str, ...]:
    """The line names (default ``q0``, ``q1``, ...), validated."""
    names = tuple(f"q{i}" for i in range(lines)) if labels is None else tuple(str(x) for x in labels)
    if len(names) != lines:
        raise ExactsynError(f"{len(names)} labels given for a circuit on {lines} lines")
    for name in names:
        if any(ch in "\r\n" for ch in name):
            raise ExactsynError("a line label must not contain a line break")
        if any(ord(ch) < 32 or 0xD800 <= ord(ch) <= 0xDFFF or ord(ch) in (0xFFFE, 0xFFFF) for ch in name):
            raise ExactsynError(f"line label {name!r} contains a control character")
    return names


def layers(circuit: Circuit) -> list[list[int]]:
    """Gate indices per layer: greedy as-soon-as-possible packing on touched lines."""
    level = [0] * circuit.lines
    out: list[list[int]] = []
    for i, g in enumerate(circuit.gates):
        lv = max(level[line] for line in g.lines) + 1
        for line in g.lines:
            level[line] = lv
        if lv > len(out):
            out.append([])
        out[lv - 1].append(i)
    return out


def _span(g: Gate) -> tuple[int, int]:
    return min(g.lines), max(g.lines)


def _sub_columns(circuit: Circuit, layer: list[int]) -> list[list[int]]:
    """Split one layer into columns whose gates' connectors do not overlap (first fit)."""
    cols: list[list[int]] = []
    for i in layer:
        lo, hi = _span(circuit.gates[i])
        for col in cols:
            if all(hi < _span(circuit.gates[j])[0] or lo > _span(circuit.gates[j])[1] for j in col):
                col.append(i)
                break
        else:
            cols.append([i])
    return cols


def check_size(lines: int, blocks: int, gates: int) -> None:
    """Refuse, before anything is drawn, a picture of more than :data:`MAX_ELEMENTS` wires and gate symbols."""
    elements = lines * blocks + gates
    if elements > MAX_ELEMENTS:
        raise ExactsynError(
            f"the picture would hold {elements:,} wires and gate symbols ({lines} lines in {blocks} rows, "
            f"{gates:,} gates); exactsyn draws at most {MAX_ELEMENTS:,}: draw a part of the circuit, or use a "
            "larger --wrap (fewer rows) or --packed"
        )


def layout(
    circuit: Circuit,
    labels: list[str] | tuple[str, ...] | None = None,
    packed: bool = False,
    wrap: int | None = None,
) -> Layout:
    """Place every wire, label and gate symbol of ``circuit`` (see the module docstring)."""
    n = circuit.lines
    if n < 1:
        raise ExactsynError("a circuit without lines has no picture")
    names = check_labels(labels, n)
    if wrap is not None and wrap < 1:
        raise ExactsynError("the wrap width must be at least 1 gate column")
    # columns of gate indices, grouped into units that must not be split across blocks
    if packed:
        units = [_sub_columns(circuit, layer) for layer in layers(circuit)]
    else:
        units = [[[i]] for i in range(len(circuit.gates))]
    blocks: list[list[list[list[int]]]] = [[]]
    used = 0
    for unit in units:
        if wrap is not None and used and used + len(unit) > wrap:
            blocks.append([])
            used = 0
        blocks[-1].append(unit)
        used += len(unit)

    check_size(n, len(blocks), len(circuit.gates))
    label_width = max((display_width(name) for name in names), default=0) * CHAR_WIDTH
    wire_start = MARGIN + label_width + LABEL_GAP
    block_height = 2 * PAD + (n - 1) * ROW
    label_list: list[Label] = []
    wire_list: list[Wire] = []
    gate_list: list[GateFigure] = []
    separators: list[Separator] = []
    right = wire_start + 2 * LEAD
    for b, block in enumerate(blocks):
        top = MARGIN + b * (block_height + BLOCK_GAP)

        def y_of(line: int, top: float = top) -> float:
            return top + PAD + line * ROW

        x = wire_start + LEAD
        for u, unit in enumerate(block):
            if packed and u:
                separators.append(Separator(b, x, y_of(0) - PAD + 4, y_of(n - 1) + PAD - 4))
            for col in unit:
                cx = x + COLUMN / 2
                for i in col:
                    gate_list.append(_figure(i, circuit.gates[i], b, cx, y_of))
                x += COLUMN
        end = x + LEAD
        right = max(right, end)
        for line in range(n):
            wire_list.append(Wire(line, b, wire_start, end, y_of(line)))
            label_list.append(Label(line, b, names[line], wire_start - LABEL_GAP, y_of(line) + 0.35 * FONT_SIZE))
    gate_list.sort(key=lambda f: f.index)
    height = 2 * MARGIN + len(blocks) * block_height + (len(blocks) - 1) * BLOCK_GAP
    return Layout(
        lines=n,
        width=float(math.ceil(right + MARGIN)),
        height=float(math.ceil(height)),
        wire_start=wire_start,
        labels=tuple(label_list),
        wires=tuple(wire_list),
        gates=tuple(gate_list),
        separators=tuple(separators),
        blocks=len(blocks),
        layers=len(units) if packed else None,
    )


def _figure(index: int, g: Gate, block: int, x: float, y_of: Callable[[int], float]) -> GateFigure:
    marks: list[Mark] = []
    for line in g.controls:
        marks.append(Mark("ctrl-pos", x, y_of(line), line))
    for line in g.negative_controls:
        marks.append(Mark("ctrl-neg", x, y_of(line), line))
    if g.family == "peres":
        b, c = g.targets
        marks += [Mark("peres", x, y_of(b), b), Mark("target", x, y_of(c), c)]
    else:
        for line in g.targets:
            marks.append(Mark("target" if g.family == "x" else "swap", x, y_of(line), line))
    lo, hi = _span(g)
    return GateFigure(index, g, block, x, y_of(lo), y_of(hi), tuple(sorted(marks, key=lambda m: m.y)))


def gate_title(g: Gate, names: tuple[str, ...]) -> str:
    """A one-line description such as ``Toffoli: target c, controls a, ¬b`` or
    ``Peres: c ^= a·b, then b ^= a`` (with the line names)."""
    if g.family == "peres":
        a, (b, c) = names[g.controls[0]], (names[t] for t in g.targets)
        return f"Peres: {c} ^= {a}·{b}, then {b} ^= {a}"
    ctl = [names[c] for c in g.controls] + ["¬" + names[c] for c in g.negative_controls]
    what = "target " + names[g.targets[0]] if g.family == "x" else "swaps " + " and ".join(names[t] for t in g.targets)
    return f"{g.name()}: {what}" + (f"; controls {', '.join(ctl)}" if ctl else "")
