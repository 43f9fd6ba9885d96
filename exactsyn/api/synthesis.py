"""The synthesis entry point: one call from a spec to a proven circuit and its certificate.

:func:`synthesise` runs the whole pipeline that ``exactsyn synth`` prints:

1. the **spec** (a :class:`~exactsyn.specification.reversible.Spec`, a permutation list, or a spec
   file) and the **library** (a preset or kind list, :mod:`exactsyn.core.library`);
2. the **gate search** (:func:`exactsyn.search.loop.minimise_gates`): bounds, distance
   tables, then k-queries answered by SAT from the lower bound up, every UNSAT answer a
   proof (Große, Chen, Dueck, Drechsler, IEEE TCAD 28(5), 2009);
3. an **objective** beyond the gate count (:mod:`exactsyn.search.objectives`), when asked;
4. **every optimal circuit** (:mod:`exactsyn.search.all_optima`), when asked;
5. the **certificate** (:mod:`exactsyn.proof.certificate`): LRAT refutations and
   ``result.json``, re-checked by :func:`exactsyn.proof.checker.check_certificate`.

The time limit covers steps 2–4 (the objective and the listing get what the gate search
left).  Every circuit is simulated against the spec before it is returned.  When the gate
search ends without a circuit, the notes say why and what to try next.
"""

from __future__ import annotations

import os
import time
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import CostModel, cost_model, library_costs
from exactsyn.core.library import Library, make_library
from exactsyn.errors import ExactsynError
from exactsyn.proof.certificate import proof_writer, write_result
from exactsyn.sat.conquer import DEFAULT_DEPTH, DEFAULT_SCHEME, SPLIT_AFTER, CubeProgress, split_options
from exactsyn.sat.dimacs import dimacs_writer
from exactsyn.sat.encode import CostLimit, EncodingOptions, options_for
from exactsyn.sat.query import Query
from exactsyn.search.all_optima import Enumeration, enumerate_optimal
from exactsyn.search.events import Progress
from exactsyn.search.fallback import next_steps
from exactsyn.search.loop import GateResult, minimise_gates
from exactsyn.search.objectives import OBJECTIVES, ObjectiveResult, optimise
from exactsyn.specification.embed import Embedding
from exactsyn.specification.loader import load_any
from exactsyn.specification.reversible import Spec, from_permutation

OPTIMA_MODES = ("all", "count")
SpecLike = Spec | Sequence[int] | str | os.PathLike[str]


@dataclass(frozen=True)
class Synthesis:
    """What one :func:`synthesise` call produced.

    ``circuit`` is the answer: the objective's circuit when an objective was optimised,
    else the gate search's (``None`` when no circuit was found within the limits).
    ``optimal`` is true only when that circuit is *proven* optimal for the objective.
    ``lower_bound`` / ``upper_bound`` bound the minimum gate count.  ``steps`` lists
    every SAT query asked (gate queries first, then the objective's).  ``notes`` holds
    what the user should know (e.g. why an objective was not optimised).
    """

    spec: Spec
    library: Library
    objective: str
    circuit: Circuit | None
    optimal: bool
    gate_result: GateResult
    objective_result: ObjectiveResult | None
    optima: Enumeration | None
    embedding: Embedding | None
    cost_model: CostModel
    certificate: Path | None
    notes: tuple[str, ...]
    seconds: float

    @property
    def lower_bound(self) -> int:
        return self.gate_result.lower_bound

    @property
    def upper_bound(self) -> int | None:
        return self.gate_result.upper_bound

    @property
    def gate_count(self) -> int | None:
        return None if self.circuit is None else len(self.circuit)

    @property
    def steps(self) -> tuple[Query, ...]:
        more = () if self.objective_result is None else self.objective_result.queries
        return self.gate_result.steps + more


def resolve_spec(spec: SpecLike, embedding: Embedding | None = None) -> tuple[Spec, Embedding | None]:
    """A :class:`Spec` from a spec, a permutation list, or a spec file (TOML, OpenQASM, JSON)."""
    if isinstance(spec, Spec):
        return spec, embedding
    if isinstance(spec, str | os.PathLike):
        return load_any(Path(spec))
    if isinstance(spec, Sequence) and all(isinstance(v, int) and not isinstance(v, bool) for v in spec):
        return from_permutation([int(v) for v in spec]), embedding
    raise ExactsynError("spec must be a Spec, a permutation (list of integers) or the path of a spec file")


def _check_options(
    objective: str,
    optima: str | None,
    optima_limit: int | None,
    time_limit: float | None,
    max_gates: int | None,
    jobs: int,
) -> None:
    if objective not in OBJECTIVES:
        raise ExactsynError(f"unknown objective {objective!r}; choose one of: {', '.join(OBJECTIVES)}")
    if time_limit is not None and not time_limit > 0:
        raise ExactsynError("the time limit must be positive")
    if jobs < 1:
        raise ExactsynError("jobs must be 1 or more")
    if max_gates is not None and max_gates < 0:
        raise ExactsynError("the gate limit must be 0 or more")
    if optima is not None:
        if optima not in OPTIMA_MODES:
            raise ExactsynError(f"unknown optima mode {optima!r}; choose one of: {', '.join(OPTIMA_MODES)}")
        if objective not in ("gates", "gates-then-cost"):
            raise ExactsynError("listing every optimal circuit works with objective gates or gates-then-cost")
    if optima_limit is not None and optima_limit < 1:
        raise ExactsynError("the optima limit must be 1 or more")


