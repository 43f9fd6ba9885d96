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

from functools import lru_cache

import numpy as np

from exactsyn.bfs import row_keys
from exactsyn.library import Library, gate_table

# Enumerating |G|^w sequences of 2^n bytes each: keep it within a few hundred MB.
MAX_SEQUENCES = 1_200_000


def window_size_ok(library: Library, w: int) -> bool:
    return len(library.gates) ** w <= MAX_SEQUENCES and library.lines <= 8


@lru_cache(maxsize=32)
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


@lru_cache(maxsize=32)
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
