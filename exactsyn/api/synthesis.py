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
left).  What is asked — library, objective, search settings, where proofs go — is one
:class:`Request`, built once (by :func:`synthesise` from its keyword arguments, by the
command line or by a batch task) and passed down unchanged.  Every circuit is simulated
against the spec before it is returned.  When the gate search ends without a circuit, the
notes say why and what to try next.
"""

from __future__ import annotations

import os
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path
from typing import Any

from exactsyn.core.circuit import Circuit
from exactsyn.core.cliffordt import CliffordT, check_clifford_t, decompose
from exactsyn.core.costs import OBJECTIVES, CostModel, cost_model, library_costs
from exactsyn.core.library import Library, make_library
from exactsyn.errors import ExactsynError, Interrupted
from exactsyn.proof import staging
from exactsyn.proof.certificate import proof_writer, write_result
from exactsyn.sat.conquer import DEFAULT_DEPTH, DEFAULT_SCHEME, SPLIT_AFTER, CubeEvent
from exactsyn.sat.dimacs import dimacs_writer
from exactsyn.sat.encode import CostLimit, EncodingOptions
from exactsyn.sat.options import DEFAULT_OPTIONS, Hooks, Observer, SearchOptions, search_options
from exactsyn.sat.query import Query
from exactsyn.search.all_optima import Enumeration, enumerate_optimal
from exactsyn.search.events import SearchEvent
from exactsyn.search.fallback import Suggestion, next_steps
from exactsyn.search.loop import GateResult, minimise_gates
from exactsyn.search.objectives import ObjectiveResult, optimise
from exactsyn.specification.embed import Embedding
from exactsyn.specification.loader import load_any, load_with_circuit
from exactsyn.specification.reversible import Spec, from_permutation
from exactsyn.tables.oracle import LAYER_HINT, table_roles

OPTIMA_MODES = ("all", "count")
SpecLike = Spec | Sequence[int] | str | os.PathLike[str]


@dataclass(frozen=True)
class Request:
    """What one synthesis asks for; checked when made (:class:`ExactsynError` for bad values).

    ``library`` is a preset (``nct``, ``mct``, ``mixed``, …) or kind list, with
    ``max_controls`` and ``coupling``, or a built :class:`Library` (then those two are
    ignored).  ``objective``: ``gates``, ``gates-then-cost``, ``cost`` or ``depth``;
    ``cost`` names a cost model or a cost table file.  ``optima``: ``"all"`` lists every
    optimal circuit (up to reordering adjacent commuting gates), ``"count"`` only counts
    them, at most ``optima_limit``.  ``certificate``: a directory for the proof log;
    ``dimacs``: one for every k-query as DIMACS CNF.  ``search``: how the search runs.
    """

    library: str | Library = "nct"
    max_controls: int | None = None
    coupling: str = ""
    objective: str = "gates"
    cost: str | CostModel = "ncv"
    optima: str | None = None
    optima_limit: int | None = None
    certificate: Path | None = None
    dimacs: Path | None = None
    search: SearchOptions = DEFAULT_OPTIONS

    def __post_init__(self) -> None:
        if self.objective not in OBJECTIVES:
            raise ExactsynError(f"unknown objective {self.objective!r}; choose one of: {', '.join(OBJECTIVES)}")
        if self.optima is not None:
            if self.optima not in OPTIMA_MODES:
                raise ExactsynError(f"unknown optima mode {self.optima!r}; choose one of: {', '.join(OPTIMA_MODES)}")
            if self.objective not in ("gates", "gates-then-cost"):
                raise ExactsynError("listing every optimal circuit works with objective gates or gates-then-cost")
        if self.optima_limit is not None and self.optima_limit < 1:
            raise ExactsynError("the optima limit must be 1 or more")

    def library_for(self, lines: int) -> Library:
        """The library on ``lines`` lines."""
        if isinstance(self.library, Library):
            return self.library
        return make_library(self.library, lines, self.max_controls, self.coupling)

    def cost_model(self) -> CostModel:
        return self.cost if isinstance(self.cost, CostModel) else cost_model(self.cost)


@dataclass(frozen=True)
class Synthesis:
    """What one :func:`synthesise` call produced.

    ``circuit`` is the answer: the objective's circuit when an objective was optimised,
    else the gate search's (``None`` when no circuit was found within the limits).
    ``optimal`` is true only when that circuit is *proven* optimal for the objective.
    ``lower_bound`` / ``upper_bound`` bound the minimum gate count.  ``steps`` lists
    every SAT query asked (gate queries first, then the objective's).  ``notes`` holds
    what the user should know (e.g. why an objective was not optimised); without a
    circuit, ``suggestions`` says which settings may bring one.
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
    suggestions: tuple[Suggestion, ...] = ()  # what to try when no circuit was found

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

    @cached_property
    def clifford_t(self) -> CliffordT | None:
        """The circuit over Clifford+T gates (:mod:`exactsyn.core.cliffordt`), simulated against the
        circuit before it is handed out; None without a circuit.  Made on first use."""
        if self.circuit is None:
            return None
        ct = decompose(self.circuit)
        check_clifford_t(ct, self.circuit)
        return ct


def resolve_spec(spec: SpecLike, embedding: Embedding | None = None) -> tuple[Spec, Embedding | None]:
    """A :class:`Spec` from a spec, a permutation list, or a spec file (TOML, OpenQASM, JSON)."""
    if isinstance(spec, Spec):
        return spec, embedding
    if isinstance(spec, str | os.PathLike):
        return load_any(Path(spec))
    if isinstance(spec, Sequence) and all(isinstance(v, int) and not isinstance(v, bool) for v in spec):
        return from_permutation([int(v) for v in spec]), embedding
    raise ExactsynError("spec must be a Spec, a permutation (list of integers) or the path of a spec file")


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
    progress: Observer | None = None,
    split: str = "auto",
    scheduler: str | None = None,
    cube_scheme: str = DEFAULT_SCHEME,
    cube_depth: int = DEFAULT_DEPTH,
    split_after: float = SPLIT_AFTER,
    cube_progress: Callable[[CubeEvent], None] | None = None,
    scan_state: str | Path | None = None,
) -> Synthesis:
    """Find a minimum circuit for ``spec`` and prove it minimal (see the module docstring).

    The keyword arguments build a :class:`Request` (library, objective, optima, certificate
    and DIMACS directories) and its :class:`~exactsyn.sat.options.SearchOptions`
    (:func:`~exactsyn.sat.options.search_options`: time and gate limits, bounds, encoding,
    solver, and how a hard query uses ``jobs`` processes — the race with 2, cubes from 3 or
    with ``split="cubes"``, on Dask with ``scheduler``; ``scan_state``: a directory where the
    long scans of a class table keep their chunks, so a run resumes); see :func:`synthesise_request`.
    ``progress`` receives every answered query (:class:`~exactsyn.sat.query.Query`), a
    :class:`~exactsyn.search.events.SearchEvent` for the other phases (tables, the start of
    each query, the fallback circuit) and a :class:`~exactsyn.sat.conquer.CubeEvent` for
    every solved cube (``cube_progress``, when given, receives those instead).

    Raises :class:`~exactsyn.errors.ExactsynError` for bad input and
    :class:`~exactsyn.errors.NoCircuitError` when no circuit of the library can exist.
    """
    request = Request(
        library=library,
        max_controls=max_controls,
        coupling=coupling,
        objective=objective,
        cost=cost,
        optima=optima,
        optima_limit=optima_limit,
        certificate=None if certificate is None else Path(certificate),
        dimacs=None if dimacs is None else Path(dimacs),
        search=search_options(
            solver=solver,
            encoding=encoding,
            bounds=bounds,
            time_limit=time_limit,
            max_gates=max_gates,
            jobs=jobs,
            split=split,
            scheduler=scheduler,
            cube_scheme=cube_scheme,
            cube_depth=cube_depth,
            split_after=split_after,
            scan_state=None if scan_state is None else Path(scan_state),
        ),
    )
    return synthesise_request(spec, request, observer=_observer(progress, cube_progress), embedding=embedding)


