"""Circuits to and from files, with the format taken from the suffix unless one is given.

The formats are those of :mod:`exactsyn.io.registry` (built in: ``text``, ``json``,
``qasm2``, ``qasm3``, ``svg``, ``png``; suffixes ``.txt``, ``.json``, ``.qasm`` (OpenQASM
2.0, the version every reader knows), ``.qasm2``, ``.qasm3``, ``.svg``, ``.png``); any
other suffix is refused unless a format is given.  Reading asks the registry which
format a text is by its content (``{`` or a JSON list: JSON; ``OPENQASM``: OpenQASM),
then by its suffix.
"""

from __future__ import annotations

import os
import tomllib
from collections.abc import Callable, Sequence
from pathlib import Path

from exactsyn.core.circuit import Circuit
from exactsyn.errors import ExactsynError
from exactsyn.io import registry
from exactsyn.io.layout import Layout
from exactsyn.io.limits import MAX_FILE_BYTES, check_file_size, load_json
from exactsyn.io.registry import RenderOptions

#: The reader of a text no format claims by content or suffix: OpenQASM (which needs no
#: header), whose error then says what is wrong with it.
FALLBACK_READER = "qasm3"


def format_for(path: str | Path | None, fmt: str | None = None, kind: str | None = None) -> str:
    """The format to write: ``fmt`` when given, else the one of ``path``'s suffix.

    Only formats of ``kind`` (:data:`~exactsyn.io.registry.CIRCUIT` or
    :data:`~exactsyn.io.registry.PICTURE`; ``None``: any) are allowed.  Raises
    :class:`ExactsynError` for a format outside them or an unknown suffix.  With neither
    (writing to stdout) the answer is ``text`` when allowed.
    """
    allowed = registry.names(kind)
    if fmt is not None:
        if fmt not in allowed:
            raise ExactsynError(f"format {fmt!r} is not one of: {', '.join(allowed)}")
        return fmt
    if path is None:
        if "text" in allowed:
            return "text"
        raise ExactsynError(f"give a format: one of {', '.join(allowed)}")
    suffix = Path(path).suffix.lower()
    claims = registry.by_suffix(suffix, kind)
    if not claims:
        known = ", ".join(registry.suffixes(kind))
        raise ExactsynError(f"cannot tell the format of {path} from its suffix {suffix or '(none)'!r}: use {known}")
    return claims[0].name


def render(
    circuit: Circuit,
    fmt: str,
    *,
    labels: Sequence[str] | None = None,
    packed: bool = False,
    wrap: int | None = 40,
    header: Sequence[str] = (),
    layout: Layout | None = None,
) -> str | bytes:
    """The circuit as ``fmt`` text (bytes for ``png``), written by the registered format.

    ``header`` lines become QASM comments; ``layout`` names the registers (OpenQASM and
    JSON keep them, pictures label the lines with them unless ``labels`` are given).
    """
    chosen = registry.get(fmt)
    if packed and not chosen.packs:
        packing = " and ".join(f.name for f in registry.formats() if f.packs)
        raise ExactsynError(f"packed drawing is for {packing}; the terminal drawing has one gate per column")
    options = RenderOptions(None if labels is None else tuple(labels), packed, wrap, tuple(header), layout)
    if labels is None and options.named:
        assert layout is not None
        options = RenderOptions(tuple(layout.labels()), packed, wrap, tuple(header), layout)
    return chosen.write(circuit, options)


def writer(fmt: str) -> Callable[[Circuit, str | Path], Path]:
    """``write(circuit, path)`` in ``fmt`` whatever the suffix (the package root's ``write_<format>``)."""
    registry.get(fmt)  # an unknown name fails here, not at the first call

    def write(circuit: Circuit, path: str | Path) -> Path:
        return write_circuit(circuit, path, fmt)

    write.__name__ = write.__qualname__ = f"write_{fmt}"
    write.__doc__ = f"Write ``circuit`` to ``path`` as {registry.get(fmt).title} whatever the suffix."
    return write


def path_problem(path: str | Path, error: OSError) -> str:
    """The real reason a path cannot be used: a parent that is a file, a missing folder, or the OS's words."""
    p = Path(path)
    for parent in p.parents:
        if parent.exists():
            if not parent.is_dir():
                return f"{parent} is not a directory"
            break
    return error.strerror or str(error)


def output_path(path: str | Path) -> Path:
    """Where writing ``path`` puts the data: the file a symbolic link names, else ``path`` itself.

    The rule of every output (``-o``, ``--certificate``, ``--dimacs``, ``--csv``, ``--json``,
    ``--chart``, ``--store``): a command creates the file or directory it is asked to write,
    never the folders above it; it writes through a symbolic link, never replacing the link;
    and it writes under a temporary name first, renamed into place when complete.
    """
    p = Path(path)
    return p.resolve() if p.is_symlink() else p


def check_writable(path: str | Path, what: str = "output file") -> None:
    """Fail now, before any work, when ``path`` cannot be written (by creating and removing its temporary file)."""
    p = output_path(path)
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


