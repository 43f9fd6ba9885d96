"""Forbidden windows: short gate sequences that no lexicographically least optimal circuit contains.

Order circuits of equal length lexicographically by their sequence of library indices and
let ``C*`` be the least optimal circuit for a spec.  Every window (run of ``w``
consecutive gates) ``W`` of ``C*`` is itself the least optimal circuit of its own
function ``f(W)``: a shorter circuit for ``f(W)`` put in its place would shorten ``C*``,
and a lexicographically smaller one of the same length would make ``C*`` smaller (the
gates before the window are unchanged).  So forbidding, at every position, each
``w``-sequence that is not the least optimal circuit of its function keeps ``C*`` —
and therefore an optimal circuit — whatever other rules derived from ``C*`` are on.

This is the window idea behind template- and table-based pruning of reversible circuit
search (e.g. the canonical-sequence pruning in Golubitsky, Falconer & Maslov, DAC 2010);
here the table is computed exactly, by enumerating all ``|G|^w`` sequences.

Only *minimal* forbidden windows are returned: a ``w``-sequence whose two
``(w−1)``-subwindows are both allowed (otherwise a shorter clause already excludes it).
With ``w = 2`` the rule contains "no two equal adjacent gates" and "commuting
neighbours in library order".
"""

from __future__ import annotations

import numpy as np

from exactsyn.caches import memo
from exactsyn.core.library import Library, gate_table
from exactsyn.tables.bfs import row_keys

# Enumerating |G|^w sequences of 2^n bytes each: keep it within a few hundred MB.
MAX_SEQUENCES = 1_200_000


def window_size_ok(library: Library, w: int) -> bool:
    return len(library.gates) ** w <= MAX_SEQUENCES and library.lines <= 8


@memo(maxsize=32)
def allowed_windows(library: Library, w: int) -> frozenset[tuple[int, ...]]:
    """The ``w``-sequences that are the least optimal circuit of their own function."""
    if w < 1:
        raise ValueError("window length must be at least 1")
    table = gate_table(library)
    g = len(library.gates)
    size = table.shape[1]
    identity = np.arange(size, dtype=np.uint8)
    # Sequences of length d in lexicographic order, and their functions:
    # the function of (j1..jd) maps i to g_jd(...g_j1(i)).
    funcs = identity[None, :]
    seen_set = {identity.tobytes()}  # functions of length < d (distance < d)
    allowed: frozenset[tuple[int, ...]] = frozenset()
    for d in range(1, w + 1):
        # New last gate varies fastest: index = prefix * g + last (lexicographic order).
        funcs = table[:, funcs].transpose(1, 0, 2).reshape(-1, size)  # type: ignore[assignment]
        keys = row_keys(funcs)
        _, first = np.unique(keys, return_index=True)
        first.sort()
        if d == w:
            out = []
            for idx in first.tolist():
                k = keys[idx].tobytes()
                if k in seen_set:
                    continue
                out.append(tuple(int(x) for x in np.unravel_index(idx, (g,) * w)))
            allowed = frozenset(out)
        else:
            seen_set.update(k.tobytes() for k in keys[first])
    return allowed


@memo(maxsize=32)
def forbidden_windows(library: Library, w: int) -> tuple[tuple[int, ...], ...]:
    """Minimal forbidden ``w``-sequences (see the module docstring), sorted."""
    g = len(library.gates)
    if w == 1:
        return ()
    ok = allowed_windows(library, w)
    if w == 2:
        return tuple(s for s in _all(g, 2) if s not in ok)
    shorter = allowed_windows(library, w - 1)
    out = []
    for head in sorted(shorter):
        for last in range(g):
            seq = (*head, last)
            if seq[1:] in shorter and seq not in ok:
                out.append(seq)
    return tuple(out)


def _all(g: int, w: int) -> list[tuple[int, ...]]:
    return [tuple(int(x) for x in np.unravel_index(i, (g,) * w)) for i in range(g**w)]


@memo(maxsize=32)
def weighted_forbidden_windows(
    library: Library, w: int, costs: tuple[int, ...], order: str
) -> tuple[tuple[int, ...], ...]:
    """``w``-sequences that are not the least circuit of their function under a cost order.

    ``order == "cost"``: circuits are compared by (total cost, length, lexicographic);
    ``order == "gates"``: by (length, total cost, lexicographic).  Let ``C*`` be the least
    circuit meeting the spec in that order.  A window of ``C*`` replaced by a smaller
    circuit of its own function would give a smaller circuit for the spec (the cost and
    length of the rest are unchanged, and at equal cost and length the prefix before the
    window is unchanged), so every window of ``C*`` is the least of its function among
    the sequences of length ≤ ``w`` enumerated here.  Forbidding the others keeps ``C*``.
    Sequences of every length up to ``w`` compete, so a window may be replaced by a shorter
    but costlier one only in the ``gates`` order, and by a longer cheaper one only in the
    ``cost`` order — exactly as the objective allows.
    """
    if order not in ("cost", "gates"):
        raise ValueError(f"unknown window order {order!r}")
    table = gate_table(library)
    g = len(library.gates)
    size = table.shape[1]
    cost_arr = np.array(costs, dtype=np.int64)
    identity = np.arange(size, dtype=np.uint8)
    funcs = identity[None, :]
    fcost = np.zeros(1, dtype=np.int64)
    all_keys, all_cost, all_len, all_idx = [row_keys(funcs)], [fcost], [np.zeros(1, np.int64)], [np.zeros(1, np.int64)]
    for d in range(1, w + 1):
        funcs = table[:, funcs].transpose(1, 0, 2).reshape(-1, size)  # type: ignore[assignment]
        fcost = (fcost[:, None] + cost_arr[None, :]).reshape(-1)
        n = funcs.shape[0]
        all_keys.append(row_keys(funcs))
        all_cost.append(fcost)
        all_len.append(np.full(n, d, np.int64))
        all_idx.append(np.arange(n, dtype=np.int64))
    keys = np.concatenate(all_keys)
    cost = np.concatenate(all_cost)
    length = np.concatenate(all_len)
    idx = np.concatenate(all_idx)
    first_key, second = (cost, length) if order == "cost" else (length, cost)
    # np.lexsort sorts by the last key first: function, then the order's keys, then lex index.
    perm = np.lexsort((idx, second, first_key, keys))
    sk = keys[perm]
    is_first = np.ones(len(sk), dtype=bool)
    is_first[1:] = sk[1:] != sk[:-1]
    winners = perm[is_first]
    offset = sum(len(a) for a in all_keys[:w])
    best_w = set((winners[winners >= offset] - offset).tolist())
    out = []
    for i in range(g**w):
        if i not in best_w:
            out.append(tuple(int(x) for x in np.unravel_index(i, (g,) * w)))
    return tuple(out)
