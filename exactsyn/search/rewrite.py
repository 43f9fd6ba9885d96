"""Rewrite a multiple-control Toffoli circuit into a smaller gate library, gate by gate.

Used by the fallback (:mod:`exactsyn.search.fallback`) to turn a transformation-based
MCT circuit into a circuit of the library asked for.  Every step below keeps the function;
the caller simulates the result against the spec all the same.

1. **Odd gates without a library gate.**  On ``n`` lines an x gate with ``n − 1``
   controls swaps two states: it is an odd permutation, while every gate with fewer
   controls is even (Shende, Prasad, Markov, Hayes, IEEE TCAD 22(6), 2003).  An even
   function's circuit therefore holds an even number of them, and they are paired:
   for consecutive odd gates ``O_a … W … O_b`` (``W`` without odd gates),
   ``O_b∘W∘O_a = W∘(W⁻¹∘O_b∘W)∘O_a``.  ``D = (W⁻¹O_bW)∘O_a`` is a product of two
   transpositions: the identity, a 3-cycle, or a double transposition ``(a b)(c d)``.
   A 3-cycle ``(p q s)`` is ``[(q s)(x y)]∘[(p q)(x y)]`` for any two other states
   ``x, y``.  A double transposition is realised by conjugation: the gate ``D₀`` with
   ``n − 2`` controls (every line but its target ``t`` and one free line ``f``) swaps the
   pairs ``{m, m⊕e_t}`` and ``{m⊕e_f, m⊕e_t⊕e_f}`` (``m``: every bit but ``t`` and ``f``
   set) and nothing else; a *mover* ``C`` sends ``a, b, c, d`` onto those four states, and
   ``D = C⁻¹∘D₀∘C``.  ``C`` is affine (NOT/CNOT, :mod:`exactsyn.search.affine`) when
   ``d = a⊕b⊕c``; otherwise an affine map sends ``d`` to ``m⊕e_t⊕e_f⊕e_g`` for a third
   line ``g`` and one Toffoli with controls ``t, f`` and target ``g`` finishes the move (it
   fires on that state only among the four).  On ``n ≥ 4`` lines every gate used has at
   most ``n − 2`` controls, so no odd gate is left.
2. **More controls than the library has.**  A gate with ``m`` controls and a line it
   does not touch is split (Barenco et al., "Elementary gates for quantum computation",
   Phys. Rev. A 52, 1995): lemma 7.2 — with ``m − 2`` untouched lines, borrowed in any
   state and restored, ``4(m − 2)`` Toffoli gates; lemma 7.3 — with one borrowed line
   ``b``, four gates: ``C₂∪{b}→t``, ``C₁→b``, ``C₂∪{b}→t``, ``C₁→b`` for a split of the
   controls into ``C₁, C₂``, each again split while it is too large.
3. **Toffoli through Peres.**  A library with Peres gates and CNOTs but no Toffoli:
   ``Toffoli(a, b → c)`` = ``Peres(a; b, c)`` then ``CNOT(a → b)``.
4. **Coupling.**  A gate whose lines are not connected in the coupling graph is moved
   next to its partners by SWAPs along shortest paths (a SWAP gate, or 3 CNOTs on a
   coupled pair, common practice), applied there, and the SWAPs are undone.  Lines in
   different components of the coupling graph cannot be brought together: that is
   reported as the reason.

:class:`CannotRewrite` carries the reason when the library cannot express a gate.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable, Sequence

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.core.library import Library, make_library
from exactsyn.errors import ExactsynError
from exactsyn.search.affine import affine_mover, linear_ops

Has = Callable[[Gate], bool]


class CannotRewrite(Exception):
    """The library cannot express a gate of the circuit; the message says which and why."""


def uncoupled(library: Library) -> Library:
    """The library without its coupling restriction (same kinds and control cap)."""
    if not library.coupling or not library.preset:
        return library
    return make_library(library.preset, library.lines, library.control_cap, ())


# --------------------------------------------------------------------------- step 1
def _odd(g: Gate, n: int) -> bool:
    return g.family == "x" and g.num_controls == n - 1


def _transposition(g: Gate, n: int) -> tuple[int, int]:
    full = (1 << n) - 1
    low = full
    for c in g.negative_controls:
        low &= ~(1 << c)
    return low, low ^ (1 << g.target)


def _apply(gates: Sequence[Gate], x: int) -> int:
    for g in gates:
        x = g.apply_int(x)
    return x


def _apply_inverse(gates: Sequence[Gate], x: int) -> int:
    for g in reversed(gates):  # every gate here is self-inverse
        x = g.apply_int(x)
    return x


def double_transposition(a: int, b: int, c: int, d: int, n: int) -> list[Gate]:
    """Gates (application order) swapping ``a ↔ b`` and ``c ↔ d`` and fixing every other state.

    Needs ``n ≥ 3`` and four distinct states; the shortest of the conjugations of the
    module docstring over the choices of ``t``, ``f``, ``g`` and the orientations is kept.
    """
    if n < 3 or len({a, b, c, d}) != 4:
        raise ValueError("a double transposition needs four distinct states on at least 3 lines")
    full = (1 << n) - 1
    best: tuple[int, list[tuple[int, int]], int, Gate | None, Gate] | None = None
    pairs = [((a, b), (c, d)), ((c, d), (a, b))]
    for t in range(n):
        for f in range(n):
            if f == t:
                continue
            m = full & ~(1 << t) & ~(1 << f)
            goal = (m, m ^ (1 << t), m ^ (1 << f), m ^ (1 << t) ^ (1 << f))
            for (p, q), (r, s) in pairs:
                for src in ((p, q, r, s), (q, p, r, s), (p, q, s, r), (q, p, s, r)):
                    found = _mover(src, goal, n, t, f)
                    if found is not None and (best is None or found[0] < best[0]):
                        d0 = x_gate(t, tuple(x for x in range(n) if x not in (t, f)))
                        best = (*found, d0)
    if best is None:  # pragma: no cover - one of the two mover cases always applies
        raise RuntimeError("internal error: no conjugation for a double transposition")
    _, ops, v, last, d0 = best
    mover = [x_gate(tt, (cc,)) for cc, tt in ops] + [x_gate(x) for x in range(n) if v >> x & 1]
    if last is not None:
        mover.append(last)
    return mover + [d0] + mover[::-1]


Quad = tuple[int, int, int, int]
Move = tuple[int, list[tuple[int, int]], int, Gate | None]


def _mover(src: Quad, goal: Quad, n: int, t: int, f: int) -> Move | None:
    """A mover sending ``src[i]`` to ``goal[i]`` (step 1 of the module docstring) as
    ``(gate count, CNOTs, NOT mask, final Toffoli or None)``, the cheapest over the third line ``g``."""
    a, b, c, d = src
    if d == a ^ b ^ c:
        move = affine_mover(src[:3], goal[:3], n)
        ops = None if move is None else linear_ops(move[0], n)
        if move is None or ops is None:
            return None
        return len(ops) + move[1].bit_count(), ops, move[1], None
    best: Move | None = None
    for g in range(n):
        if g in (t, f):
            continue
        move = affine_mover(src, (*goal[:3], goal[3] ^ (1 << g)), n)
        ops = None if move is None else linear_ops(move[0], n)
        if move is None or ops is None:
            continue
        cost = len(ops) + move[1].bit_count() + 1
        if best is None or cost < best[0]:
            best = (cost, ops, move[1], x_gate(g, (t, f)))
    return best


def _product_of_two(t1: tuple[int, int], t2: tuple[int, int], n: int) -> list[Gate]:
    """Gates for ``τ₂∘τ₁`` (``τ₁`` first) with two transpositions ``τ₁, τ₂``."""
    s1, s2 = set(t1), set(t2)
    if s1 == s2:
        return []
    if not s1 & s2:
        return double_transposition(*t1, *t2, n)
    (q,) = s1 & s2
    (p,) = s1 - {q}
    (s,) = s2 - {q}
    x, y = [v for v in range(1 << n) if v not in (p, q, s)][:2]
    # τ₂∘τ₁ = (q s)∘(p q) = [(q s)(x y)]∘[(p q)(x y)]: the (x y) halves cancel.
    return double_transposition(p, q, x, y, n) + double_transposition(q, s, x, y, n)


def pair_odd_gates(gates: Sequence[Gate], n: int, has: Has) -> list[Gate]:
    """Replace the odd gates the library lacks (``n − 1`` controls) in pairs (step 1)."""
    out: list[Gate] = []
    pending: Gate | None = None  # an odd gate waiting for its partner
    middle: list[Gate] = []
    for g in gates:
        if not (_odd(g, n) and not has(g)):
            (middle if pending is not None else out).append(g)
            continue
        if pending is None:
            pending, middle = g, []
            continue
        first = _transposition(pending, n)
        u, w = _transposition(g, n)
        second = (_apply_inverse(middle, u), _apply_inverse(middle, w))
        out.extend(_product_of_two(first, second, n))
        out.extend(middle)
        pending, middle = None, []
    if pending is not None:
        raise CannotRewrite(
            "the function is an odd permutation and the library has no gate with "
            f"{n - 1} controls (Shende et al., IEEE TCAD 2003)"
        )
    return out


# --------------------------------------------------------------------------- steps 2, 3
def _v_chain(controls: Sequence[int], dirty: Sequence[int], target: int) -> list[Gate]:
    """Barenco et al. lemma 7.2: C^m X from 4(m − 2) Toffolis over ``m − 2`` borrowed lines."""
    m = len(controls)
    top = x_gate(target, (controls[m - 1], dirty[m - 3]))
    down = [x_gate(dirty[i], (controls[i + 1], dirty[i - 1])) for i in range(m - 3, 0, -1)]
    mid = x_gate(dirty[0], (controls[0], controls[1]))
    half = down + [mid] + down[::-1]
    return [top] + half + [top] + half


def _toffoli(g: Gate, has: Has) -> list[Gate]:
    if has(g):
        return [g]
    a, b = g.controls
    c = g.target
    for x, y in ((a, b), (b, a)):
        p, cx = peres_gate(x, y, c), x_gate(y, (x,))
        if has(p) and has(cx):
            return [p, cx]  # c ^= x·y, y ^= x; then y ^= x again
    raise CannotRewrite(f"the library has no Toffoli gate {g} and no Peres gate with a CNOT to make one")


def lower_gate(g: Gate, n: int, has: Has, near: Callable[[Gate], list[int]] | None = None) -> list[Gate]:
    """``g`` as gates ``has`` accepts (steps 2 and 3); ``near`` orders the borrowable lines."""
    if has(g):
        return [g]
    if g.family != "x" or g.negative_controls:
        raise CannotRewrite(f"the library has no {g.name()} gate {g} and no rule to rewrite it")
    m = g.num_controls
    if m <= 1:
        raise CannotRewrite(f"the library has no {g.name()} gate {g}")
    if m == 2:
        return _toffoli(g, has)
    free = near(g) if near is not None else [x for x in range(n) if x not in g.lines]
    if not free:
        raise CannotRewrite(f"{g.name()} gate {g} touches every line and the library lacks it")
    ctl, t, b = list(g.controls), g.target, free[0]
    for m1 in range(m - 1, 0, -1):  # lemma 7.3 with halves the library has as they are
        g1, g2 = x_gate(b, ctl[:m1]), x_gate(t, (*ctl[m1:], b))
        if has(g1) and has(g2):
            return [g2, g1, g2, g1]
    if len(free) >= m - 2:
        return [h for part in _v_chain(ctl, free[: m - 2], t) for h in _toffoli(part, has)]
    m1 = (m + 1) // 2
    g1, g2 = x_gate(b, ctl[:m1]), x_gate(t, (*ctl[m1:], b))
    part1, part2 = lower_gate(g1, n, has, near), lower_gate(g2, n, has, near)
    return part2 + part1 + part2 + part1


# --------------------------------------------------------------------------- step 4
def _distances(edges: Sequence[tuple[int, int]], n: int, source: int) -> list[int]:
    adj = _adjacency(edges, n)
    dist = [-1] * n
    dist[source] = 0
    todo = deque([source])
    while todo:
        u = todo.popleft()
        for v in adj[u]:
            if dist[v] < 0:
                dist[v] = dist[u] + 1
                todo.append(v)
    return dist


def _adjacency(edges: Sequence[tuple[int, int]], n: int) -> list[list[int]]:
    adj: list[list[int]] = [[] for _ in range(n)]
    for a, b in edges:
        adj[a].append(b)
        adj[b].append(a)
    return adj


def _swap_gates(a: int, b: int, has: Has) -> list[Gate]:
    s = swap_gate(a, b)
    if has(s):
        return [s]
    cnots = [x_gate(b, (a,)), x_gate(a, (b,)), x_gate(b, (a,))]
    if all(has(g) for g in cnots):
        return cnots
    raise CannotRewrite(f"lines {a} and {b} are coupled but the library has neither SWAP nor CNOTs on them")


def route_gate(g: Gate, library: Library) -> list[Gate]:
    """``g`` with its lines made adjacent by SWAPs along shortest paths, then the SWAPs undone (step 4)."""
    if library.contains(g):
        return [g]
    n, edges = library.lines, library.coupling
    adj = _adjacency(edges, n)
    lines = sorted(g.lines)
    root = g.targets[0]
    dist = _distances(edges, n, root)
    cut = [x for x in lines if dist[x] < 0]
    if cut:
        raise CannotRewrite(
            f"gate {g} joins lines {root} and {cut[0]}, which the coupling graph does not connect"
        )
    where = list(range(n))  # where[token] = position; token = the line whose value sits there
    at = list(range(n))  # at[position] = token
    cluster = {root}
    swaps: list[tuple[int, int]] = []
    for token in sorted((x for x in lines if x != root), key=lambda x: dist[x]):
        start = where[token]
        if start in cluster:  # pragma: no cover - tokens are moved only onto free positions
            continue
        # shortest path from the token to a position next to the cluster, outside it
        prev = {start: start}
        todo = deque([start])
        end = None
        while todo:
            u = todo.popleft()
            if any(v in cluster for v in adj[u]):
                end = u
                break
            for v in adj[u]:
                if v not in prev and v not in cluster:
                    prev[v] = u
                    todo.append(v)
        if end is None:  # pragma: no cover - the graph component is connected
            raise CannotRewrite(f"gate {g}: no path in the coupling graph")
        path = [end]
        while path[-1] != start:
            path.append(prev[path[-1]])
        path.reverse()
        for p, q in zip(path, path[1:], strict=False):
            swaps.append((p, q))
            tp, tq = at[p], at[q]
            at[p], at[q] = tq, tp
            where[tp], where[tq] = q, p
        cluster.add(end)
    moved = Gate(
        g.family,
        tuple(where[x] for x in g.targets) if g.family != "swap" else tuple(sorted(where[x] for x in g.targets)),
        tuple(sorted(where[x] for x in g.controls)),
        tuple(sorted(where[x] for x in g.negative_controls)),
    )
    if g.family == "peres":
        (a,), (b, c) = g.controls, g.targets
        moved = peres_gate(where[a], where[b], where[c])
    if not library.contains(moved):
        raise CannotRewrite(f"gate {g} moved to lines {sorted(moved.lines)} is still not in the library")
    there = [h for p, q in swaps for h in _swap_gates(p, q, library.contains)]
    return there + [moved] + there[::-1]


# --------------------------------------------------------------------------- all steps
def rewrite_circuit(circuit: Circuit, library: Library) -> Circuit:
    """``circuit`` (x gates with positive controls) as a circuit of ``library`` (module docstring).

    Raises :class:`CannotRewrite` with the reason when the library cannot express it.
    """
    n = circuit.lines
    if library.lines != n:
        raise ExactsynError("the circuit and the library have different numbers of lines")
    free_lib = uncoupled(library)
    has = free_lib.contains
    gates: list[Gate] = list(circuit.gates)
    if any(_odd(g, n) and not has(g) for g in gates):
        if n < 3:
            raise CannotRewrite(f"the library has no gate with {n - 1} controls on {n} lines")
        gates = pair_odd_gates(gates, n, has)
    near = None
    if library.coupling:
        hops = [_distances(library.coupling, n, x) for x in range(n)]

        def near(g: Gate) -> list[int]:
            free = [x for x in range(n) if x not in g.lines]
            return sorted(free, key=lambda x: min(hops[y][x] if hops[y][x] >= 0 else n for y in g.lines))

    lowered = [h for g in gates for h in lower_gate(g, n, has, near)]
    if not library.coupling:
        return Circuit(n, tuple(lowered))
    return Circuit(n, tuple(h for g in lowered for h in route_gate(g, library)))
