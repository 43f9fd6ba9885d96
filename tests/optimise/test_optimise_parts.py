"""The optimiser's parts against independent references: enumerated libraries, simulation,
breadth-first search, published table counts."""

from __future__ import annotations

import random
from itertools import product

import numpy as np
import pytest
from helpers import optimal_words

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import COST_MODELS
from exactsyn.core.gates import peres_gate, swap_gate, x_gate
from exactsyn.core.library import PRESET_KINDS, make_library
from exactsyn.errors import ExactsynError
from exactsyn.optimise.allowed_gates import gate_set
from exactsyn.optimise.commute import commute, simulate_commute
from exactsyn.optimise.distance_windows import MeetResynthesis
from exactsyn.optimise.equivalence import check_equivalent
from exactsyn.optimise.resynthesis import TableResynthesis, WindowProblem
from exactsyn.optimise.windows import GatePool, grow
from exactsyn.tables.bfs import optimal_sizes
from exactsyn.tables.distance import meet_in_the_middle


# ------------------------------------------------------------------ gate sets
@pytest.mark.parametrize("preset", sorted(PRESET_KINDS))
@pytest.mark.parametrize(("cap", "coupling"), [(None, ""), (1, ""), (None, "0-1-2-3"), (2, "star")])
def test_gate_set_agrees_with_the_enumerated_library(preset: str, cap: int | None, coupling: str) -> None:
    everything = make_library("mct,swap,cswap,negative,peres", 4).gates  # every gate exactsyn knows on 4 lines
    try:
        enumerated = set(make_library(preset, 4, cap, coupling).gates)
    except ExactsynError:
        enumerated = set()
    gs = gate_set(preset, 4, max_controls=cap, coupling=coupling)
    for g in everything:
        assert gs.allows(g) == (g in enumerated), (preset, cap, coupling, g, gs.why_not(g))


def test_window_library_is_the_induced_library() -> None:
    gs = gate_set("nct", 6, coupling="0-1,1-2,2-5,4-5")
    # lines (1, 2, 5): edges 1-2 and 2-5 -> local 0-1, 1-2 (a path)
    assert gs.induced((1, 2, 5)) == ((0, 1), (1, 2))
    lib = gs.window_library(3, gs.induced((1, 2, 5)))
    assert lib is not None and set(lib.gates) == set(make_library("nct", 3, None, "0-1-2").gates)
    # lines (0, 3, 4) induce no edge: only NOT gates may be used there
    none = gs.window_library(3, gs.induced((0, 3, 4)))
    assert none is not None and all(len(g.lines) == 1 for g in none.gates) and len(none.gates) == 3


def test_auto_library_is_the_smallest_preset_holding_the_input() -> None:
    assert gate_set("auto", 4, [x_gate(0, [1, 2])]).name == "nct"
    assert gate_set("auto", 4, [x_gate(0, [1, 2, 3])]).name == "mct"
    assert gate_set("auto", 4, [x_gate(0, [1], [2])]).name == "mixed"
    assert gate_set("auto", 4, [swap_gate(0, 1, [2])]).name == "nct-swap"
    assert gate_set("auto", 4, [peres_gate(0, 1, 2)]).name == "nct-peres"
    both = gate_set("auto", 4, [peres_gate(0, 1, 2), x_gate(0, [1, 2, 3])])
    assert both.name == "mct,peres" and both.allows(peres_gate(2, 1, 0))


# ------------------------------------------------------------------ commutation
def _sim(a, b) -> bool:  # type: ignore[no-untyped-def]
    """Independent reference: both orders as permutations of all states of 4 lines."""
    return Circuit(4, (a, b)).permutation() == Circuit(4, (b, a)).permutation()


def test_commutation_rule_matches_simulation_on_every_pair_of_four_line_gates() -> None:
    gates = make_library("mct,swap,cswap,negative,peres", 4).gates
    xs = [g for g in gates if g.family == "x"]
    assert len(xs) == 108  # 4 * (1 + 3*2 + 3*4 + 8): every polarity of every x gate
    for a, b in product(xs, xs):
        assert commute(a, b) == _sim(a, b), (a, b)
    rng = random.Random(5)
    others = [g for g in gates if g.family != "x"]
    for _ in range(3000):
        a, b = rng.choice(gates), rng.choice(others)
        assert commute(a, b) == _sim(a, b) == commute(b, a), (a, b)


def test_commutation_on_many_lines_uses_the_rule() -> None:
    big = x_gate(40, list(range(20)))
    assert commute(big, x_gate(39, list(range(10, 30))))  # same kind of gate, disjoint targets unread
    assert not commute(big, x_gate(5, [40]))  # reads the target of big and writes one of its controls
    assert commute(big, x_gate(41, [40], [3]))  # reads 40, but only when line 3 is 0 while big needs it 1
    assert simulate_commute(swap_gate(0, 30, list(range(1, 20))), x_gate(31, [0])) is None


# ------------------------------------------------------------------ tables
def test_three_line_tables_reproduce_the_published_distribution() -> None:
    res = TableResynthesis(gate_set("nct", 3), 3)
    table = res.table(3, ())
    assert table is not None
    # Shende, Prasad, Markov, Hayes, IEEE TCAD 22(6), 2003: NCT functions by minimum gate count
    assert np.bincount(table.sizes).tolist() == [1, 12, 102, 625, 2780, 8921, 17049, 10253, 577]
    rng = random.Random(3)
    for _ in range(200):
        perm = tuple(rng.sample(range(8), 8))
        best = res.optimum(WindowProblem(perm, 3))
        assert best is not None and Circuit(3, best.gates).permutation() == perm
        assert best.gate_count == len(best.gates) == optimal_sizes(table.library).size(perm)


