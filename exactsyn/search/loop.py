"""The search loop: raise k from a proven lower bound until a k-gate circuit exists.

For each k the encoder builds a fresh CNF (:mod:`exactsyn.sat.encode`) and the solver
answers it; every UNSAT answer raises the proven lower bound to k + 1.  The first SAT
answer is decoded, simulated against the spec, and returned as optimal.  A fast
constructive circuit in the library (:mod:`exactsyn.search.fallback`: transformation-based
synthesis, Miller, Maslov & Dueck, DAC 2003, rewritten into the library and shrunk by
window resynthesis) gives an upper bound first: when every k below its size is refuted,
it is itself optimal and the last SAT call is skipped; when time runs out, it is returned
with the proven lower bound and clearly marked as not proven optimal.

The tables are asked first, through their one interface (:mod:`exactsyn.tables.oracle`,
which says which tables serve the library on its lines and when each pays): a cached class
table (Golubitsky, Falconer & Maslov, DAC 2010) over the table's own library gives the
optimum and its circuit with no SAT call, otherwise (a library inside a table's, a
function beyond the table's reach, a scan cut by the deadline) a proven lower bound the
loop starts from; a distance table, once k reaches the gate count where it pays, gives
the optimum up to twice its depth (one more when extended) or a bound.  Without a cached
class table the search runs as before and :attr:`GateResult.hint` says how to build one.

The time limit covers everything here: the fallback, the distance tables (built layer by
layer, stopped at the deadline) and every query (solved in short conflict-budget slices).
``max_gates`` is applied to every answer, the tables' included.  Both come with the other
settings in one :class:`~exactsyn.sat.options.SearchOptions`; proofs, CNFs and progress go
to :class:`~exactsyn.sat.options.Hooks`.
"""

from __future__ import annotations

import functools
import time
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.library import Library
from exactsyn.errors import NoCircuitError
from exactsyn.sat.encode import EncodingOptions, encode
from exactsyn.sat.options import BOUNDS, DEFAULT_OPTIONS, NO_HOOKS, Hooks, SearchOptions
from exactsyn.sat.query import Query, Rival, run_query
from exactsyn.sat.status import Status
from exactsyn.search.bounds import (
    Bound,
    affine_obstruction,
    completion_obstruction,
    lower_bound,
    parity_obstruction,
)
from exactsyn.search.events import SearchEvent
from exactsyn.search.fallback import Fallback, improve_pays, improve_upper, initial_upper
from exactsyn.specification.reversible import Spec
from exactsyn.tables.oracle import ClassTableClaim, GateOracle, TableBound, TableRoles, Verdict, table_roles

__all__ = ["BOUNDS", "GateResult", "TableBound", "verify_circuit", "minimise_gates"]

@dataclass(frozen=True)
class GateResult:
    """The outcome of the gate-count search: the circuit, what is proven, and every query asked."""

    spec: Spec
    library: Library
    circuit: Circuit | None
    optimal: bool
    lower_bound: int
    upper_bound: int | None
    initial_bound: Bound
    table_bound: TableBound | None
    steps: tuple[Query, ...]
    encoding: EncodingOptions
    solver: str
    seconds: float
    source: str  # "sat" | "heuristic" | "table" | "class-table" | "bound" (circuit met the lower bound) | "none"
    how: str = ""  # how a "heuristic" circuit was made, or why there is none (exactsyn.search.fallback)
    class_table: ClassTableClaim | None = None  # what the class tables established (exactsyn.tables.oracle)
    hint: str = ""  # one line for the user, e.g. how to get the class tables


#: Without symmetry breaking: the second formulation a hard query is raced against.
PLAIN = EncodingOptions("onehot", ())


def verify_circuit(circuit: Circuit, spec: Spec, library: Library) -> None:
    """Simulate on every input; refuse to hand out a circuit that is wrong."""
    if circuit.lines != spec.lines or not spec.accepts(circuit.permutation()):
        raise RuntimeError("internal error: decoded circuit does not meet the spec")
    if not all(library.contains(g) for g in circuit.gates):
        raise RuntimeError("internal error: decoded circuit uses a gate outside the library")


def minimise_gates(
    spec: Spec,
    library: Library,
    options: SearchOptions = DEFAULT_OPTIONS,
    hooks: Hooks = NO_HOOKS,
    given: Circuit | None = None,
) -> GateResult:
    """Find a minimum-gate circuit; see the module docstring.

    ``options`` says how (solver, encoding, bounds, time and gate limits, processes, cubes);
    ``hooks`` where refutations go (certifying: CaDiCaL 1.9.5 with LRAT output, each
    refutation handed to ``hooks.proof(stem, proof)``), every query's encoding (DIMACS
    export) and progress (every answered query and a
    :class:`~exactsyn.search.events.SearchEvent` for the other phases).  Raises
    :class:`NoCircuitError` when parity (or affinity, or the spec itself) rules every
    circuit out.  ``given``: a circuit of the function (the spec file was a saved circuit);
    when its gates are in the library it is an upper bound like the fallback, and it is
    returned as optimal when the lower bound reaches its size.
    """
    return _GateSearch(spec, library, options, hooks, given).run()


