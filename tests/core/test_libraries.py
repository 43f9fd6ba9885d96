"""Gate kinds, presets and connectivity, checked against breadth-first search and worked facts."""

from __future__ import annotations

import random

import pytest
from helpers import naive_bfs

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import peres_gate, swap_gate, x_gate
from exactsyn.core.library import connected, make_library, parse_coupling
from exactsyn.errors import ExactsynError, NoCircuitError
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import Spec, from_permutation
from exactsyn.tables.bfs import optimal_sizes

NEW_LIBRARIES = [
    ("nct-swap", ""),
    ("nct-peres", ""),
    ("mixed", ""),
    ("mixed-swap", ""),
    ("not,cnot,swap", ""),
    ("nct", "chain"),
    ("mct-swap", "0-2"),
]


@pytest.mark.parametrize(("lines", "count"), [(3, 27), (4, 108), (5, 405)])
def test_mixed_polarity_count(lines: int, count: int) -> None:
    # Common practice: a mixed-polarity MCT gate picks a target, and each other line is
    # absent, a positive or a negative control: n * 3^(n-1) gates.
    assert len(make_library("mixed", lines)) == count == lines * 3 ** (lines - 1)


def test_mct_on_four_lines_is_the_32_gate_library() -> None:
    # Golubitsky, Falconer & Maslov, DAC 2010: 4 + 12 + 12 + 4 = 32 MCT gates on 4 lines.
    assert len(make_library("mct", 4)) == 32


@pytest.mark.parametrize("bounds", ["cheap", "table"])
@pytest.mark.parametrize(("name", "coupling"), NEW_LIBRARIES)
def test_sat_matches_breadth_first_search(name: str, coupling: str, bounds: str) -> None:
    # "table" exercises the distance tables and meet in the middle for self-inverse libraries.
    lib = make_library(name, 3, coupling=coupling)
    table = optimal_sizes(lib)
    perms = sorted(table.as_dict().items())
    rng = random.Random(sum(map(ord, name + coupling + bounds)))
    for perm, size in rng.sample(perms, min(25, len(perms))):
        res = minimise_gates(from_permutation(perm), lib, SearchOptions(bounds=bounds))
        assert res.optimal and res.circuit is not None
        assert len(res.circuit) == size, (name, perm)
        assert res.circuit.permutation() == perm
        assert all(lib.contains(g) for g in res.circuit.gates)


def test_unreachable_function_is_refused_with_exit_one() -> None:
    # With not,cnot only every circuit is affine; the Toffoli function is not.
    lib = make_library("not,cnot", 3)
    toffoli = Circuit(3, (x_gate(2, (0, 1)),)).permutation()
    assert toffoli not in optimal_sizes(lib)
    with pytest.raises(NoCircuitError):
        minimise_gates(from_permutation(toffoli), lib, SearchOptions(bounds="cheap", max_gates=8))


def _or_onto_constant_one() -> Spec:
    # Lines 0 and 1 are inputs, line 2 starts at constant 1 and must end as a OR b;
    # rows with line 2 = 0 are unspecified.
    outputs, care = [], []
    for r in range(8):
        a, b, c = r & 1, r >> 1 & 1, r >> 2 & 1
        outputs.append(a | b << 1 | (a | b) << 2 if c else 0)
        care.append(7 if c else 0)
    return Spec(3, tuple(outputs), tuple(care), "or-onto-one")


def test_or_onto_constant_one_is_one_gate_with_two_negative_controls() -> None:
    # OR from negations (De Morgan): c = 1 xor (not a and not b) = a or b.
    res = minimise_gates(_or_onto_constant_one(), make_library("mixed", 3))
    assert res.optimal and res.circuit is not None and len(res.circuit) == 1
    assert res.circuit.gates[0] == x_gate(2, (), (0, 1))


def test_or_onto_constant_one_in_nct_matches_breadth_first_search() -> None:
    spec = _or_onto_constant_one()
    lib = make_library("nct", 3)
    best = min(size for perm, size in optimal_sizes(lib).as_dict().items() if spec.accepts(perm))
    res = minimise_gates(spec, lib)
    assert res.optimal and res.circuit is not None and len(res.circuit) == best > 1


def test_controlled_swap_is_one_fredkin_and_three_nct_gates() -> None:
    # A Fredkin gate takes 3 NCT gates (CNOT, Toffoli, CNOT; common practice).
    perm = Circuit(3, (swap_gate(1, 2, (0,)),)).permutation()
    one = minimise_gates(from_permutation(perm), make_library("nct-swap", 3))
    three = minimise_gates(from_permutation(perm), make_library("nct", 3))
    assert one.circuit is not None and len(one.circuit) == 1
    assert three.circuit is not None and len(three.circuit) == 3 == optimal_sizes(make_library("nct", 3)).size(perm)


def test_peres_is_one_gate_of_its_own_and_two_nct_gates() -> None:
    # Peres (1985): a Toffoli followed by a CNOT, so 2 NCT gates.
    perm = Circuit(3, (peres_gate(0, 1, 2),)).permutation()
    assert len(minimise_gates(from_permutation(perm), make_library("nct-peres", 3)).circuit or ()) == 1
    assert len(minimise_gates(from_permutation(perm), make_library("nct", 3)).circuit or ()) == 2


