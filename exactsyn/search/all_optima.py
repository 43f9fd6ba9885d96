"""Every optimal circuit, up to reordering adjacent commuting gates.

Equivalence used: two circuits of the same gates are equivalent when one turns into the
other by repeatedly exchanging two *adjacent* gates that commute as permutations of the
2^n states (``g∘h = h∘g``).  These classes are the traces of the partially commutative
monoid over the library (Cartier & Foata 1969; Diekert & Rozenberg, "The Book of
Traces", 1995); each has exactly one member in lexicographic normal form (library order
of gates, Anisimov & Knuth 1979), and the encoder's ``trace`` rule admits exactly those
members.  Enumeration asks the solver for a model, records its circuit, blocks that gate
sequence and repeats until UNSAT, on one incremental solver of the caller's choice
(:class:`exactsyn.sat.solver.SatSession`): each model is sought in conflict-budget slices,
so a time limit stops the listing within a fraction of a second, with what was found.

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

import itertools
import time
from collections.abc import Callable
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.sat.encode import CostLimit, Encoding, EncodingOptions, encode
from exactsyn.sat.solver import PROOF_SOLVER, SatSession
from exactsyn.sat.status import Status
from exactsyn.search.loop import verify_circuit
from exactsyn.specification.reversible import Spec
from exactsyn.tables.descent import OutOfTime
from exactsyn.tables.oracle import ClassTableClaim, table_roles

ENUM_OPTIONS = EncodingOptions("onehot", ("no-repeat", "commute", "trace", "touch"))
EQUIVALENCE = "reordering of adjacent gates that commute as permutations (one circuit per class)"

#: Why an enumeration stopped before the solver said there are no more circuits.
TIME_LIMIT = "time limit"
OPTIMA_LIMIT = "optima limit"

# The encoding cannot be interrupted, so under a time limit its cost is predicted first from
# a small probe (``_PROBE_GATES`` positions).  Seconds per position grow with k: measured on
# random even mct functions, from k = 2 to k = 12 (4 and 5 lines) or 16 (6 lines), by 1.5x,
# 2.7x and 2.6x; ``_GROWTH`` covers that.
_PROBE_GATES = 2
_GROWTH = 3.0


@dataclass(frozen=True)
class Enumeration:
    k: int
    count: int
    complete: bool  # False when stopped by the limit or the time
    circuits: tuple[Circuit, ...]  # empty in count-only mode
    seconds: float
    stopped: str = ""  # TIME_LIMIT or OPTIMA_LIMIT when not complete
    #: set when the descent over a class table counted them (certificates record it; the SAT
    #: listing has no proof that it is complete, so it is not recorded)
    class_table: ClassTableClaim | None = None
    counted: int = -1  # the descent's total number of classes (``count`` stops at the limit)


def _encode_in_time(
    spec: Spec, library: Library, k: int, cost_limit: CostLimit | None, left: float | None
) -> Encoding | None:
    """The enumeration CNF, or ``None`` when building it would take more than ``left`` seconds
    (predicted from a probe at :data:`_PROBE_GATES` positions, like the gate search's rule)."""
    if left is None:
        return encode(spec, library, k, ENUM_OPTIONS, cost_limit=cost_limit)
    if left <= 0:
        return None
    t0 = time.perf_counter()
    probe = encode(spec, library, min(k, _PROBE_GATES), ENUM_OPTIONS, cost_limit=cost_limit)
    spent = time.perf_counter() - t0
    if k <= _PROBE_GATES:
        return probe
    if spent / _PROBE_GATES * k * _GROWTH > left - spent:
        return None
    return encode(spec, library, k, ENUM_OPTIONS, cost_limit=cost_limit)


def from_class_table(
    spec: Spec,
    library: Library,
    k: int,
    cost_limit: CostLimit | None,
    keep: bool,
    limit: int | None,
    time_limit: float | None,
    on_circuit: Callable[[Circuit], None] | None = None,
) -> Enumeration | None:
    """The optimal circuits of a full permutation from the cached class table of the library
    (:mod:`exactsyn.tables.descent`: the classes counted by Möbius inversion over the DAG of
    descents, listed depth first), or None when no such table serves it, the cost limit is not
    the least cost, or the descent does not finish in ``time_limit``.  Each class is listed by
    the circuit whose reverse is the least word of the class (the SAT listing gives the least
    word itself): one circuit per class either way."""
    if not spec.is_permutation:
        return None
    table = table_roles(library).exact
    if table is None:
        return None
    start = time.perf_counter()
    deadline = None if time_limit is None else start + time_limit
    try:
        descent = table.descent(spec.permutation, k, deadline)
        if descent is None:
            return None
        costs = None if cost_limit is None else cost_limit.costs
        if cost_limit is not None and descent.cheapest(cost_limit.costs) != cost_limit.limit:
            return None  # a limit above the least cost: the SAT listing answers that question
        total = descent.traces(costs)
        count = total if limit is None else min(total, limit)
        found: list[Circuit] = []
        if keep or on_circuit is not None:
            for indices in itertools.islice(descent.circuits(costs), count):
                circ = Circuit(spec.lines, tuple(library.gates[j] for j in indices))
                verify_circuit(circ, spec, library)
                if keep:
                    found.append(circ)
                if on_circuit:
                    on_circuit(circ)
    except OutOfTime:
        return None
    stopped = OPTIMA_LIMIT if count < total else ""
    seconds = time.perf_counter() - start
    claim = table.claim(total, "Moebius count over the descent (classes up to commuting gates)", seconds)
    return Enumeration(k, count, not stopped, tuple(found), seconds, stopped, claim, total)


def enumerate_optimal(
    spec: Spec,
    library: Library,
    k: int,
    *,
    cost_limit: CostLimit | None = None,
    keep: bool = True,
    limit: int | None = None,
    time_limit: float | None = None,
    solver: str = PROOF_SOLVER,
    on_circuit: Callable[[Circuit], None] | None = None,
    tables: bool = True,
) -> Enumeration:
    """All ``k``-gate circuits meeting the spec (one per class); ``k`` should be the proven optimum.

    ``solver`` names the SAT solver (:data:`exactsyn.sat.solver.SOLVERS`, one that keeps a
    limit).  Within ``time_limit`` seconds (``None``: none; 0 or less: no time at all) the
    encoding and every model are found, each model in conflict-budget slices; past it, or
    after ``limit`` circuits, the circuits found so far come back with ``complete=False``
    and ``stopped`` saying why.  With ``tables`` a full permutation whose library has a
    cached class table is answered from it (:func:`from_class_table`) before any SAT call.
    """
    if limit is not None and limit < 1:
        raise ExactsynError("the enumeration limit must be at least 1")
    start = time.perf_counter()
    tabled = from_class_table(spec, library, k, cost_limit, keep, limit, time_limit, on_circuit) if tables else None
    if tabled is not None:
        return tabled
    if time_limit is not None:
        time_limit -= time.perf_counter() - start
    enc = _encode_in_time(spec, library, k, cost_limit, time_limit)
    if enc is None:
        return Enumeration(k, 0, False, (), time.perf_counter() - start, TIME_LIMIT)
    found: list[Circuit] = []
    count = 0
    stopped = ""
    with SatSession(enc.clauses, solver=solver) as session:
        while True:
            if limit is not None and count >= limit:
                stopped = OPTIMA_LIMIT
                break
            left = None if time_limit is None else time_limit - (time.perf_counter() - start)
            if left is not None and left <= 0:
                stopped = TIME_LIMIT
                break
            out = session.solve(time_limit=left)
            if out.status == Status.UNKNOWN:
                stopped = TIME_LIMIT
                break
            if out.status == Status.UNSAT:
                break
            model = list(out.model or ())
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
            session.add_clause([-v for v in chosen])
    return Enumeration(k, count, not stopped, tuple(found), time.perf_counter() - start, stopped)
