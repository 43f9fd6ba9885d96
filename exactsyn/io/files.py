"""Circuits to and from files, with the format taken from the suffix unless one is given.

Formats: ``json`` (:mod:`exactsyn.io.jsonio`), ``qasm2`` and ``qasm3``
(:mod:`exactsyn.io.qasm`), ``text`` (the terminal drawing, :mod:`exactsyn.io.draw`),
``svg`` and ``png`` (:mod:`exactsyn.io.svg`, :mod:`exactsyn.io.png`).  Suffixes:
``.json``, ``.qasm`` (OpenQASM 2.0, the version every reader knows), ``.qasm2``,
``.qasm3``, ``.txt``, ``.svg``, ``.png``; any other suffix is refused unless a format is
given.  Reading tells JSON from OpenQASM by the first character (``{``).
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from pathlib import Path

from exactsyn.core.circuit import Circuit
from exactsyn.errors import ExactsynError
from exactsyn.io.draw import draw_text
from exactsyn.io.jsonio import circuit_to_dict, load_json_circuit
from exactsyn.io.layout import Layout, apply_layout, layout_from_dict
from exactsyn.io.qasm import read_qasm_layout, to_qasm2, to_qasm3
from exactsyn.io.svg import to_svg

CIRCUIT_FORMATS = ("text", "json", "qasm2", "qasm3", "svg", "png")
PICTURE_FORMATS = ("text", "svg", "png")
SUFFIXES = {
    ".json": "json",
    ".qasm": "qasm2",
    ".qasm2": "qasm2",
    ".qasm3": "qasm3",
    ".txt": "text",
    ".svg": "svg",
    ".png": "png",
}


def format_for(path: str | Path | None, fmt: str | None = None, allowed: Sequence[str] = CIRCUIT_FORMATS) -> str:
    """The format to write: ``fmt`` when given, else the one of ``path``'s suffix.

    Raises :class:`ExactsynError` for a format outside ``allowed`` or an unknown suffix.
    With neither (writing to stdout) the answer is ``text`` when allowed.
    """
    if fmt is not None:
        if fmt not in allowed:
            raise ExactsynError(f"format {fmt!r} is not one of: {', '.join(allowed)}")
        return fmt
    if path is None:
        if "text" in allowed:
            return "text"
        raise ExactsynError(f"give a format: one of {', '.join(allowed)}")
    suffix = Path(path).suffix.lower()
    chosen = SUFFIXES.get(suffix)
    if chosen is None or chosen not in allowed:
        known = ", ".join(s for s, f in SUFFIXES.items() if f in allowed)
        raise ExactsynError(f"cannot tell the format of {path} from its suffix {suffix or '(none)'!r}: use {known}")
    return chosen


def render(
    circuit: Circuit,
    fmt: str,
    *,
    labels: list[str] | None = None,
    packed: bool = False,
    wrap: int | None = 40,
    header: Sequence[str] = (),
    layout: Layout | None = None,
) -> str | bytes:
    """The circuit as ``fmt`` text (bytes for ``png``).

    ``header`` lines become QASM comments; ``layout`` names the registers (OpenQASM and
    JSON keep them, pictures label the lines with them unless ``labels`` are given).
    """
    if packed and fmt not in ("svg", "png"):
        raise ExactsynError("packed drawing is for svg and png; the terminal drawing has one gate per column")
    named = layout is not None and not layout.is_single
    if labels is None and named:
        assert layout is not None
        labels = layout.labels()
    if fmt == "json":
        data = circuit_to_dict(circuit)
        if named:
            assert layout is not None
            data["registers"] = layout.to_dict()
        return json.dumps(data, indent=2) + "\n"
    if fmt in ("qasm2", "qasm3"):
        text = to_qasm2(circuit, header) if fmt == "qasm2" else to_qasm3(circuit, header)
        return apply_layout(text, layout) if named and layout is not None else text
    if fmt == "text":
        return draw_text(circuit, labels)
    if fmt == "svg":
        return to_svg(circuit, labels, packed, wrap)
    if fmt == "png":
        from exactsyn.io.png import to_png  # matplotlib is slow to import; only for PNG

        return to_png(circuit, labels, packed, wrap)
    raise ExactsynError(f"unknown format {fmt!r}; choose one of: {', '.join(CIRCUIT_FORMATS)}")


def write_data(data: str | bytes, path: str | Path) -> Path:
    """Write text or bytes atomically (a temporary file renamed into place)."""
    p = Path(path)
    tmp = p.with_name(p.name + ".tmp")
    try:
        if isinstance(data, bytes):
            tmp.write_bytes(data)
        else:
            tmp.write_text(data if data.endswith("\n") else data + "\n", encoding="utf-8")
        tmp.replace(p)
    except OSError as e:
        tmp.unlink(missing_ok=True)
        raise ExactsynError(f"cannot write {p}: {e.strerror}") from None
    return p


def write_circuit(circuit: Circuit, path: str | Path, fmt: str | None = None, **options: object) -> Path:
    """Write ``circuit`` to ``path`` in ``fmt`` (default: from the suffix); see :func:`render` for options."""
    return write_data(render(circuit, format_for(path, fmt), **options), path)  # type: ignore[arg-type]


def read_text(path: str | Path, what: str) -> str:
    p = Path(path)
    try:
        raw = p.read_bytes()
    except IsADirectoryError:
        raise ExactsynError(f"{what} {p} is a directory") from None
    except OSError as e:
        raise ExactsynError(f"cannot read {what} {p}: {e.strerror}") from None
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        raise ExactsynError(f"{what} {p} is not UTF-8 text") from None


def circuit_layout_from_text(text: str) -> tuple[Circuit, Layout, str]:
    """A saved circuit, its register layout, and its format (``json``, ``qasm2`` or ``qasm3``).

    JSON when the text starts with ``{`` (registers from its optional ``registers`` key),
    OpenQASM otherwise (registers in declaration order).
    """
    if text.lstrip().startswith("{"):
        circuit = load_json_circuit(text)
        data = json.loads(text)
        regs = data.get("registers") if isinstance(data, dict) else None
        layout = Layout.single(circuit.lines) if regs is None else layout_from_dict(regs, circuit.lines)
        return circuit, layout, "json"
    circuit, layout = read_qasm_layout(text)
    return circuit, layout, "qasm2" if text.lstrip().startswith("OPENQASM 2") else "qasm3"


def circuit_from_text(text: str) -> Circuit:
    """A saved circuit: JSON when it starts with ``{``, OpenQASM otherwise."""
    return circuit_layout_from_text(text)[0]


def read_circuit_layout(path: str | Path) -> tuple[Circuit, Layout, str]:
    """Read a saved circuit (JSON or OpenQASM 2/3) with its register layout and format."""
    return circuit_layout_from_text(read_text(path, "circuit file"))


def read_circuit(path: str | Path) -> Circuit:
    """Read a saved circuit (JSON or OpenQASM 2/3)."""
    return read_circuit_layout(path)[0]


def write_qasm2(circuit: Circuit, path: str | Path) -> Path:
    """Write OpenQASM 2.0 whatever the suffix."""
    return write_circuit(circuit, path, "qasm2")


def write_qasm3(circuit: Circuit, path: str | Path) -> Path:
    """Write OpenQASM 3.0 whatever the suffix."""
    return write_circuit(circuit, path, "qasm3")


def write_json(circuit: Circuit, path: str | Path) -> Path:
    """Write the circuit as our JSON (``lines`` and ``gates``)."""
    return write_circuit(circuit, path, "json")
