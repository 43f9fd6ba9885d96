"""One SAT query, answered: the single runner behind the gate search, the objectives and batches.

A query is one CNF of :mod:`exactsyn.sat.encode` (or :mod:`exactsyn.sat.encode_depth`)
asking "is there a circuit of exactly ``k`` gates" (objective ``gates``), "… of ``k``
gates and cost ≤ ``limit``" (``cost``), or "of depth ≤ ``k``" (``depth``).  The runner
picks the solver, stores an LRAT refutation through a *proof sink* when certifying
(CaDiCaL 1.9.5 with proof capture, :mod:`exactsyn.sat.solver`), hashes the CNF for the certificate, and
decodes a model into a circuit.  A query still open after ``QUICK_SECONDS`` may be
raced against a second formulation on another process (:mod:`exactsyn.sat.race`), or
split into cubes solved on a process pool or a Dask cluster (:mod:`exactsyn.sat.conquer`).

:class:`Query` is the one record of an answered query: the search's steps, the
objective's queries, JSON output, certificates and batch rows are all made from it.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from exactsyn.core.circuit import Circuit
from exactsyn.sat.conquer import CubeOptions, CubeProgress, SplitRecord, conquer
from exactsyn.sat.cube_engines import make_engine
from exactsyn.sat.dimacs import cnf_sha256
from exactsyn.sat.encode import Encoding
from exactsyn.sat.race import race
from exactsyn.sat.solver import Outcome, solve
from exactsyn.sat.status import Status

#: A query still open after this long on its own is raced against the second formulation.
QUICK_SECONDS = 1.0
#: The racer without symmetry breaking (see :mod:`exactsyn.sat.race`); writes no proof.
RACE_SOLVER = "kissat404"

ProofSink = Callable[[str, bytes], str]
"""``sink(stem, lrat_bytes) -> stored file name``; ``stem`` is :func:`proof_stem` of the query."""

QUERY_OBJECTIVES = ("gates", "cost", "depth")


def proof_stem(objective: str, k: int, limit: int | None = None) -> str:
    """File stem of a query's refutation: ``k05``, ``cost-k07-c16``, ``depth-k03``."""
    if objective == "gates":
        return f"k{k:02d}"
    return f"{objective}-k{k:02d}" + ("" if limit is None else f"-c{limit}")


@dataclass(frozen=True)
class Query:
    """One answered SAT query.

    ``objective`` says what was asked (``gates``: exactly ``k`` gates; ``cost``: ``k``
    gates with total cost ≤ ``limit``; ``depth``: at most ``k`` layers).  ``cnf_sha256``,
    ``proof`` (the stored file name), ``proof_bytes`` and ``symmetry`` (the rules of the
    CNF that answered) are set when certifying.
    """

    objective: str
    k: int
    limit: int | None
    status: Status
    seconds: float
    conflicts: int | None  # None when the answering solver does not report it (Kissat in a race)
    variables: int
    clauses: int
    solver: str = ""
    cnf_sha256: str | None = None
    proof: str | None = None
    proof_bytes: int = 0
    symmetry: tuple[str, ...] | None = None
    split: SplitRecord | None = None  # the cubes, when the query was split

    def label(self) -> str:
        """``k=5``, ``k=7 cost<=16`` or ``depth<=3``."""
        if self.objective == "depth":
            return f"depth<={self.k}"
        return f"k={self.k}" + ("" if self.limit is None else f" cost<={self.limit}")

    def summary(self) -> dict[str, Any]:
        """The JSON form printed in results and batch rows (``steps``, ``objective.queries``)."""
        out: dict[str, Any] = {}
        if self.objective != "gates":
            out |= {"kind": self.objective, "k": self.k, "limit": self.limit}
        else:
            out["k"] = self.k
        if self.split is not None:
            out["cubes"] = self.split.counts()
        return out | {
            "status": str(self.status),
            "seconds": round(self.seconds, 4),
            "conflicts": self.conflicts,
            "variables": self.variables,
            "clauses": self.clauses,
            "proof_bytes": self.proof_bytes,
        }


@dataclass(frozen=True)
class Answer:
    """A query with what it produced: the circuit of a model, and the encoding that answered."""

    query: Query
    circuit: Circuit | None
    encoding: Encoding


def _solve(clauses: list[list[int]], solver: str, limit: float | None, certify: bool) -> tuple[Any, ...]:
    out = solve(clauses, solver=solver, time_limit=limit, proof=certify)
    return _fields(out)


def _fields(out: Outcome) -> tuple[Any, ...]:
    return out.status, out.model, out.conflicts, out.solver, out.proof


