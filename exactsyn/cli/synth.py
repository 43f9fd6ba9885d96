"""``exactsyn synth``: parse the options, call :func:`exactsyn.synthesise`, print the result.

The output format is ``--format``, else the suffix of ``-o``, else text on stdout.  The
summary line is printed once: as the ``#`` header of text on stdout, otherwise on stderr.
Progress is shown by :mod:`exactsyn.cli.synth_display`.

Exit status: 0 a circuit was printed, 1 no circuit within the limits (or none exists),
2 bad input (one line on stderr).
"""

from __future__ import annotations

import json
import sys
from collections.abc import Callable
from typing import Any

import click

from exactsyn.api.synthesis import OPTIMA_MODES, Synthesis, synthesise_request
from exactsyn.api.view import (
    count_line,
    gate_line,
    listing_summary,
    objective_summary,
    qasm_header,
    synthesis_to_dict,
    synthesis_to_text,
)
from exactsyn.cli.common import emit, fail
from exactsyn.cli.options import (
    Choice,
    FormatChoice,
    bounds_option,
    cost_option,
    coupling_option,
    cube_depth_option,
    cube_scheme_option,
    encoding_option,
    jobs_option,
    library_option,
    max_controls_option,
    objective_option,
    progress_option,
    scheduler_option,
    solver_option,
    split_after_option,
    split_option,
    synthesis_request,
)
from exactsyn.cli.progress import progress_mode
from exactsyn.cli.synth_display import SynthDisplay
from exactsyn.errors import ExactsynError, NoCircuitError
from exactsyn.io.formats import check_writable, format_for, read_circuit_layout, render
from exactsyn.io.layout import Layout
from exactsyn.io.qasm import clifford_t_to_qasm2, clifford_t_to_qasm3
from exactsyn.io.registry import suffixes
from exactsyn.search.fallback import Suggestion
from exactsyn.specification.reversible import Spec, parse_cycles, parse_perm


def read_function(spec_file: str | None, perm: str | None, cycles: str | None, lines: int | None) -> Spec | str:
    """The function from exactly one of: a spec file, ``--perm``, ``--cycles``."""
    given = [x is not None for x in (spec_file, perm, cycles)]
    if sum(given) != 1:
        raise ExactsynError("give the function exactly once: --perm, --cycles, or a spec file")
    if perm is not None:
        spec = parse_perm(perm)
        if lines is not None and lines != spec.lines:
            raise ExactsynError(f"--lines {lines} but the permutation is on {spec.lines} lines")
        return spec
    if cycles is not None:
        return parse_cycles(cycles, lines)
    assert spec_file is not None
    return spec_file


def _layout_of(spec_file: str | None) -> Layout | None:
    """The register names of a circuit file given as the spec (written back under those names)."""
    if spec_file is None or not spec_file.lower().endswith((".qasm", ".qasm2", ".qasm3", ".json")):
        return None
    try:
        return read_circuit_layout(spec_file)[1]
    except ExactsynError:
        return None


def _print_result(
    syn: Synthesis,
    fmt: str,
    output: str | None,
    clifford_t: bool,
    quiet: bool,
    layout: Layout | None = None,
) -> None:
    """Write the result, then the summary on stderr — only when the text header does not carry it."""
    header_on_stdout = fmt == "text" and output is None
    circuit = syn.circuit
    if circuit is None:
        if fmt == "json":
            emit(json.dumps(synthesis_to_dict(syn), indent=2), output)
        _summary(syn, fmt, quiet, header_on_stdout and fmt != "text")
        sys.exit(1)
    header = qasm_header(syn)
    counting = fmt == "text" and syn.optima is not None and not syn.optima.circuits
    if fmt == "json":
        emit(json.dumps(synthesis_to_dict(syn), indent=2), output)
    elif counting:
        assert syn.optima is not None
        emit(count_line(syn.optima) + "\n", output)  # --optima count: the number, marked when incomplete
    elif fmt == "text":
        emit(synthesis_to_text(syn), output)
    elif clifford_t:
        ct = syn.clifford_t
        assert ct is not None
        emit(clifford_t_to_qasm2(ct, header) if fmt == "qasm2" else clifford_t_to_qasm3(ct, header), output)
    else:
        emit(render(circuit, fmt, layout=layout, header=header), output)
    _summary(syn, fmt, quiet, header_on_stdout and not counting)


