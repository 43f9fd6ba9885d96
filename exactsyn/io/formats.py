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
import tomllib
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


def path_problem(path: str | Path, error: OSError) -> str:
    """The real reason a path cannot be used: a parent that is a file, a missing folder, or the OS's words."""
    p = Path(path)
    for parent in p.parents:
        if parent.exists():
            if not parent.is_dir():
                return f"{parent} is not a directory"
            break
    return error.strerror or str(error)


def check_writable(path: str | Path, what: str = "output file") -> None:
    """Fail now, before any work, when ``path`` cannot be written (by creating and removing its temporary file)."""
    p = Path(path)
    if p.is_dir():
        raise ExactsynError(f"{what} {p} is a directory")
    tmp = p.with_name(p.name + ".tmp")
    try:
        with open(tmp, "xb"):
            pass
    except FileExistsError:
        return  # a stale temporary file: it is replaced when writing
    except OSError as e:
        raise ExactsynError(f"cannot write {what} {p}: {path_problem(p, e)}") from None
    tmp.unlink(missing_ok=True)


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
        try:
            tmp.unlink(missing_ok=True)
        except OSError:
            pass
        raise ExactsynError(f"cannot write {p}: {path_problem(p, e)}") from None
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


#: Keys that mark a TOML spec file (permutation specs and Boolean functions).
SPEC_KEYS = frozenset({"permutation", "cycles", "inputs", "outputs", "expressions", "table", "constants"})


def kind_of_text(text: str, suffix: str = "") -> str:
    """What a file holds, by suffix and content: ``json``, ``qasm``, ``spec`` (TOML), ``empty`` or ``unknown``.

    ``.json``, a first character ``{`` or a JSON list is JSON; ``.qasm*`` or a first statement
    ``OPENQASM`` is OpenQASM; a text that parses as TOML with a spec key (``permutation``,
    ``cycles``, ``inputs``, ...) is a spec file.
    """
    stripped = text.lstrip("\ufeff \t\r\n")
    if not stripped:
        return "empty"
    suffix = suffix.lower()
    if suffix == ".json" or stripped[0] == "{":
        return "json"
    if stripped[0] == "[" and suffix != ".toml":  # a JSON list, or a TOML table header such as [constants]
        try:
            json.loads(text)
            return "json"
        except (json.JSONDecodeError, RecursionError):
            pass
    if stripped.startswith("OPENQASM"):
        return "qasm"
    try:
        data = tomllib.loads(text)
    except (tomllib.TOMLDecodeError, ValueError, RecursionError):
        data = None
    if isinstance(data, dict) and SPEC_KEYS & set(data):
        return "spec"
    return "qasm" if suffix in (".qasm", ".qasm2", ".qasm3") else "unknown"


def _refuse_non_circuit(kind: str, text: str, where: str) -> None:
    if kind == "empty":
        raise ExactsynError(f"{where} is empty: expected a circuit (OpenQASM 2/3 or exactsyn JSON)")
    if kind == "spec":
        raise ExactsynError(
            f"{where} is a spec file (TOML), not a circuit: this command reads circuits (OpenQASM 2/3 or "
            "exactsyn JSON); give spec files to 'exactsyn synth'"
        )
    if kind == "json":
        try:
            data = json.loads(text)
        except (json.JSONDecodeError, RecursionError):
            return  # the JSON reader names the position
        if isinstance(data, dict) and data.get("format") == "exactsyn-certificate":
            raise ExactsynError(
                f"{where} is a certificate's result.json, not a circuit: check it with 'exactsyn check'"
            )
        if isinstance(data, list):
            raise ExactsynError(
                f"{where} holds a JSON list, not a circuit: a circuit is an object with 'lines' and 'gates' "
                "(a permutation goes to 'exactsyn synth --perm' or a TOML spec with 'permutation = [...]')"
            )


def circuit_layout_from_text(text: str, path: str | Path | None = None) -> tuple[Circuit, Layout, str]:
    """A saved circuit, its register layout, and its format (``json``, ``qasm2`` or ``qasm3``).

    JSON when the text starts with ``{`` or the file ends ``.json`` (registers from its
    optional ``registers`` key), OpenQASM otherwise (registers in declaration order).  An
    empty file, a spec file, a JSON list or a certificate is refused with what it is.
    """
    kind = kind_of_text(text, Path(path).suffix if path is not None else "")
    _refuse_non_circuit(kind, text, str(path) if path is not None else "the input")
    if kind == "json":
        circuit = load_json_circuit(text)
        data = json.loads(text)
        regs = data.get("registers") if isinstance(data, dict) else None
        layout = Layout.single(circuit.lines) if regs is None else layout_from_dict(regs, circuit.lines)
        return circuit, layout, "json"
    circuit, layout = read_qasm_layout(text)
    return circuit, layout, "qasm2" if text.lstrip().startswith("OPENQASM 2") else "qasm3"


def circuit_from_text(text: str, path: str | Path | None = None) -> Circuit:
    """A saved circuit: JSON when it starts with ``{``, OpenQASM otherwise."""
    return circuit_layout_from_text(text, path)[0]


def read_circuit_layout(path: str | Path) -> tuple[Circuit, Layout, str]:
    """Read a saved circuit (JSON or OpenQASM 2/3) with its register layout and format."""
    return circuit_layout_from_text(read_text(path, "circuit file"), path)


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
