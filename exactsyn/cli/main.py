"""The ``exactsyn`` command line: parses options, calls the library, prints.

Exit status: 0 success, 1 no circuit within the limits (or none exists), 2 bad input
(one line on stderr, no traceback).
"""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import NoReturn

import click

from exactsyn import __version__
from exactsyn.cli.options import (
    bounds_option,
    coupling_option,
    encoding_option,
    library_option,
    max_controls_option,
    solver_option,
)
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.sat.encode import options_for
from exactsyn.search.loop import NoCircuitError, Step, synthesise
from exactsyn.spec.embed import Embedding
from exactsyn.spec.files import load_any, load_circuit
from exactsyn.spec.reversible import Spec, parse_cycles, parse_perm

FORMATS = ("text", "json", "qasm2", "qasm3", "svg", "png")


def _fail(message: str, code: int = 2) -> NoReturn:
    click.echo(f"exactsyn: error: {message}", err=True)
    sys.exit(code)


def _read_spec(
    spec_file: str | None, perm: str | None, cycles: str | None, lines: int | None
) -> tuple[Spec, Embedding | None]:
    given = [x is not None for x in (spec_file, perm, cycles)]
    if sum(given) != 1:
        raise ExactsynError("give the function exactly once: --perm, --cycles, or a spec file")
    if perm is not None:
        spec = parse_perm(perm)
        if lines is not None and lines != spec.lines:
            raise ExactsynError(f"--lines {lines} but the permutation is on {spec.lines} lines")
        return spec, None
    if cycles is not None:
        return parse_cycles(cycles, lines), None
    assert spec_file is not None
    return load_any(spec_file)


def _emit(text: str, output: str | None) -> None:
    if output is None:
        click.echo(text, nl=not text.endswith("\n"))
        return
    try:
        Path(output).write_text(text if text.endswith("\n") else text + "\n")
    except OSError as e:
        raise ExactsynError(f"cannot write {output}: {e.strerror}") from None


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="exactsyn")
def main() -> None:
    """exactsyn — provably minimal reversible circuits by SAT.

    \b
    Quick start:
      exactsyn synth --perm 1,0,3,2,5,7,4,6 --library nct
      exactsyn synth --cycles "(3 7)" --library nct --format qasm2 -o toffoli.qasm
      exactsyn apply toffoli.qasm

    Line l carries bit l of the state (line 0 = least significant bit); a permutation
    p lists p[i], the output for input i.
    """


