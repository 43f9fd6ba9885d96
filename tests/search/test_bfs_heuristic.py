"""Breadth-first tables against published counts, and transformation-based synthesis by simulation."""

from __future__ import annotations

import random

import numpy as np
import pytest
from helpers import naive_bfs
from hypothesis import given, settings
from hypothesis import strategies as st

from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.search.heuristic import cancel_pairs, transformation_based
from exactsyn.tables.bfs import distance_layers, distribution, optimal_circuit, optimal_sizes


def parity(perm: list[int] | tuple[int, ...]) -> int:
    """0 for an even permutation, 1 for odd (n minus the number of cycles, mod 2)."""
    seen = [False] * len(perm)
    cycles = 0
    for start in range(len(perm)):
        if not seen[start]:
            cycles += 1
            k = start
            while not seen[k]:
                seen[k] = True
                k = perm[k]
    return (len(perm) - cycles) % 2


def random_perm(rng: random.Random, lines: int) -> list[int]:
    p = list(range(1 << lines))
    rng.shuffle(p)
    return p


# ----------------------------------------------------------------------------- BFS
def test_nct3_distribution_matches_published_table() -> None:
    counts = distribution(make_library("nct", 3))
    # Shende, Prasad, Markov, Hayes, "Synthesis of reversible logic circuits",
    # IEEE TCAD 22(6), 2003: optimal NCT circuit sizes of all 3-line functions.
    assert counts == [1, 12, 102, 625, 2780, 8921, 17049, 10253, 577]
    assert sum(counts) == 40320
    average = sum(d * c for d, c in enumerate(counts)) / sum(counts)
    # Same source: average optimal size ≈ 5.87 gates.
    assert average == pytest.approx(5.87, abs=0.005)


def test_mct4_bounded_layers_match_published_counts() -> None:
    layers = distance_layers(make_library("mct", 4), 4)
    sizes = [len(layer) for layer in layers]
    # Golubitsky, Falconer, Maslov, "Synthesis of the optimal 4-bit reversible circuits",
    # DAC 2010, table of 4-bit functions by optimal MCT gate count (depths 0..3).
    assert sizes[:4] == [1, 32, 784, 16204]
    # Same table, depth 4 (value from memory).
    assert sizes[4] == 294507


def test_layers_are_disjoint_permutations() -> None:
    layers = distance_layers(make_library("mct", 4), 3)
    seen: set[bytes] = set()
    for layer in layers:
        assert layer.shape[1] == 16
        assert np.all(np.sort(layer, axis=1) == np.arange(16))
        rows = {row.tobytes() for row in layer}
        assert len(rows) == len(layer)
        assert not rows & seen
        seen |= rows


def test_vectorised_table_equals_naive_bfs() -> None:
    lib = make_library("mct", 3, max_controls=1)  # NOT and CNOT only
    gates = [g.permutation(3) for g in lib.gates]
    reference = naive_bfs(gates, 8)
    table = optimal_sizes(lib)
    # NOT+CNOT generate exactly the affine maps of GF(2)^3: 8 * 168 = 1344 (common practice).
    assert len(reference) == 1344
    assert table.as_dict() == reference


def test_nct_on_4_lines_reaches_only_even_functions() -> None:
    # Shende et al. 2003: every NCT gate on 4 lines is an even permutation, so NCT
    # circuits on 4 lines realise only even functions.
    lib = make_library("nct", 4)
    layers = distance_layers(lib, 3)
    assert [len(layer) for layer in layers[:2]] == [1, 28]
    for layer in layers:
        for row in layer.tolist():
            assert parity(row) == 0
    # Control: with MCT the 4 C3X gates (one transposition each) are odd.
    mct1 = distance_layers(make_library("mct", 4), 1)[1]
    assert sum(parity(row) for row in mct1.tolist()) == 4


