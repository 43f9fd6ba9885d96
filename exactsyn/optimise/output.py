"""The files of an optimisation: the output in a circuit format, re-checked before it is kept, and the log.

Every circuit is simulated before it is stored: :func:`write_checked` writes the output
to a temporary file, reads that file back through the format registry
(:mod:`exactsyn.io.registry`) and compares what it reads with the optimised circuit by
simulation (:func:`exactsyn.optimise.equivalence.check_equivalent`) and with the input's
register layout; only then is the file renamed into place.  On a difference it raises
:class:`~exactsyn.optimise.driver.EquivalenceError` and nothing is left at the path.
:func:`checked_text` does the same for text that goes to standard output.
"""

from __future__ import annotations

import json
from pathlib import Path

from exactsyn.errors import ExactsynError
from exactsyn.io import registry
from exactsyn.io.formats import circuit_layout_from_text, read_text, render, write_data
from exactsyn.io.layout import Layout
from exactsyn.optimise.driver import EquivalenceError, OptimiseResult
from exactsyn.optimise.equivalence import check_equivalent
from exactsyn.optimise.summary import qasm_header, result_to_dict

#: The log's name beside the output: ``adder-opt.qasm`` -> ``adder-opt.log.json``.
LOG_SUFFIX = ".log.json"


def output_format(fmt: str | None, output: str | Path | None, input_format: str) -> str:
    """The format to write: ``fmt``, else the one of ``output``'s suffix, else the input's.

    Only formats that read back (circuit texts of the registry) are allowed.  A suffix
    several formats share (``.qasm``: OpenQASM 2.0 and 3.0) keeps the input's format when
    it is one of them, else takes the last registered (the newer version).
    """
    readable = registry.names(readable=True)
    if fmt is not None:
        if fmt not in readable:
            raise ExactsynError(f"format {fmt!r} does not read back; the optimiser writes {', '.join(readable)}")
        return fmt
    if output is None:
        return input_format
    claims = [f.name for f in registry.by_suffix(Path(output).suffix, readable=True)]
    if input_format in claims:
        return input_format
    if claims:
        return claims[-1]
    raise ExactsynError(
        f"cannot tell the format of {output} from its suffix: use {', '.join(registry.suffixes(readable=True))} "
        f"or give the format ({', '.join(readable)})"
    )


def log_path_for(output: str | Path) -> Path:
    """Where the log goes by default: beside ``output``, its suffix replaced by :data:`LOG_SUFFIX`."""
    return Path(output).with_suffix(LOG_SUFFIX)


def _text(result: OptimiseResult, fmt: str, layout: Layout) -> str:
    data = render(result.output, fmt, layout=layout, header=qasm_header(result))
    if isinstance(data, bytes):
        raise ExactsynError(f"format {fmt!r} writes bytes; the optimiser writes circuit texts")
    return data


def _check_read_back(text: str, result: OptimiseResult, fmt: str, layout: Layout, seed: int) -> None:
    back, back_layout, _ = circuit_layout_from_text(text)  # our own output: judged by content alone
    again = check_equivalent(back, result.output, seed=seed)
    if not again.equal or back_layout != layout:
        raise EquivalenceError(
            f"internal error: the written {fmt} does not read back as the optimised circuit; nothing written"
        )


def checked_text(result: OptimiseResult, fmt: str, *, layout: Layout, seed: int = 0) -> str:
    """The output as ``fmt`` text, read back and compared with the optimised circuit first."""
    text = _text(result, fmt, layout)
    _check_read_back(text, result, fmt, layout, seed)
    return text


def write_checked(result: OptimiseResult, fmt: str, path: str | Path, *, layout: Layout, seed: int = 0) -> Path:
    """Write the output to ``path`` atomically, once the written file reads back as the optimised circuit."""

    def check(written: Path) -> None:
        _check_read_back(read_text(written, "output file"), result, fmt, layout, seed)

    return write_data(_text(result, fmt, layout), path, check=check)


def write_log(
    result: OptimiseResult, path: str | Path, *, input: str | Path, output: str | Path | None, fmt: str, layout: Layout
) -> Path:
    """The JSON log of :func:`~exactsyn.optimise.summary.result_to_dict`, with the file names and registers."""
    record = result_to_dict(result, input=str(input), output=None if output is None else str(output), format=fmt)
    if not layout.is_single:
        record["registers"] = layout.to_dict()
    return write_data(json.dumps(record, indent=2) + "\n", path)
