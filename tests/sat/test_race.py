"""The two-formulation race answers like the single solver, with checkable proofs."""

from __future__ import annotations

from pysat.examples.genhard import PHP

from exactsyn.core.library import make_library
from exactsyn.proof.lrat import check_lrat
from exactsyn.sat.encode import EncodingOptions, encode
from exactsyn.sat.race import race
from exactsyn.specification.reversible import from_permutation


def test_race_on_unsat_pigeonhole_returns_a_checked_proof() -> None:
    # Pigeonhole formulas are UNSAT (pysat.examples.genhard; common practice).
    a, b = PHP(5).clauses, PHP(6).clauses
    won = race([a, b], certify=True)
    out = won.outcome
    assert out.status == "unsat" and won.winner in (0, 1)
    formula = [a, b][won.winner]
    nv = max(abs(x) for cl in formula for x in cl)
    assert check_lrat(nv, formula, out.proof).ok


def test_race_on_a_k_query_finds_a_circuit_from_either_formulation() -> None:
    lib = make_library("nct", 3)
    spec = from_permutation([1, 0, 3, 2, 5, 7, 4, 6])
    encs = [encode(spec, lib, 4), encode(spec, lib, 4, EncodingOptions("onehot", ()))]
    won = race([e.clauses for e in encs], certify=False)
    out = won.outcome
    assert out.status == "sat" and won.winner is not None and out.model is not None
    circ = encs[won.winner].decode(out.model)
    assert list(circ.permutation()) == [1, 0, 3, 2, 5, 7, 4, 6]
