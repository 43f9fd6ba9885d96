"""The ``exactsyn tables`` commands: build, inspect, count and verify the 4-line class tables.

Only parsing and printing; the work is :mod:`exactsyn.tables` (build, info, verify).
"""

from __future__ import annotations

import click

from exactsyn.cli.common import fail
from exactsyn.cli.options import progress_option
from exactsyn.cli.progress import Display, choose_mode, step_bar
from exactsyn.core.words import count
from exactsyn.errors import ExactsynError, did_you_mean

LIBRARIES = ("nct", "mct", "mixed")
#: What a bare ``exactsyn tables build`` builds: the default library of ``synth`` and ``mct``.
DEFAULT_BUILD = ("nct", "mct")


def _libraries(names: tuple[str, ...], default: tuple[str, ...]) -> tuple[str, ...]:
    out: list[str] = []
    for raw in names or default:
        for name in raw.split(","):
            name = name.strip().lower()
            if name == "all":
                out.extend(LIBRARIES)
            elif name in LIBRARIES:
                out.append(name)
            else:
                fail(f"no 4-line class table for library {name!r}{did_you_mean(name, LIBRARIES)}; "
                     f"choose from: {', '.join(LIBRARIES)}, all")
    return tuple(dict.fromkeys(out))


def _size(n: int) -> str:
    for unit in ("B", "KiB", "MiB", "GiB"):
        if n < 1024 or unit == "GiB":
            return f"{n:.0f} {unit}" if unit == "B" else f"{n:.2f} {unit}"
        n /= 1024  # type: ignore[assignment]
    return f"{n} B"  # pragma: no cover


@click.group()
def tables() -> None:
    """The 4-line class tables: every 4-line permutation proven optimal in seconds.

    One table per library (nct, mct, mixed) holds one representative per class of
    functions (line relabellings and inversion) for every gate count up to its depth;
    `synth` answers full 4-line permutations from it by lookup and meet in the middle
    once it is cached.  Tables live in $EXACTSYN_CACHE, else $XDG_CACHE_HOME/exactsyn,
    else ~/.cache/exactsyn; nothing is downloaded.

    \b
    Examples:
      exactsyn tables build                  # nct and mct, a few minutes, about 2.7 GB
      exactsyn tables build --library mixed  # depth 6 (functions up to 12 gates)
      exactsyn tables info
      exactsyn tables counts --library mct
      exactsyn tables verify --library nct   # independent re-check (tens of minutes)
    """


@tables.command()
@click.option("--library", "libraries", multiple=True, metavar="NAME",
              help="nct, mct, mixed or all (repeatable or comma-separated; default: nct and mct).")
@click.option("--depth", type=click.IntRange(0, 9), default=None,
              help="Levels to store (default: mct 8, nct 8, mixed 6). Memory and disk grow about 12x per level.")
@click.option("--rebuild", is_flag=True, help="Build again even when a table is cached (e.g. after info --hashes "
              "found it damaged).")
@progress_option
@click.option("-q", "--quiet", is_flag=True, help="No progress bar.")
def build(libraries: tuple[str, ...], depth: int | None, rebuild: bool, show_progress: bool, quiet: bool) -> None:
    """Build the class tables into the cache; returns at once when they are there.

    A table already cached at the depth asked (or deeper) is only checked for its files
    and their sizes (`exactsyn tables info --hashes` re-hashes them; --rebuild builds
    again).  A build writes to a temporary directory and moves it into
    place when complete, so an interrupted build leaves nothing half-made.
    """
    from exactsyn import tables as t

    names = _libraries(libraries, DEFAULT_BUILD)
    try:
        for name in names:
            with Display(choose_mode(quiet, show_progress)) as display:
                got = t.build(name, depth=depth, progress=step_bar(display, name), force=rebuild)
            click.echo(
                f"{name}: depth {got.depth}, {count(sum(got.classes), 'class')}, {_size(got.bytes)} in {got.directory}"
                f" (content hash {str(got.content_hash)[:16]})"
            )
    except ExactsynError as e:
        fail(e.message)


