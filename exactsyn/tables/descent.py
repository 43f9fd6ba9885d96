"""Every optimal circuit of a function at once, as a DAG of descents through a class table.

Every prefix of an optimal circuit is itself optimal, so with ``d = dist(f)`` the possible
last gates of ``f`` are exactly the gates ``g`` with ``dist(g∘f) = d − 1`` (``f`` then ``g``;
gates are self-inverse), and the optimal circuits of ``f`` are the optimal circuits of
``g∘f`` followed by ``g``.  A table lookup answers each such question, so the optimal
circuits of ``f`` form a DAG whose nodes are the functions on the way down and whose
arrows are gates.  Dynamic programmes over it give, with no SAT call:

* the least cost among minimum-gate circuits (``gates-then-cost``):
  ``cost(f) = min over last gates g of cost(g) + cost(g∘f)``;
* the number of optimal gate sequences: ``N(f) = Σ N(g∘f)``;
* the number of optimal circuits up to reordering adjacent commuting gates (the classes the
  rest of exactsyn lists: traces of the partially commutative monoid, Cartier & Foata 1969),
  by Möbius inversion over the blocks a circuit may end with:
  ``T(f) = Σ (−1)^(|C|+1) T(C∘f)`` over the non-empty sets ``C`` of pairwise commuting gates
  such that some optimal circuit of ``f`` ends with all of ``C`` (``dist(C∘f) = d − |C|``);
  ``T(identity) = 1``;
* every such class once: depth first from the last gate, keeping the circuits whose reverse
  is the least word of its class (the lexicographic normal form of Anisimov & Knuth 1979,
  checked letter by letter: a new letter ``a`` may not follow a larger letter ``b`` it
  commutes with when it also commutes with every letter after ``b``).

Golubitsky and Maslov (IEEE Trans. Computers 61(9), 2012) give an algorithm for all
optimal implementations of a 4-bit function; their method in detail was not readable
here, and this descent is our own.

**Beyond the table depth.**  A table of depth ``R`` knows ``dist`` up to ``R``.  For
``d = R + L`` one scan of level ``L`` (:meth:`Lookup.split`) finds the split set
``S(f) = {A : dist(A) = L, dist(f∘A⁻¹) = R}``: the first ``L`` gates of every optimal circuit
compute a member of it (a prefix and the rest of an optimal circuit are optimal, and their
counts add up to ``d``).  For a node ``h`` above the table (``dist(h) > R``) and a block
``x = C∘h`` of target distance ``t > R``: ``dist(x) = t`` if and only if
``dist(x∘A⁻¹) = t − L`` for some ``A ∈ S(h)`` — such an ``A`` gives a circuit of
``L + t − L`` gates, and conversely the first ``L`` gates of an optimal circuit of ``h``
that ends with ``C`` (``|C| = dist(h) − t ≤ dist(h) − L``, so ``C`` lies past them) are in
``S(h)``; then ``S(x)`` is the set of those ``A``.  Targets ``t ≤ R`` are looked up
directly.

Distances come from a :class:`Lookup`: the engine's compiled kernels for the search, the
checker's separate numpy code for ``exactsyn check`` (:mod:`exactsyn.tables.verify`); this
module is plain Python and imports neither.
"""

from __future__ import annotations

import time
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from typing import Protocol

from exactsyn.errors import ExactsynError


class Lookup(Protocol):
    """What the descent asks of a class table (keys are Python integers, :mod:`exactsyn.tables.keys`)."""

    depth: int
    identity: int
    gate_keys: tuple[int, ...]

    def compose(self, f: int, a: int) -> int:
        """``f∘a`` (``a`` first)."""
        ...

    def inverse(self, key: int) -> int: ...

    def compose_grid(self, fs: Sequence[int], as_: Sequence[int]) -> list[int]:
        """``[f∘a for f in fs for a in as_]`` (row by row), vectorised."""
        ...

    def at_level(self, keys: Sequence[int], level: int) -> list[bool]:
        """Is the class of each key in level ``level`` (needs exactly that many gates)?"""
        ...

    def split(self, f: int, level: int) -> frozenset[int]:
        """Every ``A`` of level ``level`` with ``f∘A⁻¹`` in the top level (the split set)."""
        ...


class OutOfTime(Exception):
    """The deadline passed while the DAG was being explored."""


@dataclass
class _Node:
    dist: int
    split: frozenset[int] | None  # S(h) for nodes above the table depth
    gates: list[tuple[int, int]] = field(default_factory=list)  # (gate index, g∘h) for every last gate g
    blocks: list[tuple[int, int, tuple[int, ...]]] = field(default_factory=list)  # (size, C∘h, C), |C| ≥ 2


