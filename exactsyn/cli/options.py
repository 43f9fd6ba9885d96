"""Click options shared by several commands (one definition, one help text, one meaning).

The scheme every command follows (README "Options"):

* ``-o/--output FILE`` is where the result goes and its suffix picks the format;
  ``--format`` wins over the suffix; an unknown suffix is refused.
* ``-j/--jobs N`` is how many processes the command may use.
* ``--store FILE`` is the results store of ``batch``, ``table`` and ``report``.
* ``--time-limit SECONDS`` bounds the search of one function (all of ``synth``, one item
  of ``batch``).
* ``-q/--quiet``: nothing on stderr but errors; ``--progress``: live progress even when
  stderr is not a terminal.

Spellings of the previous release are refused (:data:`REMOVED_SPELLINGS`): the one-line
error names what replaced them.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

import click
from click.core import ParameterSource

from exactsyn.api.synthesis import Request
from exactsyn.core.costs import COST_MODELS, OBJECTIVES
from exactsyn.core.library import KINDS, PRESETS
from exactsyn.errors import ExactsynError, did_you_mean
from exactsyn.io import formats as _formats  # registers the built-in formats
from exactsyn.sat.conquer import SPLIT_MODES
from exactsyn.sat.cube_split import DEFAULT_DEPTH, SCHEMES
from exactsyn.sat.encode import ENCODINGS
from exactsyn.sat.options import BOUNDS, search_options
from exactsyn.sat.solver import BOUNDED

F = Callable[..., Any]


class Choice(click.Choice):  # type: ignore[type-arg]
    """:class:`click.Choice` whose error names the closest choice ("did you mean")."""

    def convert(self, value: Any, param: click.Parameter | None, ctx: click.Context | None) -> Any:
        try:
            return super().convert(value, param, ctx)
        except click.BadParameter:
            names = [str(c) for c in self.choices]
            self.fail(f"{value!r} is not one of {', '.join(names)}{did_you_mean(value, names)}", param, ctx)


class FormatChoice(Choice):
    """``--format``: the registered formats (of one kind, or with a reader), looked up when asked,
    so a format registered after this option was made is a choice too."""

    def __init__(self, kind: str | None = None, *, readable: bool = False) -> None:
        self.kind, self.readable = kind, readable
        super().__init__([])

    @property  # type: ignore[override]
    def choices(self) -> tuple[str, ...]:
        return _formats.registry.names(self.kind, readable=self.readable)

    @choices.setter
    def choices(self, value: object) -> None:
        pass  # click.Choice.__init__ stores its list; the registry is the list here


def with_formats(command: click.Command) -> click.Command:
    """Put the registry's readable formats into a command's help where it says ``{readable}``."""
    if command.help:
        command.help = command.help.replace("{readable}", _formats.registry.describe(readable=True))
    return command


#: Spellings of the previous release, by command: the old option (or ``ARGUMENT`` for a
#: positional argument that became an option) and what to write now.  Click refuses them
#: as unknown; :func:`exactsyn.cli.main.click_message` adds the new spelling.
REMOVED_SPELLINGS: dict[str, dict[str, str]] = {
    "synth": {"--all": "--optima all", "--count": "--optima count", "--all-limit": "--optima-limit N"},
    "batch": {"--all": "--every N", "--count": "--sample K"},
    "report": {"ARGUMENT": "--store FILE"},
}


def jobs_option(default: int | None, help_text: str) -> Callable[[F], F]:
    """``-j/--jobs N``: how many processes the command may use."""
    shown = "" if default is None else f" [default: {default}]"
    return click.option(
        "-j", "--jobs", type=click.IntRange(min=1), default=default, metavar="N", help=help_text + shown
    )


def store_option(default: str, help_text: str = "Results store (SQLite).") -> Callable[[F], F]:
    """``--store FILE``: the results store of batch, table and report."""
    return click.option(
        "--store",
        "store_path",
        default=default,
        show_default=True,
        type=click.Path(dir_okay=False),
        metavar="FILE",
        help=help_text,
    )


def choice(values: Sequence[str]) -> Choice:
    return Choice(list(values))


progress_option = click.option(
    "--progress",
    "show_progress",
    is_flag=True,
    help="Show live progress on stderr even when it is not a terminal (it is shown on a terminal unless -q).",
)

library_option = click.option(
    "--library",
    "library_name",
    default="nct",
    show_default=True,
    metavar="NAME|KINDS",
    help="Gate library, a preset: "
    + "; ".join(f"{k} = {v}" for k, v in PRESETS.items())
    + ". Or a comma-separated list of gate kinds, e.g. 'not,cnot,toffoli,peres': "
    + "; ".join(f"{k} = {v}" for k, v in KINDS.items())
    + ".",
)
max_controls_option = click.option(
    "--max-controls", type=int, help="Cap the number of controls of any gate (a Peres gate counts as 2)."
)
coupling_option = click.option(
    "--coupling",
    default="",
    metavar="PAIRS",
    help="Lines that may interact, e.g. '0-1-2-3' (a chain), '0-1,1-2,0-3', or chain / ring / star. "
    "A one-line gate is always allowed, a two-line gate only on a coupled pair, a gate on more "
    "lines only if its lines form a connected set of the coupling graph. Default: no restriction.",
)
encoding_option = click.option(
    "--encoding",
    type=Choice(list(ENCODINGS)),
    default="onehot",
    show_default=True,
    help="CNF encoding; 'textbook' is the baseline without symmetry breaking.",
)
solver_option = click.option(
    "--solver",
    type=Choice(list(BOUNDED)),
    default="cadical195",
    show_default=True,
    help="SAT solver for the k-queries and the listing of optima (with certificates, CaDiCaL 1.9.5 always "
    "for the k-queries, for its LRAT output).",
)


def bounds_option(extra: str = "") -> Callable[[F], F]:
    return click.option(
        "--bounds",
        type=Choice(list(BOUNDS)),
        default="table",
        show_default=True,
        help="'table': skip hopeless k with breadth-first distance tables and a meet-in-the-middle test "
        "(up to 4 lines; exact up to 11 gates on 4 lines); 'cheap': SAT (and LRAT) for every k." + extra,
    )
objective_option = click.option(
    "--objective",
    type=Choice(list(OBJECTIVES)),
    default="gates",
    show_default=True,
    help="What is minimised and proven: gates; gates-then-cost = fewest gates, then the least --cost among "
    "them; cost = least --cost over any number of gates (slow beyond small 3-line functions); depth = fewest "
    "layers, gates on disjoint lines sharing a layer.",
)
cost_option = click.option(
    "--cost",
    "cost_name",
    default="ncv",
    show_default=True,
    metavar="MODEL|FILE",
    help="Cost model: "
    + "; ".join(f"{name} = {model.description}" for name, model in COST_MODELS.items())
    + "; or a TOML/JSON table of gate names to integer costs (NOT, CNOT, Toffoli, C3X, SWAP, Fredkin, Peres, ..., "
    "negative_control).",
)

split_option = click.option(
    "--split",
    type=Choice(list(SPLIT_MODES)),
    default="auto",
    show_default=True,
    help="What a gate query still open after a second does: "
    + "; ".join(f"{k} = {v}" for k, v in SPLIT_MODES.items())
    + ". Cubes: each is the query plus the target lines of its first and last gates; the first "
    "satisfiable cube answers, every unsatisfiable one gets its own LRAT proof.",
)
scheduler_option = click.option(
    "--scheduler",
    metavar="ADDRESS",
    help="Solve cubes on a Dask cluster: a scheduler address such as tcp://10.0.0.5:8786, or 'local' for a "
    "local cluster of --jobs worker processes. Workers need exactsyn installed, nothing else.",
)
cube_depth_option = click.option(
    "--cube-depth",
    type=click.IntRange(1, 6),
    default=DEFAULT_DEPTH,
    show_default=True,
    help="Gate positions a split query branches on (first, last, second, ...): lines^depth cubes "
    "(25 for 5 lines and depth 2). More cubes feed more workers.",
)
split_after_option = click.option(
    "--split-after",
    type=click.FloatRange(0),
    default=1.0,
    show_default=True,
    metavar="SECONDS",
    help="Split a gate query still open after this long on one process (0: split every query at once).",
)
cube_scheme_option = click.option(
    "--cube-scheme",
    type=Choice(list(SCHEMES)),
    default="targets",
    show_default=True,
    help="How a position branches: " + "; ".join(f"{k} = {v}" for k, v in SCHEMES.items()) + ".",
)


def given(name: str) -> bool:
    """Was the option of parameter ``name`` given on the command line (or in the environment), not defaulted?"""
    ctx = click.get_current_context(silent=True)
    source = ctx.get_parameter_source(name) if ctx is not None else None
    return source in (ParameterSource.COMMANDLINE, ParameterSource.ENVIRONMENT)


def started_seconds_ago() -> float:
    """Seconds since this process started (Linux: ``/proc/self/stat`` against
    ``/proc/uptime``, clock-tick resolution); 0.0 where that cannot be read."""
    try:
        ticks = int(Path("/proc/self/stat").read_text().rsplit(")", 1)[1].split()[19])
        uptime = float(Path("/proc/uptime").read_text().split()[0])
        return max(0.0, uptime - ticks / os.sysconf("SC_CLK_TCK"))
    except (OSError, ValueError, IndexError):
        return 0.0


def command_time_limit(limit: float | None) -> float | None:
    """The search's share of a command's ``--time-limit``: what is left after the start-up
    (interpreter, imports: about a second), so that the whole command keeps the limit; at
    least a tenth of a second (or the limit itself when smaller)."""
    if limit is None:
        return None
    return max(min(limit, 0.1), limit - started_seconds_ago())


def synthesis_request(asked: dict[str, Any]) -> Request:
    """The :class:`~exactsyn.api.synthesis.Request` of ``synth`` from its library, search, proof
    and objective options (the click parameters by name), built once and checked."""
    if asked["optima_limit"] is not None and asked["optima"] is None:
        raise ExactsynError("--optima-limit needs --optima all or --optima count")
    cost_based = asked["objective"] in ("cost", "gates-then-cost")
    if given("cost_name") and asked["cost_name"] in COST_MODELS and not cost_based:
        raise ExactsynError(
            f"--cost {asked['cost_name']} changes nothing without --objective cost or gates-then-cost "
            "(every built-in cost is printed with the circuit)"
        )
    search = search_options(
        solver=asked["solver"],
        encoding=asked["encoding"],
        bounds=asked["bounds"],
        time_limit=command_time_limit(asked["time_limit"]),
        max_gates=asked["max_gates"],
        jobs=asked["jobs"],
        split=asked["split"],
        scheduler=asked["scheduler"],
        cube_scheme=asked["cube_scheme"],
        cube_depth=asked["cube_depth"],
        split_after=asked["split_after"],
        scan_state=None if asked.get("scan_state") is None else Path(asked["scan_state"]),
    )
    cert, dimacs = asked["cert_dir"], asked["dimacs_dir"]
    return Request(
        library=asked["library_name"],
        max_controls=asked["max_controls"],
        coupling=asked["coupling"],
        objective=asked["objective"],
        cost=asked["cost_name"],
        optima=asked["optima"],
        optima_limit=asked["optima_limit"],
        certificate=None if cert is None else Path(cert),
        dimacs=None if dimacs is None else Path(dimacs),
        search=search,
    )
