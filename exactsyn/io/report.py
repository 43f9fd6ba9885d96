"""Turn a synthesis :class:`~exactsyn.search.loop.Result` into JSON-ready data and text.

The JSON object keeps the fields that outside scripts rely on: ``lines``,
``gate_count``, ``optimal`` (true only when proven), ``lower_bound``, ``library`` and
``gates`` (application order, each gate as in :mod:`exactsyn.io.jsonio`).

With an objective other than the gate count (:mod:`exactsyn.search.objectives`) the printed
circuit is the objective's: ``gates`` and ``gate_count`` describe it, ``optimal`` says
whether it is proven optimal *for the objective*, and ``objective`` holds ``name``,
``cost_model``, ``value``, ``optimal``, ``lower_bound`` (in the objective's unit) and
``min_gates`` (the proven minimum gate count).  ``costs`` gives the printed circuit's
cost under every built-in cost model (and a user table when one was given), and
``clifford_t`` the counts of its Clifford+T decomposition (``--clifford-t``);
``circuits`` lists every optimal circuit after ``--all``, ``count`` their number.
"""

from __future__ import annotations

from dataclasses import replace
from typing import TYPE_CHECKING, Any

from exactsyn import __version__
from exactsyn.io.draw import draw_text
from exactsyn.io.jsonio import gate_to_dict
from exactsyn.search.distance import FULL
from exactsyn.search.loop import Result, Step
from exactsyn.spec.embed import Embedding

if TYPE_CHECKING:
    from exactsyn.core.circuit import Circuit
    from exactsyn.core.costs import CostModel
    from exactsyn.search.all_optima import Enumeration
    from exactsyn.search.objectives import ObjectiveResult


def circuit_costs(circuit: Circuit, extra: CostModel | None = None) -> dict[str, int]:
    """The circuit's cost under every built-in model (and ``extra``)."""
    from exactsyn.core.costs import COST_MODELS, circuit_cost

    models = dict(COST_MODELS)
    if extra is not None:
        models[extra.name] = extra
    return {name: circuit_cost(circuit, m) for name, m in models.items()}


def objective_summary(obj: ObjectiveResult) -> str:
    unit = "depth" if obj.objective == "depth" else f"cost ({obj.cost_model})"
    proven = "proven optimal" if obj.optimal else f"NOT proven optimal (at least {obj.bound})"
    k_star = len(obj.gate_result.circuit or ())
    return (
        f"objective {obj.objective}: {unit} {obj.value}, {proven}; "
        f"{_gates(len(obj.circuit))} (fewest possible: {k_star})"
    )


def result_to_dict(
    res: Result,
    embedding: Embedding | None = None,
    objective: ObjectiveResult | None = None,
    enumeration: Enumeration | None = None,
    cost: CostModel | None = None,
) -> dict[str, Any]:
    c = res.circuit if objective is None else objective.circuit
    data = {
        "name": res.spec.name,
        "lines": res.spec.lines,
        "permutation": list(res.spec.outputs) if res.spec.is_permutation else None,
        "gate_count": None if c is None else len(c),
        "optimal": res.optimal if objective is None else objective.optimal,
        "lower_bound": res.lower_bound,
        "upper_bound": res.upper_bound,
        "library": res.library.name,
        "gates": None if c is None else [gate_to_dict(g) for g in c.gates],
        "source": res.source,
        "initial_bound": {"value": res.initial_bound.value, "reason": res.initial_bound.reason},
        "table_bound": None if res.table_bound is None else res.table_bound.__dict__,
        "encoding": res.encoding.describe(),
        "solver": res.solver,
        "steps": [step_to_dict(s) for s in res.steps],
        "seconds": round(res.seconds, 4),
        "version": __version__,
    }
    if c is not None:
        from exactsyn.core.cliffordt import decompose

        data["costs"] = circuit_costs(c, cost)
        ct = decompose(c)
        data["clifford_t"] = {
            "t_count": ct.t_count,
            "cnot_count": ct.cnot_count,
            "t_depth": ct.t_depth,
            "h_count": ct.h_count,
            "ancillas": ct.ancillas,
        }
    if objective is not None:
        data["objective"] = {
            "name": objective.objective,
            "cost_model": objective.cost_model,
            "value": objective.value,
            "optimal": objective.optimal,
            "lower_bound": objective.bound,
            "min_gates": None if res.circuit is None else len(res.circuit),
            "queries": [
                {"kind": q.kind, "k": q.k, "limit": q.limit, "status": q.status, "seconds": round(q.seconds, 4)}
                for q in objective.queries
            ],
        }
    if enumeration is not None:
        data["count"] = enumeration.count
        data["count_complete"] = enumeration.complete
        if enumeration.circuits:
            data["circuits"] = [[gate_to_dict(g) for g in circ.gates] for circ in enumeration.circuits]
    if embedding is not None:
        data["embedding"] = None if c is None else embedding.describe(res.spec, c.permutation())
    elif res.spec.has_choices and c is not None:
        choice = res.spec.find_choice(c.permutation())
        data["choices"] = None if choice is None else {"constants": choice[0], "output_lines": list(choice[1])}
    return data


