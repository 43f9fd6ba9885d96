"""The SAT engine against independent references: breadth-first search and worked facts."""

from __future__ import annotations

import random

import numpy as np
import pytest
from helpers import hwb, perm_from_bits, random_perm

from exactsyn.core.library import make_library
from exactsyn.errors import NoCircuitError
from exactsyn.sat.encode import EncodingOptions, encode, options_for
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation, parse_cycles
from exactsyn.tables.bfs import optimal_sizes
from exactsyn.tables.distance import meet_in_the_middle

NCT3 = make_library("nct", 3)


def sat_optimum(perm: list[int], library=NCT3, encoding: str = "onehot") -> int:  # type: ignore[no-untyped-def]
    # bounds="cheap": the SAT engine decides every k (no distance tables).
    res = minimise_gates(from_permutation(perm), library, SearchOptions(encoding=options_for(encoding), bounds="cheap"))
    assert res.optimal and res.circuit is not None
    # Independent check: numpy simulation of the decoded circuit.
    assert list(res.circuit.permutation()) == perm
    return len(res.circuit)


def test_sat_matches_breadth_first_on_500_random_3bit_functions() -> None:
    # Independent method: breadth-first enumeration (exactsyn.tables.bfs), whose distribution
    # is checked against Shende et al., IEEE TCAD 2003, in tests/search/test_bfs_heuristic.py.
    table = optimal_sizes(NCT3)
    rng = random.Random(20261201)
    for _ in range(500):
        p = random_perm(rng, 3)
        assert sat_optimum(p) == table.size(p), p


def _hardest_3bit() -> list[list[int]]:
    table = optimal_sizes(NCT3)
    hardest = table.permutations()[table.sizes == 8]
    # Shende et al., IEEE TCAD 2003: 577 functions need 8 NCT gates.
    assert len(hardest) == 577
    return [[int(v) for v in row] for row in hardest]


@pytest.mark.slow
def test_sat_matches_breadth_first_on_all_577_hardest_3bit_functions() -> None:
    for p in _hardest_3bit():
        assert sat_optimum(p) == 8


def test_sat_matches_breadth_first_on_a_seeded_sample_of_the_hardest_3bit_functions() -> None:
    # The whole set runs under -m slow (and in scripts/soundness_all3.py); CI takes a seeded quarter.
    for p in random.Random(11).sample(_hardest_3bit(), 144):
        assert sat_optimum(p) == 8


def test_textbook_and_onehot_agree_with_breadth_first_on_a_sample() -> None:
    table = optimal_sizes(NCT3)
    rng = random.Random(7)
    for _ in range(40):
        p = random_perm(rng, 3)
        assert sat_optimum(p, encoding="textbook") == table.size(p)


def test_every_model_of_an_unbroken_encoding_is_a_circuit_for_the_spec() -> None:
    # Without symmetry breaking, models are exactly the k-gate circuits: count them
    # with the solver and compare with a brute-force count over all 12^k sequences.
    from itertools import product

    from pysat.solvers import Solver

    p = [1, 0, 3, 2, 5, 4, 7, 6]  # NOT on line 0 (common practice: X flips one bit)
    spec = from_permutation(p)
    k = 3
    enc = encode(spec, NCT3, k, EncodingOptions("onehot", ()))
    brute = sum(1 for seq in product(range(len(NCT3)), repeat=k) if list(_run(seq)) == p)
    gvars = [v for row in enc.gate_vars for v in row]
    count = 0
    with Solver(name="cadical195", bootstrap_with=enc.clauses) as s:
        while s.solve():
            model = s.get_model()
            circ = enc.decode(model)
            assert list(circ.permutation()) == p
            count += 1
            s.add_clause([-v if v in set(model) else v for v in gvars])
    assert count == brute > 0


def _run(seq: tuple[int, ...]) -> np.ndarray:
    states = np.arange(8, dtype=np.int64)
    for j in seq:
        states = NCT3.gates[j].apply(states)
    return states


# ------------------------------------------------------------------ worked facts
def test_toffoli_is_one_gate() -> None:
    # Toffoli gate flips line 2 when lines 0 and 1 are 1 (common practice).
    assert sat_optimum(perm_from_bits(3, lambda a, b, c: (a, b, c ^ (a & b)))) == 1


