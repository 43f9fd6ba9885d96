"""Objectives beyond gate count, each proven by refutations: cost after gates, cost, depth.

All three start from a proven minimum-gate circuit (:func:`exactsyn.search.loop.synthesise`,
``k*`` gates) and then tighten a bound by SAT queries, each of which is a CNF of
:mod:`exactsyn.sat.encode` (with a :class:`~exactsyn.sat.encode.CostLimit`) or of
:mod:`exactsyn.sat.encode_depth`, so a certificate can re-derive and re-check it.

``gates-then-cost``
    minimum cost among circuits of ``k*`` gates: with ``U`` the cost of the best circuit
    so far, ask "``k*`` gates, cost ≤ U − 1?" until UNSAT.  The final refutation, with the
    gate-count proof of ``k*``, proves the optimum.
``cost``
    minimum cost over circuits of any length.  Every gate costs at least ``c_min ≥ 1``, so
    a circuit of cost ≤ C has at most ``⌊C / c_min⌋`` gates, and at least ``k*``; for a
    non-affine function it has a non-affine gate, so at most ``⌊(C − e)/c_min⌋`` gates with
    ``e`` from :func:`nonaffine_extra`.  With
    ``U`` the best cost so far, ask "k gates, cost ≤ U − 1?" for k = k*, k* + 1, …,
    ⌊(U − 1 − e)/c_min⌋; a SAT answer lowers ``U`` (queries already refuted with a larger
    limit stay refuted: the limit only shrinks).  When every k is refuted, ``U`` is
    optimal.  The number of queries grows with the cost, so this is for small functions.
``depth``
    minimum depth (gates on disjoint lines share a layer): with ``D`` the depth of the best
    circuit so far, ask "depth ≤ D − 1?" until UNSAT; the empty layers the encoding allows
    make one refutation cover every smaller depth.

Time limits: each query gets what is left; an open query ends the search with the best
circuit so far, marked not proven.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import OBJECTIVES, CostModel, library_costs, objective_value
from exactsyn.errors import ExactsynError
from exactsyn.sat.clauses import EncodingOutOfTime
from exactsyn.sat.encode import CostLimit, Encoding, EncodingOptions, encode
from exactsyn.sat.encode_depth import encode_depth
from exactsyn.sat.options import DEFAULT_OPTIONS, NO_HOOKS, Hooks, SearchOptions
from exactsyn.sat.query import Query, run_query
from exactsyn.sat.status import Status
from exactsyn.search.bounds import nonaffine_extra
from exactsyn.search.loop import GateResult, verify_circuit
from exactsyn.tables.descent import OutOfTime
from exactsyn.tables.oracle import ClassTableClaim, table_roles

COST_OPTIONS = EncodingOptions("onehot", ("no-repeat", "commute", "touch", "window2", "window3", "window4"))


@dataclass(frozen=True)
class ObjectiveResult:
    objective: str
    cost_model: str | None
    costs: tuple[int, ...] | None  # per library gate, when the objective has a cost
    circuit: Circuit
    value: int  # the circuit's cost or depth
    optimal: bool  # value proven minimal
    bound: int  # proven lower bound on the objective
    gate_result: GateResult
    queries: tuple[Query, ...]
    seconds: float
    nonaffine_extra: int = 0  # see nonaffine_extra(); 0 when the bound does not apply
    symmetry: tuple[str, ...] = ()  # rules of the cost queries' CNFs (certificates re-derive them)
    class_table: ClassTableClaim | None = None  # set when the descent over a class table proved it


def from_class_table(
    objective: str, gate_result: GateResult, costs: tuple[int, ...], model_name: str, time_limit: float | None
) -> ObjectiveResult | None:
    """``gates-then-cost`` from the cached class table of the library, when there is one
    (:mod:`exactsyn.tables.descent`: the least cost over the DAG of every optimal circuit,
    no SAT call); None otherwise, or when the descent does not finish in ``time_limit``."""
    spec, library, best = gate_result.spec, gate_result.library, gate_result.circuit
    if objective != "gates-then-cost" or best is None or not gate_result.optimal or not spec.is_permutation:
        return None
    table = table_roles(library).exact
    if table is None:
        return None
    start = time.perf_counter()
    deadline = None if time_limit is None else start + time_limit
    try:
        descent = table.descent(spec.permutation, len(best), deadline)
        if descent is None:
            return None
        value, indices = descent.cheapest_circuit(costs)
    except OutOfTime:
        return None
    circuit = Circuit(spec.lines, tuple(library.gates[j] for j in indices))
    verify_circuit(circuit, spec, library)
    if len(circuit) != len(best) or objective_value(circuit, library, costs) != value:
        raise RuntimeError("internal error: the descent's circuit does not have the value it claims")
    seconds = time.perf_counter() - start
    claim = table.claim(value, f"descent over the optimal circuits ({model_name})", seconds)
    return ObjectiveResult(objective, model_name, costs, circuit, value, True, value, gate_result, (), seconds,
                           class_table=claim)  # fmt: skip


def depth_from_layers(gate_result: GateResult, time_limit: float | None) -> ObjectiveResult | int | None:
    """The minimum depth from the cached layer table of the library (``mct-layers``, …: its steps
    are layers of gates on disjoint lines), with a circuit of that depth; or the lower bound it
    reached (an int); None when there is no such table."""
    spec, library = gate_result.spec, gate_result.library
    if not spec.is_permutation or gate_result.circuit is None:
        return None
    table = table_roles(library).layers
    if table is None:
        return None
    start = time.perf_counter()
    verdict = table.optimum(spec.permutation, None if time_limit is None else start + time_limit)
    if verdict.circuit is None:
        return verdict.lower
    circuit = verdict.circuit
    verify_circuit(circuit, spec, library)
    if circuit.depth() != verdict.lower:
        raise RuntimeError("internal error: the layer table's circuit does not have the depth it claims")
    claim = verdict.claim
    assert isinstance(claim, ClassTableClaim)
    seconds = time.perf_counter() - start
    return ObjectiveResult("depth", None, None, circuit, verdict.lower, True, verdict.lower, gate_result, (),
                           seconds, class_table=claim)  # fmt: skip


def _depth_floor(gate_result: GateResult, search: SearchOptions, time_limit: float | None) -> ObjectiveResult | int:
    """The layer table's answer when it has one, else the depth below which no circuit exists
    (the layer table's bound, or 1 for a function that is not the identity)."""
    floor = 0 if gate_result.spec.is_identity() else 1
    layered = depth_from_layers(gate_result, time_limit) if search.bounds == "table" else None
    if isinstance(layered, ObjectiveResult):
        return layered
    return floor if layered is None else max(floor, layered)


def _encode_cost(
    gate_result: GateResult, k: int, options: EncodingOptions, limit: CostLimit, start: float, time_limit: float | None
) -> Encoding | None:
    """The cost CNF, or None when building it outlasted ``time_limit`` seconds from ``start``
    (its window rule can run to millions of clauses: a 4-line function at k = 10 took 19 s)."""
    deadline = None if time_limit is None else start + time_limit
    try:
        return encode(gate_result.spec, gate_result.library, k, options, cost_limit=limit, deadline=deadline)
    except EncodingOutOfTime:
        return None


def optimise(
    objective: str,
    gate_result: GateResult,
    model: CostModel | None = None,
    search: SearchOptions = DEFAULT_OPTIONS,
    hooks: Hooks = NO_HOOKS,
    *,
    time_limit: float | None = None,
    cost_encoding: EncodingOptions = COST_OPTIONS,
    nonaffine_bound: bool = True,
) -> ObjectiveResult:
    """Tighten ``gate_result`` (a proven minimum-gate result) for ``objective``.

    ``search`` gives the solver; ``hooks`` the proof sink and the observer (every answered
    query); ``time_limit`` is the time this step may take (the search's remaining time).
    """
    if objective not in OBJECTIVES or objective == "gates":
        raise ExactsynError(f"unknown objective {objective!r}; choose one of: {', '.join(OBJECTIVES)}")
    if gate_result.circuit is None or not gate_result.optimal:
        raise ExactsynError("the minimum gate count was not proven, so the objective cannot be optimised")
    spec, library = gate_result.spec, gate_result.library
    start = time.perf_counter()
    costs, extra = None, 0
    if objective != "depth":
        if model is None:
            raise ExactsynError(f"objective {objective} needs a cost model")
        costs = library_costs(library, model, positive=objective == "cost")
    best = gate_result.circuit
    value = objective_value(best, library, costs)
    queries: list[Query] = []
    k_star = len(best)

    def left() -> float | None:
        return None if time_limit is None else max(0.0, time_limit - (time.perf_counter() - start))

    def ask(enc: Encoding, what: str, k: int, limit: int | None) -> tuple[Query, Circuit | None]:
        ans = run_query(enc, search, hooks, objective=what, k=k, limit=limit, time_limit=left())
        queries.append(ans.query)
        hooks.notify(ans.query)
        if ans.circuit is not None:
            verify_circuit(ans.circuit, spec, library)
        return ans.query, ans.circuit

    def done(optimal: bool, bound: int) -> ObjectiveResult:
        return ObjectiveResult(
            objective,
            None if model is None or objective == "depth" else model.name,
            costs,
            best,
            value,
            optimal,
            bound,
            gate_result,
            tuple(queries),
            time.perf_counter() - start,
            extra,
            cost_encoding.symmetry,
        )

    if objective == "depth":
        floor = _depth_floor(gate_result, search, left())
        if isinstance(floor, ObjectiveResult):
            return floor
        while value > floor:
            d = value - 1
            q, circ = ask(encode_depth(spec, library, d), "depth", d, None)
            if q.status == Status.UNSAT:
                return done(True, value)
            if q.status == Status.UNKNOWN or circ is None:
                return done(False, floor)
            best, value = circ, circ.depth()
        return done(True, value)

    assert costs is not None and model is not None
    tabled = None
    if search.bounds == "table":
        tabled = from_class_table(objective, gate_result, costs, model.name, time_limit)
    if tabled is not None:
        return tabled
    c_min = min(costs)
    extra = nonaffine_extra(spec, library, costs) if objective == "cost" and nonaffine_bound else 0
    fixed_k = objective == "gates-then-cost"
    order = "gates" if fixed_k else "cost"
    k = k_star
    while True:
        limit = value - 1
        top = k_star if fixed_k else (limit - extra) // c_min
        if k > top:
            return done(True, value)
        enc = _encode_cost(gate_result, k, cost_encoding, CostLimit(costs, limit, order), start, time_limit)
        if enc is None:
            return done(False, k_star * c_min)
        q, circ = ask(enc, "cost", k, limit)
        if q.status == Status.UNKNOWN:
            return done(False, k_star * c_min)
        if q.status == Status.UNSAT:
            k += 1
            continue
        assert circ is not None
        best, value = circ, objective_value(circ, library, costs)
