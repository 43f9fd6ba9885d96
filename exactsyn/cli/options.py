"""Click options shared by several commands (one definition, one help text)."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import click

from exactsyn.core.library import KINDS, PRESETS
from exactsyn.sat.encode import ENCODINGS
from exactsyn.sat.solve import SOLVERS
from exactsyn.search.loop import BOUNDS

F = Callable[..., Any]

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
    type=click.Choice(list(ENCODINGS)),
    default="onehot",
    show_default=True,
    help="CNF encoding; 'textbook' is the baseline without symmetry breaking.",
)
solver_option = click.option(
    "--solver",
    type=click.Choice(list(SOLVERS)),
    default="cadical195",
    show_default=True,
    help="SAT solver for the k-queries (with certificates, CaDiCaL 1.9.5 always, for its LRAT output).",
)


def bounds_option(extra: str = "") -> Callable[[F], F]:
    return click.option(
        "--bounds",
        type=click.Choice(list(BOUNDS)),
        default="table",
        show_default=True,
        help="'table': skip hopeless k with breadth-first distance tables and a meet-in-the-middle test "
        "(up to 4 lines; exact up to 11 gates on 4 lines); 'cheap': SAT (and LRAT) for every k." + extra,
    )
