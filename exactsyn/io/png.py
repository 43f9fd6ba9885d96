"""Circuit diagrams as PNG, drawn with matplotlib (Hunter, "Matplotlib: A 2D graphics
environment", Computing in Science & Engineering 9(3), 2007).

The picture is the SVG one: both are drawn from the same
:func:`exactsyn.io.diagram.layout`, here with matplotlib's Agg rasteriser on an object
figure (no pyplot state, so it is safe in any process).  One layout pixel is one
typographic point, so the figure is ``width / 72`` by ``height / 72`` inches and
``scale`` sets the output resolution (``scale=2``: two PNG pixels per layout pixel).
A picture beyond :data:`MAX_PIXELS` or :data:`MAX_SIDE` is refused before it is drawn.

Why matplotlib and not an SVG rasteriser: it installs from PyPI as wheels with its own
fonts (DejaVu Sans Mono for the labels) and needs no system library, while an SVG
rasteriser such as cairosvg needs the system cairo library besides the Python package;
and matplotlib is already a dependency of exactsyn (the batch tables' charts).
"""

from __future__ import annotations

import io
import math
import warnings

from exactsyn.core.circuit import Circuit
from exactsyn.errors import ExactsynError
from exactsyn.io import diagram as d
from exactsyn.io.svg import INK, PAPER

#: The largest PNG: Agg draws into a buffer of 4 bytes a pixel (64 megapixels: 256 MiB), and
#: refuses sides beyond 2^16 pixels.
MAX_PIXELS = 64 * 10**6
MAX_SIDE = 32_768

# Label fonts: matplotlib's own monospace font first, then wide-script fonts where installed
# (matplotlib falls back glyph by glyph along the list).
_FONTS = (
    "DejaVu Sans Mono",
    "Noto Sans Mono CJK SC",
    "Noto Sans CJK SC",
    "Noto Sans CJK JP",
    "WenQuanYi Zen Hei",
    "Droid Sans Fallback",
    "DejaVu Sans",
)


def _font_families() -> list[str]:
    from matplotlib import font_manager

    have = {f.name for f in font_manager.fontManager.ttflist}
    return [name for name in _FONTS if name in have] or ["monospace"]


def layout_to_png(lay: d.Layout, scale: float = 2.0) -> bytes:
    """PNG bytes for a computed layout."""
    if not 0.25 <= scale <= 16:
        raise ExactsynError("the PNG scale must be between 0.25 and 16")
    wide, high = math.ceil(lay.width * scale), math.ceil(lay.height * scale)
    if max(wide, high) > MAX_SIDE or wide * high > MAX_PIXELS:
        raise ExactsynError(
            f"the PNG would be {wide:,} × {high:,} pixels; exactsyn writes PNGs of at most "
            f"{MAX_PIXELS // 10**6} megapixels and {MAX_SIDE:,} pixels a side: write SVG instead (-o FILE.svg), "
            "or draw a part of the circuit"
        )
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.patches import Circle, Rectangle

    fig = Figure(figsize=(lay.width / 72, lay.height / 72), dpi=72 * scale, facecolor=PAPER)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0, 0, 1, 1))
    ax.set_xlim(0, lay.width)
    ax.set_ylim(lay.height, 0)
    ax.set_axis_off()

    def line(xs: tuple[float, float], ys: tuple[float, float], width: float, z: float, **kw: object) -> None:
        ax.add_line(Line2D(xs, ys, color=kw.pop("color", INK), linewidth=width, zorder=z, **kw))  # type: ignore[arg-type]

    families = _font_families()
    for label in lay.labels:
        ax.text(
            label.x,
            label.baseline,
            label.text,
            ha="right",
            va="baseline",
            fontsize=d.FONT_SIZE,
            family=families,
            color=INK,
        )
    for wire in lay.wires:
        line((wire.x1, wire.x2), (wire.y, wire.y), 1.5, 1)
    for s in lay.separators:
        line((s.x, s.x), (s.top, s.bottom), 1.0, 1, color="#9a9a9a", linestyle=(0, (3, 3)))
    for f in lay.gates:
        if f.bottom > f.top:
            line((f.x, f.x), (f.top, f.bottom), d.STROKE, 2)
        for m in f.marks:
            if m.symbol == "ctrl-pos":
                ax.add_patch(Circle((m.x, m.y), d.CONTROL_RADIUS, facecolor=INK, edgecolor="none", zorder=3))
            elif m.symbol == "ctrl-neg":
                ax.add_patch(
                    Circle((m.x, m.y), d.CONTROL_RADIUS, facecolor=PAPER, edgecolor=INK, linewidth=d.STROKE, zorder=3)
                )
            elif m.symbol == "peres":
                h = d.PERES_HALF
                box = Rectangle((m.x - h, m.y - h), 2 * h, 2 * h, facecolor=PAPER, edgecolor=INK, linewidth=d.STROKE)
                box.set_zorder(3)
                ax.add_patch(box)
                ax.text(
                    m.x,
                    m.y,
                    d.PERES_LETTER,
                    ha="center",
                    va="center",
                    fontsize=d.PERES_FONT_SIZE,
                    family=families,
                    weight="bold",
                    color=INK,
                    zorder=4,
                )
            elif m.symbol == "target":
                r = d.TARGET_RADIUS
                ax.add_patch(Circle((m.x, m.y), r, facecolor=PAPER, edgecolor=INK, linewidth=d.STROKE, zorder=3))
                line((m.x - r, m.x + r), (m.y, m.y), d.STROKE, 4)
                line((m.x, m.x), (m.y - r, m.y + r), d.STROKE, 4)
            else:
                h = d.SWAP_HALF
                line((m.x - h, m.x + h), (m.y - h, m.y + h), d.STROKE + 0.4, 4, solid_capstyle="round")
                line((m.x - h, m.x + h), (m.y + h, m.y - h), d.STROKE + 0.4, 4, solid_capstyle="round")
    buf = io.BytesIO()
    with warnings.catch_warnings():
        # a character no installed font has is drawn as a box; the SVG leaves it to the viewer's fonts
        warnings.filterwarnings("ignore", message="Glyph .* missing from font")
        fig.savefig(buf, format="png", dpi=72 * scale, facecolor=PAPER, metadata={"Software": None})
    return buf.getvalue()


def to_png(
    circuit: Circuit,
    labels: list[str] | tuple[str, ...] | None = None,
    packed: bool = False,
    wrap: int | None = None,
    scale: float = 2.0,
) -> bytes:
    """The diagram of ``circuit`` as PNG bytes (options as for :func:`exactsyn.io.svg.to_svg`)."""
    return layout_to_png(d.layout(circuit, labels, packed, wrap), scale)