@main.command()
@click.argument("spec_file", required=False, type=click.Path(dir_okay=False))
@click.option("--perm", metavar="LIST", help="Permutation p[0],p[1],... of 0..2^n-1, e.g. 1,0,3,2.")
@click.option("--cycles", metavar="TEXT", help='Permutation in cycle notation, e.g. "(0 1)(2 3)".')
@click.option("--lines", type=int, help="Number of lines (for --cycles; default: smallest that fits).")
@library_option
@max_controls_option
@coupling_option
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="text", show_default=True)
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
    help="Processes per query: with 2, a query still open after 1 s is raced against the "
    "formulation without symmetry breaking (faster on satisfiable queries); 1 = sequential.",
)
@click.option(
    "--objective",
    type=click.Choice(["gates", "gates-then-cost", "cost", "depth"]),
    default="gates",
    show_default=True,
    help="What is minimised and proven: gates; gates-then-cost = fewest gates, then the least --cost among "
    "them; cost = least --cost over any number of gates (slow beyond small 3-line functions); depth = fewest "
    "layers, gates on disjoint lines sharing a layer.",
)
@click.option(
    "--cost",
    "cost_name",
    default="ncv",
    show_default=True,
    metavar="MODEL|FILE",
    help="Cost model: ncv (quantum cost: NOT 1, CNOT 1, Toffoli 5, Peres 4, C3X 13; Barenco et al. 1995), "
    "t-count and cnot-count (of the Clifford+T decomposition written by --clifford-t), gates, or a TOML/JSON "
    "table of gate names to integer costs (NOT, CNOT, Toffoli, C3X, SWAP, Fredkin, Peres, ..., negative_control).",
)
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
        spec, emb = _read_spec(spec_file, perm, cycles, lines)
        library = make_library(library_name, spec.lines, max_controls, coupling)
        if time_limit is not None and time_limit <= 0:
            raise ExactsynError("--time-limit must be positive")
        if jobs < 1:
            raise ExactsynError("--jobs must be 1 or more")
        if max_gates is not None and max_gates < 0:
            raise ExactsynError("--max-gates must be 0 or more")
        if clifford_t and fmt not in ("qasm2", "qasm3"):
            raise ExactsynError("--clifford-t needs --format qasm2 or qasm3")
        listing = all_circuits or count_only
        if listing and objective not in ("gates", "gates-then-cost"):
            raise ExactsynError("--all and --count work with --objective gates or gates-then-cost")
        if listing and fmt not in ("text", "json"):
            raise ExactsynError("--all and --count print text or json (one circuit per file otherwise)")
        if all_limit is not None and all_limit < 1:
            raise ExactsynError("--all-limit must be 1 or more")
        from exactsyn.core.costs import cost_model

        model = cost_model(cost_name)
        if objective in ("gates-then-cost", "cost"):
            from exactsyn.search.objectives import gate_costs

            gate_costs(library, model, objective)  # refuses a bad table or zero costs now, not after the search

        def progress(step: Step) -> None:
            if not quiet:
                click.echo(
                    f"k={step.k:<3} {step.status.upper():<7} {step.seconds:8.2f} s"
                    f"   ({step.variables} vars, {step.clauses} clauses, {step.conflicts} conflicts)",
                    err=True,
                )

        from exactsyn.proof.certificate import proof_writer, write_result

        proof_sink = proof_writer(Path(cert_dir)) if cert_dir else None
        cnf_sink = _dimacs_writer(Path(dimacs_dir)) if dimacs_dir else None
        try:
            res = synthesise(
                spec,
                library,
                encoding=options_for(encoding),
                solver=solver,
                time_limit=time_limit,
                max_gates=max_gates,
                progress=progress,
                proof_sink=proof_sink,
                cnf_sink=cnf_sink,
                bounds=bounds,
                jobs=jobs,
            )
        except NoCircuitError as e:
            _fail(e.message, 1)
        from exactsyn.io.report import objective_summary, result_to_dict, result_to_text, status_line

        if not quiet:
            click.echo(status_line(res), err=True)
        obj = None
        if objective != "gates" and res.circuit is not None:
            if not res.optimal:
                click.echo("exactsyn: the gate count was not proven, so the objective was not optimised", err=True)
            else:
                from exactsyn.proof.objective import objective_proof_writer
                from exactsyn.search.objectives import optimise

                def obj_progress(q) -> None:  # type: ignore[no-untyped-def]
                    if not quiet:
                        what = f"depth<={q.k}" if q.kind == "depth" else f"k={q.k} cost<={q.limit}"
                        click.echo(f"{what:<18} {q.status.upper():<7} {q.seconds:8.2f} s", err=True)

                left = None if time_limit is None else max(0.1, time_limit - res.seconds)
                obj = optimise(
                    objective,
                    res,
                    model,
                    time_limit=left,
                    solver=solver,
                    proof_sink=objective_proof_writer(Path(cert_dir)) if cert_dir else None,
                    progress=obj_progress,
                )
                if not quiet:
                    click.echo(objective_summary(obj), err=True)
        if cert_dir:
            path = write_result(Path(cert_dir), res, obj)
            if not quiet:
                click.echo(f"certificate written: {path}", err=True)
        enum = None
        if listing and res.circuit is not None and res.optimal:
            from exactsyn.sat.encode import CostLimit
            from exactsyn.search.all_optima import enumerate_optimal

            limit_cost = None
            if obj is not None and obj.costs is not None and obj.optimal:
                limit_cost = CostLimit(obj.costs, obj.value)
            enum = enumerate_optimal(
                spec, library, len(res.circuit), cost_limit=limit_cost, keep=all_circuits, limit=all_limit
            )
            if not quiet:
                more = "" if enum.complete else " (stopped early: there may be more)"
                click.echo(f"{enum.count} optimal circuit(s) up to reordering adjacent commuting gates{more}", err=True)
        circuit = res.circuit if obj is None else obj.circuit
        if circuit is None:
            if fmt == "json":
                _emit(json.dumps(result_to_dict(res, emb), indent=2), output)
            sys.exit(1)
        if fmt in ("svg", "png"):
            from exactsyn.cli.pictures import emit_picture

            emit_picture(circuit, fmt, output)
            return
        if fmt == "json":
            text = json.dumps(result_to_dict(res, emb, obj, enum, model), indent=2)
        elif fmt == "text":
            text = result_to_text(res, emb, obj, model)
            if enum is not None:
                text += _listing_text(enum)
        elif clifford_t:
            from exactsyn.core.cliffordt import decompose, verify
            from exactsyn.core.cliffordt import to_qasm2 as ct_qasm2
            from exactsyn.core.cliffordt import to_qasm3 as ct_qasm3

            ct = decompose(circuit)
            verify(ct, circuit)  # simulated before it is printed, like every circuit
            text = ct_qasm2(ct) if fmt == "qasm2" else ct_qasm3(ct)
        else:
            from exactsyn.io.qasm import to_qasm2, to_qasm3

            text = to_qasm2(circuit) if fmt == "qasm2" else to_qasm3(circuit)
        _emit(text, output)
    except ExactsynError as e:
        _fail(e.message)


