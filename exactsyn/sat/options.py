"""The settings of one search, built once from the user's input and passed down unchanged.

:class:`SearchOptions` holds every setting that changes how a search runs but not what it
proves: the SAT solver, the encoding, which bounds to consult, the time and gate limits,
the processes it may use and how a hard query is split.  :class:`Hooks` holds where the
search sends what it makes besides its result: LRAT refutations (a proof sink), the CNF of
every query (DIMACS export) and progress (an observer).

The command line and the batch task build both once from what the user typed;
:func:`exactsyn.synthesise` builds them from its keyword arguments
(:func:`search_options`).  The gate loop, the objectives, the listing of optima and every
query read the same objects: a new search setting is one field here, one option in
``cli/options.py`` and the code that uses it.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from exactsyn.errors import ExactsynError
from exactsyn.sat.conquer import SPLIT_AFTER, CubeOptions, split_options
from exactsyn.sat.cube_split import DEFAULT_DEPTH, DEFAULT_SCHEME
from exactsyn.sat.encode import Encoding, EncodingOptions, options_for
from exactsyn.sat.solver import BOUNDED
from exactsyn.tables.deep import ScanSettings

#: Which lower bounds the gate search consults before SAT (``--bounds``).
BOUNDS = {
    "table": "cheap bounds, then the class or distance tables with meet in the middle (full specs)",
    "cheap": "only bounds without tables; every refuted k gets an LRAT proof when certifying",
}

ProofSink = Callable[[str, bytes], str]
"""``sink(stem, lrat_bytes) -> stored file name``; ``stem`` names the query (``k05``, ``cost-k07-c16``)."""

CnfSink = Callable[[Encoding], None]
"""Receives the encoding of every query before it is solved (for DIMACS export)."""

Observer = Callable[[Any], None]
"""Receives progress: an answered :class:`~exactsyn.sat.query.Query`, a
:class:`~exactsyn.search.events.SearchEvent` for the other phases of the search, and a
:class:`~exactsyn.sat.conquer.CubeEvent` for every solved cube.  A display ignores what it
does not know."""


@dataclass(frozen=True)
class SearchOptions:
    """How a search runs (see the module docstring); checked when made.

    ``jobs`` is the number of processes a query may use: 1 solves alone, 2 races a hard
    query against the formulation without symmetry breaking (:mod:`exactsyn.sat.race`);
    with ``split`` a hard query is split into cubes instead (:mod:`exactsyn.sat.conquer`).
    ``time_limit`` covers the whole search; ``max_gates`` holds for every answer.
    ``fallback``: make a circuit before the proof starts (:mod:`exactsyn.search.fallback`).
    ``table_scan``: where the long scans of a class table run and keep their state
    (:mod:`exactsyn.tables.deep`; None: in this process, nothing kept).
    """

    solver: str = "cadical195"
    encoding: EncodingOptions = field(default_factory=EncodingOptions)
    bounds: str = "table"
    time_limit: float | None = None
    max_gates: int | None = None
    jobs: int = 1
    split: CubeOptions | None = None
    fallback: bool = True
    table_scan: ScanSettings | None = None

    def __post_init__(self) -> None:
        if self.solver not in BOUNDED:
            raise ExactsynError(f"unknown solver {self.solver!r}; choose one of: {', '.join(BOUNDED)}")
        if self.bounds not in BOUNDS:
            raise ExactsynError(f"unknown bounds mode {self.bounds!r}; choose one of: {', '.join(BOUNDS)}")
        if self.time_limit is not None and not self.time_limit > 0:
            raise ExactsynError("the time limit must be positive")
        if self.max_gates is not None and self.max_gates < 0:
            raise ExactsynError("the gate limit must be 0 or more")
        if self.jobs < 1:
            raise ExactsynError("jobs must be 1 or more")


def search_options(
    *,
    solver: str = "cadical195",
    encoding: str | EncodingOptions = "onehot",
    bounds: str = "table",
    time_limit: float | None = None,
    max_gates: int | None = None,
    jobs: int = 1,
    split: str = "auto",
    scheduler: str | None = None,
    cube_scheme: str = DEFAULT_SCHEME,
    cube_depth: int = DEFAULT_DEPTH,
    split_after: float = SPLIT_AFTER,
    scan_state: Path | None = None,
) -> SearchOptions:
    """:class:`SearchOptions` from the user's spellings (those of ``exactsyn synth``).

    ``encoding`` is a name (``onehot``, ``textbook``) or :class:`EncodingOptions`;
    ``split`` is a mode of :data:`exactsyn.sat.conquer.SPLIT_MODES`, which with ``jobs``,
    ``scheduler``, ``cube_scheme``, ``cube_depth`` and ``split_after`` decides whether a
    hard query is raced, split into cubes, or solved alone (``off``: one process).
    With ``scan_state`` (a directory) or ``scheduler``, the long scans of a class table run
    in chunks kept in ``scan_state`` (resumable) on ``jobs`` processes or on the scheduler.
    """
    if jobs < 1:
        raise ExactsynError("jobs must be 1 or more")
    cubes = split_options(split, jobs, scheduler, cube_scheme, cube_depth, split_after)
    return SearchOptions(
        solver=solver,
        encoding=encoding if isinstance(encoding, EncodingOptions) else options_for(encoding),
        bounds=bounds,
        time_limit=time_limit,
        max_gates=max_gates,
        jobs=jobs if split != "off" else 1,
        split=cubes,
        table_scan=None if scan_state is None and scheduler is None else ScanSettings(jobs, scheduler, scan_state),
    )


@dataclass(frozen=True)
class Hooks:
    """Where a search sends proofs, CNFs and progress (each optional)."""

    proof: ProofSink | None = None
    cnf: CnfSink | None = None
    observer: Observer | None = None

    @property
    def certify(self) -> bool:
        """Are refutations captured (an LRAT proof per UNSAT answer)?"""
        return self.proof is not None

    def notify(self, item: object) -> None:
        """Hand a progress item to the observer, if there is one."""
        if self.observer is not None:
            self.observer(item)


#: The settings when none are given (defaults of :class:`SearchOptions`).
DEFAULT_OPTIONS = SearchOptions()
#: No proofs, no CNFs, no progress.
NO_HOOKS = Hooks()
