"""The descent over a class table (every optimal circuit at once) against independent methods.

References: a plain dictionary breadth-first search of all 4-line functions of at most 4
gates (tests/helpers.naive_bfs, nothing of the package), every optimal gate sequence peeled
from it (helpers.optimal_words), their classes up to commuting gates by the greedy normal
form of traces (helpers.trace_normal_form, Anisimov & Knuth 1979), and the SAT path
(cost queries, enumeration of optima) without tables.
"""

from __future__ import annotations

import json
import random
from pathlib import Path

import pytest
from helpers import bfs_upto, edit, naive_bfs, optimal_words, rejected, trace_normal_form

from exactsyn.api.synthesis import synthesise
from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import cost_model, library_costs, objective_value
from exactsyn.core.library import make_library
from exactsyn.sat.options import SearchOptions
from exactsyn.search.all_optima import enumerate_optimal
from exactsyn.search.loop import minimise_gates
from exactsyn.search.objectives import optimise
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.descent import Descent, commutation
from exactsyn.tables.engine import TableLookup
from exactsyn.tables.verify import CheckLookup, check_cost_claim

MCT4 = make_library("mct", 4)
NCV = cost_model("ncv")


@pytest.fixture(scope="module")
def bfs4() -> dict[tuple[int, ...], int]:
    """Every 4-line MCT function of at most 4 gates with its gate count (about 311,000)."""
    return bfs_upto(MCT4, 4)


def _random_function(rng: random.Random, gates: int) -> tuple[int, ...]:
    s = list(range(16))
    for _ in range(gates):
        g = MCT4.gates[rng.randrange(len(MCT4))].permutation(4)
        s = [g[v] for v in s]
    return tuple(s)


def test_naive_bfs_agrees_with_the_small_reference_counts(bfs4: dict[tuple[int, ...], int]) -> None:
    # 4-bit MCT functions needing 0..4 gates: 1, 32, 784, 16204, 294507
    # (Golubitsky, Falconer & Maslov, DAC 2010)
    counts = [0] * 5
    for d in bfs4.values():
        counts[d] += 1
    assert counts == [1, 32, 784, 16204, 294507]
    assert len(naive_bfs([g.permutation(2) for g in make_library("mct", 2).gates], 4)) == 24  # S_4, common practice


def test_cost_count_and_listing_equal_breadth_first_search(mct6, bfs4) -> None:  # type: ignore[no-untyped-def]
    lookup = TableLookup(mct6)
    commute = commutation(lookup)
    ncv = library_costs(MCT4, NCV)
    rng = random.Random(11)
    for _ in range(25):
        f = _random_function(rng, rng.randint(1, 6))
        if f not in bfs4:
            continue
        d = bfs4[f]
        words = optimal_words(list(f), MCT4, bfs4)
        classes = {trace_normal_form(w, MCT4) for w in words}
        descent = Descent(lookup, mct6.layout.pack(f), d, commute)
        assert descent.sequences() == len(words)
        assert descent.traces() == len(classes)
        listed = list(descent.circuits())
        assert len(listed) == len(classes)
        assert {trace_normal_form(w, MCT4) for w in listed} == classes  # every class once
        least = min(sum(ncv[j] for j in w) for w in words)
        value, circuit = descent.cheapest_circuit(ncv)
        assert value == least and circuit in words
        cheapest = {trace_normal_form(w, MCT4) for w in words if sum(ncv[j] for j in w) == least}
        assert descent.traces(ncv) == len(cheapest)
        assert {trace_normal_form(w, MCT4) for w in descent.circuits(ncv)} == cheapest


@pytest.mark.parametrize("count", [pytest.param(1), pytest.param(4, marks=pytest.mark.slow)])
def test_beyond_the_table_depth_the_split_gives_the_same_counts(mct6, count: int) -> None:  # type: ignore[no-untyped-def]
    # Depth-6 table, functions of 7-8 gates (split at level 1-2), against the SAT path,
    # which knows nothing of tables: the same number of classes, the same least NCV cost.
    lookup = TableLookup(mct6)
    commute = commutation(lookup)
    rng = random.Random(5)
    tried = 0
    while tried < count:
        f = _random_function(rng, 7 + tried % 2)
        ans = mct6.synthesise(f)
        if ans.gate_count is None or ans.gate_count <= mct6.depth:
            continue
        tried += 1
        d = ans.gate_count
        descent = Descent(lookup, mct6.layout.pack(f), d, commute)
        res = minimise_gates(from_permutation(list(f)), MCT4, SearchOptions(bounds="cheap"))
        assert res.circuit is not None and len(res.circuit) == d
        sat = enumerate_optimal(from_permutation(list(f)), MCT4, d, keep=True, solver="cadical195")
        assert sat.complete and sat.count == descent.traces()
        ncv = library_costs(MCT4, NCV)
        assert descent.cheapest(ncv) == min(objective_value(c, MCT4, ncv) for c in sat.circuits)


def test_the_checker_re_derives_the_least_cost_with_its_own_lookups(mct6, table_cache: Path) -> None:  # type: ignore[no-untyped-def]
    f = _random_function(random.Random(7), 5)
    d = mct6.level_of(f)
    assert d is not None
    ncv = library_costs(MCT4, NCV)
    engine = Descent(TableLookup(mct6), mct6.layout.pack(f), d, commutation(TableLookup(mct6)))
    check = CheckLookup(mct6.directory, 4)
    separate = Descent(check, check.K.pack(f), d, commutation(check))
    assert separate.cheapest(ncv) == engine.cheapest(ncv) and separate.traces() == engine.traces()
    value = engine.cheapest(ncv)
    assert check_cost_claim("mct", f, d, ncv, value, cache=table_cache).ok
    assert not check_cost_claim("mct", f, d, ncv, value - 1, cache=table_cache).ok


