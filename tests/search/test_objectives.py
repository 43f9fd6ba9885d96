"""Objectives beyond gate count, against independent searches that use no SAT.

* least cost over any length: Dijkstra's algorithm over all 8! functions of 3 lines;
* least cost among minimum-gate circuits: every optimal gate sequence from the
  breadth-first size table;
* least depth: breadth-first search whose steps are whole layers (every set of gates on
  pairwise disjoint lines).
"""

from __future__ import annotations

import random
from functools import lru_cache
from pathlib import Path

import pytest
from helpers import dijkstra, layer_depths, optimal_words

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import cost_model
from exactsyn.core.costs import library_costs as gate_costs
from exactsyn.core.gates import x_gate
from exactsyn.core.library import Library, make_library
from exactsyn.errors import ExactsynError
from exactsyn.proof.certificate import proof_writer, write_result
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.options import Hooks, SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.search.objectives import optimise
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.bfs import optimal_sizes

Perm = tuple[int, ...]
NCT3 = make_library("nct", 3)
NCV = cost_model("ncv")


@lru_cache(maxsize=4)
def _dijkstra(library: Library, costs: tuple[int, ...]) -> dict[Perm, int]:
    return dijkstra(library, costs)


@lru_cache(maxsize=4)
def _layer_depths(library: Library) -> dict[Perm, int]:
    return layer_depths(library)


def _gate_result(perm: Perm, lib: Library = NCT3):  # type: ignore[no-untyped-def]
    res = minimise_gates(from_permutation(perm), lib)
    assert res.optimal
    return res


def test_toffoli_costs() -> None:
    # Barenco et al., Phys. Rev. A 52 (1995): Toffoli quantum cost 5; Nielsen & Chuang
    # (2000): 7 T/T-dagger and 6 CNOT in the standard decomposition.
    tof = Circuit(3, (x_gate(2, (0, 1)),))
    assert NCV.cost(tof.gates[0], 3) == 5
    assert cost_model("t-count").cost(tof.gates[0], 3) == 7
    assert cost_model("cnot-count").cost(tof.gates[0], 3) == 6


def test_least_cost_matches_dijkstra() -> None:
    costs = gate_costs(NCT3, NCV)
    dist = _dijkstra(NCT3, costs)
    sizes = optimal_sizes(NCT3).as_dict()
    rng = random.Random(7)
    # Functions whose cheapest circuit needs more gates than the fewest, and others.
    longer = [p for p, c in dist.items() if c <= 9 and _cheapest_at_min_gates(p, sizes, costs) > c]
    plain = [p for p, c in dist.items() if c <= 9]
    sample = rng.sample(longer, 3) + rng.sample(plain, 5)
    for perm in sample:
        res = optimise("cost", _gate_result(perm), NCV)
        assert res.optimal and res.value == dist[perm], perm
        assert res.circuit.permutation() == perm
        assert sum(costs[NCT3.index(g)] for g in res.circuit.gates) == res.value
    assert any(len(optimise("cost", _gate_result(p), NCV).circuit) > sizes[p] for p in sample[:3])


def _cheapest_at_min_gates(perm: Perm, sizes: dict[Perm, int], costs: tuple[int, ...]) -> int:
    if sizes[perm] > 4:
        return -1  # too many words to list quickly; not used as a "longer" example
    return min(sum(costs[j] for j in w) for w in optimal_words(perm, NCT3, sizes))


def test_gates_then_cost_matches_enumeration_of_optimal_words() -> None:
    costs = gate_costs(NCT3, NCV)
    sizes = optimal_sizes(NCT3).as_dict()
    rng = random.Random(8)
    sample = rng.sample(sorted(p for p, k in sizes.items() if 2 <= k <= 5), 10)
    for perm in sample:
        best = min(sum(costs[j] for j in w) for w in optimal_words(perm, NCT3, sizes))
        res = optimise("gates-then-cost", _gate_result(perm), NCV)
        assert res.optimal and res.value == best and len(res.circuit) == sizes[perm]


def test_least_depth_matches_layer_search() -> None:
    depths = _layer_depths(NCT3)
    sizes = optimal_sizes(NCT3).as_dict()
    rng = random.Random(9)
    for perm in rng.sample(sorted(depths), 15):
        res = optimise("depth", _gate_result(perm))
        assert res.optimal and res.value == depths[perm] == res.circuit.depth(), perm
        assert res.value <= sizes[perm]