def step_to_dict(s: Step) -> dict[str, Any]:
    """One k-query as JSON: answer, time, conflicts, CNF size, proof size."""
    return {
        "k": s.k,
        "status": s.status,
        "seconds": round(s.seconds, 4),
        "conflicts": s.conflicts,
        "variables": s.variables,
        "clauses": s.clauses,
        "proof_bytes": s.proof_bytes,
    }


def status_line(res: Result) -> str:
    if res.circuit is None:
        return f"no circuit found; proven lower bound {res.lower_bound} gates"
    if res.optimal:
        how = ""
        if res.table_bound is not None:
            tb = res.table_bound
            depth = "full" if tb.depth >= FULL else f"depth {tb.depth}"
            how = f"; distance table ({depth}): at least {tb.value} gates"
        refuted = [s.k for s in res.steps if s.status == "unsat"]
        if refuted:
            span = str(refuted[0]) if len(refuted) == 1 else f"{refuted[0]}..{refuted[-1]}"
            how += f"; SAT refuted k = {span}"
        return f"{_gates(len(res.circuit))}, proven optimal ({res.library.name}{how})"
    return (
        f"{_gates(len(res.circuit))}, NOT proven optimal: the optimum lies in "
        f"[{res.lower_bound}, {len(res.circuit)}] ({res.library.name})"
    )


def result_to_text(
    res: Result,
    embedding: Embedding | None = None,
    objective: ObjectiveResult | None = None,
    cost: CostModel | None = None,
) -> str:
    out = []
    labels = embedding.labels() if embedding is not None else None
    if res.spec.name:
        out.append(f"# {res.spec.name}")
    out.append(f"# {status_line(res)}")
    if objective is not None:
        out.append(f"# {objective_summary(objective)}")
        res = replace(res, circuit=objective.circuit)
    if res.circuit is not None:
        costs = ", ".join(f"{k} {v}" for k, v in circuit_costs(res.circuit, cost).items())
        out.append(f"# costs: {costs}")
    if embedding is not None and res.circuit is not None:
        d = embedding.describe(res.spec, res.circuit.permutation())
        consts = ", ".join(f"line {k} = {v}" for k, v in d["constants"].items()) or "none"
        chosen = " (chosen by the solver)" if d["constants_chosen_by_solver"] else ""
        outs = ", ".join(f"{k} on line {v}" for k, v in d["outputs"].items())
        placed = " (placed by the solver)" if d["outputs_placed_by_solver"] else ""
        out.append(f"# embedding: {res.spec.lines} lines; constants: {consts}{chosen}")
        out.append(f"# outputs: {outs}{placed}; garbage lines: {d['garbage'] or 'none'}")
    if res.circuit is not None:
        if len(res.circuit):
            out.append(draw_text(res.circuit, labels))
            out.append("gates (application order): " + "  ".join(str(g) for g in res.circuit.gates))
        else:
            out.append("(the empty circuit: the function is the identity)")
    return "\n".join(out) + "\n"


def _gates(n: int) -> str:
    return f"{n} gate" if n == 1 else f"{n} gates"
