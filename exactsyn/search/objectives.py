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
from collections.abc import Callable
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import CostModel
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.proof.capture import solve_with_lrat
from exactsyn.sat.dimacs import cnf_sha256
from exactsyn.sat.encode import CostLimit, Encoding, EncodingOptions, encode
from exactsyn.sat.encode_depth import encode_depth
from exactsyn.sat.solve import solve_cnf
from exactsyn.search.loop import Result, verify
from exactsyn.spec.reversible import Spec

OBJECTIVES = {
    "gates": "fewest gates (the default)",
    "gates-then-cost": "fewest gates, then the least cost among those",
    "cost": "least cost over circuits of any length (may need more gates; small functions)",
    "depth": "fewest layers, gates on disjoint lines sharing a layer",
}
COST_OPTIONS = EncodingOptions("onehot", ("no-repeat", "commute", "touch", "window2", "window3", "window4"))


@dataclass(frozen=True)
class Query:
    """One objective query: ``k`` gates with total cost ≤ ``limit``, or depth ≤ ``k`` (limit None)."""

    kind: str  # "cost" | "depth"
    k: int
    limit: int | None
    status: str  # "sat" | "unsat" | "unknown"
    seconds: float
    conflicts: int
    variables: int
    clauses: int
    cnf_sha256: str | None = None
    proof: str | None = None
    proof_bytes: int = 0


@dataclass(frozen=True)
class ObjectiveResult:
    objective: str
    cost_model: str | None
    costs: tuple[int, ...] | None  # per library gate, when the objective has a cost
    circuit: Circuit
    value: int  # the circuit's cost or depth
    optimal: bool  # value proven minimal
    bound: int  # proven lower bound on the objective
    gate_result: Result
    queries: tuple[Query, ...]
    seconds: float
    nonaffine_extra: int = 0  # see nonaffine_extra(); 0 when the bound does not apply
    symmetry: tuple[str, ...] = ()  # rules of the cost queries' CNFs (certificates re-derive them)


def is_affine(perm: tuple[int, ...]) -> bool:
    """True when ``perm(x) = A·x ⊕ b`` over GF(2) (NOT, CNOT and SWAP circuits compute exactly these)."""
    b = perm[0]
    cols = [perm[1 << i] ^ b for i in range(len(perm).bit_length() - 1)]
    for x, y in enumerate(perm):
        acc = b
        for i, col in enumerate(cols):
            if x >> i & 1:
                acc ^= col
        if acc != y:
            return False
    return True


def nonaffine_extra(spec: Spec, library: Library, costs: tuple[int, ...]) -> int:
    """Extra cost every circuit for a non-affine full permutation pays, above ``k·c_min``.

    Affine gates compose to affine functions, so a circuit for a non-affine function has
    a non-affine gate, costing at least ``c_N``; a circuit of k gates then costs at least
    ``(k − 1)·c_min + c_N = k·c_min + (c_N − c_min)``.  Returns ``c_N − c_min`` (0 when the
    spec is not a full non-affine permutation).  Used to end the k range of ``cost`` early.
    """
    if not spec.is_permutation or is_affine(spec.permutation):
        return 0
    n = library.lines
    nonaffine = [c for g, c in zip(library.gates, costs, strict=True) if not is_affine(g.permutation(n))]
    return min(nonaffine) - min(costs) if nonaffine else 0


def gate_costs(library: Library, model: CostModel, objective: str = "cost") -> tuple[int, ...]:
    """Costs aligned with the library's gates; the ``cost`` objective needs every cost ≥ 1."""
    model.check(library.gates, library.lines)
    costs = tuple(model.cost(g, library.lines) for g in library.gates)
    if objective == "cost" and min(costs) < 1:
        zero = library.gates[costs.index(min(costs))]
        raise ExactsynError(
            f"cost model {model.name} gives {zero.name()} cost 0, so circuits of any length could tie; "
            "objective 'cost' needs every gate to cost at least 1 (use gates-then-cost, or a cost table)"
        )
    return costs


