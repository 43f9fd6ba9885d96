"""The ``exactsyn tables`` commands: build, inspect, count and verify the class tables (``--lines``, default 4).

Only parsing and printing; the work is :mod:`exactsyn.tables` (build, info, verify).
"""

from __future__ import annotations

import click

from exactsyn.cli.common import fail
from exactsyn.cli.options import progress_option
from exactsyn.cli.progress import Display, progress_mode, step_bar
from exactsyn.core.words import count
from exactsyn.errors import ExactsynError, did_you_mean

LIBRARIES = ("nct", "mct", "mixed")
#: Layer tables (steps are layers of gates on disjoint lines): the minimum depth of every function.
LAYER_TABLES = ("nct-layers", "mct-layers", "mixed-layers")
#: What a bare ``exactsyn tables build`` builds: the default library of ``synth`` and ``mct``.
DEFAULT_BUILD = ("nct", "mct")


def _libraries(names: tuple[str, ...], default: tuple[str, ...]) -> tuple[str, ...]:
    out: list[str] = []
    for raw in names or default:
        for name in raw.split(","):
            name = name.strip().lower()
            if name == "all":
                out.extend(LIBRARIES)
            elif name in LIBRARIES + LAYER_TABLES:
                out.append(name)
            else:
                known = LIBRARIES + LAYER_TABLES
                fail(f"no class table for library {name!r}{did_you_mean(name, known)}; "
                     f"choose from: {', '.join(known)}, all")
    return tuple(dict.fromkeys(out))


def _size(n: int) -> str:
    for unit in ("B", "KiB", "MiB", "GiB"):
        if n < 1024 or unit == "GiB":
            return f"{n:.0f} {unit}" if unit == "B" else f"{n:.2f} {unit}"
        n /= 1024  # type: ignore[assignment]
    return f"{n} B"  # pragma: no cover


#: ``--lines`` of every tables command.
LINES_OPTION = click.option(
    "--lines",
    type=click.IntRange(1, None),
    default=4,
    show_default=True,
    help="Line count of the tables (the engine has 2, 3, 4 and 5).",
)


def _build_command(name: str, lines: int, rebuild: bool = False) -> str:
    """The command that builds the ``lines``-line table of ``name``."""
    return f"exactsyn tables build{' --rebuild' if rebuild else ''} --library {name}" + (
        "" if lines == 4 else f" --lines {lines}"
    )


def _missing(name: str, lines: int) -> str:
    return f"no {lines}-line {name} table cached; build it with `{_build_command(name, lines)}`"


def _check_lines(lines: int) -> None:
    from exactsyn.tables.keys import check_lines

    try:
        check_lines(lines)
    except ExactsynError as e:
        fail(e.message)


@click.group()
def tables() -> None:
    """The class tables: every 4-line permutation proven optimal in seconds.

    One table per library (nct, mct, mixed) and line count holds one representative per
    class of functions (line relabellings and inversion) for every gate count up to its
    depth; `synth` answers full permutations of that many lines from it by lookup and meet
    in the middle once it is cached.  The 4-line tables are the default (--lines 4);
    3-line tables hold every function and build in seconds; 5-line tables hold every
    function of up to 6 gates (mct: 4 GB, minutes) and answer up to 12 gates.  Tables live in
    $EXACTSYN_CACHE, else $XDG_CACHE_HOME/exactsyn, else ~/.cache/exactsyn; nothing is
    downloaded.

    \b
    Examples:
      exactsyn tables build                  # nct and mct, a few minutes, about 2.7 GB
      exactsyn tables build --library mixed  # depth 6 (functions up to 12 gates)
      exactsyn tables build --lines 3        # every 3-line function, seconds
      exactsyn tables build --lines 5 --library mct   # depth 6, about 5 minutes, 3.9 GiB
      exactsyn tables info
      exactsyn tables counts --library mct
      exactsyn tables verify --library nct   # independent re-check (tens of minutes)
    """


@tables.command()
@click.option("--library", "libraries", multiple=True, metavar="NAME",
              help="nct, mct, mixed or all (repeatable or comma-separated; default: nct and mct).")
@click.option("--depth", type=click.IntRange(0, None), default=None,
              help="Levels to store (4 lines: mct 8, nct 8, mixed 6, at most 9; memory and disk grow about 12x "
              "per level. 5 lines: mct 6, nct 6, mixed 4, at most 6; about 50x per level. Other line counts: "
              "until a level comes out empty, i.e. every function).")
@click.option("--rebuild", is_flag=True, help="Build again even when a table is cached (e.g. after info --hashes "
              "found it damaged).")
@LINES_OPTION
@progress_option
@click.option("-q", "--quiet", is_flag=True, help="No progress bar.")
def build(libraries: tuple[str, ...], depth: int | None, rebuild: bool, lines: int, show_progress: bool,
          quiet: bool) -> None:
    """Build the class tables into the cache; returns at once when they are there.

    A table already cached at the depth asked (or deeper) is only checked for its files
    and their sizes (`exactsyn tables info --hashes` re-hashes them; --rebuild builds
    again).  A build writes to a temporary directory and moves it into
    place when complete, so an interrupted build leaves nothing half-made.
    """
    from exactsyn import tables as t

    _check_lines(lines)
    names = _libraries(libraries, DEFAULT_BUILD)
    try:
        for name in names:
            with Display(progress_mode(quiet, show_progress)) as display:
                got = t.build(name, depth=depth, progress=step_bar(display, name), force=rebuild, lines=lines)
            click.echo(
                f"{name}: {lines} lines, depth {got.depth}, {count(sum(got.classes), 'class')}, {_size(got.bytes)} "
                f"in {got.directory} (content hash {str(got.content_hash)[:16]})"
            )
    except ExactsynError as e:
        fail(e.message)