def test_optimal_circuit_reconstructs_minimal_circuits() -> None:
    lib = make_library("nct", 3)
    table = optimal_sizes(lib)
    rng = random.Random(2024)
    perms = [random_perm(rng, 3) for _ in range(300)] + [list(range(8)), [7, 0, 1, 2, 3, 4, 5, 6]]
    for p in perms:
        c = optimal_circuit(p, lib)
        assert c.permutation() == tuple(p)
        assert len(c) == table.size(p)
        assert all(lib.contains(g) for g in c.gates)
    # every size-d function has a circuit of exactly d gates; spot-check the deepest layer
    deepest = table.permutations()[table.sizes == 8].tolist()
    assert len(deepest) == 577
    for row in deepest[:50]:
        assert len(optimal_circuit(row, lib)) == 8


def test_table_rejects_bad_requests() -> None:
    with pytest.raises(ExactsynError):
        optimal_sizes(make_library("mct", 4))
    with pytest.raises(ExactsynError):
        optimal_circuit([0, 1, 2], make_library("nct", 3))
    nots = make_library("nct", 3, max_controls=0)
    assert distribution(nots) == [1, 3, 3, 1]
    with pytest.raises(ExactsynError, match="not realisable"):
        optimal_circuit([1, 0, 2, 3, 4, 5, 6, 7], nots)


# ----------------------------------------------------------------------------- TBS
@pytest.mark.parametrize("lines", [1, 2, 3, 4, 5])
@pytest.mark.parametrize("bidirectional", [False, True])
def test_tbs_realises_seeded_random_functions(lines: int, bidirectional: bool) -> None:
    rng = random.Random(1000 + lines)
    for _ in range(60):
        p = random_perm(rng, lines)
        c = transformation_based(p, lines, bidirectional=bidirectional)
        assert c.permutation() == tuple(p)
        assert all(g.family == "x" and not g.negative_controls for g in c.gates)
        assert all(a != b for a, b in zip(c.gates, c.gates[1:], strict=False))


FUNCTIONS = st.integers(1, 5).flatmap(lambda n: st.tuples(st.just(n), st.permutations(range(1 << n))))


@settings(max_examples=150, deadline=None)
@given(FUNCTIONS, st.booleans())
def test_tbs_realises_any_function(case: tuple[int, list[int]], bidirectional: bool) -> None:
    lines, p = case
    assert transformation_based(list(p), lines, bidirectional=bidirectional).permutation() == tuple(p)


def test_tbs_on_identity_and_single_not() -> None:
    assert len(transformation_based(list(range(16)), 4)) == 0
    c = transformation_based([1, 0, 3, 2], 2, bidirectional=False)
    assert [str(g) for g in c.gates] == ["x(0)"]


def test_tbs_never_beats_the_optimum() -> None:
    # On 3 lines every MCT gate is an NCT gate, so no TBS circuit may be shorter
    # than the breadth-first optimum (an independent check of both).
    table = optimal_sizes(make_library("nct", 3))
    rng = random.Random(7)
    for _ in range(1500):
        p = random_perm(rng, 3)
        best = table.size(p)
        assert len(transformation_based(p, 3, bidirectional=False)) >= best
        assert len(transformation_based(p, 3, bidirectional=True)) >= best


@st.composite
def circuits(draw: st.DrawFn) -> Circuit:
    lines = draw(st.integers(1, 5))
    gates = make_library("mct", lines).gates
    return Circuit(lines, tuple(draw(st.lists(st.sampled_from(gates), max_size=25))))


@settings(max_examples=150, deadline=None)
@given(circuits())
def test_inverse_after_circuit_is_identity(c: Circuit) -> None:
    identity = tuple(range(1 << c.lines))
    assert c.then(c.inverse()).permutation() == identity
    synthesised = transformation_based(list(c.permutation()), c.lines)
    assert synthesised.then(c.inverse()).permutation() == identity
    assert c.inverse().then(synthesised).permutation() == identity


def test_cancel_pairs_cascades() -> None:
    lib = make_library("nct", 3)
    a, b = lib.gates[0], lib.gates[1]
    assert cancel_pairs([a, b, b, a, b]) == (b,)


def test_tbs_rejects_bad_input() -> None:
    for perm, lines in [([0, 1, 2], 2), ([0, 0, 1, 2], 2), ([0, 1], 0), ([1, 0], 7)]:
        with pytest.raises(ExactsynError):
            transformation_based(perm, lines)