def test_swap_across_a_chain_needs_eight_gates_as_bfs_says() -> None:
    # SWAP(0,2) is 3 CNOTs with full connectivity (common practice); on the chain 0-1-2
    # lines 0 and 2 may not interact directly.  Reference: plain breadth-first search over
    # the chain's gates (helpers.naive_bfs, no SAT), which needs 8 gates.
    perm = Circuit(3, (swap_gate(0, 2),)).permutation()
    free = minimise_gates(from_permutation(perm), make_library("nct", 3))
    chain = make_library("nct", 3, coupling="0-1-2")
    bfs = naive_bfs([g.permutation(3) for g in chain.gates], 8)
    res = minimise_gates(from_permutation(perm), chain)
    assert free.circuit is not None and len(free.circuit) == 3
    assert res.circuit is not None and res.optimal and res.circuit.permutation() == perm
    assert len(res.circuit) == bfs[perm] == 8
    assert len(res.circuit) == optimal_sizes(chain).size(perm)  # the vectorised table agrees
    for g in res.circuit.gates:
        assert connected(g.lines, chain.coupling)
        assert len(g.lines) != 2 or tuple(sorted(g.lines)) in chain.coupling


def test_coupling_rule() -> None:
    chain = parse_coupling("0-1-2-3", 4)
    assert chain == ((0, 1), (1, 2), (2, 3)) == parse_coupling("chain", 4) == parse_coupling("2-3,0-1,1-2", 4)
    assert parse_coupling("ring", 4) == ((0, 1), (0, 3), (1, 2), (2, 3))
    lib = make_library("mct", 4, coupling=chain)
    assert x_gate(1, (0,)) in lib.gates and x_gate(2, (0,)) not in lib.gates
    assert x_gate(2, (0, 1)) in lib.gates and x_gate(3, (0, 1)) not in lib.gates
    assert x_gate(0, ()) in lib.gates and x_gate(3, ()) in lib.gates  # one-line gates always


@pytest.mark.parametrize("bad", ["0-4", "0-0", "a-b", "0", "0-1,,x"])
def test_bad_coupling_is_one_line_error(bad: str) -> None:
    with pytest.raises(ExactsynError) as e:
        make_library("nct", 4, coupling=bad)
    assert "\n" not in e.value.message


@pytest.mark.parametrize("bad", ["tofoli", "negative", "nct,x", ""])
def test_bad_library_is_one_line_error(bad: str) -> None:
    with pytest.raises(ExactsynError) as e:
        make_library(bad, 3)
    assert "\n" not in e.value.message


def test_parity_follows_the_gates() -> None:
    # Shende et al., IEEE TCAD 2003: on 4 lines NCT gates are all even; a SWAP with 2
    # controls on 4 lines is one transposition (odd).  The mixed-polarity library on 4
    # lines has odd gates (3 controls), so odd permutations are realisable.
    assert make_library("nct-swap", 4).all_even
    assert not make_library("mct-swap", 4).all_even
    odd = (1, 0, *range(2, 16))  # one transposition
    with pytest.raises(NoCircuitError):
        minimise_gates(from_permutation(odd), make_library("nct-swap", 4))


@pytest.mark.parametrize(("name", "coupling"), [("nct-peres", ""), ("mixed-swap", ""), ("nct", "0-1-2")])
def test_certificates_for_new_libraries_check(tmp_path, name: str, coupling: str) -> None:  # type: ignore[no-untyped-def]
    import json

    import exactsyn as ex

    lib = make_library(name, 3, coupling=coupling)
    perm = Circuit(3, (swap_gate(0, 2),)).permutation()
    res = ex.synthesise(list(perm), library=lib, bounds="cheap", certificate=tmp_path)
    rep = ex.check_certificate(tmp_path)
    assert rep.ok and rep.gate_count == len(res.circuit or ())
    data = json.loads((tmp_path / "result.json").read_text())
    # A different coupling is a different library: the stored gate list no longer matches.
    data["library"]["coupling"] = [[0, 1]] if coupling else [[0, 1], [1, 2]]
    (tmp_path / "result.json").write_text(json.dumps(data))
    with pytest.raises(ExactsynError):
        ex.check_certificate(tmp_path)


def test_batch_with_a_kind_list_and_coupling_matches_bfs(tmp_path) -> None:  # type: ignore[no-untyped-def]
    import json
    import sqlite3

    from click.testing import CliRunner

    from exactsyn.cli import main

    store = tmp_path / "s.sqlite"
    args = ["batch", "--random", "3", "--sample", "6", "--seed", "3", "--library", "not,cnot,toffoli,peres"]
    r = CliRunner().invoke(main, [*args, "--coupling", "chain", "--store", str(store), "--jobs", "1"])
    assert r.exit_code == 0, r.output
    lib = make_library("nct-peres", 3, coupling="chain")
    sizes = optimal_sizes(lib).as_dict()
    with sqlite3.connect(store) as db:
        rows = db.execute("SELECT outputs, optimum, library FROM results").fetchall()
    assert len(rows) == 6
    for outputs, optimum, name in rows:
        assert "@0-1,1-2" in name and optimum == sizes[tuple(json.loads(outputs))]