@tables.command()
@click.option("--library", "libraries", multiple=True, metavar="NAME", help="nct, mct, mixed or all (default: all).")
@click.option("--hashes", is_flag=True, help="Re-hash every file against the manifest (reads the whole table).")
def info(libraries: tuple[str, ...], hashes: bool) -> None:
    """What is cached, where, how large, and the content hashes."""
    from exactsyn import tables as t

    names = _libraries(libraries, LIBRARIES)
    click.echo(f"cache: {t.resolve_cache_dir()}  (set EXACTSYN_CACHE to move it)")
    for name in names:
        i = t.info(name, hashes=hashes)[0]
        if i.manifest is None:
            click.echo(f"{name:<6} not built   ({i.directory}; build it with `exactsyn tables build --library {name}`)")
            continue
        state = "ok" if i.present else f"DAMAGED ({i.problem}; `exactsyn tables build --rebuild --library {name}`)"
        reach = 2 * int(i.depth or 0)
        click.echo(
            f"{name:<6} {state}  depth {i.depth} (exact answers up to {reach} gates), "
            f"{count(sum(i.classes), 'class')}, {count(sum(i.functions), 'function')}, {_size(i.bytes)}"
        )
        click.echo(f"       {i.directory}")
        click.echo(f"       content hash {i.content_hash}" + ("  (files re-hashed)" if hashes and i.present else ""))


@tables.command()
@click.option("--library", "libraries", multiple=True, metavar="NAME",
              help="nct, mct, mixed or all (default: all cached).")
def counts(libraries: tuple[str, ...]) -> None:
    """Exact number of 4-line functions needing exactly k gates, for every k a table reaches.

    Counted from the class sizes stored with the table (each class counts its members:
    48 divided by the number of relabellings and inversion that fix it).
    """
    from exactsyn import tables as t

    names = _libraries(libraries, LIBRARIES)
    shown = 0
    for name in names:
        i = t.info(name)[0]
        if i.manifest is None:
            if libraries:
                fail(f"no {name} table cached; build it with `exactsyn tables build --library {name}`")
            continue
        shown += 1
        click.echo(f"{name} (4 lines, depth {i.depth})")
        click.echo(f"  {'k':>3} {'classes':>13} {'functions':>16} {'functions <= k':>16}")
        total = 0
        for k, (c, f) in enumerate(zip(i.classes, i.functions, strict=True)):
            total += f
            click.echo(f"  {k:>3} {c:>13,} {f:>16,} {total:>16,}")
    if not shown:
        fail("no class table cached; build them with `exactsyn tables build`")


@tables.command("verify")
@click.option("--library", "libraries", multiple=True, metavar="NAME",
              help="nct, mct, mixed or all (default: all cached).")
@click.option("-j", "--jobs", type=click.IntRange(1, 64), default=2, show_default=True, help="Worker processes.")
@progress_option
@click.option("-q", "--quiet", is_flag=True, help="No progress bar.")
def verify_tables(libraries: tuple[str, ...], jobs: int, show_progress: bool, quiet: bool) -> None:
    """Re-check cached tables from their files alone, with a separate numpy implementation.

    Proves every level exact (closure under every gate, descent, canonical keys, class
    sizes, SHA-256 of every file) and leaves a stamp naming the content hash, which
    `exactsyn check` reports.  mct at depth 8 takes about 15 CPU-minutes.
    """
    from exactsyn import tables as t

    names = _libraries(libraries, LIBRARIES)
    bad = 0
    for name in names:
        if t.info(name)[0].manifest is None:
            if libraries:
                fail(f"no {name} table cached; build it with `exactsyn tables build --library {name}`")
            continue
        try:
            with Display(choose_mode(quiet, show_progress)) as display:
                res = t.verify_table(name, workers=jobs, progress=step_bar(display, name))
        except ExactsynError as e:
            fail(e.message)
        if res.ok:
            click.echo(f"{name}: OK, depth {res.depth}, {count(sum(res.functions), 'function')}; content hash "
                       f"{res.content_hash[:16]} stamped as verified")
        else:
            bad += 1
            click.echo(f"{name}: FAILED: {'; '.join(res.problems[:5])}")
    raise SystemExit(1 if bad else 0)
