"""Symmetry-breaking and redundant clause families, registered by name; each keeps an optimal circuit.

Order circuits of equal length lexicographically by their sequence of library indices
(the order of :attr:`exactsyn.core.library.Library.gates`).  Among the optimal
(minimum-length) circuits for the spec take the lexicographically smallest one, ``C*``.
Every rule here is satisfied by ``C*`` — the argument is in each rule's docstring — hence
by at least one optimal circuit, whatever combination of rules is switched on.

Under a cost limit (:class:`exactsyn.sat.question.CostLimit`, for the cost objectives of
:mod:`exactsyn.search.objectives`) the question is "k gates and total cost ≤ C", and ``C*``
is the lexicographically smallest among the circuits of minimum length that meet the spec
with cost ≤ C; each rule's docstring says why it still holds for that ``C*``.

:data:`RULES` maps each name of :data:`exactsyn.sat.question.SYMMETRY_RULES` to its clause
family, in the order :func:`symmetry_breaking` emits them (part of the certificate format:
do not reorder).  The rules are used by the ``onehot`` encoding only.
"""

from __future__ import annotations

from exactsyn.caches import memo
from exactsyn.core.gates import invert_permutation
from exactsyn.core.library import Library
from exactsyn.sat.clauses import ClauseBuilder, ClauseFamily, VariableLayout
from exactsyn.sat.forbidden import forbidden_windows, weighted_forbidden_windows, window_size_ok
from exactsyn.sat.question import SYMMETRY_RULES


@memo(maxsize=64)
def commuting_pairs(library: Library) -> frozenset[tuple[int, int]]:
    """Pairs ``(i, j)``, ``i < j``, of library gates that commute as permutations."""
    n = library.lines
    perms = [g.permutation(n) for g in library.gates]
    out = set()
    for j, pj in enumerate(perms):
        for i in range(j):
            pi = perms[i]
            gates_i, gates_j = library.gates[i], library.gates[j]
            if not (gates_i.lines & gates_j.lines):
                out.add((i, j))
                continue
            if all(pj[pi[s]] == pi[pj[s]] for s in range(1 << n)):
                out.add((i, j))
    return frozenset(out)


@memo(maxsize=64)
def inverse_pairs(library: Library) -> tuple[tuple[int, int], ...]:
    """Pairs ``(i, j)`` of library gates with ``g_j ∘ g_i`` the identity (``i == j`` for involutions)."""
    perms = [g.permutation(library.lines) for g in library.gates]
    index = {p: j for j, p in enumerate(perms)}
    out = []
    for i, perm in enumerate(perms):
        j = index.get(invert_permutation(perm))
        if j is not None:
            out.append((i, j))
    return tuple(out)


def no_repeat(b: ClauseBuilder, v: VariableLayout) -> None:
    """``no-repeat`` — ``¬g[d][i] ∨ ¬g[d+1][j]`` for every inverse pair ``(i, j)`` (:func:`inverse_pairs`).

    A gate followed by its inverse (for the self-inverse kinds: the gate itself) cancels,
    and the circuit without the pair is shorter: ``C*`` (optimal) has no such pair.
    Under a cost limit the pair can be removed without raising the cost (costs are ≥ 0),
    so ``C*`` has none either.
    """
    gv = v.gate_vars
    for d in range(len(gv) - 1):
        for i, j in inverse_pairs(v.question.library):
            b.add([-gv[d][i], -gv[d + 1][j]])


def commute(b: ClauseBuilder, v: VariableLayout) -> None:
    """``commute`` — ``¬g[d][j] ∨ ¬g[d+1][i]`` for ``i < j`` when gates ``i`` and ``j`` commute.

    Commuting is checked by composing the two permutations both ways
    (:func:`commuting_pairs`).  Swapping such a pair gives a circuit of the same length
    computing the same function that is lexicographically smaller, so ``C*`` has no such
    pair.  The swap keeps the gate multiset, hence the cost: the argument holds under a
    cost limit.
    """
    gv = v.gate_vars
    pairs = commuting_pairs(v.question.library)
    for d in range(len(gv) - 1):
        for i, j in pairs:
            b.add([-gv[d][j], -gv[d + 1][i]])


