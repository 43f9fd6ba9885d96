"""Turn a :class:`~exactsyn.api.synthesis.Synthesis` into JSON-ready data and text (formatting only).

The JSON object keeps the fields that outside scripts rely on: ``lines``,
``gate_count``, ``optimal`` (true only when proven), ``lower_bound``, ``library`` and
``gates`` (application order, each gate as in :mod:`exactsyn.io.jsonio`).

With an objective other than the gate count (:mod:`exactsyn.search.objectives`) the printed
circuit is the objective's: ``gates`` and ``gate_count`` describe it, ``optimal`` says
whether it is proven optimal *for the objective*, and ``objective`` holds ``name``,
``cost_model``, ``value``, ``optimal``, ``lower_bound`` (in the objective's unit) and
``min_gates`` (the proven minimum gate count).  ``costs`` gives the printed circuit's
cost under every built-in cost model (and a user table when one was given), and
``clifford_t`` the counts of its Clifford+T decomposition (``Synthesis.clifford_t``, which
simulates it; this module only formats); ``circuits`` lists every optimal circuit after
``--optima all``, ``count`` their number.
``class_table`` is what the class tables established (:mod:`exactsyn.tables.oracle`),
or null.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import COST_MODELS, CostModel, circuit_cost
from exactsyn.core.words import count
from exactsyn.io.draw import draw_text
from exactsyn.io.jsonio import gate_to_dict
from exactsyn.sat.status import Status
from exactsyn.search.all_optima import EQUIVALENCE, Enumeration
from exactsyn.search.loop import GateResult
from exactsyn.search.objectives import ObjectiveResult
from exactsyn.tables.distance import WHOLE_GROUP_DEPTH
from exactsyn.version import __version__

if TYPE_CHECKING:  # types only (the API module imports the whole pipeline)
    from exactsyn.api.synthesis import Synthesis


def circuit_costs(circuit: Circuit, extra: CostModel | None = None) -> dict[str, int]:
    """The circuit's cost under every built-in model (and ``extra``)."""
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
        f"the circuit has {_gates(len(obj.circuit))} (fewest possible: {k_star})"
    )


def synthesis_to_dict(syn: Synthesis) -> dict[str, Any]:
    """The JSON object of ``synth --format json`` (fields in the module docstring)."""
    res, objective, c = syn.gate_result, syn.objective_result, syn.circuit
    clifford_t = syn.clifford_t
    data: dict[str, Any] = {
        "name": res.spec.name,
        "lines": res.spec.lines,
        "permutation": list(res.spec.outputs) if res.spec.is_permutation else None,
        "gate_count": None if c is None else len(c),
        "optimal": syn.optimal,
        "lower_bound": res.lower_bound,
        "upper_bound": res.upper_bound,
        "library": res.library.name,
        "gates": None if c is None else [gate_to_dict(g) for g in c.gates],
        "source": res.source,
        "initial_bound": {"value": res.initial_bound.value, "reason": res.initial_bound.reason},
        "table_bound": None if res.table_bound is None else res.table_bound.to_dict(),
        "class_table": None if res.class_table is None else res.class_table.to_dict(),
        "encoding": res.encoding.describe(),
        "solver": res.solver,
        "steps": [q.summary() for q in res.steps],
        "seconds": round(syn.seconds, 4),
        "version": __version__,
    }
    if c is not None:
        data["costs"] = circuit_costs(c, syn.cost_model)
    if clifford_t is not None:
        data["clifford_t"] = {
            "t-count": clifford_t.t_count,
            "cnot-count": clifford_t.cnot_count,
            "t-depth": clifford_t.t_depth,
            "h-count": clifford_t.h_count,
            "ancillas": clifford_t.ancillas,
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
                {k: v for k, v in q.summary().items() if k in ("kind", "k", "limit", "status", "seconds")}
                for q in objective.queries
            ],
        }
    if syn.optima is not None:
        data["count"] = syn.optima.count
        data["count_complete"] = syn.optima.complete
        data["count_stopped"] = syn.optima.stopped or None
        if syn.optima.circuits:
            data["circuits"] = [[gate_to_dict(g) for g in circ.gates] for circ in syn.optima.circuits]
    if syn.embedding is not None:
        data["embedding"] = None if c is None else syn.embedding.describe(res.spec, c.permutation())
    elif res.spec.has_choices and c is not None:
        choice = res.spec.find_choice(c.permutation())
        data["choices"] = None if choice is None else {"constants": choice[0], "output_lines": list(choice[1])}
    if syn.notes:
        data["notes"] = list(syn.notes)
    if syn.suggestions:
        data["next_steps"] = [{"setting": s.setting, "value": s.value, "text": s.describe()} for s in syn.suggestions]
    return data


