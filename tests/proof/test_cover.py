"""Coverage of cube lists, on hand-made formulas whose answer is worked out beside each check."""

from __future__ import annotations

import itertools

from exactsyn.proof.cover import check_coverage

# x1 ∨ x2 ∨ x3 is the at-least-one clause of a three-way choice; x4 ∨ x5 a second one.
ALO = [[1, 2, 3], [4, 5], [-1, -2], [-1, -3], [-2, -3]]


def test_one_branch_per_literal_of_a_clause_covers_by_construction() -> None:
    rep = check_coverage(ALO, [[[1]], [[2]], [[3]]])
    assert rep.ok and rep.construction == 1 and rep.propagation == 0


def test_dropping_a_branch_leaves_a_case_uncovered() -> None:
    # x1 = x2 = 0, x3 = 1 satisfies the formula and neither cube.
    rep = check_coverage(ALO, [[[1]], [[2]]])
    assert not rep.ok


def test_two_levels_fold_up_to_the_root() -> None:
    cubes = [[[a], [b]] for a, b in itertools.product((1, 2, 3), (4, 5))]
    assert check_coverage(ALO, cubes).ok
    for missing in range(len(cubes)):  # every single missing cube is noticed
        assert not check_coverage(ALO, cubes[:missing] + cubes[missing + 1 :]).ok


def test_clause_branches_cover_when_together_they_hold_the_clause() -> None:
    # Branches "x1 ∨ x2" and "x3": their literals together are the clause x1 ∨ x2 ∨ x3.
    assert check_coverage(ALO, [[[1, 2]], [[3]]]).ok
    assert not check_coverage(ALO, [[[1, 2]], [[4]]]).ok


def test_a_variable_and_its_negation_cover_without_any_clause() -> None:
    rep = check_coverage([[7, 8]], [[[6]], [[-6]]])
    assert rep.ok and rep.construction == 1


def test_unit_propagation_closes_a_branching_the_clauses_do_not_contain() -> None:
    # Branches x1 and x2 only: with the clause x1 ∨ x2 ∨ x3 and the unit ¬x3, setting
    # x1 = x2 = 0 forces x3 = 1 against ¬x3, a conflict — the case x3 cannot happen.
    formula = [[1, 2, 3], [-3]]
    rep = check_coverage(formula, [[[1]], [[2]]])
    assert rep.ok and rep.propagation == 1 and rep.construction == 0
    # Without the unit the same branches leave x3 = 1 uncovered.
    assert not check_coverage([[1, 2, 3]], [[[1]], [[2]]]).ok


def test_empty_lists_are_not_coverage() -> None:
    assert not check_coverage(ALO, []).ok
    assert not check_coverage(ALO, [[[]]]).ok
