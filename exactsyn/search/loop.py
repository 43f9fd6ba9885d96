"""The search loop: raise k from a proven lower bound until a k-gate circuit exists.

For each k the encoder builds a fresh CNF (:mod:`exactsyn.sat.encode`) and the solver
answers it; every UNSAT answer raises the proven lower bound to k + 1.  The first SAT
answer is decoded, simulated against the spec, and returned as optimal.  A fast
constructive circuit in the library (:mod:`exactsyn.search.fallback`: transformation-based
synthesis, Miller, Maslov & Dueck, DAC 2003, rewritten into the library and shrunk by
window resynthesis) gives an upper bound first: when every k below its size is refuted,
it is itself optimal and the last SAT call is skipped; when time runs out, it is returned
with the proven lower bound and clearly marked as not proven optimal.

A full 4-line permutation is first put to the cached 4-line class tables
(:mod:`exactsyn.search.classtable`; Golubitsky, Falconer & Maslov, DAC 2010): over a
table's own library they give the optimum and its circuit with no SAT call, otherwise
(a library inside a table's, a function beyond the table's reach, a scan cut by the
deadline) a proven lower bound the loop starts from.  Without a cached table the
search runs as before and :attr:`GateResult.hint` says how to build one.

The time limit covers everything here: the fallback, the distance tables (built layer by
layer, stopped at the deadline) and every query (solved in short conflict-budget slices).
``max_gates`` is applied to every answer, the tables' included.
"""

from __future__ import annotations

import functools
import time
from collections.abc import Callable
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError, NoCircuitError
from exactsyn.sat.conquer import CubeOptions, CubeProgress
from exactsyn.sat.encode import Encoding, EncodingOptions, encode
from exactsyn.sat.query import ProofSink, Query, run_query
from exactsyn.sat.status import Status
from exactsyn.search.bounds import (
    Bound,
    affine_obstruction,
    completion_obstruction,
    lower_bound,
    parity_obstruction,
)
from exactsyn.search.classtable import HINT, ClassTableClaim, applies, settle, table_for
from exactsyn.search.events import SearchEvent, SearchProgress, emit
from exactsyn.search.fallback import FIVE_SHRINK_FROM, Fallback, improve_upper, initial_upper
from exactsyn.specification.reversible import Spec
from exactsyn.tables.distance import FULL, MeetResult, extended_meet_by
from exactsyn.tables.hashed import five_meet, five_next_depth, five_table_ok

BOUNDS = {
    "table": "cheap bounds, then distance tables with meet in the middle (up to 5 lines, full specs)",
    "cheap": "only bounds without tables; every refuted k gets an LRAT proof when certifying",
}
# Number of gates from which the distance table is consulted, by line count: building
# the 4-line table takes seconds, while SAT refutes k ≤ 7 on 4 lines in well under one.
TABLE_FROM = {1: 0, 2: 0, 3: 0, 4: 8}
# The table is not started when less time than this is left (its build stops at the
# deadline anyway; this leaves short time limits to SAT).
TABLE_MIN_SECONDS = {1: 0.0, 2: 0.0, 3: 0.0, 4: 5.0}


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
    class_table: ClassTableClaim | None = None  # what the 4-line class tables established (exactsyn.search.classtable)
    hint: str = ""  # one line for the user, e.g. how to get the class tables


