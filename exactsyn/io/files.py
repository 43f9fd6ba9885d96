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
from exactsyn.io.qasm import read_qasm, to_qasm2, to_qasm3
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
) -> str | bytes:
    """The circuit as ``fmt`` text (bytes for ``png``).  ``header`` lines become QASM comments."""
    if packed and fmt not in ("svg", "png"):
        raise ExactsynError("packed drawing is for svg and png; the terminal drawing has one gate per column")
    if fmt == "json":
        return json.dumps(circuit_to_dict(circuit), indent=2) + "\n"
    if fmt == "qasm2":
        return to_qasm2(circuit, header)
    if fmt == "qasm3":
        return to_qasm3(circuit, header)
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


def circuit_from_text(text: str) -> Circuit:
    """A saved circuit: JSON when it starts with ``{``, OpenQASM otherwise."""
    if text.lstrip().startswith("{"):
        return load_json_circuit(text)
    return read_qasm(text)


def read_circuit(path: str | Path) -> Circuit:
    """Read a saved circuit (JSON or OpenQASM 2/3)."""
    return circuit_from_text(read_text(path, "circuit file"))


def write_qasm2(circuit: Circuit, path: str | Path) -> Path:
    """Write OpenQASM 2.0 whatever the suffix."""
    return write_circuit(circuit, path, "qasm2")


def write_qasm3(circuit: Circuit, path: str | Path) -> Path:
    """Write OpenQASM 3.0 whatever the suffix."""
    return write_circuit(circuit, path, "qasm3")


def write_json(circuit: Circuit, path: str | Path) -> Path:
    """Write the circuit as our JSON (``lines`` and ``gates``)."""
    return write_circuit(circuit, path, "json")
