"""The ``exactsyn batch`` and ``exactsyn table`` commands: parse, call, print.

Exit status of ``batch``: 0 every item of the batch is done (proven optimal), 1 some
item timed out, failed or is still missing (all summarised), 2 bad input (one line on
stderr), 130 interrupted by Ctrl-C and 143 by SIGTERM (re-run the same command to resume).
"""

from __future__ import annotations

import sys

import click

from exactsyn.batch.lookup import member_result
from exactsyn.batch.plan import plan_files, plan_generated
from exactsyn.batch.run import RunOptions, RunSummary, run_batch
from exactsyn.batch.store import BatchInfo, Store
from exactsyn.batch.table import size_table, to_csv, to_json, to_text, write_chart, write_text_file
from exactsyn.batch.task import Goal, LibraryChoice
from exactsyn.batch.workers import DaskEngine, LocalPool, default_jobs
from exactsyn.cli.batch_display import BatchDisplay
from exactsyn.cli.common import fail
from exactsyn.cli.options import (
    Choice,
    bounds_option,
    cost_option,
    coupling_option,
    encoding_option,
    jobs_option,
    library_option,
    max_controls_option,
    objective_option,
    solver_option,
    store_option,
)
from exactsyn.cli.progress import choose_mode
from exactsyn.core.words import count
from exactsyn.errors import ExactsynError, Interrupted
from exactsyn.io.draw import draw_text
from exactsyn.sat.encode import options_for
from exactsyn.sat.options import SearchOptions
from exactsyn.specification.reversible import parse_perm

DEFAULT_STORE = "exactsyn-results.sqlite"


