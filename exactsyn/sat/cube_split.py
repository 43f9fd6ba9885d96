"""Split one k-query into cubes whose disjunction covers it (cube and conquer, the split half).

Cube and conquer (Heule, Kullmann, Wieringa, Biere, "Cube and conquer: guiding CDCL SAT
solvers by lookaheads", HVC 2011) cuts a hard formula into many sub-formulas, each the
formula plus a few extra clauses, solved independently; the formula is satisfiable iff
one of them is, so an UNSAT answer needs every sub-formula refuted *and* an argument that
the sub-formulas together leave no case out.

Here a cube is a path in a branching tree over **gate positions**.  Positions are taken
from both ends inwards (``0, k−1, 1, k−2, …``), because the first and last gates act on
rows whose values are constants (the inputs, the specified outputs), so fixing something
about them propagates at once.  Two schemes:

``targets`` (default)
    a position ``d`` branches ``n`` ways, one per line ``l``: the branch adds the clause
    ``∨ {g[d][j] : gate j targets line l}`` ("the gate at ``d`` targets ``l``").  Fixing a
    target makes every other line keep its value through that gate (the frame clauses),
    which turns ``(n − 1)·rows`` line values into constants; with only ``n`` branches per
    position the cubes stay few (``n²`` for two positions).
``gates``
    a position branches ``|G|`` ways, one per library gate: the branch adds the unit
    ``g[d][j]``.  Far more cubes (``|G|²`` for two positions); each is a query of
    ``k − 2`` gates for a neighbouring function.

**Coverage** (checked by :mod:`exactsyn.proof.cover`): in both schemes the clauses added
by the branches of one position, taken together, contain every literal of the
position's at-least-one clause ``g[d][0] ∨ … ∨ g[d][m−1]``, which is a clause of the CNF.
Every assignment that satisfies the CNF satisfies that clause, hence one literal of it,
hence the clause of some branch: the branches of a position cover their parent, and by
induction over the tree the leaves (the cubes) cover the whole query.  A swap or Peres
gate has two targets and appears in two ``targets`` branches; overlap does no harm.

A cube's clauses are appended after the CNF's clauses, so in its LRAT refutation the
clause ids ``1..m`` are still the CNF's (:mod:`exactsyn.sat.lrat_capture`).
"""

from __future__ import annotations

from dataclasses import dataclass

from exactsyn.errors import ExactsynError
from exactsyn.sat.encode import Encoding

SCHEMES = {
    "targets": "branch on the target line of the first and last gates (n ways per position)",
    "gates": "branch on the gate itself at the first and last positions (|library| ways per position)",
}
DEFAULT_SCHEME = "targets"
DEFAULT_DEPTH = 2


@dataclass(frozen=True)
class Cube:
    """One sub-query: the CNF plus ``clauses`` (one per branching on the path from the root)."""

    index: int
    clauses: tuple[tuple[int, ...], ...]
    label: str


@dataclass(frozen=True)
class CubePlan:
    """The cubes of one query and how they were made."""

    scheme: str
    positions: tuple[int, ...]
    cubes: tuple[Cube, ...]


def split_positions(k: int, depth: int) -> tuple[int, ...]:
    """``depth`` distinct positions from both ends inwards: ``0, k−1, 1, k−2, …``."""
    order: list[int] = []
    lo, hi = 0, k - 1
    while lo <= hi and len(order) < depth:
        order.append(lo)
        if hi != lo and len(order) < depth:
            order.append(hi)
        lo, hi = lo + 1, hi - 1
    return tuple(order)


def _branches(enc: Encoding, scheme: str, d: int) -> list[tuple[tuple[int, ...], str]]:
    row = enc.gate_vars[d]
    gates = enc.library.gates
    if scheme == "gates":
        return [((v,), f"g{d}={j}") for j, v in enumerate(row)]
    out = []
    for line in range(enc.library.lines):
        clause = tuple(v for j, v in enumerate(row) if line in gates[j].targets)
        if clause:
            out.append((clause, f"t{d}={line}"))
    return out


def split_query(enc: Encoding, scheme: str = DEFAULT_SCHEME, depth: int = DEFAULT_DEPTH) -> CubePlan:
    """Cubes of ``enc`` branching on ``depth`` positions (see the module docstring)."""
    if scheme not in SCHEMES:
        raise ExactsynError(f"unknown cube scheme {scheme!r}; choose one of: {', '.join(SCHEMES)}")
    if depth < 0:
        raise ExactsynError("the cube depth must be 0 or more")
    if enc.optional:
        raise ExactsynError("queries with optional positions (depth encoding) are not split")
    positions = split_positions(enc.k, depth)
    paths: list[tuple[tuple[tuple[int, ...], ...], tuple[str, ...]]] = [((), ())]
    for d in positions:
        branches = _branches(enc, scheme, d)
        paths = [(cl + (c,), lab + (name,)) for cl, lab in paths for c, name in branches]
    cubes = tuple(Cube(i, cl, " ".join(lab) or "all") for i, (cl, lab) in enumerate(paths))
    return CubePlan(scheme, positions, cubes)
