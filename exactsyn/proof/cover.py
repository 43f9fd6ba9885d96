"""Do the cubes of a split query cover it?  Checked from the CNF and the cube list alone.

A split query (:mod:`exactsyn.sat.cube_split`) is refuted by refuting every cube — the CNF
plus the cube's clauses — and by showing that every assignment satisfying the CNF
satisfies some cube.  The checker trusts nothing about how the cubes were made; it
reads each cube as the path of a branching tree (its clauses in order) and folds the
tree up from its leaves:

* cubes that agree on all clauses but their last one are **siblings**; their common
  prefix ``P`` is covered when the siblings' last clauses ``c₁ … c_r`` cannot all be
  false under ``CNF ∧ P``.  Two ways to see that, tried in this order:

  1. **by construction** — the literals of ``c₁ … c_r`` together contain a clause of the
     CNF (found by lookup), or a literal and its negation.  Every satisfying assignment
     makes that clause true, so some ``cᵢ`` is true;
  2. **by unit propagation** — ``CNF ∧ P ∧ ¬c₁ ∧ … ∧ ¬c_r`` (each ``¬cᵢ`` a set of unit
     literals) propagates to a conflict; unit propagation is sound, so the siblings cover
     ``P`` (this is the "negated cubes added to the CNF are refuted" argument, one
     branching at a time).

* the covered prefix replaces the siblings, and folding goes on; the cubes cover the
  query exactly when the empty path is reached.

A missing cube leaves its siblings short of the clause (1) and, unless the remaining
ones happen to force a conflict by propagation (2) — in which case the missing case is
impossible anyway — the fold stops below the root and coverage is rejected.  The report
says which rule closed each branching.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Sequence
from dataclasses import dataclass

Clause = tuple[int, ...]
Path = tuple[Clause, ...]


@dataclass(frozen=True)
class Coverage:
    """``ok`` when the cubes cover the query; ``construction`` / ``propagation`` count the
    branchings closed by each rule; ``detail`` is one line for the user."""

    ok: bool
    construction: int
    propagation: int
    detail: str


class _Formula:
    """The CNF, indexed once: clause lookup by literal set and occurrence lists for propagation."""

    def __init__(self, clauses: Sequence[Sequence[int]]) -> None:
        self.clauses = [tuple(c) for c in clauses]
        self.by_set = {frozenset(c) for c in self.clauses}
        self._occ: dict[int, list[int]] | None = None

    def contains_clause_within(self, lits: set[int]) -> bool:
        """True when some CNF clause has all its literals in ``lits``."""
        if frozenset(lits) in self.by_set:
            return True
        occ = self.occurrences()
        for lit in lits:
            for ci in occ.get(lit, ()):
                if all(x in lits for x in self.clauses[ci]):
                    return True
        return False

    def occurrences(self) -> dict[int, list[int]]:
        if self._occ is None:
            occ: dict[int, list[int]] = defaultdict(list)
            for ci, c in enumerate(self.clauses):
                for lit in set(c):
                    occ[lit].append(ci)
            self._occ = dict(occ)
        return self._occ

    def propagates_to_conflict(self, units: set[int]) -> bool:
        """Unit propagation from ``units`` over the CNF: True when some clause becomes false."""
        if any(-u in units for u in units):
            return True
        value = set(units)  # literals made true
        occ = self.occurrences()
        queue = list(units)
        for c in self.clauses:  # clauses falsified or unit from the start
            if not c:
                return True
        # A clause only needs a look when one of its literals becomes false.
        for c in self.clauses:
            if len(c) == 1 and c[0] not in value:
                if -c[0] in value:
                    return True
                value.add(c[0])
                queue.append(c[0])
        while queue:
            lit = queue.pop()
            for ci in occ.get(-lit, ()):
                free = None
                satisfied = False
                count = 0
                for x in self.clauses[ci]:
                    if x in value:
                        satisfied = True
                        break
                    if -x not in value:
                        count += 1
                        free = x
                        if count > 1:
                            break
                if satisfied or count > 1:
                    continue
                if count == 0:
                    return True
                assert free is not None
                value.add(free)
                queue.append(free)
        return False


def check_coverage(clauses: Sequence[Sequence[int]], cubes: Sequence[Sequence[Sequence[int]]]) -> Coverage:
    """Fold the cube tree (module docstring); ``clauses`` is the re-derived CNF."""
    if not cubes:
        return Coverage(False, 0, 0, "no cubes")
    formula = _Formula(clauses)
    live: set[Path] = {tuple(tuple(c) for c in cube) for cube in cubes}
    construction = propagation = 0
    for c in (c for cube in live for c in cube):
        if not c:
            return Coverage(False, 0, 0, "a cube has an empty clause")
    depth = max(len(p) for p in live)
    while depth > 0:
        groups: dict[Path, list[Clause]] = defaultdict(list)
        for path in live:
            if len(path) == depth:
                groups[path[:-1]].append(path[-1])
        live = {p for p in live if len(p) < depth}
        for prefix, lasts in groups.items():
            lits = {x for c in lasts for x in c}
            if any(-x in lits for x in lits) or formula.contains_clause_within(lits):
                construction += 1
                live.add(prefix)
                continue
            assumed = {x for c in prefix if len(c) == 1 for x in c}
            negated = {-x for c in lasts for x in c}
            if formula.propagates_to_conflict(assumed | negated):
                propagation += 1
                live.add(prefix)
        depth -= 1
    if () not in live:
        why = "the cubes leave a case uncovered (a branching is incomplete)"
        return Coverage(False, construction, propagation, why)
    parts = []
    if construction:
        parts.append(f"{construction} by construction (their clauses contain a clause of the CNF)")
    if propagation:
        parts.append(f"{propagation} by unit propagation (the negated branches contradict the CNF)")
    detail = f"{len(cubes)} cubes cover the query; branchings closed " + ", ".join(parts)
    return Coverage(True, construction, propagation, detail)