@pytest.mark.parametrize(
    ("gates", "models"),
    [pytest.param(5, ("t-count",)), pytest.param(8, ("ncv", "t-count", "cnot-count"), marks=pytest.mark.slow)],
)
def test_gates_then_cost_from_the_table_through_the_api_with_a_certificate(
    table_cache: Path, monkeypatch: pytest.MonkeyPatch, tmp_path: Path, gates: int, models: tuple[str, ...]
) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    f = _random_function(random.Random(9), gates)
    cert = tmp_path / "cert"
    for model in models:
        syn = synthesise(list(f), library="mct", objective="gates-then-cost", cost=model, certificate=cert)
        obj = syn.objective_result
        assert obj is not None and obj.optimal and obj.class_table is not None and not obj.queries
        assert syn.circuit is not None and Circuit(4, syn.circuit.gates).permutation() == f
        costs = library_costs(MCT4, cost_model(model))
        assert objective_value(syn.circuit, MCT4, costs) == obj.value
        # the SAT path without tables finds the same least cost
        plain = minimise_gates(from_permutation(list(f)), MCT4, SearchOptions(bounds="cheap"))
        sat = optimise("gates-then-cost", plain, cost_model(model), SearchOptions(bounds="cheap"))
        assert sat.optimal and sat.class_table is None and sat.value == obj.value
    from exactsyn.proof.checker import check_certificate

    rep = check_certificate(cert)
    assert rep.ok, rep.lines
    assert any(line.what == "objective optimal" and "descent" in line.detail for line in rep.lines)

    def lower(data: dict) -> None:  # type: ignore[type-arg]
        data["objective"]["value"] -= 1
        data["objective"]["class_table"]["value"] -= 1

    edit(cert, lower)
    assert rejected(cert)


def test_optima_from_the_table_equal_the_sat_enumeration(table_cache: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    rng = random.Random(21)
    for _ in range(3):
        f = _random_function(rng, 6)
        monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
        tabled = synthesise(list(f), library="mct", optima="all")
        monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache / "none"))
        sat = synthesise(list(f), library="mct", optima="all", bounds="cheap")
        assert tabled.optima is not None and sat.optima is not None
        assert tabled.optima.complete and sat.optima.complete and tabled.optima.count == sat.optima.count
        def classes(circuits: tuple[Circuit, ...]) -> set[tuple[int, ...]]:
            return {trace_normal_form(tuple(MCT4.gates.index(g) for g in c.gates), MCT4) for c in circuits}

        assert classes(tabled.optima.circuits) == classes(sat.optima.circuits)


def test_the_certificate_json_names_the_table_of_the_objective(table_cache, monkeypatch, tmp_path) -> None:  # type: ignore[no-untyped-def]
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    cert = tmp_path / "c"
    synthesise(list(_random_function(random.Random(2), 6)), library="mct", objective="gates-then-cost",
               cost="t-count", certificate=cert)  # fmt: skip
    data = json.loads((cert / "result.json").read_text())
    assert data["objective"]["class_table"]["library"] == "mct" and data["objective"]["queries"] == []


@pytest.mark.parametrize("objective", ["gates", "gates-then-cost"])
def test_a_count_from_the_table_is_certified_and_re_counted_by_the_checker(
    table_cache: Path, monkeypatch: pytest.MonkeyPatch, tmp_path: Path, objective: str
) -> None:
    from exactsyn.proof.checker import check_certificate

    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    f = _random_function(random.Random(33), 6)
    cert = tmp_path / "cert"
    syn = synthesise(list(f), library="mct", objective=objective, cost="ncv", optima="count", optima_limit=1,
                     certificate=cert)  # fmt: skip
    assert syn.optima is not None and syn.optima.count == 1 and syn.circuit is not None
    # the SAT listing without tables: every class, to compare the full count the certificate records
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache / "none"))
    sat = synthesise(list(f), library="mct", objective=objective, cost="ncv", optima="count", bounds="cheap")
    assert sat.optima is not None and sat.optima.complete
    data = json.loads((cert / "result.json").read_text())
    section = data["optima"]
    assert section["count"] == sat.optima.count and section["gate_count"] == len(syn.circuit)
    assert (section["least_cost"] is None) == (objective == "gates")
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    rep = check_certificate(cert)
    assert rep.ok, rep.lines
    assert any(line.what == "optima" and line.ok for line in rep.lines)

    def more(data: dict) -> None:  # type: ignore[type-arg]
        data["optima"]["count"] += 1

    edit(cert, more)
    assert rejected(cert)


def test_a_sat_listing_writes_no_count_claim(
    table_cache: Path, monkeypatch: pytest.MonkeyPatch, tmp_path: Path
) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache / "none"))
    cert = tmp_path / "cert"
    synthesise(list(_random_function(random.Random(34), 4)), library="mct", optima="count", certificate=cert,
               bounds="cheap")  # fmt: skip
    assert "optima" not in json.loads((cert / "result.json").read_text())