def write_data(data: str | bytes, path: str | Path, check: Callable[[Path], None] | None = None) -> Path:
    """Write text or bytes atomically (a temporary file renamed into place).

    ``check(temporary_path)`` runs on the written temporary file before it is renamed: when
    it raises, the temporary file is removed and nothing is left at ``path``.  A symbolic link
    is written through (:func:`output_path`).
    """
    p = output_path(path)
    tmp = p.with_name(p.name + ".tmp")
    try:
        if isinstance(data, bytes):
            tmp.write_bytes(data)
        else:
            tmp.write_text(data if data.endswith("\n") else data + "\n", encoding="utf-8")
        if check is not None:
            check(tmp)
        tmp.replace(p)
    except OSError as e:
        _remove(tmp)
        raise ExactsynError(f"cannot write {p}: {path_problem(p, e)}") from None
    except BaseException:
        _remove(tmp)
        raise
    return p


def _remove(tmp: Path) -> None:
    try:
        tmp.unlink(missing_ok=True)
    except OSError:
        pass


def write_circuit(circuit: Circuit, path: str | Path, fmt: str | None = None, **options: object) -> Path:
    """Write ``circuit`` to ``path`` in ``fmt`` (default: from the suffix); see :func:`render` for options."""
    return write_data(render(circuit, format_for(path, fmt), **options), path)  # type: ignore[arg-type]


def read_text(path: str | Path, what: str) -> str:
    """The UTF-8 text of a file (a byte-order mark at the start is dropped), refused before it is
    read when larger than :data:`~exactsyn.io.limits.MAX_FILE_BYTES`."""
    p = Path(path)
    try:
        with open(p, "rb") as fh:
            check_file_size(os.fstat(fh.fileno()).st_size, f"{what} {p}")
            raw = fh.read(MAX_FILE_BYTES + 1)
    except IsADirectoryError:
        raise ExactsynError(f"{what} {p} is a directory") from None
    except OSError as e:
        raise ExactsynError(f"cannot read {what} {p}: {e.strerror}") from None
    check_file_size(len(raw), f"{what} {p}")  # a pipe or a device has no size to stat
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise ExactsynError(f"{what} {p} is not UTF-8 text") from None


#: Keys that mark a TOML spec file (permutation specs and Boolean functions).
SPEC_KEYS = frozenset({"permutation", "cycles", "inputs", "outputs", "expressions", "table", "constants"})


def kind_of_text(text: str, suffix: str = "") -> str:
    """What a file holds: ``empty``, the name of a readable circuit format, ``spec`` (TOML) or ``unknown``.

    In this order: the first registered format whose content test claims the text
    (``.json``, a first character ``{`` or a JSON list is ``json``; a first statement
    ``OPENQASM 2`` is ``qasm2``, any other ``OPENQASM`` is ``qasm3``); a text that parses
    as TOML with a spec key (``permutation``, ``cycles``, ``inputs``, ...) is a spec file;
    then the first readable format that claims the suffix (``.qasm*``).
    """
    stripped = text.lstrip("\ufeff \t\r\n")
    if not stripped:
        return "empty"
    claimed = registry.recognise(stripped, suffix)
    if claimed is not None:
        return claimed.name
    try:
        data = tomllib.loads(text)
    except (tomllib.TOMLDecodeError, ValueError, RecursionError):
        data = None
    if isinstance(data, dict) and SPEC_KEYS & set(data):
        return "spec"
    by_suffix = registry.by_suffix(suffix, readable=True)
    return by_suffix[0].name if by_suffix else "unknown"


def is_circuit_kind(kind: str) -> bool:
    """Is a :func:`kind_of_text` answer a readable circuit format?"""
    return kind in registry.names(readable=True)


def _refuse_non_circuit(kind: str, text: str, where: str) -> None:
    readable = registry.describe(readable=True)
    if kind == "empty":
        raise ExactsynError(f"{where} is empty: expected a circuit ({readable})")
    if kind == "spec":
        raise ExactsynError(
            f"{where} is a spec file (TOML), not a circuit: this command reads circuits ({readable}); "
            "give spec files to 'exactsyn synth'"
        )
    if kind == "json":
        try:
            data = load_json(text, where)
        except ExactsynError:
            return  # the JSON reader says what is wrong
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
    """A saved circuit, its register layout, and the name of its format (``json``, ``qasm2``, ...).

    The reader is the registered one of :func:`kind_of_text` (JSON: registers from its
    optional ``registers`` key; OpenQASM: registers in declaration order), and
    :data:`FALLBACK_READER` for a text no format claims.  An empty file, a spec file, a JSON
    list or a certificate is refused with what it is.
    """
    kind = kind_of_text(text, Path(path).suffix if path is not None else "")
    _refuse_non_circuit(kind, text, str(path) if path is not None else "the input")
    reader = registry.get(kind if is_circuit_kind(kind) else FALLBACK_READER).read
    assert reader is not None
    return reader(text)


def circuit_from_text(text: str, path: str | Path | None = None) -> Circuit:
    """A saved circuit read by its registered format (:func:`circuit_layout_from_text`)."""
    return circuit_layout_from_text(text, path)[0]


def read_circuit_layout(path: str | Path) -> tuple[Circuit, Layout, str]:
    """Read a saved circuit (any readable format: JSON, OpenQASM 2/3) with its register layout and format."""
    return circuit_layout_from_text(read_text(path, "circuit file"), path)


def read_circuit(path: str | Path) -> Circuit:
    """Read a saved circuit (any readable format: JSON, OpenQASM 2/3)."""
    return read_circuit_layout(path)[0]
