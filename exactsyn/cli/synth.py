"""``exactsyn synth``: parse the options, call :func:`exactsyn.synthesise`, print the result.

Exit status: 0 a circuit was printed, 1 no circuit within the limits (or none exists),
2 bad input (one line on stderr).
"""

from __future__ import annotations

import json
import sys

import click

from exactsyn.api import Synthesis, synthesise
from exactsyn.batch.progress import CubeProgressView
from exactsyn.cli.common import emit, fail
from exactsyn.cli.options import (
    bounds_option,
    cost_option,
    coupling_option,
    cube_depth_option,
    cube_scheme_option,
    encoding_option,
    library_option,
    max_controls_option,
    objective_option,
    scheduler_option,
    solver_option,
    split_after_option,
    split_option,
)
from exactsyn.core.cliffordt import decompose
from exactsyn.core.cliffordt import verify as verify_clifford_t
from exactsyn.errors import ExactsynError, NoCircuitError
from exactsyn.io.files import CIRCUIT_FORMATS, read_circuit_layout, render
from exactsyn.io.layout import Layout
from exactsyn.io.qasm import clifford_t_to_qasm2, clifford_t_to_qasm3
from exactsyn.io.report import (
    listing_summary,
    objective_summary,
    status_line,
    synthesis_to_dict,
    synthesis_to_text,
)
from exactsyn.sat.query import Query
from exactsyn.spec.reversible import Spec, parse_cycles, parse_perm


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


def _show_query(q: Query) -> None:
    if q.objective == "gates":
        click.echo(
            f"k={q.k:<3} {q.status.upper():<7} {q.seconds:8.2f} s"
            f"   ({q.variables} vars, {q.clauses} clauses, {q.conflicts} conflicts"
            + ("" if q.split is None else f", {len(q.split.cubes)} cubes") + ")",
            err=True,
        )
    else:
        click.echo(f"{q.label():<18} {q.status.upper():<7} {q.seconds:8.2f} s", err=True)


def _layout_of(spec_file: str | None) -> Layout | None:
    """The register names of a circuit file given as the spec (written back under those names)."""
    if spec_file is None or not spec_file.lower().endswith((".qasm", ".qasm2", ".qasm3", ".json")):
        return None
    try:
        return read_circuit_layout(spec_file)[1]
    except ExactsynError:
        return None


def _print_result(
    syn: Synthesis, fmt: str, output: str | None, clifford_t: bool, quiet: bool, layout: Layout | None = None
) -> None:
    if not quiet:
        click.echo(status_line(syn.gate_result), err=True)
        for note in syn.notes:
            click.echo(f"exactsyn: {note}", err=True)
        if syn.objective_result is not None:
            click.echo(objective_summary(syn.objective_result), err=True)
        if syn.certificate is not None:
            click.echo(f"certificate written: {syn.certificate / 'result.json'}", err=True)
        if syn.optima is not None:
            click.echo(listing_summary(syn.optima), err=True)
    circuit = syn.circuit
    if circuit is None:
        if fmt == "json":
            emit(json.dumps(synthesis_to_dict(syn), indent=2), output)
        sys.exit(1)
    ct = decompose(circuit) if fmt == "json" or clifford_t else None
    if ct is not None:
        verify_clifford_t(ct, circuit)  # simulated before it is printed, like every circuit
    if fmt == "json":
        emit(json.dumps(synthesis_to_dict(syn, ct), indent=2), output)
    elif fmt == "text":
        emit(synthesis_to_text(syn), output)
    elif ct is not None:
        emit(clifford_t_to_qasm2(ct) if fmt == "qasm2" else clifford_t_to_qasm3(ct), output)
    else:
        emit(render(circuit, fmt, layout=layout), output)


