"""Layer tables (steps are layers of gates on disjoint lines): the minimum depth of a function.

References: a plain dictionary breadth-first search whose steps are layers
(tests/helpers.layer_depths, nothing of the package), and the SAT depth objective
(exactsyn.sat.encode_depth) without tables.
"""

from __future__ import annotations

import random
from pathlib import Path

import pytest
from helpers import edit, layer_depths, rejected

from exactsyn.api.synthesis import synthesise
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.search.objectives import optimise
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables import load
from exactsyn.tables.gate_keys import gate_set

MCT4 = make_library("mct", 4)


def test_layers_are_the_sets_of_gates_on_disjoint_lines() -> None:
    # 103 layers of the 32 mct gates on 4 lines, counted independently here
    gs = gate_set("mct-layers", 4)
    assert len(gs) == 103 and len(set(gs.keys)) == 103
    assert all(not (set(a.lines) & set(b.lines)) for step in gs.steps for a in step for b in step if a != b)
    assert gate_set("mct", 4).steps == tuple((g,) for g in MCT4.gates)


def test_layer_table_levels_equal_layer_breadth_first_search(table_cache: Path) -> None:
    t = load("mct-layers", cache=table_cache)
    depths = layer_depths(MCT4, 3)
    counts = [0] * 4
    for d in depths.values():
        counts[d] += 1
    assert t.distribution() == counts  # 1, 103, 5402, 222778 functions of depth 0..3
    rng = random.Random(4)
    for f, d in rng.sample(sorted(depths.items()), 40):
        ans = t.synthesise(f)
        assert ans.optimal and ans.gate_count == d and ans.gates is not None
        circuit = Circuit(4, ans.gates)
        assert circuit.permutation() == f and circuit.depth() == d


def test_depth_from_the_layer_table_through_the_api_with_a_certificate(
    table_cache: Path, monkeypatch: pytest.MonkeyPatch, tmp_path: Path
) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    rng = random.Random(6)
    checked = 0
    while checked < 2:
        layers = rng.randint(3, 5)
        s = list(range(16))
        for _ in range(layers * 2):
            g = MCT4.gates[rng.randrange(len(MCT4))].permutation(4)
            s = [g[v] for v in s]
        f = tuple(s)
        cert = tmp_path / f"c{checked}"
        syn = synthesise(list(f), library="mct", objective="depth", certificate=cert)
        obj = syn.objective_result
        if obj is None or obj.class_table is None:
            continue  # deeper than the small table's reach (6 layers): SAT answered
        checked += 1
        assert obj.optimal and syn.circuit is not None and syn.circuit.depth() == obj.value
        # the SAT depth objective without tables agrees
        plain = minimise_gates(from_permutation(list(f)), MCT4, SearchOptions(bounds="cheap"))
        sat = optimise("depth", plain, None, SearchOptions(bounds="cheap"))
        assert sat.optimal and sat.value == obj.value
        rep = check_certificate(cert)
        assert rep.ok, rep.lines

        def deeper(data: dict) -> None:  # type: ignore[type-arg]
            data["objective"]["class_table"]["value"] -= 1
            data["objective"]["value"] -= 1

        edit(cert, deeper)
        assert rejected(cert)