def test_peres_is_two_gates() -> None:
    # Peres gate (a, b, c) -> (a, a^b, c^ab): Toffoli then CNOT (Peres, Phys. Rev. A 32, 1985).
    assert sat_optimum(perm_from_bits(3, lambda a, b, c: (a, a ^ b, c ^ (a & b)))) == 2


def test_swap_is_three_cnots() -> None:
    # SWAP = 3 CNOTs (common practice).
    swap = from_permutation(perm_from_bits(2, lambda a, b: (b, a)))
    res = minimise_gates(swap, make_library("nct", 2), SearchOptions(bounds="cheap"))
    assert res.circuit is not None and res.optimal
    assert len(res.circuit) == 3 and all(g.name() == "CNOT" for g in res.circuit.gates)


def test_controlled_swap_is_three_nct_gates() -> None:
    # Fredkin (controlled swap) = CNOT, Toffoli, CNOT (common practice).
    assert sat_optimum(perm_from_bits(3, lambda a, b, c: (a, c, b) if a else (a, b, c))) == 3


def test_in_place_majority_is_three_gates() -> None:
    # MAJ(a, b, c) -> (a^c, b^c, maj(a, b, c)) takes 3 gates (Cuccaro, Draper, Kutin,
    # Moulton, "A new quantum ripple-carry addition circuit", 2004).
    def maj(a: int, b: int, c: int) -> tuple[int, int, int]:
        return a ^ c, b ^ c, (a & b) | (a & c) | (b & c)

    assert sat_optimum(perm_from_bits(3, maj)) == 3


def test_odd_permutation_with_nct_on_four_lines_is_refused_at_once() -> None:
    # Shende et al., IEEE TCAD 2003: NCT on n >= 4 lines realises only even permutations.
    odd = list(range(16))
    odd[0], odd[1] = 1, 0
    with pytest.raises(NoCircuitError, match="odd"):
        minimise_gates(from_permutation(odd), make_library("nct", 4))
    # ... while mct (which has 3-control gates, odd on 4 lines) finds one at once.
    mct4 = make_library("mct", 4)
    res = minimise_gates(from_permutation(odd), mct4)
    assert res.circuit is not None and res.optimal and list(res.circuit.permutation()) == odd
    # independent method: meet in the middle over the depth-3 table (exact up to 6 gates, no SAT)
    assert len(res.circuit) == meet_in_the_middle(tuple(odd), mct4, 3).exact


def test_time_limit_returns_a_labelled_heuristic_circuit() -> None:
    spec = from_permutation(hwb(4))
    res = minimise_gates(spec, make_library("mct", 4), SearchOptions(time_limit=1.0))
    assert res.circuit is not None and not res.optimal
    assert res.lower_bound <= 11 <= len(res.circuit)
    assert list(res.circuit.permutation()) == hwb(4)


def test_hwb4_needs_eleven_mct_gates_with_distance_tables() -> None:
    # Golubitsky, Falconer, Maslov, DAC 2010: hwb4 needs 11 MCT gates (from memory).
    res = minimise_gates(from_permutation(hwb(4)), make_library("mct", 4), SearchOptions(bounds="table"))
    assert res.optimal and res.circuit is not None and res.table_bound is not None
    assert len(res.circuit) == 11
    assert list(res.circuit.permutation()) == hwb(4)


@pytest.mark.slow
def test_hwb4_needs_eleven_mct_gates() -> None:
    # Golubitsky, Falconer, Maslov, DAC 2010: hwb4 needs 11 MCT gates (from memory).
    # Pure SAT: every k refuted by the solver (several minutes).
    res = minimise_gates(from_permutation(hwb(4)), make_library("mct", 4), SearchOptions(bounds="cheap"))
    assert res.optimal and res.circuit is not None
    assert len(res.circuit) == 11
    assert list(res.circuit.permutation()) == hwb(4)


def test_a_function_outside_the_group_a_library_generates_is_no_circuit() -> None:
    # NOT and CNOT circuits compute only affine maps (common practice); (3 7)(4 5) on 3 lines
    # is even (so parity allows it) but not affine. Breadth-first search over the whole
    # group NOT/CNOT generate agrees that it is unreachable.
    spec = parse_cycles("(3 7)(4 5)", 3)
    lib = make_library("not,cnot", 3)
    assert spec.permutation not in optimal_sizes(lib)
    for bounds in ("table", "cheap"):
        with pytest.raises(NoCircuitError, match="affine"):
            minimise_gates(spec, lib, SearchOptions(bounds=bounds))