@click.command()
@click.argument("spec_file", required=False, type=click.Path(dir_okay=False))
@click.option("--perm", metavar="LIST", help="Permutation p[0],p[1],... of 0..2^n-1, e.g. 1,0,3,2.")
@click.option("--cycles", metavar="TEXT", help='Permutation in cycle notation, e.g. "(0 1)(2 3)".')
@click.option("--lines", type=int, help="Number of lines (for --cycles; default: smallest that fits).")
@library_option
@max_controls_option
@coupling_option
@click.option("--format", "fmt", type=click.Choice(CIRCUIT_FORMATS), default="text", show_default=True)
@click.option("-o", "--output", type=click.Path(dir_okay=False), help="Write the result here, not stdout.")
@click.option(
    "--time-limit",
    type=float,
    metavar="SECONDS",
    help="Stop proving after this long; a heuristic circuit is returned, marked not optimal.",
)
@click.option("--max-gates", type=int, help="Do not look for circuits longer than this.")
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
@click.option(
    "--jobs",
    type=int,
    default=2,
    show_default=True,
    help="Processes this command may use. With 2 (and --split auto), a query still open after 1 s is raced "
    "against the formulation without symmetry breaking; from 3 up it is split into cubes solved on that many "
    "processes; 1 = sequential.",
)
@split_option
@scheduler_option
@cube_depth_option
@cube_scheme_option
@split_after_option
@objective_option
@cost_option
@click.option(
    "--all",
    "all_circuits",
    is_flag=True,
    help="Print every optimal circuit (objectives gates and gates-then-cost), one per class of circuits that "
    "differ only by reordering adjacent commuting gates.",
)
@click.option("--count", "count_only", is_flag=True, help="Like --all, but print only how many there are.")
@click.option("--all-limit", type=int, metavar="N", help="Stop --all / --count after N circuits.")
@click.option(
    "--clifford-t",
    is_flag=True,
    help="With --format qasm2/qasm3: write the circuit over h, t, tdg, cx, x (Toffoli as 7 T/T† and 6 CNOT, "
    "Nielsen & Chuang 2000; a gate with n-1 controls on n >= 4 lines gets one ancilla qubit 'anc').",
)
@click.option("-q", "--quiet", is_flag=True, help="No per-k progress lines on stderr.")
def synth(
    spec_file: str | None,
    perm: str | None,
    cycles: str | None,
    lines: int | None,
    library_name: str,
    max_controls: int | None,
    coupling: str,
    fmt: str,
    output: str | None,
    time_limit: float | None,
    max_gates: int | None,
    encoding: str,
    solver: str,
    bounds: str,
    cert_dir: str | None,
    dimacs_dir: str | None,
    jobs: int,
    split: str,
    scheduler: str | None,
    cube_depth: int,
    cube_scheme: str,
    split_after: float,
    objective: str,
    cost_name: str,
    all_circuits: bool,
    count_only: bool,
    all_limit: int | None,
    clifford_t: bool,
    quiet: bool,
) -> None:
    """Find a minimum-gate circuit for a reversible function and prove it minimal.

    For k = lower bound, lower bound + 1, ... exactsyn asks a SAT solver whether a
    circuit of exactly k gates exists; every "no" is a proof, the first "yes" is the
    optimum.  Progress (k, SAT/UNSAT, seconds) goes to stderr.  With --objective
    the minimum-gate circuit is then improved for cost or depth, each step again a
    SAT query whose "no" is a proof.

    \b
    Examples:
      exactsyn synth --perm 0,1,2,3,4,5,7,6                 # a Toffoli gate: 1 gate
      exactsyn synth --cycles "(1 2)" --library nct         # SWAP of lines 0,1: 3 CNOTs
      exactsyn synth instances/lift-gray-step.toml --format json
      exactsyn synth --perm ... --library mct --time-limit 60 --format qasm3 -o out.qasm
      exactsyn synth --cycles "(3 7)" --certificate cert/ && exactsyn check cert/
      exactsyn synth --cycles "(6 7)" --library mixed --objective gates-then-cost --cost t-count
      exactsyn synth --cycles "(5 6)" --all                 # every optimal circuit
      exactsyn synth --cycles "(5 6)" --objective depth     # fewest layers, proven
      exactsyn synth --cycles "(3 7)" --format qasm2 --clifford-t
      exactsyn synth --cycles "(1 4)(3 6)" --coupling 0-1-2   # SWAP of lines 0,2 on a chain

    Exit status: 0 a circuit was printed (check "optimal" in JSON), 1 no circuit
    within the limits or none exists in the library, 2 bad input.
    """
    try:
        function = read_function(spec_file, perm, cycles, lines)
        if clifford_t and fmt not in ("qasm2", "qasm3"):
            raise ExactsynError("--clifford-t needs --format qasm2 or qasm3")
        optima = "all" if all_circuits else "count" if count_only else None
        if optima is not None and fmt not in ("text", "json"):
            raise ExactsynError("--all and --count print text or json (one circuit per file otherwise)")
        try:
            syn = synthesise(
                function,
                library=library_name,
                max_controls=max_controls,
                coupling=coupling,
                objective=objective,
                cost=cost_name,
                optima=optima,
                optima_limit=all_limit,
                certificate=cert_dir,
                dimacs=dimacs_dir,
                time_limit=time_limit,
                max_gates=max_gates,
                bounds=bounds,
                encoding=encoding,
                solver=solver,
                jobs=jobs,
                progress=None if quiet else _show_query,
                split=split,
                scheduler=scheduler,
                cube_depth=cube_depth,
                cube_scheme=cube_scheme,
                split_after=split_after,
                cube_progress=None if quiet else CubeProgressView(),
            )
        except NoCircuitError as e:
            fail(e.message, 1)
        _print_result(syn, fmt, output, clifford_t, quiet, _layout_of(spec_file))
    except ExactsynError as e:
        fail(e.message)