def _observer(progress: Observer | None, cube_progress: Callable[[CubeEvent], None] | None) -> Observer | None:
    """One observer from the two callbacks of :func:`synthesise`."""
    if cube_progress is None:
        return progress

    def observe(item: Any) -> None:
        if isinstance(item, CubeEvent):
            cube_progress(item)
        elif progress is not None:
            progress(item)

    return observe


def synthesise_request(
    spec: SpecLike, request: Request, *, observer: Observer | None = None, embedding: Embedding | None = None
) -> Synthesis:
    """Run ``request`` on ``spec``: gate search, objective, optima, certificate (module docstring)."""
    start = time.perf_counter()
    given: Circuit | None = None
    if isinstance(spec, str | os.PathLike):  # a spec file: a saved circuit is also the first upper bound
        spec, embedding, given = load_with_circuit(Path(spec))
    else:
        spec, embedding = resolve_spec(spec, embedding)
    lib = request.library_for(spec.lines)
    model = request.cost_model()
    if request.objective in ("gates-then-cost", "cost"):
        library_costs(lib, model, positive=request.objective == "cost")  # a bad table fails now, not after the search
    cert_dir = request.certificate
    work = staging.stage(cert_dir) if cert_dir is not None else None  # renamed to cert_dir when complete
    try:
        hooks = Hooks(
            proof=proof_writer(work) if work is not None else None,
            cnf=dimacs_writer(request.dimacs) if request.dimacs is not None else None,
            observer=observer,
        )
        return _run(spec, embedding, request, lib, model, hooks, work, start, given)
    except BaseException as e:
        if work is not None and work.exists():
            staging.discard(work)
            if isinstance(e, KeyboardInterrupt) and not isinstance(e, Interrupted):
                raise Interrupted(f"no certificate was written to {cert_dir}") from None
        raise


