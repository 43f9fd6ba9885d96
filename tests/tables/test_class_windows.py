"""4-line windows of the optimiser answered from the cached class tables.

References: the distance-table answerer the optimiser used before (exactsyn.optimise.
distance_windows, a breadth-first table and its own bounded meet in the middle) for gate
counts, breadth-first search of the window's optimal words for the least cost, and the
optimiser's own equivalence check plus a simulation here for every output.
"""

from __future__ import annotations

import random
from pathlib import Path

import pytest
from helpers import bfs_upto, optimal_words

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import cost_model
from exactsyn.core.library import make_library
from exactsyn.optimise import optimise_circuit
from exactsyn.optimise.allowed_gates import gate_set
from exactsyn.optimise.class_windows import ClassTableResynthesis, class_table_lines
from exactsyn.optimise.distance_windows import MeetResynthesis
from exactsyn.optimise.resynthesis import TableResynthesis, WindowProblem
from exactsyn.search.heuristic import transformation_based
from exactsyn.specification.samples import random_permutation
from exactsyn.tables.gate_keys import relabel_gate

MCT4 = make_library("mct", 4)


def _circuit(rng: random.Random, lines: int, gates: int) -> Circuit:
    lib = make_library("mct", lines)
    return Circuit(lines, tuple(lib.gates[rng.randrange(len(lib))] for _ in range(gates)))


def test_windows_from_the_class_table_match_the_distance_table(table_cache: Path, monkeypatch) -> None:  # type: ignore[no-untyped-def]
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    gates = gate_set("mct", 4)
    assert class_table_lines(gates) == 4
    tabled = ClassTableResynthesis(gates, 4, None, TableResynthesis(gates, 4, None))
    distance = MeetResynthesis(gates)
    rng = random.Random(3)
    for _ in range(8):
        perm = _circuit(rng, 4, rng.randint(3, 8)).permutation()
        a = tabled.optimum(WindowProblem(perm, 4))
        b = distance.optimum(WindowProblem(perm, 4))
        assert a is not None and Circuit(4, a.gates).permutation() == perm
        if b is not None:
            assert a.gate_count == b.gate_count


def test_least_cost_windows_equal_breadth_first_words(table_cache: Path, monkeypatch) -> None:  # type: ignore[no-untyped-def]
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    gates = gate_set("mct", 4)
    model = cost_model("t-count")
    tabled = ClassTableResynthesis(gates, 4, model, TableResynthesis(gates, 4, model))
    sizes = bfs_upto(MCT4, 3)
    costs = [model.cost(g, 4) for g in MCT4.gates]
    rng = random.Random(8)
    for _ in range(6):
        perm = _circuit(rng, 4, 3).permutation()
        if perm not in sizes:
            continue
        best = tabled.optimum(WindowProblem(perm, 4))
        assert best is not None and best.gate_count == sizes[perm]
        assert best.cost == min(sum(costs[j] for j in w) for w in optimal_words(list(perm), MCT4, sizes))


@pytest.mark.parametrize("objective", ["gates", "gates-then-cost"])
def test_the_optimiser_takes_4_line_windows_by_default_when_tables_are_cached(
    table_cache: Path, monkeypatch, objective: str  # type: ignore[no-untyped-def]
) -> None:
    # transformation-based synthesis of a random 4-line function (Miller, Maslov & Dueck 2003)
    # leaves long circuits that 4-line windows shrink, on lines 1..4 of a 5-line circuit
    tbs = transformation_based(random_permutation(4, random.Random(12)), 4)
    circuit = Circuit(5, tuple(relabel_gate(g, (1, 2, 3, 4)) for g in tbs.gates))
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache / "none"))
    before = optimise_circuit(circuit, library="mct", objective=objective, cost="t-count")
    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    after = optimise_circuit(circuit, library="mct", objective=objective, cost="t-count")
    assert before.window == 3 and after.window == 4
    assert after.output.permutation() == circuit.permutation()
    assert after.output.gate_count <= before.output.gate_count
    assert "class table" in after.resynthesis


def test_a_window_cut_short_by_its_deadline_is_not_remembered(table_cache: Path, monkeypatch) -> None:  # type: ignore[no-untyped-def]
    import time

    monkeypatch.setenv("EXACTSYN_CACHE", str(table_cache))
    gates = gate_set("mct", 4)
    tabled = ClassTableResynthesis(gates, 4, None, TableResynthesis(gates, 4, None))
    rng = random.Random(12)
    perm = _circuit(rng, 4, 30).permutation()  # beyond the small table's depth: a meet in the middle
    past = time.perf_counter() - 1.0
    assert tabled.optimum(WindowProblem(perm, 4), deadline=past) is None
    got = tabled.optimum(WindowProblem(perm, 4))  # without a deadline the optimum comes back
    assert got is not None and Circuit(4, got.gates).permutation() == perm
    assert got.gate_count > 6  # it needed the meet in the middle the deadline stopped
