"""Click options shared by several commands (one definition, one help text)."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import click

from exactsyn.core.library import KINDS, PRESETS
from exactsyn.sat.conquer import SPLIT_MODES
from exactsyn.sat.cubes import DEFAULT_DEPTH, SCHEMES
from exactsyn.sat.encode import ENCODINGS
from exactsyn.sat.solve import SOLVERS
from exactsyn.search.loop import BOUNDS
from exactsyn.search.objectives import OBJECTIVES

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
objective_option = click.option(
    "--objective",
    type=click.Choice(list(OBJECTIVES)),
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
    help="Cost model: ncv (quantum cost: NOT 1, CNOT 1, Toffoli 5, Peres 4, C3X 13; Barenco et al. 1995), "
    "t-count and cnot-count (of the Clifford+T decomposition written by --clifford-t), gates, or a TOML/JSON "
    "table of gate names to integer costs (NOT, CNOT, Toffoli, C3X, SWAP, Fredkin, Peres, ..., negative_control).",
)

split_option = click.option(
    "--split",
    type=click.Choice(list(SPLIT_MODES)),
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
    type=click.Choice(list(SCHEMES)),
    default="targets",
    show_default=True,
    help="How a position branches: " + "; ".join(f"{k} = {v}" for k, v in SCHEMES.items()) + ".",
)
