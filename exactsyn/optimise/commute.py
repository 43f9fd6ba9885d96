"""Do two gates commute?  Exactly, as permutations of the states of their joint lines.

Two gates that touch disjoint lines commute.  Otherwise both act as the identity outside
their joint lines, so ``a·b = b·a`` on all lines exactly when it holds on the joint lines;
that is decided here, for every pair, either by a rule on the gates' bit masks (NOT /
CNOT / MCT gates with any polarity) or by simulating both orders on the joint lines.

The rule for two ``x`` gates A (target ``a``, condition ``cA``, a conjunction of
literals on lines other than ``a``) and B (target ``b``, condition ``cB``):

* ``a = b``: both flip the same line under conditions that neither changes: they commute.
* ``a`` is not a line of B and ``b`` not a line of A: neither reads what the other
  writes: they commute.
* Otherwise let ``rA``, ``rB`` be the conditions without their literal on the other
  gate's target.  If ``rA ∧ rB`` is unsatisfiable (one line is a positive control of one
  gate and a negative control of the other, a line other than ``a`` and ``b``) the two
  never act on the same state, and commute.  If some state satisfies both, then on the
  two lines ``a, b`` (the others are fixed and the conditions hold) the gates are a CNOT
  and either a NOT on the other line or a CNOT the other way round, up to the polarity of
  the control: such pairs do not commute (common practice; the tests compare the rule
  with simulation on every pair of gates on four lines).

This is the commutation test of peephole and template optimisers of reversible
circuits (e.g. Maslov, Dueck, Miller, "Techniques for the synthesis of reversible
Toffoli networks", ACM TODAES 12(4), 2007, from memory: gates are moved past each
other by a rule of this kind before templates are matched).
"""

from __future__ import annotations

from itertools import chain

import numpy as np

from exactsyn.core.gates import Gate

#: Joint line counts up to which two gates outside the x family are compared by simulation.
MAX_SIMULATED_LINES = 16


def x_commute(ta: int, pa: int, na: int, tb: int, pb: int, nb: int) -> bool:
    """The rule of the module docstring on masks: targets ``ta``, ``tb`` (one bit each),
    positive controls ``pa``, ``pb`` and negative controls ``na``, ``nb``."""
    if ta == tb:
        return True
    if not (ta & (pb | nb)) and not (tb & (pa | na)):
        return True
    return bool(((pa & nb) | (na & pb)) & ~(ta | tb))


def relabel(g: Gate, local: dict[int, int]) -> Gate:
    """The gate with line ``l`` renamed ``local[l]`` (an increasing map keeps controls sorted)."""
    return Gate(
        g.family,
        tuple(local[t] for t in g.targets),
        tuple(local[c] for c in g.controls),
        tuple(local[c] for c in g.negative_controls),
    )


def simulate_commute(a: Gate, b: Gate) -> bool | None:
    """Compare ``a`` then ``b`` with ``b`` then ``a`` on every state of the joint lines
    (None when there are more than :data:`MAX_SIMULATED_LINES` of them)."""
    joint = sorted(set(chain(a.lines, b.lines)))
    if len(joint) > MAX_SIMULATED_LINES:
        return None
    local = {line: i for i, line in enumerate(joint)}
    la, lb = relabel(a, local), relabel(b, local)
    states = np.arange(1 << len(joint), dtype=np.int64)
    return bool(np.array_equal(lb.apply(la.apply(states)), la.apply(lb.apply(states))))


def commute(a: Gate, b: Gate) -> bool:
    """True when ``a·b = b·a`` (exact; see the module docstring).

    Pairs outside the x family on more than :data:`MAX_SIMULATED_LINES` joint lines are
    reported as not commuting: a gate is then never moved past the other, which loses an
    optimisation but never correctness."""
    if not (a.lines & b.lines):
        return True
    if a.family == "x" and b.family == "x":
        return x_commute(
            a.target_mask, a.positive_mask, a.negative_mask, b.target_mask, b.positive_mask, b.negative_mask
        )
    result = simulate_commute(a, b)
    return bool(result)
