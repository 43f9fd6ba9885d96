"""Functions with large optimal gate counts: the families fixed by a symmetry of the class tables.

A function that commutes with a relabelling of the lines (``π_σ∘f = f∘π_σ``) is fixed by
that symmetry, so its class is small and such functions are few: :func:`centraliser`
lists all of them (a permutation commuting with ``P`` maps every cycle of ``P`` onto a
cycle of the same length, turned by some offset), :func:`fixed_functions` also those
fixed by a relabelling combined with inversion (``σ`` relabels ``n`` lines, so the
functions are those of ``n`` lines).  For a 4-cycle of 4 lines there are
1536 commuting functions, for a 3-cycle 46656; every class is settled exactly by the
tables.  ``hwb4`` is one of them (it commutes with the cyclic rotation of the lines).
:func:`at_least` answers "is the optimum at least k?" by a scan that stops early, the
cheap screen before a class is settled.

Only the final optima are claims; they come from :meth:`Tables.synthesise` with circuits.
"""

from __future__ import annotations

import itertools
from collections.abc import Iterator, Sequence

from exactsyn.tables.engine import Tables
from exactsyn.tables.keys import layout


def centraliser(state_perm: Sequence[int]) -> Iterator[tuple[int, ...]]:
    """Every permutation ``f`` of the states with ``f∘P = P∘f`` for the permutation ``P`` of them."""
    size = len(state_perm)
    seen = [False] * size
    by_length: dict[int, list[list[int]]] = {}
    for x in range(size):
        if not seen[x]:
            cyc = []
            y = x
            while not seen[y]:
                seen[y] = True
                cyc.append(y)
                y = state_perm[y]
            by_length.setdefault(len(cyc), []).append(cyc)
    groups = sorted(by_length.items())
    choices = []
    for length, cycles in groups:
        per = []
        for order in itertools.permutations(range(len(cycles))):
            for offsets in itertools.product(range(length), repeat=len(cycles)):
                per.append((order, offsets))
        choices.append(per)
    for combo in itertools.product(*choices):
        f = [0] * size
        for (length, cycles), (order, offsets) in zip(groups, combo, strict=True):
            for k, cyc in enumerate(cycles):
                target = cycles[order[k]]
                for t in range(length):
                    f[cyc[t]] = target[(t + offsets[k]) % length]
        yield tuple(f)


def fixed_functions(sigma: Sequence[int], inverted: bool) -> Iterator[tuple[int, ...]]:
    """Every ``f`` fixed by the transform ``(σ, inverted)``: ``π_σ∘f∘π_σ⁻¹ = f`` (commuting
    with ``P = π_σ``), or ``π_σ∘f⁻¹∘π_σ⁻¹ = f`` when ``inverted`` (that is ``f∘P∘f = P``).

    Backtracking over ``f(0), f(1), …``; an assignment ``f(x) = y`` forces ``f(P x) = P y``
    (commuting) or ``f(P y) = P x`` (inverted), propagated to a fixed point."""
    P = layout(len(sigma)).state_map(sigma)
    size = len(P)

    def assign(f: list[int], used: list[bool], x: int, y: int, trail: list[int]) -> bool:
        todo = [(x, y)]
        while todo:
            a, b = todo.pop()
            if f[a] >= 0:
                if f[a] != b:
                    return False
                continue
            if used[b]:
                return False
            f[a], used[b] = b, True
            trail.append(a)
            todo.append((P[b], P[a]) if inverted else (P[a], P[b]))
        return True

    def undo(f: list[int], used: list[bool], trail: list[int]) -> None:
        for a in trail:
            used[f[a]] = False
            f[a] = -1

    f, used = [-1] * size, [False] * size

    def rec(x: int) -> Iterator[tuple[int, ...]]:
        while x < size and f[x] >= 0:
            x += 1
        if x == size:
            yield tuple(f)
            return
        for y in range(size):
            if used[y]:
                continue
            trail: list[int] = []
            if assign(f, used, x, y, trail):
                yield from rec(x + 1)
            undo(f, used, trail)

    yield from rec(0)


def symmetric_classes(sigma: Sequence[int], inverted: bool = False) -> list[int]:
    """Canonical keys of the classes of the functions fixed by the transform ``(σ, inverted)``."""
    lay = layout(len(sigma))
    keys = lay.array(lay.pack(f) for f in fixed_functions(sigma, inverted))
    return sorted(set(lay.ints(lay.kernels().canon_many(keys))))


def at_least(tables: Tables, perm: Sequence[int], k: int) -> bool:
    """True when every circuit for ``perm`` has at least ``k`` gates (proven by the scan)."""
    R = tables.depth
    if k - 1 <= R:
        j = tables.level_of(perm)
        return j is None or j >= k
    ans = tables.synthesise(perm, max_extra=k - 1 - R)
    return not ans.optimal
