"""Search for 4-line functions with large optimal gate counts, using the tables as a distance oracle.

Two searches, both ours:

* **Symmetric functions.**  A function that commutes with a relabelling of the lines
  (``π_σ∘f = f∘π_σ``) is fixed by that symmetry, so its class is small and such functions
  are few: :func:`centraliser` lists all of them (a permutation commuting with ``P`` maps
  every cycle of ``P`` onto a cycle of the same length, turned by some offset).  For a
  4-cycle of the lines there are 1536 such functions, for a 3-cycle 46656; every class is
  settled exactly.  ``hwb4`` is one of them (it commutes with the cyclic rotation of the
  lines).
* **Greedy ascent.**  A gate changes the optimum by at most one, so from ``f`` with optimum
  ``d`` a neighbour ``g∘f`` or ``f∘g`` with optimum ``d + 1`` is tested by the cheaper
  question "is the optimum ≥ d + 1?" (the meet in the middle scanned to ``d − R`` without a
  hit).  The walk climbs while a neighbour climbs, then takes a few sideways steps.

Only the final optima are claims; they come from :meth:`Tables.synthesise` with circuits.
"""

from __future__ import annotations

import itertools
import random
import time
from collections.abc import Iterator, Sequence
from dataclasses import dataclass

import numpy as np

from exactsyn.tables import perm4
from exactsyn.tables.engine import Tables


def centraliser(state_perm: Sequence[int]) -> Iterator[tuple[int, ...]]:
    """Every permutation ``f`` of 0..15 with ``f∘P = P∘f`` for the permutation ``P``."""
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


def fixed_functions(
    sigma: Sequence[int], inverted: bool, rng: random.Random | None = None
) -> Iterator[tuple[int, ...]]:
    """Every ``f`` fixed by the transform ``(σ, inverted)`` (see :func:`fixed_by_all`)."""
    return fixed_by_all([(sigma, inverted)], rng)


def fixed_by_all(
    transforms: Sequence[tuple[Sequence[int], bool]], rng: random.Random | None = None
) -> Iterator[tuple[int, ...]]:
    """Every ``f`` fixed by each transform ``(σ, inverted)``: ``π_σ∘f∘π_σ⁻¹ = f`` (commuting
    with ``P = π_σ``), or ``π_σ∘f⁻¹∘π_σ⁻¹ = f`` when ``inverted`` (that is ``f∘P∘f = P``).

    Backtracking over ``f(0), f(1), …``; an assignment ``f(x) = y`` forces ``f(P x) = P y``
    (commuting) or ``f(P y) = P x`` (inverted) for every transform, propagated to a fixed
    point.  With ``rng`` the values are tried in random order (a random member comes first)."""
    rules = [(perm4.state_map(sigma), inverted) for sigma, inverted in transforms]
    size = 16

    def implied(x: int, y: int) -> list[tuple[int, int]]:
        return [(P[y], P[x]) if inv else (P[x], P[y]) for P, inv in rules]

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
            todo.extend(implied(a, b))
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
        order = list(range(size))
        if rng is not None:
            rng.shuffle(order)
        for y in order:
            if used[y]:
                continue
            trail: list[int] = []
            if assign(f, used, x, y, trail):
                yield from rec(x + 1)
            undo(f, used, trail)

    yield from rec(0)


def symmetric_classes(sigma: Sequence[int], inverted: bool = False) -> list[int]:
    """Canonical keys of the classes of the functions fixed by the transform ``(σ, inverted)``."""
    from exactsyn.tables import kernels as K

    keys = np.array([perm4.pack(f) for f in fixed_functions(sigma, inverted)], dtype=np.uint64)
    return sorted(set(K.canon_many(keys).tolist()))


def at_least(tables: Tables, perm: Sequence[int], k: int) -> bool:
    """True when every circuit for ``perm`` has at least ``k`` gates (proven by the scan)."""
    R = tables.depth
    if k - 1 <= R:
        j = tables.level_of(perm)
        return j is None or j >= k
    ans = tables.synthesise(perm, max_extra=k - 1 - R)
    return not ans.optimal


@dataclass(frozen=True)
class Found:
    perm: tuple[int, ...]
    gates: int
    how: str