@pytest.mark.parametrize(("library", "cost"), [("nct", "ncv"), ("mixed", "ncv"), ("nct-swap", "t-count")])
def test_gates_then_cost_tables_against_every_optimal_circuit(library: str, cost: str) -> None:
    model = COST_MODELS[cost]
    res = TableResynthesis(gate_set(library, 3), 3, model)
    table = res.table(3, ())
    assert table is not None
    lib = table.library
    sizes = optimal_sizes(lib).as_dict()
    gate_cost = [model.cost(g, 3) for g in lib.gates]
    rng = random.Random(11)
    for _ in range(25 if library == "nct" else 10):
        perm = tuple(rng.sample(range(8), 8))
        if sizes[perm] > 6:
            continue
        # independent reference: enumerate every minimum-length circuit (no dynamic programme)
        cheapest = min(sum(gate_cost[j] for j in word) for word in optimal_words(perm, lib, sizes))
        best = res.optimum(WindowProblem(perm, 3))
        assert best is not None and best.cost == cheapest
        assert sum(model.cost(g, 3) for g in best.gates) == cheapest
        assert Circuit(3, best.gates).permutation() == perm


def test_four_line_meet_in_the_middle_matches_the_full_search() -> None:
    res = MeetResynthesis(gate_set("nct", 4))  # lookup, then at most WINDOW_EXTRA = 3 layers more
    table = res.table(())
    assert table is not None and table.reach == 5
    rng = random.Random(2)
    lib = table.library
    for length in (4, 7, 8):
        gates = tuple(rng.choice(lib.gates) for _ in range(length))
        perm = Circuit(4, gates).permutation()
        best = res.optimum(WindowProblem(perm, 4))
        # reference: the unbounded meet in the middle of exactsyn.tables.distance (exact up to 10 gates)
        ref = meet_in_the_middle(perm, lib)
        assert best is not None and ref.exact is not None
        assert best.gate_count == ref.exact and Circuit(4, best.gates).permutation() == perm
        assert res.optimum(WindowProblem(perm, 4, (), below=best.gate_count)) is not None  # memo


# ------------------------------------------------------------------ windows
def test_windows_move_gates_only_past_commuting_gates() -> None:
    a, b, c = x_gate(1, [0]), x_gate(3, [2]), x_gate(2, [1])
    seq_gates = [a, b, x_gate(1, [0])]  # b commutes with both: the pair cancels around it
    pool = GatePool()
    seq = [pool.intern(g) for g in seq_gates]
    win = grow(seq, pool, 0, 3, 10)
    assert win is not None and win.members == (0, 2) and win.before == (1,) and win.after == ()
    # c reads line 1 (written by a) and writes line 2 (read by b): it blocks, and b depends on it
    seq = [pool.intern(g) for g in (a, c, b, x_gate(1, [0]))]
    win = grow(seq, pool, 0, 2, 10)
    assert win is None  # c and b are reached; a's partner depends on c
    back = grow(seq, pool, 3, 2, 10, forward=False)
    assert back is None


# ------------------------------------------------------------------ equivalence
def test_bit_parallel_check_against_plain_simulation() -> None:
    rng = random.Random(8)
    for _ in range(40):
        n = rng.randint(1, 9)
        gates = []
        for _ in range(rng.randint(0, 30)):
            kind = rng.random()
            if kind < 0.15 and n >= 2:
                a, b = rng.sample(range(n), 2)
                rest = [x for x in range(n) if x not in (a, b)]
                gates.append(swap_gate(a, b, rng.sample(rest, rng.randint(0, min(2, len(rest))))))
            elif kind < 0.25 and n >= 3:
                gates.append(peres_gate(*rng.sample(range(n), 3)))
            else:
                t = rng.randrange(n)
                rest = [x for x in range(n) if x != t]
                ctl = rng.sample(rest, rng.randint(0, min(3, len(rest))))
                neg = [x for x in ctl if rng.random() < 0.3]
                gates.append(x_gate(t, [x for x in ctl if x not in neg], neg))
        a = Circuit(n, tuple(gates))
        b = Circuit(n, tuple(gates[: len(gates) // 2]))
        for other in (a, b):
            res = check_equivalent(a, other)
            pa, pb = a.permutation(), other.permutation()
            assert res.method == "exhaustive" and res.equal == (pa == pb)
            if not res.equal:
                assert res.counterexample is not None and pa[res.counterexample] != pb[res.counterexample]


def test_random_check_beyond_24_lines_finds_a_rare_difference() -> None:
    base = Circuit(40, tuple(x_gate(i + 1, [i]) for i in range(39)))
    rare = Circuit(40, base.gates + (x_gate(39, [0, 5, 17, 30]),))  # fires on 1 input in 16
    same = check_equivalent(base, base, seed=4)
    assert same.method == "random" and same.equal and same.inputs >= 100_000
    diff = check_equivalent(base, rare, seed=4)
    assert not diff.equal and diff.counterexample is not None
    x = diff.counterexample
    # plain integer simulation of the one input
    assert Circuit(40, base.gates).apply(np.array([x], dtype=np.int64))[0] != rare.apply(np.array([x]))[0]