def status_line(res: GateResult) -> str:
    if res.circuit is None:
        return f"no circuit found; proven lower bound {_gates(res.lower_bound)}"
    if res.optimal:
        how = ""
        if res.table_bound is not None:
            tb = res.table_bound
            depth = "full" if tb.depth >= WHOLE_GROUP_DEPTH else f"depth {tb.depth}"
            how = f"; distance table ({depth}): at least {_gates(tb.value)}"
        ct = res.class_table
        if ct is not None:
            what = "optimum" if ct.exact else f"at least {_gates(ct.value)}"
            how += f"; {ct.lines}-line class table of {ct.library} (depth {ct.depth}, {ct.method}): {what}"
        refuted = [s.k for s in res.steps if s.status == Status.UNSAT]
        if refuted:
            span = str(refuted[0]) if len(refuted) == 1 else f"{refuted[0]}..{refuted[-1]}"
            how += f"; SAT refuted k = {span}"
        return f"{_gates(len(res.circuit))}, proven optimal ({res.library.name}{how})"
    return (
        f"{_gates(len(res.circuit))}, NOT proven optimal: the optimum lies in "
        f"[{res.lower_bound}, {len(res.circuit)}] ({res.library.name})"
    )


def gate_line(syn: Synthesis) -> str:
    """The gate search's line; with an objective it is marked as the gate optimum, which the
    circuit printed (optimised for the objective) may exceed."""
    line = status_line(syn.gate_result)
    return line if syn.objective_result is None else f"gate optimum: {line}"


def qasm_header(syn: Synthesis) -> list[str]:
    """The comment lines at the top of a synthesised OpenQASM file (plain or Clifford+T, one style)."""
    res, c = syn.gate_result, syn.circuit
    out = [f"exactsyn {__version__}"]
    if c is not None:
        proven = (
            f"proven optimal (lower bound {res.lower_bound})"
            if syn.optimal
            else f"NOT proven optimal (proven lower bound {res.lower_bound})"
        )
        out.append(f"{_gates(len(c))}, {proven}")
    if syn.objective_result is not None:
        out.append(objective_summary(syn.objective_result))
    out.append(f"library: {res.library.name}")
    return out


def synthesis_to_text(syn: Synthesis) -> str:
    """The text output of ``synth``: a summary header, costs, embedding, the drawing, the gates."""
    res, objective, circuit = syn.gate_result, syn.objective_result, syn.circuit
    out = []
    labels = syn.embedding.labels() if syn.embedding is not None else None
    if res.spec.name:
        out.append(f"# {res.spec.name}")
    out.append(f"# {gate_line(syn)}")
    if objective is not None:
        out.append(f"# {objective_summary(objective)}")
    out += [f"# note: {n}" for n in syn.notes]
    if circuit is not None:
        costs = ", ".join(f"{k} {v}" for k, v in circuit_costs(circuit, syn.cost_model).items())
        out.append(f"# costs: {costs}")
    if syn.embedding is not None and circuit is not None:
        d = syn.embedding.describe(res.spec, circuit.permutation())
        consts = ", ".join(f"line {k} = {v}" for k, v in d["constants"].items()) or "none"
        chosen = " (chosen by the solver)" if d["constants_chosen_by_solver"] else ""
        outs = ", ".join(f"{k} on line {v}" for k, v in d["outputs"].items())
        placed = " (placed by the solver)" if d["outputs_placed_by_solver"] else ""
        out.append(f"# embedding: {res.spec.lines} lines; constants: {consts}{chosen}")
        out.append(f"# outputs: {outs}{placed}; garbage lines: {d['garbage'] or 'none'}")
    if circuit is not None:
        if len(circuit):
            out.append(draw_text(circuit, labels))
            out.append("gates (application order): " + "  ".join(str(g) for g in circuit.gates))
        else:
            out.append("(the empty circuit: the function is the identity)")
    text = "\n".join(out) + "\n"
    if syn.optima is not None:
        text += listing_text(syn.optima)
    return text


def _not_complete(enum: Enumeration) -> str:
    return f"not complete: {enum.stopped or 'stopped early'}"


def listing_summary(enum: Enumeration) -> str:
    more = "" if enum.complete else f" ({_not_complete(enum)}; there may be more)"
    what = "optimal circuit" if enum.count == 1 else "optimal circuits"
    return f"{enum.count} {what} of {_gates(enum.k)} up to reordering adjacent commuting gates{more}"


def count_line(enum: Enumeration) -> str:
    """What ``--optima count`` prints on stdout: the number, or ``at least N (not complete: why)``."""
    return str(enum.count) if enum.complete else f"at least {enum.count} ({_not_complete(enum)})"


def listing_text(enum: Enumeration) -> str:
    """Every listed optimal circuit, one per line, after a summary comment."""
    out = [f"# {listing_summary(enum)}; equivalence: {EQUIVALENCE}"]
    for i, circ in enumerate(enum.circuits, 1):
        out.append(f"{i}: " + "  ".join(str(g) for g in circ.gates))
    return "\n".join(out) + "\n"


def _gates(n: int) -> str:
    return count(n, "gate")
