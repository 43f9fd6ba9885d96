"""Cheap, sound facts about a spec that need no SAT call.

* :func:`parity_obstruction` — a full permutation that is odd cannot be built from
  even gates.  With NCT gates on n ≥ 4 lines every gate is even, so only even
  permutations are realisable (Shende, Prasad, Markov, Hayes, "Synthesis of reversible
  logic circuits", IEEE TCAD 22(6), 2003).  The parity of a permutation is the parity of
  (size − number of cycles).
* :func:`lower_bound` — the larger of: 1 unless the spec is met by the empty circuit,
  and the number of lines whose output differs from the input on some specified row
  (an ``x`` gate changes only its target line, so each such line is the target of at
  least one gate).  Each bound carries the reason that re-derives it.
* :func:`affine_obstruction` — NOT, CNOT and SWAP circuits compute only affine maps.
* :func:`nonaffine_extra` — a circuit for a non-affine function contains a non-affine
  gate, which fixes a least extra cost for the cost objective.
"""

from __future__ import annotations

from dataclasses import dataclass

from exactsyn.core.gates import permutation_is_odd
from exactsyn.core.library import Library
from exactsyn.specification.reversible import Spec


@dataclass(frozen=True)
class Bound:
    value: int
    reason: str  # "none" | "non-identity" | "changed-lines"
    detail: str


def parity_obstruction(spec: Spec, library: Library) -> str | None:
    """A one-line reason why no circuit exists, or ``None`` when parity allows one."""
    if spec.is_permutation and library.all_even and permutation_is_odd(spec.permutation):
        return (
            f"the permutation is odd, but every gate of library {library.name} on {library.lines} lines "
            "is an even permutation, so no circuit exists (Shende et al., IEEE TCAD 2003); "
            "allow a gate with n-1 controls (e.g. the mct library) or add a line"
        )
    return None


def affine_obstruction(spec: Spec, library: Library) -> str | None:
    """A reason when every gate is affine over GF(2) but the permutation is not, else ``None``.

    Affine maps compose to affine maps, so NOT, CNOT and SWAP circuits compute exactly
    the affine permutations ``x ↦ A·x ⊕ b`` (common practice).
    """
    if not spec.is_permutation or is_affine(spec.permutation):
        return None
    if all(is_affine(g.permutation(library.lines)) for g in library.gates):
        return (
            f"every gate of library {library.name} is affine (x -> A.x + b over GF(2)) but the permutation "
            "is not, so no circuit exists; allow a Toffoli gate (e.g. the nct library)"
        )
    return None


def lower_bound(spec: Spec, library: Library) -> Bound:
    if spec.is_identity():
        return Bound(0, "none", "the empty circuit meets the spec")
    changed = sorted(spec.changed_lines())
    if library.only_x and len(changed) > 1:
        return Bound(
            len(changed),
            "changed-lines",
            f"lines {changed} change and each x gate changes only its target",
        )
    return Bound(1, "non-identity", "the spec is not met by the empty circuit")


def completion_obstruction(spec: Spec) -> str | None:
    """Why no reversible function meets a partial spec (fixed placement), or ``None``.

    A reversible completion exists exactly when the specified rows can be given
    distinct outputs, each consistent with its specified bits: a bipartite matching
    (Kuhn's augmenting paths).  Specs with solver-chosen constants or output lines come
    from :mod:`exactsyn.specification.embed`, whose line count already guarantees a completion.
    """
    if spec.is_permutation or spec.has_choices:
        return None
    rows = spec.specified_rows()
    match: dict[int, int] = {}  # output value -> row

    def candidates(r: int) -> list[int]:
        return [y for y in range(spec.size) if (y ^ spec.outputs[r]) & spec.care[r] == 0]

    cand = {r: candidates(r) for r in rows}

    def augment(r: int, seen: set[int]) -> bool:
        for y in cand[r]:
            if y in seen:
                continue
            seen.add(y)
            if y not in match or augment(match[y], seen):
                match[y] = r
                return True
        return False

    for r in rows:
        if not augment(r, set()):
            return (
                f"no reversible function meets the spec: the specified rows cannot all get distinct "
                f"outputs (stuck at input {r}); leave more outputs free or add a line"
            )
    return None


def is_affine(perm: tuple[int, ...]) -> bool:
    """True when ``perm(x) = A·x ⊕ b`` over GF(2) (NOT, CNOT and SWAP circuits compute exactly these)."""
    b = perm[0]
    cols = [perm[1 << i] ^ b for i in range(len(perm).bit_length() - 1)]
    for x, y in enumerate(perm):
        acc = b
        for i, col in enumerate(cols):
            if x >> i & 1:
                acc ^= col
        if acc != y:
            return False
    return True


def nonaffine_extra(spec: Spec, library: Library, costs: tuple[int, ...]) -> int:
    """Extra cost every circuit for a non-affine full permutation pays, above ``k·c_min``.

    Affine gates compose to affine functions, so a circuit for a non-affine function has
    a non-affine gate, costing at least ``c_N``; a circuit of k gates then costs at least
    ``(k − 1)·c_min + c_N = k·c_min + (c_N − c_min)``.  Returns ``c_N − c_min`` (0 when the
    spec is not a full non-affine permutation).  Used to end the k range of ``cost`` early.
    """
    if not spec.is_permutation or is_affine(spec.permutation):
        return 0
    n = library.lines
    nonaffine = [c for g, c in zip(library.gates, costs, strict=True) if not is_affine(g.permutation(n))]
    return min(nonaffine) - min(costs) if nonaffine else 0
