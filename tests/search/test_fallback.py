"""The fallback circuit in every library: rewriting rules, completions, the search's upper bound.

Every rule is checked against a reference built without it: the gate's own permutation
(a multiple-control Toffoli flips its target when all controls are 1, common practice), a
double transposition written down entry by entry, the spec's own acceptance test.
"""

from __future__ import annotations

import random

import pytest

import exactsyn as ex
from exactsyn.cli.synth import next_steps_line
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate
from exactsyn.core.library import make_library
from exactsyn.search.affine import affine_circuit, affine_mover, affine_parts, apply_rows
from exactsyn.search.events import SearchEvent
from exactsyn.search.fallback import (
    complete_permutation,
    fallback_circuit,
    next_steps,
    sub_libraries,
)
from exactsyn.search.heuristic import transformation_based
from exactsyn.search.rewrite import CannotRewrite, _v_chain, double_transposition, lower_gate, rewrite_circuit
from exactsyn.specification.reversible import from_permutation
from exactsyn.specification.samples import random_permutation


def _even_perm(n: int, rng: random.Random) -> list[int]:
    return list(random_permutation(n, rng, even=True))


@pytest.mark.parametrize("m", [3, 4, 5])
def test_v_chain_is_the_multiple_control_gate_with_4m_minus_8_toffolis(m: int) -> None:
    # Barenco et al., Phys. Rev. A 52 (1995), lemma 7.2: C^m X from 4(m-2) Toffolis, m-2 borrowed lines
    n = 2 * m - 1
    target = n - 1
    gates = _v_chain(list(range(m)), list(range(m, 2 * m - 2)), target)
    assert len(gates) == 4 * (m - 2) and all(g.num_controls == 2 for g in gates)
    assert Circuit(n, tuple(gates)).permutation() == x_gate(target, tuple(range(m))).permutation(n)


@pytest.mark.parametrize(("n", "m"), [(5, 3), (6, 4), (6, 3), (5, 2)])
def test_lowering_with_one_or_more_free_lines_keeps_the_gate(n: int, m: int) -> None:
    nct = make_library("nct", n)
    g = x_gate(0, tuple(range(1, m + 1)))
    out = lower_gate(g, n, nct.contains)
    assert all(nct.contains(h) for h in out)
    assert Circuit(n, tuple(out)).permutation() == g.permutation(n)


def test_a_gate_on_every_line_cannot_be_lowered_alone() -> None:
    nct = make_library("nct", 4)
    with pytest.raises(CannotRewrite):
        lower_gate(x_gate(0, (1, 2, 3)), 4, nct.contains)


@pytest.mark.parametrize("n", [3, 4, 5, 6])
def test_double_transposition_swaps_two_pairs_and_nothing_else(n: int) -> None:
    rng = random.Random(n)
    for _ in range(25):
        a, b, c, d = rng.sample(range(1 << n), 4)
        expected = list(range(1 << n))
        expected[a], expected[b], expected[c], expected[d] = b, a, d, c  # written down, no gates
        gates = double_transposition(a, b, c, d, n)
        assert n == 3 or all(g.num_controls <= n - 2 for g in gates)  # no odd gate on n >= 4 lines
        assert Circuit(n, tuple(gates)).permutation() == tuple(expected)


@pytest.mark.parametrize(
    ("preset", "coupling"),
    [("nct", ""), ("nct", "chain"), ("mct", "star"), ("nct-peres", ""), ("not,cnot,peres", ""), ("nct-swap", "ring")],
)
@pytest.mark.parametrize("n", [4, 5])
def test_rewriting_a_transformation_based_circuit_keeps_its_function(preset: str, coupling: str, n: int) -> None:
    lib = make_library(preset, n, None, coupling)
    rng = random.Random(n * 7 + len(preset))
    for _ in range(3):
        p = _even_perm(n, rng)
        out = rewrite_circuit(transformation_based(p, n), lib)
        assert out.permutation() == tuple(p)
        bad = [g for g in out.gates if not lib.contains(g)]
        assert not bad, bad[:3]


def test_an_odd_function_has_no_nct_rewrite_on_four_lines() -> None:
    p = list(range(16))
    p[0], p[1] = 1, 0  # one transposition: odd (Shende et al., IEEE TCAD 2003)
    with pytest.raises(CannotRewrite, match="odd"):
        rewrite_circuit(transformation_based(p, 4), make_library("nct", 4))


def test_a_coupling_graph_in_two_parts_is_named_as_the_reason() -> None:
    lib = make_library("nct", 4, None, "0-1-2")  # line 3 is coupled to nothing
    fb = fallback_circuit(from_permutation(list(x_gate(3, (0, 1)).permutation(4))), lib)
    assert fb.circuit is None and "does not connect" in fb.reason


PRESETS = ["nct", "mct", "mixed", "nct-swap", "mct-swap", "mixed-swap", "nct-peres"]