def synthesise(
    spec: SpecLike,
    *,
    library: str | Library = "nct",
    max_controls: int | None = None,
    coupling: str = "",
    objective: str = "gates",
    cost: str | CostModel = "ncv",
    optima: str | None = None,
    optima_limit: int | None = None,
    certificate: str | os.PathLike[str] | None = None,
    dimacs: str | os.PathLike[str] | None = None,
    time_limit: float | None = None,
    max_gates: int | None = None,
    bounds: str = "table",
    encoding: str | EncodingOptions = "onehot",
    solver: str = "cadical195",
    jobs: int = 1,
    embedding: Embedding | None = None,
    progress: Progress | None = None,
    split: str = "auto",
    scheduler: str | None = None,
    cube_scheme: str = DEFAULT_SCHEME,
    cube_depth: int = DEFAULT_DEPTH,
    split_after: float = SPLIT_AFTER,
    cube_progress: CubeProgress | None = None,
) -> Synthesis:
    """Find a minimum circuit for ``spec`` and prove it minimal (see the module docstring).

    ``library`` is a preset (``nct``, ``mct``, ``mixed``, …) or kind list, or a built
    :class:`Library` (then ``max_controls`` and ``coupling`` are ignored).  ``objective``:
    ``gates``, ``gates-then-cost``, ``cost`` or ``depth``; ``cost`` names a cost model
    (``ncv``, ``t-count``, ``cnot-count``, ``gates``) or a cost table file.  ``optima``:
    ``"all"`` lists every optimal circuit (up to reordering adjacent commuting gates),
    ``"count"`` only counts them.  ``certificate``: a directory for the proof log;
    ``dimacs``: a directory for every k-query as DIMACS CNF.  ``jobs >= 2`` races a hard
    query against the formulation without symmetry breaking on a second process;
    ``split`` (``auto``, ``cubes``, ``race``, ``off``; :data:`exactsyn.sat.conquer.SPLIT_MODES`)
    splits a hard gate query into cubes on ``jobs`` processes or on the Dask ``scheduler``
    (an address, or ``"local"``), branching on ``cube_depth`` positions by ``cube_scheme``,
    once the query has been open ``split_after`` seconds on its own.
    ``progress`` receives every answered query (:class:`~exactsyn.sat.query.Query`) and a
    :class:`~exactsyn.search.events.SearchEvent` for the other phases (tables, the start
    of each query, the fallback circuit); ``cube_progress`` every solved cube.

    Raises :class:`~exactsyn.errors.ExactsynError` for bad input and
    :class:`~exactsyn.errors.NoCircuitError` when no circuit of the library can exist.
    """
    start = time.perf_counter()
    _check_options(objective, optima, optima_limit, time_limit, max_gates, jobs)
    cubes = split_options(split, jobs, scheduler, cube_scheme, cube_depth, split_after)
    spec, embedding = resolve_spec(spec, embedding)
    lib = library if isinstance(library, Library) else make_library(library, spec.lines, max_controls, coupling)
    model = cost if isinstance(cost, CostModel) else cost_model(cost)
    if objective in ("gates-then-cost", "cost"):
        library_costs(lib, model, positive=objective == "cost")  # a bad table fails now, not after the search
    options = encoding if isinstance(encoding, EncodingOptions) else options_for(encoding)
    cert_dir = None if certificate is None else Path(certificate)
    sink = proof_writer(cert_dir) if cert_dir is not None else None

    gates = minimise_gates(
        spec,
        lib,
        encoding=options,
        solver=solver,
        time_limit=time_limit,
        max_gates=max_gates,
        progress=progress,
        proof_sink=sink,
        cnf_sink=dimacs_writer(Path(dimacs)) if dimacs is not None else None,
        bounds=bounds,
        jobs=jobs if split != "off" else 1,
        split=cubes,
        cube_progress=cube_progress,
    )
    notes: list[str] = []
    if gates.hint:
        notes.append(gates.hint)
    if gates.source == "heuristic" and gates.how and not gates.optimal:
        notes.append(f"the circuit is a fallback, not proven optimal: {gates.how}")
    if gates.circuit is None:
        if gates.how:
            notes.append(gates.how)
        notes.append(
            next_steps(
                spec, lib, lower_bound=gates.lower_bound, time_limit=time_limit, max_gates=max_gates, reason=gates.how
            )
        )
    obj: ObjectiveResult | None = None
    if objective != "gates" and gates.circuit is not None:
        if not gates.optimal:
            notes.append("the gate count was not proven, so the objective was not optimised")
        else:
            left = None if time_limit is None else max(0.1, time_limit - (time.perf_counter() - start))
            obj = optimise(
                objective, gates, model, time_limit=left, solver=solver, proof_sink=sink, progress=progress
            )
    written = write_result(cert_dir, gates, obj).parent if cert_dir is not None else None

    listing: Enumeration | None = None
    if optima is not None and gates.circuit is not None and gates.optimal:
        limit_cost = None
        if obj is not None and obj.costs is not None and obj.optimal:
            limit_cost = CostLimit(obj.costs, obj.value)
        left = None if time_limit is None else max(0.0, time_limit - (time.perf_counter() - start))
        listing = enumerate_optimal(
            spec,
            lib,
            len(gates.circuit),
            cost_limit=limit_cost,
            keep=optima == "all",
            limit=optima_limit,
            time_limit=left,
            solver=solver,
        )
    elif optima is not None:
        notes.append("the gate count was not proven, so the optimal circuits were not listed")

    circuit = gates.circuit if obj is None else obj.circuit
    optimal = gates.optimal if obj is None else obj.optimal
    return Synthesis(
        spec=spec,
        library=lib,
        objective=objective,
        circuit=circuit,
        optimal=optimal if circuit is not None else False,
        gate_result=gates,
        objective_result=obj,
        optima=listing,
        embedding=embedding,
        cost_model=model,
        certificate=written,
        notes=tuple(notes),
        seconds=time.perf_counter() - start,
    )