def test_gates_on_disjoint_lines_have_depth_one() -> None:
    circ = Circuit(4, (x_gate(0), x_gate(1, (2,)), x_gate(3)))
    assert circ.depth() == 1
    res = optimise("depth", _gate_result(circ.permutation(), make_library("nct", 4)))
    assert res.optimal and res.value == 1


def test_cost_objective_refuses_zero_costs() -> None:
    with pytest.raises(ExactsynError):
        optimise("cost", _gate_result((1, 0, 2, 3, 4, 5, 6, 7)), cost_model("t-count"))


def _certify(tmp_path: Path, perm: Perm, objective: str, model_name: str = "ncv") -> Path:
    d = tmp_path / objective
    res = minimise_gates(from_permutation(perm), NCT3, SearchOptions(bounds="cheap"), Hooks(proof=proof_writer(d)))
    obj = optimise(objective, res, cost_model(model_name), hooks=Hooks(proof=proof_writer(d)))
    write_result(d, res, obj)
    return d


@pytest.mark.parametrize("objective", ["gates-then-cost", "cost", "depth"])
def test_objective_certificates_check_and_tampering_fails(tmp_path: Path, objective: str) -> None:
    import json

    # A function whose cheapest circuit (cost 11) needs refutations for k = 3..6.
    perm = (4, 5, 6, 3, 0, 7, 2, 1)
    d = _certify(tmp_path, perm, objective)
    rep = check_certificate(d)
    assert rep.ok, [line for line in rep.lines if not line.ok]
    assert any(line.what == "objective optimal" and line.ok for line in rep.lines)
    data = json.loads((d / "result.json").read_text())
    # Claim a better value than proven: the checker must refuse.
    data["objective"]["value"] -= 1
    (d / "result.json").write_text(json.dumps(data))
    assert not check_certificate(d).ok
    data["objective"]["value"] += 1
    assert (data["objective"]["costs"] is None) == (objective == "depth")  # depth has no gate costs
    if objective != "depth":
        data["objective"]["costs"][0] += 1  # costs not those of the model
        (d / "result.json").write_text(json.dumps(data))
        assert not check_certificate(d).ok
        data["objective"]["costs"][0] -= 1
    # Drop the refutations: optimality is no longer covered.
    data["objective"]["queries"] = []
    (d / "result.json").write_text(json.dumps(data))
    rep = check_certificate(d)
    assert not rep.ok and any(line.what == "objective optimal" and not line.ok for line in rep.lines)


def test_affine_test_and_the_nonaffine_bound() -> None:
    from exactsyn.search.bounds import is_affine, nonaffine_extra

    # NOT, CNOT and SWAP circuits are affine maps over GF(2); a Toffoli is not (common practice).
    affine = Circuit(3, (x_gate(0), x_gate(1, (0,)), x_gate(2, (1,))))
    assert is_affine(affine.permutation())
    assert not is_affine(Circuit(3, (x_gate(2, (0, 1)),)).permutation())
    costs = gate_costs(NCT3, NCV)
    assert nonaffine_extra(from_permutation(affine.permutation()), NCT3, costs) == 0
    # The cheapest non-affine NCT gate is a Toffoli: 5 - 1 = 4 above the cheapest gate.
    assert nonaffine_extra(from_permutation((7, 0, 1, 2, 3, 4, 5, 6)), NCT3, costs) == 4
    # Brute force over all 8! functions: the affine ones are exactly those of the
    # not,cnot library (affine group of order 8 * 168 = 1344).
    sizes = optimal_sizes(make_library("not,cnot", 3)).as_dict()
    assert len(sizes) == 1344
    assert all(is_affine(p) for p in sizes)


def test_tampered_nonaffine_bound_is_refused(tmp_path: Path) -> None:
    import json

    d = _certify(tmp_path, (7, 0, 1, 2, 3, 4, 5, 6), "cost")
    data = json.loads((d / "result.json").read_text())
    # 3 gates with a Toffoli already cost 3 + 4 = 7: the bound alone proves it, no query.
    assert data["objective"]["nonaffine_extra"] == 4 and data["objective"]["queries"] == []
    assert check_certificate(d).ok
    data["objective"]["nonaffine_extra"] = 9
    (d / "result.json").write_text(json.dumps(data))
    assert not check_certificate(d).ok