def run_query(
    enc: Encoding,
    *,
    objective: str = "gates",
    k: int | None = None,
    limit: int | None = None,
    solver: str = "cadical195",
    time_limit: float | None = None,
    proof_sink: ProofSink | None = None,
    rival: Callable[[], Encoding] | None = None,
    split: CubeOptions | None = None,
    cube_progress: CubeProgress | None = None,
    rival_seconds: float = 0.0,
) -> Answer:
    """Answer one query within ``time_limit`` seconds (``None``: no limit).

    ``k`` is the query's size as recorded (default ``enc.k``; the depth for ``depth``).

    With ``proof_sink`` the query is solved by CaDiCaL 1.9.5 with LRAT output and an
    UNSAT answer's refutation is stored through the sink.  With ``rival`` (a builder of a
    second formulation of the same question) a query still open after
    :data:`QUICK_SECONDS` is raced against it; whichever answers first decides, and its
    encoding is the one recorded (both are exact for the question; see
    :mod:`exactsyn.sat.race`).  ``rival_seconds`` is what building the rival is expected
    to take: under a time limit the race starts only when more than that (and
    :data:`QUICK_SECONDS`) is left, else the first solver goes on alone.  With ``split``
    (gate queries only) a query still open after ``split.after`` seconds is split into
    cubes instead (no race), solved on ``split.jobs`` processes or Dask, and
    ``cube_progress`` hears about every cube.
    """
    if objective not in QUERY_OBJECTIVES:
        raise ValueError(f"unknown query objective {objective!r}")
    k = enc.k if k is None else k  # the depth encoding has depth × lines slots, not k positions
    t0 = time.perf_counter()
    certify = proof_sink is not None
    splitting = split is not None and objective == "gates" and not enc.optional and enc.k >= 1
    racing = not splitting and rival is not None and (time_limit is None or time_limit > QUICK_SECONDS)
    first = time_limit
    if racing:
        first = QUICK_SECONDS if time_limit is None else min(QUICK_SECONDS, time_limit)
    if splitting:
        assert split is not None
        first = split.after if time_limit is None else min(split.after, time_limit)
    record: SplitRecord | None = None
    status, model, name, proof = Status.UNKNOWN, None, solver, b""
    conflicts: int | None = 0
    if first is None or first > 0:
        status, model, conflicts, name, proof = _solve(enc.clauses, solver, first, certify)
    if status == Status.UNKNOWN and splitting:
        assert split is not None
        rest = None if time_limit is None else time_limit - (time.perf_counter() - t0)
        if rest is None or rest > 0:
            won = conquer(
                enc,
                split,
                engine=make_engine(split),
                certify=certify,
                solver=solver,
                time_limit=rest,
                proof_sink=proof_sink,
                stem=proof_stem(objective, k, limit),
                progress=cube_progress,
            )
            status, model, name, record = won.status, won.model, won.solver, won.split
            conflicts = (conflicts or 0) + won.conflicts
    if status == Status.UNKNOWN and racing and time_limit is not None:
        remaining = time_limit - (time.perf_counter() - t0)
        if remaining <= rival_seconds + QUICK_SECONDS:  # no time to build the rival: one solver to the end
            racing = False
            if remaining > 0:
                status, model, conflicts, name, proof = _solve(enc.clauses, solver, remaining, certify)
    if status == Status.UNKNOWN and racing:
        assert rival is not None
        other = rival()
        rest = None if time_limit is None else time_limit - (time.perf_counter() - t0)
        outcome = race(
            [enc.clauses, other.clauses],
            certify=certify,
            solver=solver,
            time_limit=rest,
            solvers=[solver, RACE_SOLVER],  # with certify the first is CaDiCaL 1.9.5 (sat/solver.py)
        )
        status, model, conflicts, name, proof = _fields(outcome.outcome)
        if outcome.winner == 1:
            enc = other
    stored = None
    if certify and status == Status.UNSAT and record is None:
        assert proof_sink is not None
        stored = proof_sink(proof_stem(objective, k, limit), proof)
    query = Query(
        objective=objective,
        k=k,
        limit=limit,
        status=status,
        seconds=time.perf_counter() - t0,
        conflicts=conflicts,
        variables=enc.num_vars,
        clauses=len(enc.clauses),
        solver=name,
        cnf_sha256=cnf_sha256(enc.num_vars, enc.clauses) if certify else None,
        proof=stored,
        proof_bytes=len(proof) if stored else sum(c.proof_bytes for c in record.cubes) if record else 0,
        symmetry=enc.options.symmetry if certify else None,
        split=record,
    )
    circuit = enc.decode(model) if status == Status.SAT and model is not None else None
    return Answer(query, circuit, enc)