def circuit_value(circuit: Circuit, library: Library, costs: tuple[int, ...] | None) -> int:
    if costs is None:
        return circuit.depth()
    return sum(costs[library.index(g)] for g in circuit.gates)


def cost_encoding(
    spec: Spec, library: Library, k: int, costs: tuple[int, ...], limit: int, order: str, options: EncodingOptions
) -> Encoding:
    return encode(spec, library, k, options, cost_limit=CostLimit(costs, limit, order))


ProofSink = Callable[[str, bytes], str]


def _ask(
    enc: Encoding, kind: str, k: int, limit: int | None, left: float | None, sink: ProofSink | None, solver: str
) -> tuple[Query, Circuit | None]:
    t0 = time.perf_counter()
    if sink is None:
        out = solve_cnf(enc.clauses, solver, left)
        status, model, conflicts, proof = out.status, out.model, out.conflicts, b""
    else:
        run = solve_with_lrat(enc.clauses, left)
        status, model, conflicts, proof = run.status, run.model, run.conflicts or 0, run.proof
    name = None
    if sink is not None and status == "unsat":
        name = sink(f"{kind}-k{k:02d}" + ("" if limit is None else f"-c{limit}"), proof)
    q = Query(
        kind,
        k,
        limit,
        status,
        time.perf_counter() - t0,
        conflicts,
        enc.num_vars,
        len(enc.clauses),
        cnf_sha256(enc.num_vars, enc.clauses) if sink is not None else None,
        name,
        len(proof) if name else 0,
    )
    return q, enc.decode(model) if status == "sat" and model is not None else None


def optimise(
    objective: str,
    gate_result: Result,
    model: CostModel | None = None,
    *,
    time_limit: float | None = None,
    solver: str = "cadical195",
    proof_sink: ProofSink | None = None,
    progress: Callable[[Query], None] | None = None,
    options: EncodingOptions = COST_OPTIONS,
    nonaffine_bound: bool = True,
) -> ObjectiveResult:
    """Tighten ``gate_result`` (a proven minimum-gate result) for ``objective``."""
    if objective not in OBJECTIVES or objective == "gates":
        raise ExactsynError(f"unknown objective {objective!r}; choose one of: {', '.join(OBJECTIVES)}")
    if gate_result.circuit is None or not gate_result.optimal:
        raise ExactsynError("the minimum gate count was not proven, so the objective cannot be optimised")
    spec, library = gate_result.spec, gate_result.library
    start = time.perf_counter()
    costs = None
    extra = 0
    if objective != "depth":
        if model is None:
            raise ExactsynError(f"objective {objective} needs a cost model")
        costs = gate_costs(library, model, objective)
    best = gate_result.circuit
    value = circuit_value(best, library, costs)
    queries: list[Query] = []
    k_star = len(best)

    def left() -> float | None:
        return None if time_limit is None else max(0.0, time_limit - (time.perf_counter() - start))

    def record(q: Query, circ: Circuit | None) -> Circuit | None:
        queries.append(q)
        if progress:
            progress(q)
        if circ is not None:
            verify(circ, spec, library)
        return circ

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
            options.symmetry,
        )

    if objective == "depth":
        floor = 0 if spec.is_identity() else 1
        while value > floor:
            d = value - 1
            q, circ = _ask(encode_depth(spec, library, d), "depth", d, None, left(), proof_sink, solver)
            circ = record(q, circ)
            if q.status == "unsat":
                return done(True, value)
            if q.status == "unknown" or circ is None:
                return done(False, floor)
            best, value = circ, circ.depth()
        return done(True, value)

    assert costs is not None
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
        enc = cost_encoding(spec, library, k, costs, limit, order, options)
        q, circ = _ask(enc, "cost", k, limit, left(), proof_sink, solver)
        circ = record(q, circ)
        if q.status == "unknown":
            return done(False, k_star * c_min)
        if q.status == "unsat":
            k += 1
            continue
        assert circ is not None
        best, value = circ, circuit_value(circ, library, costs)