def _run(
    spec: Spec,
    embedding: Embedding | None,
    request: Request,
    lib: Library,
    model: CostModel,
    hooks: Hooks,
    work: Path | None,
    start: float,
    given: Circuit | None = None,
) -> Synthesis:
    """The steps of :func:`synthesise_request` once the certificate's directory is staged (``work``);
    ``given``: the circuit of a spec file that is a saved circuit (a first upper bound)."""
    options = request.search
    gates = minimise_gates(spec, lib, options, hooks, given)
    notes = _gate_notes(gates)
    suggestions: tuple[Suggestion, ...] = ()
    if gates.circuit is None:
        suggestions = next_steps(
            spec,
            lib,
            lower_bound=gates.lower_bound,
            time_limit=options.time_limit,
            max_gates=options.max_gates,
            reason=gates.how,
        )

    def left(floor: float) -> float | None:
        limit = options.time_limit
        return None if limit is None else max(floor, limit - (time.perf_counter() - start))

    obj: ObjectiveResult | None = None
    if request.objective != "gates" and gates.circuit is not None:
        if not gates.optimal:
            notes.append("the gate count was not proven, so the objective was not optimised")
        else:
            _announce(hooks, "objective-start", request.objective)
            obj = optimise(request.objective, gates, model, options, hooks, time_limit=left(0.1))
            notes += _objective_notes(obj, lib, options)
    if request.optima is not None and gates.optimal:
        _announce(hooks, "optima-start", request.optima)
    listing = _list_optima(request, gates, obj, left(0.0), notes)
    written = None
    if work is not None and request.certificate is not None:
        write_result(work, gates, obj, listing)
        written = staging.publish(work, request.certificate)
    circuit = gates.circuit if obj is None else obj.circuit
    optimal = gates.optimal if obj is None else obj.optimal
    return Synthesis(
        spec=spec,
        library=lib,
        objective=request.objective,
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
        suggestions=suggestions,
    )


def _announce(hooks: Hooks, phase: str, detail: str) -> None:
    """Tell the observer a step after the gate search begins (:mod:`exactsyn.search.events`)."""
    if hooks.observer is not None:
        hooks.observer(SearchEvent(phase, detail=detail))


def _gate_notes(gates: GateResult) -> list[str]:
    """What the user should know about the gate search: a hint, a fallback, why there is no circuit."""
    notes: list[str] = []
    if gates.hint:
        notes.append(gates.hint)
    if gates.source == "heuristic" and gates.how and not gates.optimal:
        notes.append(f"the circuit is a fallback, not proven optimal: {gates.how}")
    if gates.circuit is None and gates.how:
        notes.append(gates.how)
    return notes


def _objective_notes(obj: ObjectiveResult, lib: Library, options: SearchOptions) -> list[str]:
    """How to get an unproven depth proven: the layer table that would settle it."""
    if obj.objective != "depth" or obj.optimal or options.bounds != "table":
        return []
    missing = table_roles(lib).missing_layers
    return [] if missing is None else [LAYER_HINT.format(lines=lib.lines, name=missing)]


def _list_optima(
    request: Request, gates: GateResult, obj: ObjectiveResult | None, left: float | None, notes: list[str]
) -> Enumeration | None:
    """Every optimal circuit (or their number), when asked and the gate count is proven."""
    if request.optima is None:
        return None
    if gates.circuit is None or not gates.optimal:
        notes.append("the gate count was not proven, so the optimal circuits were not listed")
        return None
    limit_cost = None
    if obj is not None and obj.costs is not None and obj.optimal:
        limit_cost = CostLimit(obj.costs, obj.value)
    return enumerate_optimal(
        gates.spec,
        gates.library,
        len(gates.circuit),
        cost_limit=limit_cost,
        keep=request.optima == "all",
        limit=request.optima_limit,
        time_limit=left,
        solver=request.search.solver,
        tables=request.search.bounds == "table",
    )