@pytest.mark.parametrize("preset", PRESETS)
@pytest.mark.parametrize("n", [3, 4, 5])
def test_every_preset_gets_a_fallback_that_meets_the_spec(preset: str, n: int) -> None:
    lib = make_library(preset, n)
    rng = random.Random(hash((preset, n)) & 0xFFFF)
    p = _even_perm(n, rng)
    fb = fallback_circuit(from_permutation(p), lib)
    assert fb.circuit is not None, fb.reason
    assert fb.circuit.permutation() == tuple(p)
    assert all(lib.contains(g) for g in fb.circuit.gates)
    assert fb.how


def test_affine_functions_in_not_cnot_libraries_use_gaussian_elimination() -> None:
    rng = random.Random(5)
    for n in (2, 3, 4, 5):
        gates = tuple(
            x_gate(t, (rng.choice([c for c in range(n) if c != t]),)) if n > 1 and rng.random() < 0.7 else x_gate(t)
            for t in (rng.randrange(n) for _ in range(12))
        )
        p = Circuit(n, gates).permutation()
        parts = affine_parts(p, n)
        assert parts is not None
        assert Circuit(n, tuple(affine_circuit(*parts, n) or ())).permutation() == p
        fb = fallback_circuit(from_permutation(list(p)), make_library("not,cnot", n))
        assert fb.circuit is not None and fb.circuit.permutation() == p and "Gaussian" in fb.how
    toffoli = x_gate(0, (1, 2)).permutation(3)
    assert affine_parts(toffoli, 3) is None  # x0 ^= x1 x2 is not affine


def test_affine_mover_sends_the_points_where_asked() -> None:
    rng = random.Random(9)
    for _ in range(200):
        n = rng.randint(2, 6)
        k = rng.randint(1, min(n + 1, 1 << n))
        src, dst = rng.sample(range(1 << n), k), rng.sample(range(1 << n), k)
        move = affine_mover(src, dst, n)
        if move is not None:
            rows, v = move
            assert [apply_rows(rows, s) ^ v for s in src] == dst


def test_completions_meet_specs_with_dont_cares_and_choices(tmp_path) -> None:  # type: ignore[no-untyped-def]
    adder = tmp_path / "add.toml"
    adder.write_text(
        'inputs = ["a", "b", "cin"]\noutputs = ["sum", "cout"]\noutput_lines = "auto"\n'
        '[expressions]\nsum = "a ^ b ^ cin"\ncout = "maj(a, b, cin)"\n'
    )
    spec, _ = ex.load_spec(adder)
    perm = complete_permutation(spec)
    assert perm is not None and sorted(perm) == list(range(spec.size)) and spec.accepts(perm)
    fb = fallback_circuit(spec, make_library("nct", spec.lines))
    assert fb.circuit is not None and spec.accepts(fb.circuit.permutation())


def test_sub_libraries_are_contained_and_listed_largest_first() -> None:
    names = {p: [s.name for s in sub_libraries(make_library(p, 4))] for p in PRESETS}
    assert names["nct"] == [] and names["mct"] == ["nct"]
    assert names["mixed"] == ["mct", "nct"] and names["mixed-swap"] == ["mct", "nct"]
    assert names["nct-swap"] == ["nct"] and names["nct-peres"] == ["nct"]
    for p in PRESETS:
        lib = make_library(p, 4)
        for sub in sub_libraries(lib):
            assert all(lib.contains(g) for g in sub.gates)


def test_a_time_out_still_returns_a_circuit_in_nct_on_four_lines() -> None:
    p = _even_perm(4, random.Random(11))
    seen: list[object] = []
    res = ex.synthesise(p, library="nct", time_limit=1.5, bounds="cheap", jobs=1, progress=seen.append)
    assert res.circuit is not None and res.circuit.permutation() == tuple(p)
    assert all(make_library("nct", 4).contains(g) for g in res.circuit.gates)
    if not res.optimal:
        assert res.lower_bound <= len(res.circuit)
        assert any("fallback" in n for n in res.notes)
    phases = [e.phase for e in seen if isinstance(e, SearchEvent)]
    assert phases[0] == "fallback" and "query-start" in phases


def test_max_gates_holds_under_the_tables_too() -> None:
    # SWAP of lines 0 and 1 needs 3 CNOTs (common practice); the table finds them at once
    res = ex.synthesise(ex.parse_cycles("(1 2)"), library="nct", max_gates=2)
    assert res.circuit is None and res.lower_bound == 3
    assert ("max_gates", 3) in [(s.setting, s.value) for s in res.suggestions]
    ok = ex.synthesise(ex.parse_cycles("(1 2)"), library="nct", max_gates=3)
    assert ok.circuit is not None and len(ok.circuit) == 3 and ok.optimal


def test_next_steps_name_what_would_help() -> None:
    lib = make_library("nct", 4, None, "chain")
    tips = next_steps(from_permutation(list(range(16))), lib, lower_bound=9, time_limit=5.0, max_gates=4, reason="x")
    assert [(s.setting, s.value) for s in tips][:2] == [("max_gates", 9), ("time_limit", 5.0)]
    assert "coupling" in [s.setting for s in tips]
    assert not any("--" in s.describe() for s in tips)  # command-line spellings belong to the command line
    line = next_steps_line(tips)
    assert "--max-gates 9 or more" in line and "--time-limit than 5 s" in line and "--coupling" in line