class _GateSearch:
    """The state of one gate search: bounds, the upper-bound circuit, the queries asked."""

    def __init__(
        self, spec: Spec, library: Library, options: SearchOptions, hooks: Hooks, given: Circuit | None = None
    ) -> None:
        self.spec, self.library, self.options, self.hooks = spec, library, options, hooks
        self.given = given if given is not None and _usable(given, spec, library) else None
        self.start = time.perf_counter()
        limit = options.time_limit
        self.deadline = None if limit is None else self.start + limit
        reason = parity_obstruction(spec, library) or affine_obstruction(spec, library) or completion_obstruction(spec)
        if reason:
            raise NoCircuitError(reason)
        self.bound = lower_bound(spec, library)
        self.steps: list[Query] = []
        self.table: TableBound | None = None
        self.claim: ClassTableClaim | None = None
        self.hint = ""
        self.fallback = Fallback(None, "")
        self.per_k = 0.0  # seconds the last encoding took per gate position
        asks = options.bounds == "table" and spec.is_permutation and spec.lines == library.lines
        self.roles = table_roles(library, options.table_scan) if asks else TableRoles()
        self.distance = self.roles.distance  # None once it cannot help any more
        self.improved_at: int | None = None  # k at which the fallback was last improved

    # ------------------------------------------------------------------ helpers
    def elapsed(self) -> float:
        return time.perf_counter() - self.start

    def left(self) -> float | None:
        limit = self.options.time_limit
        return None if limit is None else limit - self.elapsed()

    def emit(self, event: SearchEvent) -> None:
        self.hooks.notify(event)

    @property
    def upper(self) -> Circuit | None:
        return self.fallback.circuit

    def result(self, circuit: Circuit | None, optimal: bool, lb: int, source: str) -> GateResult:
        max_gates = self.options.max_gates
        if circuit is not None and max_gates is not None and len(circuit) > max_gates:
            # Every answer obeys the gate limit; a proven optimum above it is the bound.
            lb = max(lb, len(circuit)) if optimal else lb
            circuit, optimal, source = None, False, "none"
        if circuit is not None:
            verify_circuit(circuit, self.spec, self.library)
        fb = self.fallback
        return GateResult(
            spec=self.spec,
            library=self.library,
            circuit=circuit,
            optimal=optimal,
            lower_bound=lb,
            upper_bound=None if circuit is None else len(circuit),
            initial_bound=self.bound,
            table_bound=self.table,
            steps=tuple(self.steps),
            encoding=self.options.encoding,
            solver=self.options.solver,
            seconds=self.elapsed(),
            source=source,
            how=fb.how if source == "heuristic" else fb.reason if circuit is None else "",
            class_table=self.claim,
            hint=self.hint,
        )

    def give_up(self, k: int) -> GateResult:
        """Time is out at ``k``: the fallback circuit, not proven, with the bound reached."""
        return self.result(self.upper, False, k, "heuristic" if self.upper else "none")

    # ------------------------------------------------------------------ phases
    def run(self) -> GateResult:
        max_gates = self.options.max_gates
        hopeless = max_gates is not None and self.bound.value > max_gates  # no circuit within the limit
        verdict = self.class_table()
        if self.options.fallback and not hopeless and (verdict is None or verdict.circuit is None):
            self.fallback = initial_upper(self.spec, self.library, self.deadline, self.hooks.observer)
        if self.given is not None and (verdict is None or verdict.circuit is None):
            before = self.fallback
            self.fallback = _prefer_given(before, self.given, self.spec, self.library)
            if self.fallback is not before:
                self.emit(SearchEvent("fallback", value=len(self.given), detail=self.fallback.how))
        k = self.bound.value
        if verdict is not None and self.claim is not None:
            if verdict.circuit is not None:
                return self.result(verdict.circuit, True, self.claim.value, "class-table")
            if self.claim.value > k:
                what = f"{self.spec.lines}-line class table"
                self.emit(SearchEvent("table-bound", low=k, high=self.claim.value - 1, detail=what))
                k = self.claim.value
        if k == 0:
            return self.result(Circuit(self.spec.lines), True, 0, "bound")
        return self.raise_k(k)

    def class_table(self) -> Verdict | None:
        """The cached class tables: the optimum itself, or a lower bound (tables/oracle.py)."""
        oracle = self.roles.class_table
        if self.bound.value <= 0:
            return None
        if oracle is None:
            self.hint = self.roles.hint
            return None
        what = oracle.describe()
        self.emit(SearchEvent("table-lookup", k=self.bound.value, detail=what))

        def scanning(step: str, done: int, total: int) -> None:
            self.emit(SearchEvent("table-scan", low=done, high=total, detail=f"{what}: {step}"))

        known = None if self.given is None else len(self.given)  # the scans stop when the bound meets it
        verdict = oracle.optimum(self.spec.permutation, self.deadline, scanning, known)
        claim = verdict.claim
        assert isinstance(claim, ClassTableClaim)
        self.claim = claim
        self.emit(SearchEvent("table-done", k=self.bound.value, value=claim.value, seconds=claim.seconds, detail=what))
        return verdict

    def raise_k(self, k: int) -> GateResult:
        """The loop over k: tables when they pay, then one SAT query per k."""
        while True:
            distance = self.distance
            if distance is not None and self.table is None and distance.pays_at(k, self.left()):
                got = self.distance_table(distance, k)
                if isinstance(got, GateResult):
                    return got
                k = got
                continue
            if self.improved_at is None and improve_pays(self.library, k, after_table=False):
                # the search has reached the queries that take minutes: a better fallback pays now
                self.improve(k)
            max_gates = self.options.max_gates
            if max_gates is not None and k > max_gates:
                # Every circuit needs at least k > max_gates gates: none within the limit.
                return self.result(None, False, k, "none")
            if self.upper is not None and k >= len(self.upper):
                return self.result(self.upper, True, k, "heuristic")
            answer = self.query(k)
            if answer is not None:
                return answer
            k += 1

    def improve(self, k: int) -> None:
        self.improved_at = k
        self.fallback = improve_upper(self.fallback, self.spec, self.library, self.deadline, self.hooks.observer)

    def distance_table(self, oracle: GateOracle, k: int) -> GateResult | int:
        """Meet in the middle over the distance table: the answer, or the k to go on from."""
        what = oracle.describe()
        self.emit(SearchEvent("table-start", k=k, detail=what))
        t0 = self.elapsed()
        verdict = oracle.optimum(self.spec.permutation, self.deadline)
        self.emit(SearchEvent("table-done", k=k, value=None if verdict is None else verdict.lower,
                              seconds=self.elapsed() - t0, detail=what))
        if verdict is None:  # not built by the deadline
            self.distance = None
            return k
        assert isinstance(verdict.claim, TableBound)
        self.table = verdict.claim
        if verdict.circuit is not None:
            return self.result(verdict.circuit, True, verdict.lower, "table")
        if verdict.lower > k:
            self.emit(SearchEvent("table-bound", low=k, high=verdict.lower - 1, detail=what))
        if improve_pays(self.library, k, after_table=True):
            self.improve(k)
        return max(k, verdict.lower)

    def query(self, k: int) -> GateResult | None:
        """Ask SAT for ``k`` gates: the answer, or None when refuted (go on with ``k + 1``)."""
        left = self.left()
        if left is not None and (left <= 0 or left < self.per_k * k):
            return self.give_up(k)  # the encoding alone would overrun (the last one's rate)
        self.emit(SearchEvent("query-start", k=k, seconds=left))
        t_enc = time.perf_counter()
        enc = encode(self.spec, self.library, k, self.options.encoding)
        self.per_k = (time.perf_counter() - t_enc) / max(k, 1)
        if self.hooks.cnf:
            self.hooks.cnf(enc)
        left = self.left()
        if left is not None and left <= 0:  # encoding took time too
            return self.give_up(k)
        rival = None
        if self.options.jobs >= 2 and enc.options.symmetry:
            rival = Rival(functools.partial(encode, self.spec, self.library, k, PLAIN), self.per_k * k)
        ans = run_query(enc, self.options, self.hooks, time_limit=left, rival=rival)
        self.steps.append(ans.query)
        self.hooks.notify(ans.query)
        if ans.query.status == Status.SAT:
            assert ans.circuit is not None
            return self.result(ans.circuit, True, k, "sat")
        if ans.query.status == Status.UNKNOWN:
            return self.give_up(k)
        return None


def _usable(given: Circuit, spec: Spec, library: Library) -> bool:
    """Is ``given`` a circuit of ``spec`` over ``library`` (so an upper bound)?"""
    if given.lines != spec.lines or not all(library.contains(g) for g in given.gates):
        return False
    return spec.is_permutation and given.permutation() == spec.permutation


def _prefer_given(fallback: Fallback, given: Circuit, spec: Spec, library: Library) -> Fallback:
    """The given circuit (checked by :func:`_usable`) as the upper bound when it is shorter
    than the fallback or there is none; else the fallback."""
    if fallback.circuit is not None and len(fallback.circuit) <= len(given):
        return fallback
    return Fallback(given, f"the circuit given as the spec ({len(given)} gates)")