def window_rule(w: int) -> ClauseFamily:
    """``window2``, ``window3``, ``window4`` — forbid every run of ``w`` consecutive gates
    that is not the least optimal circuit of its own function.

    The table is precomputed by enumeration in :mod:`exactsyn.sat.forbidden`, where the
    argument is spelt out: each window of ``C*`` is the least optimal circuit of its
    function, else ``C*`` could be shortened or made smaller.  ``window2`` contains
    ``no-repeat`` and ``commute``.  A window length is skipped when ``|G|^w`` exceeds the
    enumeration cap.

    Under a cost limit the rule changes meaning: it forbids the windows that are not the
    least circuit of their function in the order of :attr:`CostLimit.order` (cost first,
    or gate count first), whose argument is in
    :func:`exactsyn.sat.forbidden.weighted_forbidden_windows`; the plain window rule would
    replace a window by a shorter one of higher cost.
    """

    def window(b: ClauseBuilder, v: VariableLayout) -> None:
        library, cl, gv = v.question.library, v.question.cost_limit, v.gate_vars
        if not window_size_ok(library, w):
            return
        forbidden = (
            forbidden_windows(library, w)
            if cl is None
            else weighted_forbidden_windows(library, w, cl.costs, cl.order)
        )
        for seq in forbidden:
            for d in range(len(gv) - w + 1):
                b.add([-gv[d + i][j] for i, j in enumerate(seq)])

    window.__doc__ = window_rule.__doc__
    return window


def trace(b: ClauseBuilder, v: VariableLayout) -> None:
    """``trace`` — lexicographic normal form of traces (Anisimov & Knuth 1979; Diekert &
    Rozenberg, "The Book of Traces", 1995): no position ``j`` holds a gate that commutes
    with every gate at positions ``i..j−1`` and is smaller than the gate at ``i``.

    Why ``C*`` survives: moving such a gate to position ``i`` gives an equivalent circuit
    of the same length that is lexicographically smaller.  The rule contains ``commute``;
    each class of circuits equivalent under swapping adjacent commuting gates keeps
    exactly one member (its least), which is what ``--all`` enumeration counts.  The move
    keeps the gate multiset, hence the cost: the argument holds under a cost limit.

    ``K[i][h]`` — the gate at ``i`` commutes with gate ``h``; ``cb[j][i]`` — the gate at
    ``j`` commutes with all gates at ``i..j−1``; ``gt[i][h]`` — the gate at ``i`` is larger
    than ``h``.  Each auxiliary is only forced true (implications from the gate choice),
    which is all the forbidding clause ``¬cb[j][i] ∨ ¬g[j][h] ∨ ¬gt[i][h]`` needs.
    """
    library, gvars = v.question.library, v.gate_vars
    k, m = len(gvars), len(library.gates)
    if k < 2:
        return
    pairs = commuting_pairs(library)
    comm: list[set[int]] = [{h} for h in range(m)]
    for i, j in pairs:
        comm[i].add(j)
        comm[j].add(i)
    for i in range(k):
        for h in range(m):
            kv = b.var("comm", i, h)
            for a in comm[h]:
                b.add([-gvars[i][a], kv])
        for h in range(m - 1):
            b.add([-gvars[i][h + 1], b.var("gt", i, h)])
            if h + 2 < m:
                b.add([-b.var("gt", i, h + 1), b.var("gt", i, h)])
    for j in range(1, k):
        for i in range(j - 1, -1, -1):
            cb = b.var("cb", j, i)
            for h in range(m):
                # gate h at j commutes with the gate at i (and with i+1..j-1) -> cb[j][i]
                prev = [] if i == j - 1 else [-b.var("cb", j, i + 1)]
                b.add([-gvars[j][h], -b.var("comm", i, h), *prev, cb])
            for h in range(m - 1):
                b.add([-cb, -gvars[j][h], -b.var("gt", i, h)])


def touch(b: ClauseBuilder, v: VariableLayout) -> None:
    """``touch`` (redundant, implied) — ``∨_d t[d][l]`` for every line ``l`` whose output
    differs from its input on a specified row (:meth:`exactsyn.specification.reversible.Spec.changed_lines`).

    Only a gate targeting ``l`` changes ``l``, so every circuit meeting the spec satisfies
    it, under a cost limit too.  In a guarded question the clause depends on k and holds only
    under ``("act", k)``.
    """
    pre = [-v.act] if v.act is not None else []
    for line in v.question.spec.changed_lines():
        b.add(pre + [t[line] for t in v.target_vars])


RULES: dict[str, ClauseFamily] = {
    "no-repeat": no_repeat,
    "commute": commute,
    "window2": window_rule(2),
    "window3": window_rule(3),
    "window4": window_rule(4),
    "trace": trace,
    "touch": touch,
}
if set(RULES) != set(SYMMETRY_RULES):  # pragma: no cover - a rule named in one place only
    raise RuntimeError("exactsyn.sat.symmetry.RULES and SYMMETRY_RULES disagree")


def symmetry_breaking(b: ClauseBuilder, v: VariableLayout) -> None:
    """The question's symmetry rules, in the order of :data:`RULES` (not the order they were named in)."""
    chosen = v.question.options.symmetry
    for name, rule in RULES.items():
        if name in chosen:
            rule(b, v)
