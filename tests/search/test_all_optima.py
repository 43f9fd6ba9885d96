"""``--all`` enumeration against breadth-first enumeration of every optimal gate sequence.

The reference here is independent of the encoder: all optimal words come from the
breadth-first size table, and each word is reduced to its class representative by the
greedy lexicographic normal form of traces (Anisimov & Knuth 1979; Diekert & Rozenberg,
"The Book of Traces", 1995): repeatedly take the least gate that commutes with every
gate before it.
"""

from __future__ import annotations

import random
import re
import subprocess
import sys
import time
from collections.abc import Sequence

import pytest
from helpers import optimal_words, trace_normal_form

from exactsyn.api.synthesis import synthesise
from exactsyn.api.view import count_line, synthesis_to_dict
from exactsyn.core.library import Library, make_library
from exactsyn.sat.encode import CostLimit
from exactsyn.search import all_optima
from exactsyn.search.all_optima import enumerate_optimal
from exactsyn.specification.reversible import from_permutation
from exactsyn.specification.samples import random_permutation
from exactsyn.tables.bfs import optimal_sizes


def _normal_form(word: Sequence[int], library: Library) -> tuple[int, ...]:
    return trace_normal_form(word, library)


@pytest.mark.parametrize("name", ["nct", "nct-peres", "mixed"])
def test_all_optimal_count_matches_breadth_first_enumeration(name: str) -> None:
    lib = make_library(name, 3)
    sizes = optimal_sizes(lib).as_dict()
    rng = random.Random(11)
    sample = rng.sample(sorted(p for p, k in sizes.items() if 2 <= k <= 4), 12)
    for perm in sample:
        words = optimal_words(perm, lib, sizes)
        classes = {_normal_form(w, lib) for w in words}
        res = enumerate_optimal(from_permutation(perm), lib, sizes[perm])
        assert res.complete
        assert res.count == len(classes), (name, perm)
        got = {tuple(lib.index(g) for g in c.gates) for c in res.circuits}
        assert got == classes
        for c in res.circuits:
            assert c.permutation() == perm


def test_count_only_and_limit() -> None:
    lib = make_library("nct", 3)
    sizes = optimal_sizes(lib).as_dict()
    # the first 4-gate function with more than one class of optimal circuits (reference above)
    perm, classes = next(
        (p, c)
        for p, k in sorted(sizes.items())
        if k == 4 and len(c := {_normal_form(w, lib) for w in optimal_words(p, lib, sizes)}) > 1
    )
    full = enumerate_optimal(from_permutation(perm), lib, 4)
    counted = enumerate_optimal(from_permutation(perm), lib, 4, keep=False)
    assert full.complete and counted.complete
    assert counted.count == full.count == len(classes) and counted.circuits == ()
    part = enumerate_optimal(from_permutation(perm), lib, 4, limit=1)
    assert part.count == 1 and not part.complete and len(part.circuits) == 1
    assert part.circuits[0].permutation() == perm


def test_cheapest_minimum_gate_circuits_under_a_cost_limit() -> None:
    # NCV quantum cost (Barenco et al. 1995): NOT 1, CNOT 1, Toffoli 5.  Reference: the
    # classes of optimal words whose cost is the least among optimal words.
    lib = make_library("nct", 3)
    costs = tuple(5 if g.num_controls == 2 else 1 for g in lib.gates)
    sizes = optimal_sizes(lib).as_dict()
    perm = next(
        p for p, k in sorted(sizes.items()) if k == 4 and len({_c(w, costs) for w in optimal_words(p, lib, sizes)}) > 1
    )
    words = optimal_words(perm, lib, sizes)
    cheapest = min(_c(w, costs) for w in words)
    classes = {_normal_form(w, lib) for w in words if _c(w, costs) == cheapest}
    res = enumerate_optimal(from_permutation(perm), lib, 4, cost_limit=CostLimit(costs, cheapest))
    assert res.count == len(classes)


def _c(word: Sequence[int], costs: Sequence[int]) -> int:
    return sum(costs[j] for j in word)


# ------------------------------------------------ solver choice and time limit


def _cli(*args: str, timeout: float = 60) -> tuple[subprocess.CompletedProcess[str], float]:
    started = time.perf_counter()
    r = subprocess.run([sys.executable, "-m", "exactsyn", *args], capture_output=True, text=True, timeout=timeout)
    return r, time.perf_counter() - started


