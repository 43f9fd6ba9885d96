"""Synthesis from the class tables: optima against independent methods, circuits simulated."""

from __future__ import annotations

import random
from pathlib import Path

import numpy as np
import pytest
from helpers import hwb, random_perm

from exactsyn import tables
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.distance import extended_meet


def _random_circuit_perm(rng: random.Random, library: str, length: int) -> tuple[int, ...]:
    lib = make_library(library, 4)
    s = np.arange(16)
    for _ in range(length):
        s = lib.gates[rng.randrange(len(lib))].apply(s)
    return tuple(int(v) for v in s)


def _simulates(ans: tables.TableAnswer) -> bool:
    return ans.gates is not None and Circuit(4, ans.gates).permutation() == ans.perm


def test_hwb4_needs_11_mct_gates(mct6: tables.Tables) -> None:
    # hwb4 (rotate left by the Hamming weight; tests/helpers.py builds it from the formula)
    # needs 11 MCT gates (Golubitsky, Falconer, Maslov, DAC 2010; from memory).
    ans = mct6.synthesise(hwb(4))
    assert ans.optimal and ans.gate_count == 11 and _simulates(ans)
    assert ans.method == "meet in the middle" and ans.detail["extra"] == 5


def test_optima_equal_the_distance_table_path(mct6: tables.Tables) -> None:
    # Independent method: exactsyn.mitm (full-function distance table of depth 4, numpy):
    # exact up to 9 gates, else the proven bound 10.  Our depth-6 table settles up to 12.
    rng = random.Random(12)
    for k in range(0, 13):
        for _ in range(3):
            p = _random_circuit_perm(rng, "mct", k)
            ans = mct6.synthesise(p)
            ref = extended_meet(p, make_library("mct", 4), 4)
            assert ans.optimal and _simulates(ans) and ans.gate_count is not None
            assert ans.gate_count <= k
            if ref.exact is not None:
                assert ans.gate_count == ref.exact
            else:
                assert ans.gate_count >= ref.lower == 10


def test_optima_equal_sat_on_short_functions(mct6: tables.Tables) -> None:
    # Independent method: the SAT engine with cheap bounds only.
    rng = random.Random(5)
    lib = make_library("mct", 4)
    for k in (2, 4, 5, 6):
        p = _random_circuit_perm(rng, "mct", k)
        sat = minimise_gates(from_permutation(list(p)), lib, SearchOptions(bounds="cheap"))
        ans = mct6.synthesise(p)
        assert sat.optimal and sat.circuit is not None
        assert ans.gate_count == len(sat.circuit) and _simulates(ans)


@pytest.mark.parametrize("library", ["nct", "mixed"])
def test_other_libraries_agree_with_the_distance_table_path(table_cache: Path, library: str) -> None:
    t = tables.load(library, cache=table_cache)
    lib = make_library(library, 4)
    rng = random.Random(3)
    for k in range(0, 9):
        p = _random_circuit_perm(rng, library, k)
        ans = t.synthesise(p)
        ref = extended_meet(p, lib, 3)  # exact up to 7 gates
        assert ans.optimal and _simulates(ans) and ans.gate_count is not None and ans.gate_count <= k
        assert all(g in lib.gates for g in ans.gates or ())
        if ref.exact is not None:
            assert ans.gate_count == ref.exact


def test_an_unsettled_function_gets_its_proven_lower_bound(mct6: tables.Tables) -> None:
    ans = mct6.synthesise(hwb(4), max_extra=3)
    assert not ans.optimal and ans.gates is None and ans.lower_bound == 10  # 6 + 3 + 1; the optimum is 11


def test_odd_permutations_are_refused_for_nct(table_cache: Path) -> None:
    t = tables.load("nct", cache=table_cache)
    rng = random.Random(8)
    p = random_perm(rng, 4)
    p[0], p[1] = p[1], p[0]
    if not _odd(p):
        p[2], p[3] = p[3], p[2]
    with pytest.raises(ExactsynError, match="odd permutation"):
        t.synthesise(p)


def _odd(p: list[int]) -> bool:
    from exactsyn.core.gates import permutation_is_odd

    return permutation_is_odd(tuple(p))


def test_missing_table_names_the_fix(tmp_path: Path) -> None:
    with pytest.raises(ExactsynError, match="exactsyn tables build"):
        tables.load("mct", cache=tmp_path)


def test_bad_permutations_are_refused(mct6: tables.Tables) -> None:
    with pytest.raises(ExactsynError):
        mct6.synthesise([0, 0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14])
    with pytest.raises(ExactsynError):
        mct6.synthesise(list(range(8)))


@pytest.mark.slow
def test_full_table_settles_hwb4_and_random_functions(full_cache: Path) -> None:  # pragma: no cover - minutes
    tables.build("mct", cache=full_cache)
    t = tables.load("mct", cache=full_cache)
    assert t.synthesise(hwb(4)).gate_count == 11
    rng = random.Random(99)
    lib = make_library("mct", 4)
    for _ in range(10):
        p = tuple(random_perm(rng, 4))
        ans = t.synthesise(p)
        assert ans.optimal and _simulates(ans)
        ref = extended_meet(p, lib, 5)  # exact up to 11, else bound 12
        if ref.exact is not None:
            assert ans.gate_count == ref.exact
        else:
            assert ans.gate_count is not None and ans.gate_count >= 12