@tables.command()
@click.option("--library", "libraries", multiple=True, metavar="NAME", help="nct, mct, mixed or all (default: all).")
@click.option("--hashes", is_flag=True, help="Re-hash every file against the manifest (reads the whole table).")
@LINES_OPTION
def info(libraries: tuple[str, ...], hashes: bool, lines: int) -> None:
    """What is cached, where, how large, and the content hashes."""
    from exactsyn import tables as t

    _check_lines(lines)
    layered = tuple(i.library for i in t.info(lines=lines) if i.library in LAYER_TABLES)
    names = _libraries(libraries, LIBRARIES + layered)
    click.echo(f"cache: {t.resolve_cache_dir()}  (set EXACTSYN_CACHE to move it); {lines}-line tables")
    for name in names:
        i = t.info(name, hashes=hashes, lines=lines)[0]
        if i.manifest is None:
            click.echo(f"{name:<6} not built   ({i.directory}; build it with `{_build_command(name, lines)}`)")
            continue
        state = "ok" if i.present else f"DAMAGED ({i.problem}; `{_build_command(name, lines, rebuild=True)}`)"
        unit = "layers" if name in LAYER_TABLES else "gates"
        reach = f"exact answers up to {2 * int(i.depth or 0)} {unit}"
        reach = "every function" if i.manifest.get("complete") else reach
        click.echo(
            f"{name:<6} {state}  depth {i.depth} ({reach}), "
            f"{count(sum(i.classes), 'class')}, {count(sum(i.functions), 'function')}, {_size(i.bytes)}"
        )
        click.echo(f"       {i.directory}")
        click.echo(f"       content hash {i.content_hash}" + ("  (files re-hashed)" if hashes and i.present else ""))
        built = i.manifest.get("built") or {}
        if built.get("process_peak_rss_bytes"):
            click.echo(f"       last build: {float(built.get('seconds', 0)):.0f} s, "
                       f"peak memory {_size(int(built['process_peak_rss_bytes']))}")  # fmt: skip


@tables.command()
@click.option("--library", "libraries", multiple=True, metavar="NAME",
              help="nct, mct, mixed or all (default: all cached).")
@LINES_OPTION
def counts(libraries: tuple[str, ...], lines: int) -> None:
    """Exact number of functions needing exactly k gates, for every k a table reaches.

    Counted from the class sizes stored with the table (each class counts its members:
    2·n! (48 on 4 lines) divided by the number of relabellings and inversion that fix it).
    """
    from exactsyn import tables as t

    _check_lines(lines)
    names = _libraries(libraries, LIBRARIES)
    shown = 0
    for name in names:
        i = t.info(name, lines=lines)[0]
        if i.manifest is None:
            if libraries:
                fail(_missing(name, lines))
            continue
        shown += 1
        click.echo(f"{name} ({lines} lines, depth {i.depth})")
        click.echo(f"  {'k':>3} {'classes':>13} {'functions':>16} {'functions <= k':>16}")
        total = 0
        for k, (c, f) in enumerate(zip(i.classes, i.functions, strict=True)):
            total += f
            click.echo(f"  {k:>3} {c:>13,} {f:>16,} {total:>16,}")
    if not shown:
        fail(f"no {lines}-line class table cached; build them with `exactsyn tables build"
             + ("`" if lines == 4 else f" --lines {lines}`"))


@tables.command("verify")
@click.option("--library", "libraries", multiple=True, metavar="NAME",
              help="nct, mct, mixed or all (default: all cached).")
@click.option("-j", "--jobs", type=click.IntRange(1, 64), default=2, show_default=True, help="Worker processes.")
@LINES_OPTION
@progress_option
@click.option("-q", "--quiet", is_flag=True, help="No progress bar.")
def verify_tables(libraries: tuple[str, ...], jobs: int, lines: int, show_progress: bool, quiet: bool) -> None:
    """Re-check cached tables from their files alone, with a separate numpy implementation.

    Proves every level exact (closure under every gate, descent, canonical keys, class
    sizes, SHA-256 of every file) and leaves a stamp naming the content hash, which
    `exactsyn check` reports.  mct at depth 8 takes about 15 CPU-minutes.
    """
    from exactsyn import tables as t

    _check_lines(lines)
    names = _libraries(libraries, LIBRARIES)
    bad = 0
    for name in names:
        if t.info(name, lines=lines)[0].manifest is None:
            if libraries:
                fail(_missing(name, lines))
            continue
        try:
            with Display(progress_mode(quiet, show_progress)) as display:
                res = t.verify_table(name, workers=jobs, progress=step_bar(display, name), lines=lines)

        except ExactsynError as e:
            fail(e.message)
        if res.ok:
            click.echo(f"{name}: OK, depth {res.depth}, {count(sum(res.functions), 'function')}; content hash "
                       f"{res.content_hash[:16]} stamped as verified")
        else:
            bad += 1
            click.echo(f"{name}: FAILED: {'; '.join(res.problems[:5])}")
    raise SystemExit(1 if bad else 0)