def _listing_text(enum) -> str:  # type: ignore[no-untyped-def]
    from exactsyn.search.all_optima import EQUIVALENCE

    more = "" if enum.complete else " (stopped early: there may be more)"
    out = [f"# {enum.count} optimal circuit(s) of {enum.k} gates{more}; equivalence: {EQUIVALENCE}"]
    for i, circ in enumerate(enum.circuits, 1):
        out.append(f"{i}: " + "  ".join(str(g) for g in circ.gates))
    return "\n".join(out) + "\n"


def _dimacs_writer(directory: Path):  # type: ignore[no-untyped-def]
    from exactsyn.sat.dimacs import dimacs_text

    try:
        directory.mkdir(parents=True, exist_ok=True)
    except OSError as e:
        raise ExactsynError(f"cannot create {directory}: {e.strerror}") from None

    def sink(enc) -> None:  # type: ignore[no-untyped-def]
        comments = [
            f"exactsyn {__version__}: does a circuit of exactly {enc.k} gates of library "
            f"{enc.library.name} meet the spec {enc.spec.name or ''}?",
            f"encoding {enc.options.name} v{enc.options.describe()['version']}, symmetry "
            f"{','.join(enc.options.symmetry) or 'none'}; variables ('g', d, j) = gate j at position d",
        ]
        (directory / f"k{enc.k:02d}.cnf").write_text(dimacs_text(enc.num_vars, enc.clauses, comments))

    return sink


@main.command()
@click.argument("certificate", type=click.Path())
@click.option("-q", "--quiet", is_flag=True, help="Only the verdict line.")
def check(certificate: str, quiet: bool) -> None:
    """Re-check a certificate written by 'synth --certificate DIR'.

    The checker trusts nothing but the claims: it rebuilds the spec and the library,
    re-derives every k-query's CNF with the encoder, checks each LRAT refutation by
    unit propagation over its hints, re-derives the initial lower bound, and
    simulates the circuit on every input.  One line per item: ok / what failed.

    \b
    Example:
      exactsyn synth --cycles "(1 2)" --certificate swap-cert && exactsyn check swap-cert
    Exit status: 0 everything checked, 1 some check failed, 2 unreadable certificate.
    """
    from exactsyn.proof.certificate import check_certificate

    def show(line) -> None:  # type: ignore[no-untyped-def]
        if not quiet:
            click.echo(f"{'ok  ' if line.ok else 'FAIL'}  {line.what:<12} {line.detail}")

    try:
        rep = check_certificate(certificate, progress=show)
    except ExactsynError as e:
        _fail(e.message)
    if rep.ok:
        what = "optimal" if rep.optimal_claim else "not claimed optimal"
        click.echo(f"certificate OK: {rep.gate_count} gates, {what} ({rep.seconds:.2f} s)")
    else:
        click.echo("certificate REJECTED")
        sys.exit(1)


@main.command()
@click.argument("circuit_file", type=click.Path(dir_okay=False))
@click.option("--inputs", metavar="LIST", help="Only these inputs (comma-separated integers); default all.")
@click.option("--perm", "as_perm", is_flag=True, help="Print the function as one permutation line.")
def apply(circuit_file: str, inputs: str | None, as_perm: bool) -> None:
    """Run a saved circuit (JSON or OpenQASM 2/3) on inputs and print its truth table.

    \b
    Example:
      exactsyn synth --cycles "(6 7)" --format qasm2 -o t.qasm && exactsyn apply t.qasm
    Columns show the bits line n-1 ... line 0 (line 0 rightmost) and the integer.
    """
    try:
        circ = load_circuit(circuit_file)
        n, size = circ.lines, 1 << circ.lines
        if inputs is None:
            xs = list(range(size))
        else:
            try:
                xs = [int(t, 0) for t in inputs.replace(" ", "").split(",") if t]
            except ValueError:
                raise ExactsynError(f"--inputs {inputs!r}: expected comma-separated integers") from None
            bad = [x for x in xs if not 0 <= x < size]
            if bad:
                raise ExactsynError(f"input {bad[0]} is outside 0..{size - 1} for {n} lines")
        import numpy as np

        outs = [int(v) for v in circ.apply(np.array(xs, dtype=np.int64))]
        if as_perm:
            click.echo(",".join(map(str, outs)))
            return
        w = max(2, len(str(size - 1)))
        head = "in".rjust(w) + "  " + "bits".ljust(n) + "  ->  " + "bits".ljust(n) + "  " + "out".rjust(w)
        click.echo(head)
        for x, y in zip(xs, outs, strict=True):
            click.echo(f"{x:>{w}}  {x:0{n}b}{' ' * max(0, 4 - n)}  ->  {y:0{n}b}{' ' * max(0, 4 - n)}  {y:>{w}}")
    except ExactsynError as e:
        _fail(e.message)


# Commands that live in their own modules register themselves on the group.
from exactsyn.cli import batch as _cli_batch  # noqa: E402,F401  (batch, table)
from exactsyn.cli import pictures as _cli_pictures  # noqa: E402,F401  (draw, report)

if __name__ == "__main__":
    main()