def neighbours(tables: Tables, perm: Sequence[int]) -> list[tuple[int, ...]]:
    """``g∘f`` and ``f∘g`` for every gate ``g`` of the table's library."""
    f = perm4.pack(perm)
    out = []
    for g in tables.gates.keys:
        out.append(perm4.unpack(perm4.compose(g, f)))
        out.append(perm4.unpack(perm4.compose(f, g)))
    return out


def ascend(
    tables: Tables, start: Sequence[int], rng: random.Random, sideways: int = 8, deadline: float | None = None
) -> Found:
    """Climb from ``start`` through neighbours with a larger optimum; return the top reached."""
    ans = tables.synthesise(start)
    if not ans.optimal or ans.gate_count is None:
        raise RuntimeError("the start function is not settled by the table")
    f, d = tuple(start), ans.gate_count
    flat = 0
    while deadline is None or time.perf_counter() < deadline:
        nb = neighbours(tables, f)
        rng.shuffle(nb)
        up = next((h for h in nb if at_least(tables, h, d + 1)), None)
        if up is not None:
            f, d, flat = up, d + 1, 0
            continue
        if flat >= sideways:
            break
        side = [h for h in nb[:16] if at_least(tables, h, d)]
        if not side:
            break
        f, flat = rng.choice(side), flat + 1
    return Found(f, d, "greedy ascent")


def family_moves(perm: Sequence[int], sigma: Sequence[int], gate_keys: Sequence[int]) -> list[tuple[int, ...]]:
    """Moves that stay in the family ``π_σ∘f⁻¹∘π_σ⁻¹ = f`` for an involution ``σ``:
    ``f ↦ h∘f∘h'`` with ``h' = π_σ∘h∘π_σ⁻¹`` (then ``f'∘P∘f' = h∘(f∘P∘f)∘P∘h∘P⁻¹ = P`` as
    ``P² = 1`` and ``h² = 1``); the optimum changes by at most two."""
    f = perm4.pack(perm)
    out = []
    for h in gate_keys:
        out.append(perm4.unpack(perm4.compose(perm4.compose(h, f), perm4.conjugate(h, sigma))))
    return out


def ascend_in_family(
    tables: Tables,
    start: Sequence[int],
    sigma: Sequence[int],
    rng: random.Random,
    sideways: int = 6,
    deadline: float | None = None,
) -> Found:
    """Greedy ascent inside the family of functions fixed by ``(σ, inverted)`` (``σ`` an
    involution): try a move two up, then one up, then a few sideways moves."""
    ans = tables.synthesise(start)
    if not ans.optimal or ans.gate_count is None:
        raise RuntimeError("the start function is not settled by the table")
    f, d, flat = tuple(start), ans.gate_count, 0
    keys = list(tables.gates.keys)
    while deadline is None or time.perf_counter() < deadline:
        moves = family_moves(f, sigma, keys)
        rng.shuffle(moves)
        ups = [h for h in moves if at_least(tables, h, d + 1)]
        if ups:
            two = next((h for h in ups if at_least(tables, h, d + 2)), None)
            f, d, flat = (two, d + 2, 0) if two is not None else (ups[0], d + 1, 0)
            continue
        if flat >= sideways:
            break
        side = [h for h in moves[:8] if at_least(tables, h, d)]
        if not side:
            break
        f, flat = rng.choice(side), flat + 1
    return Found(f, d, f"ascent among functions fixed by relabelling {tuple(sigma)} with inversion")


def hardest_symmetric(tables: Tables, transforms: Sequence[tuple[Sequence[int], bool]], floor: int) -> list[Found]:
    """Settle every class of functions fixed by one of ``transforms`` (``(σ, inverted)``)
    whose optimum is at least ``floor`` (screened first by :func:`at_least`)."""
    out = []
    for sigma, inverted in transforms:
        how = f"fixed by relabelling {tuple(sigma)}" + (" with inversion" if inverted else "")
        for key in symmetric_classes(sigma, inverted):
            p = perm4.unpack(key)
            if not at_least(tables, p, floor):
                continue
            ans = tables.synthesise(p)
            if ans.optimal and ans.gate_count is not None:
                out.append(Found(p, ans.gate_count, how))
    return sorted(out, key=lambda x: -x.gates)