#: How ``synth`` spells each suggestion of :func:`exactsyn.search.fallback.next_steps`.
_SPELLED: dict[str, Callable[[Any], str]] = {
    "max_gates": lambda v: f"--max-gates {v} or more" if v is not None else "a higher --max-gates",
    "time_limit": lambda v: f"a longer --time-limit than {v:g} s",
    "library": lambda v: f"a richer library such as --library {v}",
    "coupling": lambda v: "a --coupling graph that connects every line",
    "max_controls": lambda v: "a higher --max-controls",
    "bounds": lambda v: "--bounds cheap with --certificate to see which k are refuted",
}


def next_steps_line(suggestions: tuple[Suggestion, ...]) -> str:
    """``what to try next: --max-gates 9 or more; or a longer --time-limit than 5 s``."""
    return "what to try next: " + "; or ".join(_SPELLED[s.setting](s.value) for s in suggestions)


def _summary(syn: Synthesis, fmt: str, quiet: bool, in_header: bool) -> None:
    """The summary on stderr, unless -q or the text on stdout already starts with it."""
    if quiet:
        return
    if not in_header:
        click.echo(gate_line(syn), err=True)
        for note in syn.notes:
            click.echo(f"exactsyn: note: {note}", err=True)
        if syn.suggestions:
            click.echo(f"exactsyn: note: {next_steps_line(syn.suggestions)}", err=True)
        if syn.objective_result is not None:
            click.echo(objective_summary(syn.objective_result), err=True)
        if syn.optima is not None and (fmt != "text" or not syn.optima.circuits):
            click.echo(listing_summary(syn.optima), err=True)
    if syn.certificate is not None:
        click.echo(f"certificate written: {syn.certificate / 'result.json'}", err=True)


