"""The cached class tables (:mod:`exactsyn.tables`) as a step of the gate search.

A full ``n``-line permutation spec over a library whose gates are exactly those of a
table (``nct``, ``mct`` or ``mixed`` on ``n`` lines, for every ``n`` the table engine has)
is settled from the table when it is cached: lookup up to the table depth ``R``, then
meet in the middle up to ``2R`` gates (Golubitsky, Falconer & Maslov, "Synthesis of the
optimal 4-bit reversible circuits", DAC 2010).  The circuit is simulated against the spec
here and again by the search.

For any other library on those lines whose every gate is a gate of a table library (a
control cap, a coupling graph, a sub-library), the table's optimum — or the lower bound
the scan reached — is a lower bound: a circuit of the smaller library is a circuit of
the table's library.  Nothing is built here: without a cached table the search runs as
before, and on 4 lines :data:`HINT` says how to get one (the 4-line tables are the ones
`exactsyn tables build` makes by default; smaller line counts are fast without tables).
"""

from __future__ import annotations

import time
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import Library
from exactsyn.specification.reversible import Spec
from exactsyn.tables.keys import engine_lines, layout

#: Table libraries, smallest gate set first (the tightest bound for a sub-library comes first).
TABLE_ORDER = ("nct", "mct", "mixed")
#: The one line the search adds when a 4-line table would have answered but none is cached.
HINT = "4-line functions are settled in seconds once the class tables exist: run `exactsyn tables build` once"
#: The line count whose tables the search suggests building (:data:`HINT`).
HINT_LINES = 4


@dataclass(frozen=True)
class ClassTableClaim:
    """What the class table established: ``value`` is the optimum (``exact``) or a lower bound.

    ``library`` is the table's library (the search's library when ``exact``, else a
    library containing all its gates); ``content_hash`` names the table's files; ``lines``
    its line count.
    """

    library: str
    depth: int
    content_hash: str
    value: int
    exact: bool
    method: str
    seconds: float
    lines: int = 4

    def to_dict(self) -> dict[str, object]:
        """The JSON form (results and certificates); ``format`` names the table format."""
        return {
            "library": self.library,
            "lines": self.lines,
            "depth": self.depth,
            "content_hash": self.content_hash,
            "format": f"exactsyn-tables{self.lines}/1",
            "value": self.value,
            "exact": self.exact,
            "method": self.method,
            "seconds": round(self.seconds, 3),
        }


@dataclass(frozen=True)
class Settled:
    """A table answer: the claim, and the circuit when the optimum was reached."""

    claim: ClassTableClaim
    circuit: Circuit | None


def _gate_set(name: str, lines: int) -> frozenset[object]:
    from exactsyn.tables.gate_keys import gate_set

    return frozenset(gate_set(name, lines).gates)


def exact_table_for(library: Library) -> str | None:
    """The table library with exactly ``library``'s gates on its lines (any line count the engine has), or None."""
    if library.lines not in engine_lines():
        return None
    gates = frozenset(library.gates)
    return next((name for name in TABLE_ORDER if _gate_set(name, library.lines) == gates), None)


def table_for(library: Library) -> str | None:
    """The table library whose cached 4-line table would settle ``library``'s searches, or None.

    The search adds :data:`HINT` when this names a table that is not cached."""
    return exact_table_for(library) if library.lines == HINT_LINES else None


def bound_table_for(library: Library) -> str | None:
    """The smallest table library containing every gate of ``library`` (on its lines), or None."""
    if library.lines not in engine_lines():
        return None
    gates = frozenset(library.gates)
    return next((name for name in TABLE_ORDER if gates <= _gate_set(name, library.lines)), None)


def cached(name: str, lines: int = 4) -> bool:
    """Is a complete table of ``name`` in the cache (files of the manifest's sizes; no hashing)?"""
    from exactsyn.tables.manage import info

    found = info(name, lines=lines)
    return bool(found) and found[0].present


def applies(spec: Spec, library: Library) -> bool:
    """Could a class table settle or bound this search (full permutation, table gates)?

    On 4 lines also without a cached table (the search then says how to build one); on
    other line counts only when the table is cached."""
    if not spec.is_permutation or spec.lines != library.lines:
        return False
    name = bound_table_for(library)
    return name is not None and (spec.lines == HINT_LINES or cached(name, spec.lines))


