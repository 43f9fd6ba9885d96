"""The one list of circuit file formats: each registered once with what it is and how it is written and read.

A :class:`Format` names a format (``json``, ``qasm2``, ...), its file suffixes, its kind
(:data:`CIRCUIT`: a circuit text that reads back; :data:`PICTURE`: a drawing, written
only), its writer and, for circuit texts, its reader and how its content is recognised.
Everything that chooses, writes or reads a format asks this registry:
:func:`exactsyn.io.formats.format_for` and :func:`~exactsyn.io.formats.render`, the circuit
readers (:func:`~exactsyn.io.formats.read_circuit`,
:func:`exactsyn.specification.loader.load_any`), the optimiser's output
(:mod:`exactsyn.optimise.output`), the ``--format`` choices of the command line and the
``write_<format>`` functions of the package root.

The built-in formats are registered at the end of this module; a new format is one
module with its writer (and reader) plus one :func:`register` call there.  Order
matters twice: choices are listed in registration order, and a suffix claimed by
several formats (``.qasm``: OpenQASM 2.0 and 3.0) goes to the first one registered
when a format is chosen by suffix alone.
"""

from __future__ import annotations

import json
import re
from collections.abc import Callable
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.errors import ExactsynError
from exactsyn.io.draw import draw_text
from exactsyn.io.jsonio import circuit_from_dict, circuit_to_dict
from exactsyn.io.layout import Layout, apply_layout, layout_from_dict
from exactsyn.io.limits import load_json
from exactsyn.io.qasm import read_qasm_layout, to_qasm2, to_qasm3
from exactsyn.io.svg import to_svg

CIRCUIT = "circuit"  # a circuit text that reads back as the same circuit (JSON, OpenQASM)
PICTURE = "picture"  # a drawing for people (the terminal drawing, SVG, PNG): written only
KINDS = (CIRCUIT, PICTURE)


@dataclass(frozen=True)
class RenderOptions:
    """How to write a circuit: line labels, packed layers and wrapping (pictures), header
    comment lines (OpenQASM) and the register layout (OpenQASM and JSON keep it, pictures
    label the lines with it unless ``labels`` are given)."""

    labels: tuple[str, ...] | None = None
    packed: bool = False
    wrap: int | None = 40
    header: tuple[str, ...] = ()
    layout: Layout | None = None

    @property
    def named(self) -> bool:
        """Does the layout name registers other than the one default register?"""
        return self.layout is not None and not self.layout.is_single


Writer = Callable[[Circuit, RenderOptions], str | bytes]
#: ``read(text) -> (circuit, layout, format name)``: the reader says which format it read
#: (one OpenQASM reader serves both versions and tells them apart by the header).
Reader = Callable[[str], tuple[Circuit, Layout, str]]
#: ``recognise(stripped_text, suffix)``: does this text claim to be the format, by its content?
Recogniser = Callable[[str, str], bool]


@dataclass(frozen=True)
class Format:
    """One registered format (module docstring)."""

    name: str
    suffixes: tuple[str, ...]  # lower case, with the dot; the first is the format's own
    kind: str  # CIRCUIT or PICTURE
    write: Writer
    title: str  # for people: "exactsyn JSON", "OpenQASM 2.0", "SVG picture"
    read: Reader | None = None
    recognise: Recogniser | None = None
    packs: bool = False  # draws parallel layers side by side (RenderOptions.packed)

    @property
    def readable(self) -> bool:
        return self.read is not None


_FORMATS: dict[str, Format] = {}


def register(fmt: Format) -> Format:
    """Add ``fmt``; a name registered twice, a kind outside :data:`KINDS` or a bad suffix is a bug."""
    if fmt.name in _FORMATS:
        raise ValueError(f"format {fmt.name!r} is registered already")
    if fmt.kind not in KINDS:
        raise ValueError(f"format {fmt.name!r}: kind {fmt.kind!r} is not one of {', '.join(KINDS)}")
    if not fmt.suffixes or any(not s.startswith(".") or s != s.lower() for s in fmt.suffixes):
        raise ValueError(f"format {fmt.name!r}: suffixes are lower case and start with a dot")
    if fmt.kind == CIRCUIT and (fmt.read is None or fmt.recognise is None):
        raise ValueError(f"format {fmt.name!r}: a circuit text needs a reader and a recogniser")
    _FORMATS[fmt.name] = fmt
    return fmt


def unregister(name: str) -> None:
    """Remove a format (tests register formats of their own and take them out again)."""
    _FORMATS.pop(name, None)


def formats(kind: str | None = None, *, readable: bool = False) -> tuple[Format, ...]:
    """The registered formats in registration order, of one kind and/or with a reader."""
    return tuple(f for f in _FORMATS.values() if (kind is None or f.kind == kind) and (f.readable or not readable))


