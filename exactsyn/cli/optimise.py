"""The ``exactsyn optimise`` command: read a circuit, call :func:`exactsyn.optimise.optimise_circuit`, write.

Only parsing and printing: the output's format, its read-back check and the log are
:mod:`exactsyn.optimise.output`.  A standalone click command; the command group attaches
it with ``main.add_command``.
Exit status: 0 written, 1 the internal equivalence check failed (nothing written),
2 bad input (one line on stderr, nothing written).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any, TypeVar

import click

from exactsyn.cli.common import fail
from exactsyn.cli.options import (
    Choice,
    FormatChoice,
    coupling_option,
    max_controls_option,
    progress_option,
    with_formats,
)
from exactsyn.cli.progress import OptimiseDisplay, progress_mode
from exactsyn.core.library import KINDS, PRESETS
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import read_circuit_layout
from exactsyn.io.layout import Layout, check_layout
from exactsyn.io.registry import suffixes
from exactsyn.optimise import InternalCheckError, optimise_circuit
from exactsyn.optimise.driver import DEFAULT_HORIZON, WINDOW_OBJECTIVES
from exactsyn.optimise.output import checked_text, log_path_for, output_format, write_checked, write_log
from exactsyn.optimise.summary import summary_text

F = TypeVar("F", bound=Callable[..., Any])


#: The options of ``exactsyn optimise``, in the order ``--help`` lists them.
_OPTIONS: tuple[Callable[[F], F], ...] = (
    click.option(
        "-o",
        "--output",
        metavar="OUT",
        type=click.Path(dir_okay=False),
        help="Write the optimised circuit here (default: stdout, and the summary goes to stderr).",
    ),
    click.option(
        "--format",
        "fmt",
        type=FormatChoice(readable=True),
        help=f"Output format; default from the suffix of OUT ({', '.join(suffixes(readable=True))}; .qasm keeps "
        "the input's OpenQASM version), else the input's format.",
    ),
    click.option(
        "--library",
        "library_name",
        default="auto",
        show_default=True,
        metavar="NAME|KINDS",
        help="Gates the output may use; every input gate must be one of them. 'auto' = the smallest preset "
        "holding the input's gates (nct, mct, mixed, nct-swap, mct-swap, mixed-swap, nct-peres). Presets: "
        + "; ".join(f"{k} = {v}" for k, v in PRESETS.items())
        + ". Or a comma-separated list of kinds: "
        + ", ".join(KINDS)
        + ".",
    ),
    max_controls_option,
    coupling_option,
    click.option(
        "--objective",
        type=Choice(WINDOW_OBJECTIVES),
        default="gates",
        show_default=True,
        help="What a replacement must lower: the gate count, or the gate count and then the --cost among "
        "circuits with as many gates.",
    ),
    click.option(
        "--cost",
        "cost_name",
        default="ncv",
        show_default=True,
        metavar="MODEL|FILE",
        help="Cost for gates-then-cost: ncv (NOT 1, CNOT 1, Toffoli 5), t-count or cnot-count (of the Clifford+T "
        "decomposition), or a TOML/JSON table of gate names to integer costs.",
    ),
    click.option(
        "--window",
        type=click.IntRange(1, 5),
        default=None,
        help="Largest number of lines of a window. 3: exhaustive tables of every 3-line function. 4: the cached "
        "4-line class tables (gates and gates-then-cost), else a 4-line distance table (about 3 s to build) and a "
        "bounded meet in the middle (gates only). 5 (slow, opt-in): windows of up to 10 gates from the cached "
        "5-line class table (up to 5 s of scan per window), else windows of up to 7 gates by a SAT search for at "
        "most 6 gates (up to 2 s per window: about a minute per 100 gates; a window it cannot settle is left as "
        "it is). Default: 4 when the class tables of the library "
        "are cached (`exactsyn tables build`), else 3.",
    ),
    click.option(
        "--horizon",
        type=click.IntRange(1, None),
        default=DEFAULT_HORIZON,
        show_default=True,
        help="Gates a window's growth looks past the last gate that joined it (more: finds more, slower).",
    ),
    click.option(
        "--zero-lines",
        "zero_lines",
        metavar="LINES",
        default="",
        help="Clean ancillas: lines that are 0 at the start and that the circuit returns to 0, as line numbers "
        "or OpenQASM operands, comma-separated (e.g. --zero-lines 3,4 or --zero-lines 'anc' or 'c[1],c[2]'). "
        "Windows on them are resynthesised with don't-cares, and the output equals the input on the inputs with "
        "these lines 0 (the check and the log say so). The claim is checked on the input: a line it leaves at 1 "
        "is an error (exit 2, nothing written).",
    ),
    click.option(
        "--seed",
        type=int,
        default=0,
        show_default=True,
        help="Seed of the random inputs of the equivalence check on circuits of more than 24 lines.",
    ),
    click.option(
        "--log",
        "log_path",
        metavar="FILE",
        type=click.Path(dir_okay=False),
        help="Write the JSON log here (default: beside OUT, as OUT's name with .log.json).",
    ),
    click.option("--no-log", is_flag=True, help="Do not write the JSON log."),
    progress_option,
    click.option("-q", "--quiet", is_flag=True, help="No summary and no progress bar."),
)


def parse_zero_lines(text: str, layout: Layout) -> tuple[int, ...]:
    """Line numbers of ``--zero-lines``: integers, register names (every line of the register)
    or ``name[index]`` operands, comma-separated."""
    labels = layout.labels()
    out: list[int] = []
    for item in (t.strip() for t in text.split(",")):
        if not item:
            raise ExactsynError(f"--zero-lines {text!r} has an empty entry")
        if item.isdigit():
            out.append(int(item))
        elif item in labels:
            out.append(labels.index(item))
        elif item in dict(layout.registers):
            out.extend(i for i, label in enumerate(labels) if label.startswith(item + "["))
        else:
            known = ", ".join(name for name, _ in layout.registers)
            raise ExactsynError(f"--zero-lines: {item!r} is not a line number, a register ({known}) or an operand")
    return tuple(out)


def _with_options(command: F) -> F:
    for option in reversed(_OPTIONS):
        command = option(command)
    return command


@with_formats
@click.command("optimise", context_settings={"help_option_names": ["-h", "--help"]})
@click.argument("input_file", metavar="IN", type=click.Path(dir_okay=False))
@_with_options
def optimise(
    input_file: str,
    output: str | None,
    fmt: str | None,
    library_name: str,
    max_controls: int | None,
    coupling: str,
    objective: str,
    cost_name: str,
    window: int | None,
    horizon: int,
    zero_lines: str,
    seed: int,
    log_path: str | None,
    no_log: bool,
    show_progress: bool,
    quiet: bool,
) -> None:
    """Make a whole circuit smaller: replace every small window by a proven-optimal circuit.

    A window is a set of gates on at most --window lines that can be brought together by
    moving gates past gates they commute with.  Each window's function is looked up in
    exhaustive tables; when a proven-optimal circuit for it is smaller, it replaces the
    window.  This repeats until nothing changes.  The output is then compared with the
    input: every input state up to 24 lines, a seeded sample of 131072 random states
    beyond.  With --zero-lines only the inputs with those lines 0 are compared, and windows
    on them need only agree there.  IN and OUT are {readable} (OpenQASM: any number of
    registers; gate definitions are read by their unitary).

    \b
    Examples:
      exactsyn optimise adder.qasm -o adder-opt.qasm
      exactsyn optimise adder.qasm -o adder-opt.qasm --window 4
      exactsyn optimise circuit.json -o out.qasm3 --objective gates-then-cost --cost t-count
      exactsyn optimise circuit.qasm -o out.qasm --library nct-swap --coupling chain
      exactsyn optimise adder.qasm -o adder-opt.qasm --zero-lines 3,4

    A summary (gates, NCV cost, T-count, CNOT count, depth, before and after) is printed
    and a JSON log written beside OUT.  Exit status: 0 written, 1 the equivalence check
    failed (a bug; nothing written), 2 bad input (nothing written).
    """
    try:
        circuit, layout, input_format = read_circuit_layout(input_file)
        check_layout(layout, circuit.lines)
        zero = parse_zero_lines(zero_lines, layout) if zero_lines else ()
        out_format = output_format(fmt, output, input_format)
        log = None if no_log else (log_path or (log_path_for(output) if output else None))
        with OptimiseDisplay(progress_mode(quiet, show_progress)) as display:
            result = optimise_circuit(
                circuit,
                library=library_name,
                objective=objective,
                cost=cost_name,
                coupling=coupling,
                max_controls=max_controls,
                window=window,
                horizon=horizon,
                seed=seed,
                progress=display,
                zero_lines=zero,
            )
        if output is None:
            click.echo(checked_text(result, out_format, layout=layout, seed=seed), nl=False)
        else:
            write_checked(result, out_format, output, layout=layout, seed=seed)
        if log is not None:
            write_log(result, log, input=input_file, output=output, fmt=out_format, layout=layout)
        if not quiet:
            click.echo(summary_text(result), nl=False, err=output is None)
            if log is not None:
                click.echo(f"log written: {log}", err=output is None)
    except InternalCheckError as e:
        fail(e.message, 1)
    except ExactsynError as e:
        fail(e.message)