def settle(spec: Spec, library: Library, deadline: float | None) -> Settled | None:
    """Ask the cached table; None when no table applies or none is cached.

    With a table of exactly ``library``'s gates the answer is the optimum and its circuit
    (or the bound reached by the deadline); with a larger library's table only a bound.
    """
    if not applies(spec, library):
        return None
    lines = spec.lines
    exact_name = exact_table_for(library)
    name = exact_name or bound_table_for(library)
    assert name is not None
    if not cached(name, lines):
        return None
    from exactsyn.tables.engine import load

    t0 = time.perf_counter()
    t = load(name, lines=lines)
    left = None if deadline is None else max(0.0, deadline - t0)
    ans = t.synthesise(spec.permutation, time_limit=left)
    seconds = time.perf_counter() - t0
    if ans.optimal and ans.gates is not None and exact_name is not None:
        circuit = Circuit(lines, tuple(ans.gates))
        if not spec.accepts(circuit.permutation()) or not all(library.contains(g) for g in circuit.gates):
            raise RuntimeError("internal error: the class-table circuit does not meet the spec")
        claim = ClassTableClaim(name, t.depth, t.content_hash, len(circuit), True, ans.method, seconds, lines)
        return Settled(claim, circuit)
    bound = ans.gate_count if ans.optimal and ans.gate_count is not None else ans.lower_bound
    method = ans.method if exact_name is not None else f"{ans.method} over the larger library {name}"
    return Settled(ClassTableClaim(name, t.depth, t.content_hash, bound, False, method, seconds, lines), None)


def sub_table_for(library: Library) -> str | None:
    """The largest cached table library whose every gate is in ``library`` (its circuits are ``library``'s)."""
    if library.lines not in engine_lines():
        return None
    gates = frozenset(library.gates)
    inside = (name for name in reversed(TABLE_ORDER) if _gate_set(name, library.lines) <= gates)
    return next((name for name in inside if cached(name, library.lines)), None)


def shorten(circuit: Circuit, library: Library, rounds: int = 3) -> Circuit | None:
    """A shorter circuit of the same function from the cached table of a sub-library, or None.

    Every run of consecutive gates whose function the table holds (at most ``R`` gates) may
    be replaced by an optimal circuit of it; dynamic programming over the cut points picks
    the replacement of least total size (each run ``i..j`` costs its optimum, a single gate
    outside the table costs 1).  Repeated while it helps, since new cut points appear.
    """
    if circuit.lines != library.lines or len(circuit) < 2:
        return None
    name = sub_table_for(library)
    if name is None:
        return None
    from exactsyn.tables.engine import load

    lines = circuit.lines
    lay = layout(lines)
    t = load(name, lines=lines)
    best = circuit
    for _ in range(rounds):
        gates = best.gates
        n = len(gates)
        prefix = [lay.identity]
        for g in gates:
            prefix.append(lay.compose(lay.pack(Circuit(lines, (g,)).permutation()), prefix[-1]))
        inv = [lay.inverse(p) for p in prefix]
        pairs = [(i, j) for j in range(1, n + 1) for i in range(j)]
        keys = [lay.compose(prefix[j], inv[i]) for i, j in pairs]
        levels = t.levels_of(lay.array(keys))
        level = {pair: int(v) for pair, v in zip(pairs, levels, strict=True)}
        where = {pair: k for k, pair in enumerate(pairs)}
        cost = [0] + [n + 1] * n
        back = [0] * (n + 1)
        for j in range(1, n + 1):
            for i in range(j):
                c = level[(i, j)]
                if c < 0:
                    if j - i > 1:
                        continue
                    c = 1  # the gate itself
                if cost[i] + c < cost[j]:
                    cost[j], back[j] = cost[i] + c, i
        if cost[n] >= len(best):
            break
        out: list[Gate] = []
        j = n
        cuts = []
        while j > 0:
            cuts.append((back[j], j))
            j = back[j]
        for i, j in reversed(cuts):
            if level[(i, j)] < 0:
                out.extend(gates[i:j])
            else:
                ans = t.synthesise(lay.unpack(keys[where[(i, j)]]))
                assert ans.gates is not None
                out.extend(ans.gates)
        shorter = Circuit(lines, tuple(out))
        if shorter.permutation() != circuit.permutation() or not all(library.contains(g) for g in shorter.gates):
            raise RuntimeError("internal error: table resynthesis changed the function")
        best = shorter
    return best if len(best) < len(circuit) else None