@dataclass(frozen=True)
class TableBound:
    """A bound from the distance tables (:mod:`exactsyn.tables.distance`), re-derivable from its depth."""

    value: int  # every circuit has at least this many gates
    exact: bool  # value is the optimum (a circuit of that size was found)
    depth: int
    extended: bool

    def to_dict(self) -> dict[str, object]:
        """The JSON form (results and certificates): ``depth`` is ``"full"`` for a table of every function."""
        return {"value": self.value, "exact": self.exact, "depth": "full" if self.depth >= FULL else self.depth,
                "extended": self.extended}


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
    *,
    encoding: EncodingOptions | None = None,
    solver: str = "cadical195",
    time_limit: float | None = None,
    max_gates: int | None = None,
    use_heuristic: bool = True,
    bounds: str = "table",
    jobs: int = 1,
    progress: SearchProgress | None = None,
    proof_sink: ProofSink | None = None,
    cnf_sink: Callable[[Encoding], None] | None = None,
    split: CubeOptions | None = None,
    cube_progress: CubeProgress | None = None,
) -> GateResult:
    """Find a minimum-gate circuit; see the module docstring.

    With ``proof_sink`` every k-query is solved by CaDiCaL 1.9.5 with LRAT output and
    each refutation is handed to ``proof_sink(stem, proof)``, which stores it and returns
    its name (see :mod:`exactsyn.proof.certificate`).  With ``jobs >= 2`` a query still
    open after a second is raced against the formulation without symmetry breaking.
    ``cnf_sink`` receives every k-query's encoding (for DIMACS export).  ``progress``
    receives every answered query and a :class:`~exactsyn.search.events.SearchEvent` for
    the other phases.  With ``split`` a query still open after ``split.after`` seconds is
    split into cubes instead of raced (:mod:`exactsyn.sat.conquer`), and ``cube_progress``
    hears about each cube.  Raises :class:`NoCircuitError` when parity rules every circuit out.
    """
    opts = encoding or EncodingOptions()
    start = time.perf_counter()
    deadline = None if time_limit is None else start + time_limit
    reason = parity_obstruction(spec, library) or affine_obstruction(spec, library) or completion_obstruction(spec)
    if reason:
        raise NoCircuitError(reason)
    bound = lower_bound(spec, library)
    hopeless = max_gates is not None and bound.value > max_gates  # no circuit within the limit: no fallback either
    use_heuristic = use_heuristic and not hopeless
    steps: list[Query] = []
    table: TableBound | None = None
    if bounds not in BOUNDS:
        raise ExactsynError(f"unknown bounds mode {bounds!r}; choose one of: {', '.join(BOUNDS)}")
    want_table = (
        bounds == "table" and spec.is_permutation and library.involutive and spec.lines <= 4 and len(library) <= 256
    ) or (bounds == "table" and spec.is_permutation and five_table_ok(library))
    # The cached 4-line class tables: the optimum itself, or a lower bound (search.classtable).
    claim: ClassTableClaim | None = None
    hint = ""
    settled = None
    if bounds == "table" and bound.value > 0 and applies(spec, library):
        what = "4-line class table"
        emit(progress, SearchEvent("table-start", k=bound.value, detail=what))
        settled = settle(spec, library, deadline)
        if settled is None:
            hint = HINT if table_for(library) is not None else ""
        else:
            claim = settled.claim
            emit(progress, SearchEvent("table-done", k=bound.value, value=claim.value,
                                       seconds=claim.seconds, detail=f"{what} of {claim.library}"))
            if claim.depth >= 6 and table_for(library) is not None:
                want_table = False  # the library's own table reaches further than its distance table (12 at most)
    fallback = Fallback(None, "")
    if use_heuristic and (settled is None or settled.circuit is None):
        fallback = initial_upper(spec, library, deadline, progress)
    upper = fallback.circuit

    def result(circuit: Circuit | None, optimal: bool, lb: int, source: str) -> GateResult:
        if circuit is not None and max_gates is not None and len(circuit) > max_gates:
            # Every answer obeys the gate limit; a proven optimum above it is the bound.
            lb = max(lb, len(circuit)) if optimal else lb
            circuit, optimal, source = None, False, "none"
        if circuit is not None:
            verify_circuit(circuit, spec, library)
        return GateResult(
            spec=spec,
            library=library,
            circuit=circuit,
            optimal=optimal,
            lower_bound=lb,
            upper_bound=None if circuit is None else len(circuit),
            initial_bound=bound,
            table_bound=table,
            steps=tuple(steps),
            encoding=opts,
            solver=solver,
            seconds=time.perf_counter() - start,
            source=source,
            how=fallback.how if source == "heuristic" else fallback.reason if circuit is None else "",
            class_table=claim,
            hint=hint,
        )

    k = bound.value
    if settled is not None and claim is not None:
        if settled.circuit is not None:
            return result(settled.circuit, True, claim.value, "class-table")
        if claim.value > k:
            emit(progress, SearchEvent("table-bound", low=k, high=claim.value - 1, detail="4-line class table"))
            k = claim.value
    per_k = 0.0  # seconds the last encoding took per gate position
    shrunk_five = False  # 5 lines: the fallback shrunk by 4-line windows once (search/fallback.py)
    if k == 0:
        return result(Circuit(spec.lines), True, 0, "bound")
    while True:
        elapsed = time.perf_counter() - start
        room = time_limit is None or time_limit - elapsed >= TABLE_MIN_SECONDS.get(spec.lines, 0.0)
        left_now = None if time_limit is None else time_limit - elapsed
        five = None if spec.lines != 5 else five_next_depth(k, None if table is None else table.depth, left_now)
        consult = five is not None or (spec.lines != 5 and table is None and k >= TABLE_FROM.get(spec.lines, 99))
        if want_table and consult and room:
            what = f"distance table of {library.name}" + ("" if five is None else f", depth {five}")
            emit(progress, SearchEvent("table-start", k=k, detail=what))
            mr: MeetResult | None
            if five is not None:  # hashed 5-line tables: a shallow one first, a deeper one later (tables/hashed.py)
                mr = five_meet(spec.permutation, library, five)
            else:
                mr = extended_meet_by(spec.permutation, library, deadline)
            emit(progress, SearchEvent("table-done", k=k, value=None if mr is None else mr.exact or mr.lower,
                                       seconds=time.perf_counter() - start - elapsed, detail=what))
            if mr is None:  # not built by the deadline
                want_table = False
                continue
            if mr.exact is not None and mr.circuit is not None:
                table = TableBound(mr.exact, True, mr.depth, mr.extended)
                return result(mr.circuit, True, mr.exact, "table")
            table = TableBound(mr.lower, False, mr.depth, mr.extended)
            if mr.lower > k:
                emit(progress, SearchEvent("table-bound", low=k, high=mr.lower - 1, detail=what))
            k = max(k, mr.lower)
            if spec.lines != 5:
                fallback = improve_upper(fallback, spec, library, deadline, progress)
                upper = fallback.circuit
            continue
        if spec.lines == 5 and k >= FIVE_SHRINK_FROM and not shrunk_five:
            # the search has reached the queries that take minutes: a better fallback pays now
            shrunk_five = True
            fallback = improve_upper(fallback, spec, library, deadline, progress)
            upper = fallback.circuit
        if max_gates is not None and k > max_gates:
            # Every circuit needs at least k > max_gates gates: none within the limit.
            return result(None, False, k, "none")
        if upper is not None and k >= len(upper):
            return result(upper, True, k, "heuristic")
        left = None if time_limit is None else time_limit - (time.perf_counter() - start)
        if left is not None and left <= 0:
            return result(upper, False, k, "heuristic" if upper else "none")
        if left is not None and left < per_k * k:  # the encoding alone would overrun (the last one's rate)
            return result(upper, False, k, "heuristic" if upper else "none")
        emit(progress, SearchEvent("query-start", k=k, seconds=left))
        t_enc = time.perf_counter()
        enc = encode(spec, library, k, opts)
        per_k = (time.perf_counter() - t_enc) / max(k, 1)
        if cnf_sink:
            cnf_sink(enc)
        if time_limit is not None:  # encoding took time too
            left = time_limit - (time.perf_counter() - start)
            if left <= 0:
                return result(upper, False, k, "heuristic" if upper else "none")
        rival = None
        if jobs >= 2 and enc.options.symmetry:
            rival = functools.partial(encode, spec, library, k, PLAIN)
        ans = run_query(
            enc,
            solver=solver,
            time_limit=left,
            proof_sink=proof_sink,
            rival=rival,
            rival_seconds=per_k * k,
            split=split,
            cube_progress=cube_progress,
        )
        steps.append(ans.query)
        if progress:
            progress(ans.query)
        if ans.query.status == Status.SAT:
            assert ans.circuit is not None
            return result(ans.circuit, True, k, "sat")
        if ans.query.status == Status.UNKNOWN:
            return result(upper, False, k, "heuristic" if upper else "none")
        k += 1
