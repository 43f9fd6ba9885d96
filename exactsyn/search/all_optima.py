"""Every optimal circuit, up to reordering adjacent commuting gates.

Equivalence used: two circuits of the same gates are equivalent when one turns into the
other by repeatedly exchanging two *adjacent* gates that commute as permutations of the
2^n states (``g∘h = h∘g``).  These classes are the traces of the partially commutative
monoid over the library (Cartier & Foata 1969; Diekert & Rozenberg, "The Book of
Traces", 1995); each has exactly one member in lexicographic normal form (library order
of gates, Anisimov & Knuth 1979), and the encoder's ``trace`` rule admits exactly those
members.  Enumeration asks the solver for a model, records its circuit, blocks that gate
sequence and repeats until UNSAT.

The rules switched on are those every optimal circuit in lexicographic normal form
satisfies: ``no-repeat`` (an optimal circuit has no gate next to its inverse),
``commute`` (implied by ``trace``, kept for propagation), ``trace`` and ``touch``.  The
window rules are off: they keep only one optimal circuit per window function.

With a cost limit (``gates-then-cost``) the enumeration is of the minimum-gate circuits
of least cost; ``commute`` and ``trace`` keep the cost.

The tests check the count against a breadth-first enumeration of every optimal gate
sequence, reduced to classes by computing each sequence's normal form directly
(repeatedly take the least gate that commutes with every gate before it).
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass

from pysat.solvers import Solver

from exactsyn.core.circuit import Circuit
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.sat.encode import CostLimit, EncodingOptions, encode
from exactsyn.search.loop import verify_circuit
from exactsyn.specification.reversible import Spec

ENUM_OPTIONS = EncodingOptions("onehot", ("no-repeat", "commute", "trace", "touch"))
EQUIVALENCE = "reordering of adjacent gates that commute as permutations (one circuit per class: its least reordering)"


@dataclass(frozen=True)
class Enumeration:
    k: int
    count: int
    complete: bool  # False when stopped by the limit or the time
    circuits: tuple[Circuit, ...]  # empty in count-only mode
    seconds: float


def enumerate_optimal(
    spec: Spec,
    library: Library,
    k: int,
    *,
    cost_limit: CostLimit | None = None,
    keep: bool = True,
    limit: int | None = None,
    time_limit: float | None = None,
    on_circuit: Callable[[Circuit], None] | None = None,
) -> Enumeration:
    """All ``k``-gate circuits meeting the spec (one per class); ``k`` should be the proven optimum."""
    if limit is not None and limit < 1:
        raise ExactsynError("the enumeration limit must be at least 1")
    start = time.perf_counter()
    enc = encode(spec, library, k, ENUM_OPTIONS, cost_limit=cost_limit)
    found: list[Circuit] = []
    count = 0
    complete = True
    with Solver(name="cadical195", bootstrap_with=enc.clauses) as solver:
        while True:
            if limit is not None and count >= limit:
                complete = False
                break
            if time_limit is not None and time.perf_counter() - start > time_limit:
                complete = False
                break
            if not solver.solve():
                break
            model = solver.get_model() or []
            circ = enc.decode(model)
            verify_circuit(circ, spec, library)
            count += 1
            if keep:
                found.append(circ)
            if on_circuit:
                on_circuit(circ)
            true = set(v for v in model if v > 0)
            chosen = [v for row in enc.gate_vars for v in row if v in true]
            if not chosen:  # k == 0: the empty circuit is the only one
                break
            solver.add_clause([-v for v in chosen])
    return Enumeration(k, count, complete, tuple(found), time.perf_counter() - start)