def _classes(perm: tuple[int, ...], lib: Library, sizes: dict[tuple[int, ...], int]) -> set[tuple[int, ...]]:
    return {_normal_form(w, lib) for w in optimal_words(perm, lib, sizes)}  # breadth-first, no SAT


def test_optima_count_with_minisat_matches_the_default_and_breadth_first(monkeypatch: pytest.MonkeyPatch) -> None:
    lib = make_library("nct", 3)
    sizes = optimal_sizes(lib).as_dict()
    perm = next(p for p, k in sorted(sizes.items()) if k == 5 and len(_classes(p, lib, sizes)) > 3)
    classes = _classes(perm, lib, sizes)
    counts = {}
    for solver in ("minisat22", "cadical195"):
        r, _ = _cli("synth", "--perm", ",".join(map(str, perm)), "--optima", "count", "--solver", solver, "-q")
        assert r.returncode == 0, r.stderr
        counts[solver] = r.stdout.strip()
    assert counts == {"minisat22": str(len(classes)), "cadical195": str(len(classes))}
    # the API hands the solver to the enumeration (and not only to the gate search)
    used = []
    real = all_optima.SatSession

    def recording(clauses: list[list[int]], *, solver: str) -> all_optima.SatSession:
        used.append(solver)
        return real(clauses, solver=solver)

    monkeypatch.setattr(all_optima, "SatSession", recording)
    syn = synthesise(list(perm), library="nct", optima="count", solver="minisat22")
    assert used == ["minisat22"] and syn.optima is not None and syn.optima.count == len(classes)


# A 4-line mct function (the product of 10 random library gates, seed 106): the gate search
# proves 8 gates in about 3 s, while the enumeration CNF of 8 gates gave no model in 20 s
# (measured; a time limit, not a count, is what this test checks).
HARD4 = "0,1,12,13,14,15,5,4,8,11,2,3,7,6,9,10"


def test_optima_count_keeps_the_time_limit_and_says_it_is_not_complete() -> None:
    limit = 8.0  # room for the gate search on a slow machine; the listing gets the rest
    r, wall = _cli("synth", "--perm", HARD4, "--library", "mct", "--optima", "count", "--time-limit", str(limit))
    assert r.returncode == 0, r.stderr
    assert wall <= 1.1 * limit + 1.0 + 1.5, wall  # + 1.5 s: interpreter start-up and imports
    assert "8 gates, proven optimal" in r.stderr  # else the listing would not have started
    assert re.fullmatch(r"at least \d+ \(not complete: time limit\)\n", r.stdout), r.stdout
    assert "not complete: time limit" in r.stderr


def test_a_count_cut_by_the_optima_limit_is_marked_in_text_and_json() -> None:
    lib = make_library("nct", 3)
    sizes = optimal_sizes(lib).as_dict()
    perm = next(p for p, k in sorted(sizes.items()) if k == 4 and len(optimal_words(p, lib, sizes)) > 1)
    syn = synthesise(list(perm), library="nct", optima="count", optima_limit=1)
    assert syn.optima is not None and syn.optima.count == 1 and not syn.optima.complete
    data = synthesis_to_dict(syn)
    assert data["count"] == 1 and data["count_complete"] is False and data["count_stopped"] == "optima limit"
    assert count_line(syn.optima) == "at least 1 (not complete: optima limit)"
    full = synthesise(list(perm), library="nct", optima="count")
    assert full.optima is not None and full.optima.complete and count_line(full.optima) == str(full.optima.count)
    assert synthesis_to_dict(full)["count_stopped"] is None


def test_no_time_left_means_an_empty_incomplete_listing() -> None:
    lib = make_library("nct", 3)
    res = enumerate_optimal(from_permutation([1, 0, 3, 2, 5, 7, 4, 6]), lib, 4, time_limit=0.0)
    assert (res.count, res.complete, res.stopped) == (0, False, "time limit")


def test_an_encoding_that_would_overrun_the_limit_is_not_started() -> None:
    # Measured: the enumeration CNF of 16 gates on 6 lines (mct) takes about 3 s to build.
    lib = make_library("mct", 6)
    spec = from_permutation(list(random_permutation(6, random.Random(1), even=True)))
    started = time.perf_counter()
    res = enumerate_optimal(spec, lib, 16, time_limit=0.5, keep=False)
    assert time.perf_counter() - started < 1.5
    assert (res.count, res.complete, res.stopped) == (0, False, "time limit")
