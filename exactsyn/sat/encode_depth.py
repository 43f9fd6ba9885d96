"""CNF of "is there a circuit of depth at most d that meets the spec?" (gates on disjoint lines share a layer).

Layered formulation: layer ``L`` (0 ≤ L < d) has one optional *slot* per line ``s``;
slot ``(L, s)`` may hold a library gate whose lowest line is ``s`` (its anchor), or stay
empty.  Every gate of a layer has a different lowest line, so a layer of gates on
disjoint lines has exactly one slot assignment: no symmetry between slots.  The slots
are the positions of a :class:`~exactsyn.sat.question.Question` with ``slots`` (same line-value
and gate clauses; an empty slot keeps every line by the frame clauses), in order
``L·n + s``; gates of one layer are on disjoint lines so their order does not matter.

Extra clause families, for layer ``L``:

* **use**: ``use[L,s][l] ↔ ∨ {g[L,s][j] : l ∈ lines(j)}``;
* **disjoint**: at most one slot of a layer uses line ``l`` (pairwise);
* **asap** (symmetry breaking): a gate in layer ``L+1`` uses some line used in layer ``L``
  (``busy[L][l] → ∨_s use[L,s][l]``; ``g[L+1,s][j] → ∨_{l ∈ lines(j)} busy[L][l]``).
  In particular an empty layer is followed only by empty layers.
* **no-cancel** (symmetry breaking): slot ``(L+1, s)`` does not hold the inverse of the
  gate in slot ``(L, s)``.

Why an optimal circuit survives: among the layered circuits of depth ≤ d that meet the
spec take one with the fewest gates and, among those, the least sum of layer indices of
its gates.  If a gate of layer ``L+1`` used no line of layer ``L`` it could move to layer
``L`` (it commutes with the gates of layer ``L``, all on other lines, and its anchor slot
there is free): the sum would drop.  If slot ``(L+1, s)`` held the inverse of the gate
in slot ``(L, s)``, every gate between them is on other lines, so the two cancel: fewer
gates, depth not raised.  So that circuit satisfies both rules, and the rules never
exclude every circuit of depth ≤ d.  The ``touch`` rule of the gate encoding holds for
every circuit and is kept.

Depth here is the usual circuit depth (common practice): the number of layers when gates
on disjoint lines share a layer; :meth:`exactsyn.core.circuit.Circuit.depth` computes it by
ASAP layering and is the value every decoded circuit is checked against.
"""

from __future__ import annotations

from dataclasses import replace

from pysat.formula import IDPool

from exactsyn.core.library import Library
from exactsyn.sat.encode import Encoding, EncodingOptions, Question, encode_question
from exactsyn.sat.symmetry import inverse_pairs
from exactsyn.specification.reversible import Spec

DEPTH_OPTIONS = EncodingOptions("onehot", ("touch",))


def depth_slots(library: Library, depth: int) -> list[list[int]]:
    """Allowed library gates per position ``L·n + s``: those whose lowest line is ``s``."""
    n = library.lines
    by_anchor = [[j for j, g in enumerate(library.gates) if min(g.lines) == s] for s in range(n)]
    return [by_anchor[s] for _ in range(depth) for s in range(n)]


def encode_depth(spec: Spec, library: Library, depth: int) -> Encoding:
    """The CNF for depth ≤ ``depth`` (see the module docstring); decodes to a circuit."""
    n, gates = library.lines, library.gates
    pool = IDPool()
    allowed = depth_slots(library, depth)
    enc = encode_question(Question(spec, library, depth * n, DEPTH_OPTIONS, slots=tuple(map(tuple, allowed))), pool)
    clauses = list(enc.clauses)
    g = enc.gate_vars

    def pos(layer: int, s: int) -> int:
        return layer * n + s

    for layer in range(depth):
        for line in range(n):
            uses = []
            for s in range(n):
                p = pos(layer, s)
                users = [g[p][j] for j in allowed[p] if line in gates[j].lines]
                if not users:
                    continue
                u = pool.id(("use", layer, s, line))
                clauses.append([-u, *users])
                clauses.extend([-v, u] for v in users)
                uses.append(u)
            for i in range(len(uses)):
                for j in range(i + 1, len(uses)):
                    clauses.append([-uses[i], -uses[j]])
            busy = pool.id(("busy", layer, line))
            clauses.append([-busy, *uses])
            clauses.extend([-u, busy] for u in uses)
    for layer in range(depth - 1):
        for s in range(n):
            p, q = pos(layer, s), pos(layer + 1, s)
            for j in allowed[q]:
                clauses.append([-g[q][j], *(pool.id(("busy", layer, line)) for line in sorted(gates[j].lines))])
            for i, j in inverse_pairs(library):
                if i in allowed[p] and j in allowed[q]:
                    clauses.append([-g[p][i], -g[q][j]])
    return replace(enc, clauses=clauses, num_vars=pool.top)
