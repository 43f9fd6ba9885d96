"""The two-formulation race answers like the single solver, with checkable proofs."""

from __future__ import annotations

import time
from types import SimpleNamespace
from typing import Any

from pysat.examples.genhard import PHP

from exactsyn.core.library import make_library
from exactsyn.proof.lrat import check_lrat
from exactsyn.sat.encode import EncodingOptions, encode
from exactsyn.sat.query import Rival, _race, _Solved
from exactsyn.sat.race import GRACE_SECONDS, race
from exactsyn.sat.status import Status
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


def test_a_race_counts_the_time_its_rival_took_to_build() -> None:
    # PHP(11) keeps CDCL solvers busy far past the limit (Haken 1985; common practice), so the
    # race ends by the time limit; building the rival (1 s here) must come out of that limit.
    hard = SimpleNamespace(clauses=PHP(11).clauses)

    def slow_build() -> Any:
        time.sleep(1.0)
        return hard

    t0 = time.perf_counter()
    got = _race(hard, Rival(slow_build, 0.0), "cadical195", False, 2.0, _Solved())  # type: ignore[arg-type]
    took = time.perf_counter() - t0
    assert got.status == Status.UNKNOWN
    assert took < 2.0 + GRACE_SECONDS + 0.5, took  # not 1 s + 2 s + grace