def names(kind: str | None = None, *, readable: bool = False) -> tuple[str, ...]:
    """The names of :func:`formats`."""
    return tuple(f.name for f in formats(kind, readable=readable))


def get(name: str) -> Format:
    """The format called ``name``; :class:`ExactsynError` naming the choices otherwise."""
    try:
        return _FORMATS[name]
    except KeyError:
        raise ExactsynError(f"unknown format {name!r}; choose one of: {', '.join(_FORMATS)}") from None


def by_suffix(suffix: str, kind: str | None = None, *, readable: bool = False) -> tuple[Format, ...]:
    """The formats that claim ``suffix`` (any case), in registration order."""
    suffix = suffix.lower()
    return tuple(f for f in formats(kind, readable=readable) if suffix in f.suffixes)


def suffixes(kind: str | None = None, *, readable: bool = False) -> tuple[str, ...]:
    """Every suffix of :func:`formats`, each once, in registration order."""
    return tuple(dict.fromkeys(s for f in formats(kind, readable=readable) for s in f.suffixes))


def recognise(stripped: str, suffix: str) -> Format | None:
    """The first readable format whose content test claims ``stripped`` (a non-empty text
    without leading white space), or ``None``."""
    suffix = suffix.lower()
    for f in formats(readable=True):
        if f.recognise is not None and f.recognise(stripped, suffix):
            return f
    return None


def describe(kind: str | None = None, *, readable: bool = False) -> str:
    """The titles for a help text: ``exactsyn JSON, OpenQASM 2.0 or OpenQASM 3.0``."""
    titles = [f.title for f in formats(kind, readable=readable)]
    return ", ".join(titles[:-1]) + " or " + titles[-1] if len(titles) > 1 else "".join(titles)


# ---------------------------------------------------------------------------- the built-in formats
def _labels(o: RenderOptions) -> list[str] | None:
    return None if o.labels is None else list(o.labels)


def _write_json(circuit: Circuit, o: RenderOptions) -> str:
    data = circuit_to_dict(circuit)
    if o.named:
        assert o.layout is not None
        data["registers"] = o.layout.to_dict()
    return json.dumps(data, indent=2) + "\n"


def _read_json(text: str) -> tuple[Circuit, Layout, str]:
    data = load_json(text, "the circuit")
    circuit = circuit_from_dict(data)
    regs = data.get("registers") if isinstance(data, dict) else None
    layout = Layout.single(circuit.lines) if regs is None else layout_from_dict(regs, circuit.lines)
    return circuit, layout, "json"


def _is_json(stripped: str, suffix: str) -> bool:
    """``.json``, a first character ``{``, or a JSON list (not a TOML table header such as ``[constants]``)."""
    if suffix == ".json" or stripped[0] == "{":
        return True
    if stripped[0] != "[" or suffix == ".toml":
        return False
    try:
        json.loads(stripped)
    except (json.JSONDecodeError, RecursionError):
        return False
    return True


def _write_qasm(to_text: Callable[[Circuit, tuple[str, ...]], str]) -> Writer:
    def write(circuit: Circuit, o: RenderOptions) -> str:
        text = to_text(circuit, o.header)
        return apply_layout(text, o.layout) if o.named and o.layout is not None else text

    return write


def read_openqasm(text: str) -> tuple[Circuit, Layout, str]:
    """Either version: the header tells them apart (a text without one is read as version 3)."""
    circuit, layout = read_qasm_layout(text)
    return circuit, layout, "qasm2" if text.lstrip("\ufeff \t\r\n").startswith("OPENQASM 2") else "qasm3"


def _write_png(circuit: Circuit, o: RenderOptions) -> bytes:
    from exactsyn.io.png import to_png  # matplotlib is slow to import; only for PNG

    return to_png(circuit, _labels(o), o.packed, o.wrap)


_QASM2_HEADER = re.compile(r"OPENQASM\s+2")

register(Format("text", (".txt",), PICTURE, lambda c, o: draw_text(c, _labels(o)), "terminal drawing"))
register(Format("json", (".json",), CIRCUIT, _write_json, "exactsyn JSON", _read_json, _is_json))
register(
    Format(
        "qasm2",
        (".qasm", ".qasm2"),  # .qasm: version 2.0, the one every reader knows
        CIRCUIT,
        _write_qasm(to_qasm2),
        "OpenQASM 2.0",
        read_openqasm,
        lambda s, _: bool(_QASM2_HEADER.match(s)),
    )
)
register(
    Format(
        "qasm3",
        (".qasm3", ".qasm"),
        CIRCUIT,
        _write_qasm(to_qasm3),
        "OpenQASM 3.0",
        read_openqasm,
        lambda s, suffix: s.startswith("OPENQASM"),
    )
)
register(Format("svg", (".svg",), PICTURE, lambda c, o: to_svg(c, _labels(o), o.packed, o.wrap), "SVG", packs=True))
register(Format("png", (".png",), PICTURE, _write_png, "PNG", packs=True))
