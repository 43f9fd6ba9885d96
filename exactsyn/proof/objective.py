"""The ``objective`` section of a certificate: writing it and re-checking it.

Written when ``synth --objective`` is not ``gates`` (see :mod:`exactsyn.search.objectives`):

``objective``
    ``name`` (``gates-then-cost`` / ``cost`` / ``depth``), ``cost_model``, ``costs`` (one
    integer per library gate, in library order, or null for depth), ``symmetry`` (rules of
    the cost queries), ``circuit``, ``value``, ``optimal``, and ``queries``: ``kind``
    (``cost`` or ``depth``), ``k`` (gates, or layers for depth), ``limit`` (cost limit or
    null), ``status``, ``proof`` (``<kind>-k<k>[-c<limit>].lrat.gz``), ``cnf_sha256``,
    ``num_vars``, ``num_clauses``, ``seconds``, ``conflicts``, ``proof_bytes``.

The checker re-derives each refuted CNF (:func:`exactsyn.search.objectives.cost_encoding` or
:func:`exactsyn.sat.encode_depth.encode_depth`), checks its LRAT proof, recomputes the
costs of a built-in cost model (a user table's costs are part of the question, like the
spec), simulates the circuit and recomputes its value, and then checks the claim:

* ``depth`` D: a refutation of depth ≤ D − 1 (none needed for D ≤ 1 on a non-identity spec);
* ``gates-then-cost`` C: the gate part proves k* and the circuit has k* gates; a
  refutation of (k*, cost ≤ C') with C' ≥ C − 1;
* ``cost`` C: for every k from k* to ⌊(C − 1 − e)/c_min⌋ a refutation of (k, cost ≤ C')
  with C' ≥ C − 1 (fewer than k* gates is refuted by the gate part; more gates than that
  cost at least C).  ``e`` (``nonaffine_extra``) is re-derived: the function must be a
  non-affine permutation and ``e`` at most the least extra cost of a non-affine gate.
"""

from __future__ import annotations

import gzip
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import COST_MODELS
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.io.jsonio import gate_from_dict, gate_to_dict
from exactsyn.sat.dimacs import cnf_sha256
from exactsyn.sat.encode import EncodingOptions
from exactsyn.sat.encode_depth import encode_depth
from exactsyn.search.objectives import ObjectiveResult, circuit_value, cost_encoding, gate_costs, nonaffine_extra
from exactsyn.spec.reversible import Spec


def objective_proof_writer(directory: Path) -> Callable[[str, bytes], str]:
    directory.mkdir(parents=True, exist_ok=True)

    def sink(stem: str, proof: bytes) -> str:
        name = f"{stem}.lrat.gz"
        with gzip.open(directory / name, "wb", compresslevel=6) as fh:
            fh.write(proof)
        return name

    return sink


def objective_to_dict(res: ObjectiveResult) -> dict[str, Any]:
    return {
        "name": res.objective,
        "cost_model": res.cost_model,
        "costs": None if res.costs is None else list(res.costs),
        "symmetry": list(res.symmetry),
        "circuit": [gate_to_dict(g) for g in res.circuit.gates],
        "value": res.value,
        "optimal": res.optimal,
        "bound": res.bound,
        "nonaffine_extra": res.nonaffine_extra,
        "queries": [
            {
                "kind": q.kind,
                "k": q.k,
                "limit": q.limit,
                "status": q.status,
                "proof": q.proof,
                "proof_format": "lrat",
                "cnf_sha256": q.cnf_sha256,
                "num_vars": q.variables,
                "num_clauses": q.clauses,
                "seconds": round(q.seconds, 4),
                "conflicts": q.conflicts,
                "proof_bytes": q.proof_bytes,
            }
            for q in res.queries
        ],
    }