@click.command()
@click.argument("specs", nargs=-1, type=click.Path())
@store_option(DEFAULT_STORE, "Results store (SQLite); certificates go to <store>.certs/.")
@click.option("--every", "every_lines", type=int, metavar="N", help="Every N-line function (N <= 3).")
@click.option(
    "--classes",
    "class_lines",
    type=int,
    metavar="N",
    help="One representative per class of N-line functions under line relabelling and inversion "
    "(N <= 3); 'table' expands them to class sizes.",
)
@click.option("--random", "random_lines", type=int, metavar="N", help="A seeded random sample of N-line functions.")
@click.option(
    "--sample",
    type=click.IntRange(min=1),
    metavar="K",
    help="How many functions --random draws.  [default: 100]",
)
@click.option("--seed", type=int, default=0, show_default=True, help="Seed of the random sample.")
@library_option
@max_controls_option
@coupling_option
@objective_option
@cost_option
@encoding_option
@solver_option
@bounds_option(" Not part of the item key: finished items are not redone.")
@click.option(
    "--time-limit",
    type=float,
    metavar="SECONDS",
    help="Per item; past it the item is recorded as timed out with its interval [lower, upper].",
)
@jobs_option(None, "Processes this command may use: worker processes, one item each (default: every core).")
@click.option(
    "--engine",
    type=Choice(["local", "dask"]),
    default="local",
    show_default=True,
    help="local = process pool; dask = Dask distributed (a local cluster unless --scheduler).",
)
@click.option(
    "--scheduler",
    metavar="ADDRESS",
    help="Dask scheduler address, e.g. tcp://scheduler-host:8786 (implies --engine dask).",
)
@click.option("--no-certificates", is_flag=True, help="Do not write proof logs (faster).")
@click.option(
    "--verify",
    is_flag=True,
    help="Re-check every certificate (as 'exactsyn check' does): right after it is written, and for "
    "finished items not yet re-checked.",
)
@click.option(
    "--retry",
    multiple=True,
    type=Choice(["timeout", "failed"]),
    help="Solve items recorded with this status again (repeatable); finished work is skipped otherwise.",
)
@click.option("-q", "--quiet", is_flag=True, help="No progress bar.")
def batch(
    specs: tuple[str, ...],
    store_path: str,
    every_lines: int | None,
    class_lines: int | None,
    random_lines: int | None,
    sample: int | None,
    seed: int,
    library_name: str,
    max_controls: int | None,
    coupling: str,
    objective: str,
    cost_name: str,
    encoding: str,
    solver: str,
    bounds: str,
    time_limit: float | None,
    jobs: int | None,
    engine: str,
    scheduler: str | None,
    no_certificates: bool,
    verify: bool,
    retry: tuple[str, ...],
    quiet: bool,
) -> None:
    """Solve many functions into a results store; re-running the same command resumes.

    The functions are spec files (TOML; a directory is searched for *.toml) or a
    generated set: --every N, --classes N or --random N --sample K --seed S.  Every
    completed item is committed at once, so a killed run loses at most the items in
    flight; an item that fails or times out is recorded with its reason and the batch
    goes on.

    \b
    Examples:
      exactsyn batch --classes 3 --library nct --store nct3.sqlite
      exactsyn table --store nct3.sqlite --chart nct3
      exactsyn batch specs/ --time-limit 60 --jobs 8
      exactsyn batch --random 4 --sample 500 --seed 7 --library mct --scheduler tcp://head:8786
      exactsyn batch --classes 3 --objective gates-then-cost --cost t-count --store t3.sqlite

    Exit status: 0 every item done, 1 some timed out / failed (summarised), 2 bad input.
    """

    try:
        if sample is not None and random_lines is None:
            raise ExactsynError("--sample K is the size of a --random sample; give --random N too")
        sets = [
            (k, n)
            for k, n in (("all", every_lines), ("classes", class_lines), ("random", random_lines))
            if n is not None
        ]
        if len(sets) + bool(specs) != 1:
            raise ExactsynError(
                "give the functions exactly once: spec files/directories, --every, --classes or --random"
            )
        if scheduler is not None and not scheduler.strip():
            raise ExactsynError("--scheduler needs an address such as tcp://scheduler-host:8786")
        choice = LibraryChoice(library_name.strip().lower(), max_controls, coupling.strip().lower())
        if sets:
            choice.build(max(1, sets[0][1]))  # validates the preset, the cap and the coupling
        else:
            LibraryChoice(choice.preset, max_controls).build(1)  # the coupling is checked per file
        if verify and no_certificates:
            raise ExactsynError("--verify checks certificates; it cannot be combined with --no-certificates")
        search = SearchOptions(solver=solver, encoding=options_for(encoding), bounds=bounds, time_limit=time_limit)
        options = RunOptions(search, certificates=not no_certificates, verify=verify, retry=frozenset(retry))
        goal = Goal(objective, cost_name)
        goal.label()  # an unreadable cost table fails now
        if specs:
            plan = plan_files(specs, choice, options.encoding, goal)
        else:
            kind, lines = sets[0]
            plan = plan_generated(kind, lines, choice, options.encoding, count=sample or 100, seed=seed, goal=goal)
        n_jobs = jobs or default_jobs()
        eng = DaskEngine(scheduler, n_jobs) if (scheduler or engine == "dask") else LocalPool(n_jobs, time_limit)
        for note in plan.notes:
            click.echo(f"note: {note}", err=True)
        with Store(store_path) as store:
            try:
                with BatchDisplay(choose_mode(quiet, forced=True)) as display:
                    summary = run_batch(store, plan, options, eng, None if quiet else display)
            except KeyboardInterrupt:  # Ctrl-C or SIGTERM (exactsyn.cli.stopping): workers are stopped
                raise Interrupted(f"{_kept(store, plan.batch_id)}; re-run the same command to resume") from None
            click.echo(_summary_text(summary, store))
    except ExactsynError as e:
        fail(e.message)
    sys.exit(0 if summary.all_done else 1)


def _kept(store: Store, batch_id: str) -> str:
    """What an interrupted batch leaves: its finished items, all committed."""
    try:
        done = store.counts(batch_id).of("done")
    except Exception:  # the store is busy or gone: say only where the results are
        return f"finished items are kept in {store.path}"
    return f"{count(done, 'item')} of this batch done and kept in {store.path}"