@click.command()
@click.argument("spec_file", required=False, type=click.Path(dir_okay=False))
@click.option("--perm", metavar="LIST", help="Permutation p[0],p[1],... of 0..2^n-1, e.g. 1,0,3,2.")
@click.option("--cycles", metavar="TEXT", help='Permutation in cycle notation, e.g. "(0 1)(2 3)".')
@click.option("--lines", type=int, help="Number of lines (for --cycles; default: smallest that fits).")
@library_option
@max_controls_option
@coupling_option
@click.option(
    "--format",
    "fmt",
    type=FormatChoice(),
    help=f"Output format; default from the -o suffix ({' '.join(suffixes())}), text on stdout. Wins over the suffix.",
)
@click.option(
    "-o", "--output", type=click.Path(dir_okay=False), metavar="FILE", help="Write the result here, not stdout."
)
@click.option(
    "--time-limit",
    type=click.FloatRange(min=0, min_open=True),
    metavar="SECONDS",
    help="Wall-clock limit for the whole search: the fallback circuit, distance tables, every SAT query, "
    "the objective and the listing of optima; the whole command, start-up and printing included, ends within "
    "about 10% + 1 s of it. When it runs out, the best circuit found so far is printed, marked not proven "
    "optimal, with the proven lower bound.",
)
@click.option(
    "--max-gates",
    type=click.IntRange(min=0),
    metavar="N",
    help="No circuit longer than N gates is printed, whichever method found it (exit 1 if none).",
)
@encoding_option
@solver_option
@bounds_option()
@click.option(
    "--certificate",
    "cert_dir",
    type=click.Path(file_okay=False),
    metavar="DIR",
    help="Write a proof log here: result.json plus an LRAT refutation per refuted k "
    "(CaDiCaL 1.9.5); re-check it with 'exactsyn check DIR'.",
)
@click.option(
    "--dimacs",
    "dimacs_dir",
    type=click.Path(file_okay=False),
    metavar="DIR",
    help="Also write every k-query as DIMACS CNF (k05.cnf, ...) for outside solvers and checkers.",
)
@jobs_option(
    2,
    "Processes this command may use. 1 = one solver at a time; with 2 (and --split auto) a query still "
    "open after 1 s is raced against the formulation without symmetry breaking (faster on satisfiable "
    "queries); from 3 up (or with --split cubes) it is split into cubes solved on N worker processes. "
    "With --scheduler local, N is the number of Dask workers.",
)
@split_option
@scheduler_option
@click.option(
    "--scan-state",
    type=click.Path(file_okay=False),
    metavar="DIR",
    help="Run the long meet-in-the-middle scans of a class table (5-line functions of 12 and 13 gates: "
    "minutes to hours) in chunks recorded in DIR, so an interrupted run resumes where it stopped; the chunks "
    "run on --jobs processes, or on --scheduler.",
)
@cube_depth_option
@cube_scheme_option
@split_after_option
@objective_option
@cost_option
@click.option(
    "--optima",
    type=Choice(OPTIMA_MODES),
    help="all: print every optimal circuit (objectives gates and gates-then-cost), one per class of circuits "
    "that differ only by reordering adjacent commuting gates; count: print only how many there are.",
)
@click.option("--optima-limit", type=click.IntRange(min=1), metavar="N", help="Stop --optima after N circuits.")
@click.option(
    "--clifford-t",
    is_flag=True,
    help="With --format qasm2/qasm3: write the circuit over h, t, tdg, cx, x (Toffoli as 7 T/T† and 6 CNOT, "
    "Nielsen & Chuang 2000; a gate with n-1 controls on n >= 4 lines gets one ancilla qubit 'anc').",
)
@progress_option
@click.option("-q", "--quiet", is_flag=True, help="Nothing on stderr but errors.")
def synth(
    spec_file: str | None,
    perm: str | None,
    cycles: str | None,
    lines: int | None,
    fmt: str | None,
    output: str | None,
    clifford_t: bool,
    show_progress: bool,
    quiet: bool,
    **asked: Any,
) -> None:
    """Find a minimum-gate circuit for a reversible function and prove it minimal.

    For k = lower bound, lower bound + 1, ... exactsyn asks a SAT solver whether a
    circuit of exactly k gates exists; every "no" is a proof, the first "yes" is the
    optimum.  With --objective the minimum-gate circuit is then improved for cost or
    depth, each step again a SAT query whose "no" is a proof.  Every library gets a
    circuit when time runs out (a fallback made by transformation-based synthesis,
    rewritten into the library and shrunk), marked not proven optimal.

    On a terminal, progress (the table being built, the current k with a running timer,
    each answer) is shown on stderr; -q silences it, --progress shows it elsewhere too.

    \b
    Examples:
      exactsyn synth --perm 0,1,2,3,4,5,7,6                 # a Toffoli gate: 1 gate
      exactsyn synth --cycles "(1 2)" --library nct         # SWAP of lines 0,1: 3 CNOTs
      exactsyn synth instances/lift-gray-step.toml --format json
      exactsyn synth --perm ... --library mct --time-limit 60 -o out.qasm3
      exactsyn synth --cycles "(3 7)" -o toffoli.svg         # a picture: the suffix picks it
      exactsyn synth --cycles "(3 7)" --certificate cert/ && exactsyn check cert/
      exactsyn synth --cycles "(6 7)" --library mixed --objective gates-then-cost --cost t-count
      exactsyn synth --cycles "(5 6)" --optima all          # every optimal circuit
      exactsyn synth --cycles "(5 6)" --optima count        # only how many
      exactsyn synth --cycles "(5 6)" --objective depth     # fewest layers, proven
      exactsyn synth --cycles "(3 7)" --format qasm2 --clifford-t
      exactsyn synth --cycles "(1 4)(3 6)" --coupling 0-1-2   # SWAP of lines 0,2 on a chain
      exactsyn synth --perm ... --library mct -j 8 --certificate cert/   # hard queries in cubes, 8 workers
      exactsyn synth --perm ... --library mct --scheduler tcp://head:8786  # cubes on a Dask cluster

    Exit status: 0 a circuit was printed (check "optimal" in JSON), 1 no circuit
    within the limits or none exists in the library, 2 bad input.
    """
    try:
        chosen = format_for(output, fmt)
        function = read_function(spec_file, perm, cycles, lines)
        if output is not None:
            check_writable(output)  # before the search, not after it
        if clifford_t and chosen not in ("qasm2", "qasm3"):
            raise ExactsynError("--clifford-t needs --format qasm2 or qasm3 (or an -o file ending .qasm/.qasm3)")
        if asked["optima"] is not None and chosen not in ("text", "json"):
            raise ExactsynError("--optima prints text or json (one circuit per file otherwise)")
        request = synthesis_request(asked)
        display = SynthDisplay(progress_mode(quiet, show_progress))
        try:
            with display:
                syn = synthesise_request(function, request, observer=display)
        except NoCircuitError as e:
            fail(e.message, 1)
        _print_result(syn, chosen, output, clifford_t, quiet, _layout_of(spec_file))
    except ExactsynError as e:
        fail(e.message)