def check_objective(
    directory: Path,
    d: Any,
    spec: Spec,
    library: Library,
    k_star: int | None,
    note: Callable[[str, bool, str], None],
) -> None:
    """Re-check the ``objective`` section; ``k_star`` is the gate count the gate part proved (or None)."""
    from exactsyn.proof.certificate import read_proof
    from exactsyn.proof.lrat import check_lrat

    try:
        name = str(d["name"])
        costs = None if d.get("costs") is None else tuple(int(c) for c in d["costs"])
        options = EncodingOptions("onehot", tuple(str(s) for s in d.get("symmetry") or ()))
        circuit = Circuit(spec.lines, tuple(gate_from_dict(g) for g in d["circuit"]))
        value, optimal, queries = int(d["value"]), bool(d["optimal"]), list(d.get("queries") or [])
    except (KeyError, TypeError, ValueError):
        raise ExactsynError("certificate: malformed 'objective'") from None
    if name not in ("gates-then-cost", "cost", "depth") or (name != "depth") == (costs is None):
        raise ExactsynError(f"certificate: objective {name!r} is not known or lacks its costs")
    model = d.get("cost_model")
    if costs is not None:
        if len(costs) != len(library.gates):
            note("objective", False, "one cost per library gate is needed")
            return
        if model in COST_MODELS:
            again = gate_costs(library, COST_MODELS[model], "gates-then-cost")
            if again != costs:
                note("objective", False, f"stored costs are not those of cost model {model}")
                return
    if not all(library.contains(g) for g in circuit.gates) or not spec.accepts(circuit.permutation()):
        note("objective", False, "the objective's circuit does not meet the spec in this library")
        return
    got = circuit_value(circuit, library, costs)
    if got != value:
        note("objective", False, f"claims value {value}, the circuit has {got}")
        return
    note("objective", True, f"{name}: circuit of {len(circuit)} gates with value {value}, simulated on every input")

    refuted: dict[tuple[str, int], int] = {}  # (kind, k) -> largest refuted limit (depth: k itself)
    for q in queries:
        if not isinstance(q, dict) or q.get("status") != "unsat":
            continue
        kind, k, limit = q.get("kind"), q.get("k"), q.get("limit")
        label = f"{kind} k={k}" + ("" if limit is None else f" cost<={limit}")
        if kind == "depth" and isinstance(k, int) and k >= 0:
            enc = encode_depth(spec, library, k)
        elif kind == "cost" and costs is not None and isinstance(k, int) and isinstance(limit, int) and k >= 0:
            enc = cost_encoding(
                spec, library, k, costs, limit, "gates" if name == "gates-then-cost" else "cost", options
            )
        else:
            note(label, False, "malformed query")
            continue
        if cnf_sha256(enc.num_vars, enc.clauses) != q.get("cnf_sha256"):
            note(label, False, "re-derived CNF differs from the one proved")
            continue
        try:
            proof = read_proof(directory, str(q.get("proof")))
        except ExactsynError as e:
            note(label, False, e.message)
            continue
        t0 = time.perf_counter()
        rep = check_lrat(enc.num_vars, enc.clauses, proof)
        if not rep.ok:
            note(label, False, f"LRAT step {rep.failed_step} failed: {rep.reason}")
            continue
        note(label, True, f"LRAT refutation checked: {rep.steps} steps, {time.perf_counter() - t0:.2f} s")
        key = (str(kind), k)
        refuted[key] = max(refuted.get(key, -1), limit if isinstance(limit, int) else k)

    if not optimal:
        return
    if name == "depth":
        trivial = value == 0 or (value == 1 and not spec.is_identity())
        ok = trivial or ("depth", value - 1) in refuted
        note(
            "objective optimal", ok, f"depth {value} " + ("is optimal" if ok else f"lacks a refutation of {value - 1}")
        )
        return
    assert costs is not None
    if k_star is None:
        note("objective optimal", False, "the gate part does not prove the minimum gate count")
        return
    if name == "gates-then-cost":
        ks = [k_star] if len(circuit) == k_star else []
        if not ks:
            note("objective optimal", False, f"the circuit has {len(circuit)} gates, not the proven {k_star}")
            return
    elif min(costs) < 1:
        note("objective optimal", False, "objective 'cost' needs every gate to cost at least 1")
        return
    else:
        extra = int(d.get("nonaffine_extra") or 0)
        if extra:
            derived = nonaffine_extra(spec, library, costs)
            if extra > derived:
                note("objective optimal", False, f"claims non-affine extra cost {extra}, re-derived {derived}")
                return
            note("non-affine", True, f"the function is not affine: every circuit has a gate costing {extra} more")
        ks = list(range(k_star, (value - 1 - extra) // min(costs) + 1))
    missing = [k for k in ks if refuted.get(("cost", k), -1) < value - 1]
    if missing:
        note("objective optimal", False, f"no refutation of cost <= {value - 1} for k = {', '.join(map(str, missing))}")
    else:
        note("objective optimal", True, f"cost {value} is optimal: every k in {ks[:1] + ks[-1:]} refuted below it")