def _summary_text(s: RunSummary, store: Store) -> str:
    c = s.counts
    total_weight = sum(c.weight.values())
    ran = sum(s.ran.values())
    per_item = f"; {s.item_seconds / ran:.3f} s per item" if ran else ""
    lines = [
        f"batch {s.batch_id}: {s.label}",
        f"  {count(s.planned, 'item')} standing for {count(total_weight, 'function')}; "
        f"{s.skipped} already finished (skipped)"
        + (f"; {count(s.unreadable, 'unreadable spec file')}" if s.unreadable else ""),
        f"  this run: {count(ran, 'item')} in {s.wall_seconds:.1f} s wall on {s.engine}{per_item}: "
        + ", ".join(f"{k} {s.ran.get(k, 0)}" for k in ("done", "timeout", "failed"))
        + (f" ({s.checked} of them certificate re-checks only)" if s.checked else ""),
        "  store: "
        + ", ".join(f"{k} {c.of(k)}" for k in ("done", "timeout", "failed"))
        + (f", missing {c.of('missing')}" if c.of("missing") else "")
        + f" of {count(sum(c.items.values()), 'item')}; {c.certificates} with a certificate",
        f"  results in {store.path}" + (f", certificates in {store.cert_root}/" if c.certificates else ""),
    ]
    if s.failures:
        lines.append(f"  not done ({len(s.failures)}):")
        for status, source, reason in s.failures[:20]:
            lines.append(f"    {status:<8} {source}: {reason}")
        if len(s.failures) > 20:
            lines.append(f"    ... and {len(s.failures) - 20} more")
    return "\n".join(lines)


@click.command()
@store_option(DEFAULT_STORE)
@click.option("--batch", "batch_id", metavar="ID", help="Batch id (a prefix will do); default the last one run.")
@click.option("--list", "list_batches", is_flag=True, help="List the batches in the store and stop.")
@click.option("--csv", "csv_path", type=click.Path(dir_okay=False), help="Write the distribution as CSV here.")
@click.option("--json", "json_path", type=click.Path(dir_okay=False), help="Write the table as JSON here.")
@click.option("--chart", "chart_prefix", metavar="PREFIX", help="Write a bar chart to PREFIX.png and PREFIX.svg.")
@click.option(
    "--lookup",
    metavar="LIST",
    help="Print the stored minimal circuit of one function of the batch, e.g. 1,0,3,2,5,7,4,6 "
    "(derived from its class representative where the batch holds classes).",
)
def table(
    store_path: str,
    batch_id: str | None,
    list_batches: bool,
    csv_path: str | None,
    json_path: str | None,
    chart_prefix: str | None,
    lookup: str | None,
) -> None:
    """Print the distribution of optimal circuit sizes of a batch, and its average.

    Class representatives count with their class sizes, so the table is the one of
    the whole set.

    \b
    Example:
      exactsyn table --store nct3.sqlite --csv nct3.csv --json nct3.json --chart nct3
    """

    try:
        with Store(store_path, readonly=True) as store:
            if list_batches:
                for b in store.batches():
                    label = b.description.get("label", "")
                    items, weight = count(b.items, "item"), count(b.weight, "function")
                    click.echo(f"{b.id}  {b.updated}  {items:>13}  {weight:>18}  {label}")
                return
            if lookup is not None:
                _print_lookup(store, store.batch(batch_id), lookup)
                return
            t = size_table(store, store.batch(batch_id))
        click.echo(to_text(t), nl=False)
        if csv_path:
            write_text_file(csv_path, to_csv(t))
        if json_path:
            write_text_file(json_path, to_json(t))
        if chart_prefix:
            for p in write_chart(t, chart_prefix):
                click.echo(f"chart written: {p}", err=True)
    except ExactsynError as e:
        fail(e.message)


def _print_lookup(store: Store, batch: BatchInfo, text: str) -> None:

    m = member_result(store, batch, parse_perm(text).outputs)
    head = f"function {','.join(map(str, m.permutation))}: "
    if m.status == "done":
        head += f"{count(m.optimum or 0, 'gate')}, proven optimal"
    else:
        got = "no circuit" if m.circuit is None else count(len(m.circuit), "gate") + ", not proven optimal"
        head += f"{m.status} ({got})"
    click.echo(head)
    if m.representative != m.permutation or m.transform.inverted:
        inv = ", inverted" if m.transform.inverted else ""
        click.echo(
            f"from class representative {','.join(map(str, m.representative))} by relabelling lines "
            f"l -> sigma[l], sigma = {list(m.transform.sigma)}{inv}"
        )
    if m.circuit is not None:
        if len(m.circuit):
            click.echo(draw_text(m.circuit))
        click.echo("gates (application order): " + ("  ".join(str(g) for g in m.circuit.gates) or "none"))
    if m.certificate is not None:
        what = "" if m.representative == m.permutation and not m.transform.inverted else " (the representative's)"
        click.echo(f"certificate{what}: {m.certificate}")