class Descent:
    """The DAG of the optimal circuits of ``f`` (``d = dist(f)``, known) over ``lookup``'s table.

    ``commute[i][j]``: gates ``i`` and ``j`` commute as permutations.  The DAG is built on
    first use, level by level; ``deadline`` (``time.perf_counter()``) raises
    :class:`OutOfTime` when it passes between levels.
    """

    def __init__(
        self, lookup: Lookup, f: int, d: int, commute: Sequence[Sequence[bool]], deadline: float | None = None
    ) -> None:
        self.lookup, self.f, self.d, self.commute, self.deadline = lookup, f, d, commute, deadline
        R = lookup.depth
        self.L = max(0, d - R)
        if self.L > R:
            raise ExactsynError(f"a depth-{R} table reaches {2 * R} gates, not {d}")
        split = lookup.split(f, self.L) if self.L else None
        if split is not None and not split:
            raise ExactsynError(f"the function does not need {d} gates (no split at level {self.L})")
        self.nodes: dict[int, _Node] = {f: _Node(d, split)}
        self._traces: dict[tuple[int, ...] | None, dict[int, int]] = {}
        self._cheapest: dict[tuple[int, ...], dict[int, int]] = {}
        self._sequences: dict[int, int] = {lookup.identity: 1}
        self._built = False

    # ------------------------------------------------------------------ the DAG
    def node(self, h: int) -> _Node:
        """The node of ``h`` with its last gates and blocks (the DAG is built on first use)."""
        if not self._built:
            self._build()
        return self.nodes[h]

    def _build(self) -> None:
        """Every node, level by level from ``f`` down, with one batch of lookups per level.

        A node's children are found through its single last gates; every block ``C`` with
        ``dist(C∘h) = dist(h) − |C|`` lands on a node found that way (removing the gates of
        ``C`` one at a time lowers the distance by one each time), and conversely such a node
        ``x = C∘h`` is on the DAG exactly when ``dist(x) = dist(h) − |C|`` (``h`` is ``x``'s
        optimal circuit followed by ``C``), so blocks need no lookup: membership of the level.
        """
        lk = self.lookup
        by_dist: dict[int, set[int]] = {self.d: {self.f}}
        for j in range(self.d, 0, -1):
            if self.deadline is not None and time.perf_counter() > self.deadline:
                raise OutOfTime
            frontier = sorted(by_dist.get(j, ()))
            grid = lk.compose_grid(lk.gate_keys, frontier)  # g∘h, row g, column h
            xs = [grid[g * len(frontier) + r] for r in range(len(frontier)) for g in range(len(lk.gate_keys))]
            kept = self._reach(frontier, xs, j - 1)
            below = by_dist.setdefault(j - 1, set())
            width = len(lk.gate_keys)
            for r, h in enumerate(frontier):
                n = self.nodes[h]
                for g in range(width):
                    ok = kept[r * width + g]
                    if ok is not None:
                        x = xs[r * width + g]
                        n.gates.append((g, x))
                        if x not in below:
                            below.add(x)
                            self.nodes[x] = _Node(j - 1, ok or None)
        for j in range(self.d, 1, -1):
            for h in by_dist.get(j, ()):
                n = self.nodes[h]
                for c in _cliques([g for g, _ in n.gates], self.commute):
                    if len(c) > 1 and (x := self._apply(c, h)) in by_dist.get(j - len(c), ()):
                        n.blocks.append((len(c), x, c))
        self._built = True

    def _apply(self, block: tuple[int, ...], h: int) -> int:
        for j in block:
            h = self.lookup.compose(self.lookup.gate_keys[j], h)
        return h

    def _reach(self, frontier: list[int], xs: list[int], t: int) -> list[frozenset[int] | None]:
        """For each candidate ``xs[r·G + g] = g∘frontier[r]``: None unless ``dist = t``; else its
        split set (empty within the table).  One lookup batch for all of them."""
        lk = self.lookup
        width = len(lk.gate_keys)
        if t <= lk.depth:
            return [frozenset() if ok else None for ok in lk.at_level(xs, t)]
        pieces: list[tuple[int, list[int]]] = []  # (row, members of its node's split set)
        keys: list[int] = []
        for r, h in enumerate(frontier):
            split = self.nodes[h].split
            assert split is not None  # nodes above the table keep their split set
            members = sorted(split)
            inverses = [lk.inverse(a) for a in members]
            keys += lk.compose_grid(xs[r * width : (r + 1) * width], inverses)
            pieces.append((r, members))
        oks = lk.at_level(keys, t - self.L)
        out: list[frozenset[int] | None] = []
        pos = 0
        for _, members in pieces:
            m = len(members)
            for _g in range(width):
                row = oks[pos : pos + m]
                pos += m
                found = frozenset(a for a, ok in zip(members, row, strict=True) if ok)
                out.append(found if found else None)
        return out

    # ------------------------------------------------------------------ programmes
    def sequences(self, h: int | None = None) -> int:
        """The number of optimal gate sequences of ``h`` (default ``f``)."""
        h = self.f if h is None else h
        if h not in self._sequences:
            self._sequences[h] = sum(self.sequences(x) for _, x in self.node(h).gates)
        return self._sequences[h]

    def cheapest(self, costs: Sequence[int], h: int | None = None) -> int:
        """The least total cost among the optimal circuits of ``h`` (``costs[j]`` per library gate)."""
        h = self.f if h is None else h
        memo = self._cheapest.setdefault(tuple(costs), {self.lookup.identity: 0})
        if h not in memo:
            memo[h] = min(costs[j] + self.cheapest(costs, x) for j, x in self.node(h).gates)
        return memo[h]

    def _on_cheapest(self, costs: Sequence[int] | None, h: int, cost: int, x: int) -> bool:
        """Is a step of ``cost`` from ``h`` to ``x`` on a cheapest optimal circuit (always, without costs)?"""
        return costs is None or cost + self.cheapest(costs, x) == self.cheapest(costs, h)

    def traces(self, costs: Sequence[int] | None = None, h: int | None = None) -> int:
        """The number of optimal circuits of ``h`` up to reordering adjacent commuting gates; with
        ``costs``, of those of least cost (a reordering keeps the cost, so the Möbius sum runs over
        the blocks on cheapest circuits)."""
        h = self.f if h is None else h
        memo = self._traces.setdefault(None if costs is None else tuple(costs), {self.lookup.identity: 1})
        if h not in memo:
            n = self.node(h)
            total = sum(self.traces(costs, x) for j, x in n.gates if self._on_cheapest(costs, h, _cost(costs, j), x))
            for size, x, block in n.blocks:
                if self._on_cheapest(costs, h, _cost(costs, *block), x):
                    total += (-1) ** (size + 1) * self.traces(costs, x)
            memo[h] = total
        return memo[h]

    def cheapest_circuit(self, costs: Sequence[int]) -> tuple[int, tuple[int, ...]]:
        """The least cost among the optimal circuits of ``f`` and one circuit of that cost
        (library indices, application order; the least gate index where there is a choice)."""
        value = self.cheapest(costs)
        out: list[int] = []
        h = self.f
        while h != self.lookup.identity:
            j, h = next((j, x) for j, x in sorted(self.node(h).gates) if self._on_cheapest(costs, h, costs[j], x))
            out.append(j)
        return value, tuple(reversed(out))

    def circuits(self, costs: Sequence[int] | None = None) -> Iterator[tuple[int, ...]]:
        """Every optimal circuit (of least cost, with ``costs``) up to reordering adjacent commuting
        gates, once each (library indices, application order): the circuit whose reverse is the
        least word of its class."""
        word: list[int] = []  # the circuit backwards: last gate first

        def allowed(a: int) -> bool:
            for b in reversed(word):  # walk back while a commutes with what it passes
                if not self.commute[a][b]:
                    return True
                if b > a:
                    return False
            return True

        def walk(h: int) -> Iterator[tuple[int, ...]]:
            if h == self.lookup.identity:
                yield tuple(reversed(word))
                return
            for j, x in sorted(self.node(h).gates):
                if allowed(j) and self._on_cheapest(costs, h, _cost(costs, j), x):
                    word.append(j)
                    yield from walk(x)
                    word.pop()

        yield from walk(self.f)


def _cost(costs: Sequence[int] | None, *gates: int) -> int:
    return 0 if costs is None else sum(costs[j] for j in gates)


def _cliques(items: Sequence[int], commute: Sequence[Sequence[bool]]) -> list[tuple[int, ...]]:
    """Every non-empty set of pairwise commuting items (as sorted tuples)."""
    out: list[tuple[int, ...]] = []

    def grow(clique: tuple[int, ...], rest: Sequence[int]) -> None:
        for i, a in enumerate(rest):
            new = clique + (a,)
            out.append(new)
            grow(new, [b for b in rest[i + 1 :] if commute[a][b]])

    grow((), sorted(items))
    return out


def commutation(lookup: Lookup) -> list[list[bool]]:
    """``commute[i][j]``: the library's gates ``i`` and ``j`` commute as permutations."""
    keys = lookup.gate_keys
    return [[lookup.compose(a, b) == lookup.compose(b, a) for b in keys] for a in keys]
