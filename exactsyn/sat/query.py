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
from exactsyn.sat.conquer import CubeOptions, SplitRecord, conquer
from exactsyn.sat.cube_engines import make_engine
from exactsyn.sat.dimacs import cnf_sha256
from exactsyn.sat.encode import Encoding
from exactsyn.sat.options import NO_HOOKS, Hooks, ProofSink, SearchOptions
from exactsyn.sat.race import race
from exactsyn.sat.solver import Outcome, solve
from exactsyn.sat.status import Status

#: A query still open after this long on its own is raced against the second formulation.
QUICK_SECONDS = 1.0
#: The racer without symmetry breaking (see :mod:`exactsyn.sat.race`); writes no proof.
RACE_SOLVER = "kissat404"

__all__ = ["Answer", "ProofSink", "Query", "Rival", "proof_stem", "run_query"]

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


@dataclass(frozen=True)
class Rival:
    """A second formulation of the same question to race a hard query against (:mod:`exactsyn.sat.race`).

    ``build`` makes its encoding; ``seconds`` is what building it is expected to take (under
    a time limit the race starts only when more than that is left)."""

    build: Callable[[], Encoding]
    seconds: float = 0.0


@dataclass(frozen=True)
class _Solved:
    """What answered a query so far (one solver, the cubes, or the race)."""

    status: Status = Status.UNKNOWN
    model: tuple[int, ...] | None = None
    conflicts: int | None = 0
    solver: str = ""
    proof: bytes = b""
    split: SplitRecord | None = None
    encoding: Encoding | None = None  # set when the rival's encoding answered


def _solve(clauses: list[list[int]], solver: str, limit: float | None, certify: bool) -> _Solved:
    return _solved(solve(clauses, solver=solver, time_limit=limit, proof=certify))


def _solved(out: Outcome, encoding: Encoding | None = None) -> _Solved:
    return _Solved(out.status, out.model, out.conflicts, out.solver, out.proof, encoding=encoding)


def run_query(
    enc: Encoding,
    options: SearchOptions,
    hooks: Hooks = NO_HOOKS,
    *,
    objective: str = "gates",
    k: int | None = None,
    limit: int | None = None,
    time_limit: float | None = None,
    rival: Rival | None = None,
) -> Answer:
    """Answer one query within ``time_limit`` seconds (``None``: no limit).

    ``k`` is the query's size as recorded (default ``enc.k``; the depth for ``depth``).
    ``options`` gives the solver and how a hard query may use more processes; ``hooks``
    the proof sink (certifying: CaDiCaL 1.9.5 with LRAT output, an UNSAT answer's
    refutation stored through the sink) and the observer (every solved cube).

    With ``rival`` (a second formulation of the same question) a query still open after
    :data:`QUICK_SECONDS` is raced against it; whichever answers first decides, and its
    encoding is the one recorded (both are exact for the question; see
    :mod:`exactsyn.sat.race`).  With ``options.split`` (gate queries only) a query still open
    after ``split.after`` seconds is split into cubes instead (no race), solved on
    ``split.jobs`` processes or Dask.
    """
    if objective not in QUERY_OBJECTIVES:
        raise ValueError(f"unknown query objective {objective!r}")
    k = enc.k if k is None else k  # the depth encoding has depth × lines slots, not k positions
    t0 = time.perf_counter()
    stem = proof_stem(objective, k, limit)
    split = options.split if objective == "gates" and not enc.optional and enc.k >= 1 else None
    if split is not None:
        rival = None
    elif rival is not None and time_limit is not None and time_limit <= QUICK_SECONDS:
        rival = None
    first = time_limit
    if split is not None or rival is not None:
        alone = split.after if split is not None else QUICK_SECONDS
        first = alone if time_limit is None else min(alone, time_limit)

    def left() -> float | None:
        return None if time_limit is None else time_limit - (time.perf_counter() - t0)

    got = _Solved(solver=options.solver)
    if first is None or first > 0:
        got = _solve(enc.clauses, options.solver, first, hooks.certify)
    if got.status == Status.UNKNOWN and split is not None:
        got = _conquer(enc, split, options.solver, hooks, left(), stem, got)
    if got.status == Status.UNKNOWN and rival is not None:
        got = _race(enc, rival, options.solver, hooks.certify, left(), got)
    answering = got.encoding or enc
    stored = None
    if hooks.proof is not None and got.status == Status.UNSAT and got.split is None:
        stored = hooks.proof(stem, got.proof)
    record = got.split
    query = Query(
        objective=objective,
        k=k,
        limit=limit,
        status=got.status,
        seconds=time.perf_counter() - t0,
        conflicts=got.conflicts,
        variables=answering.num_vars,
        clauses=len(answering.clauses),
        solver=got.solver,
        cnf_sha256=cnf_sha256(answering.num_vars, answering.clauses) if hooks.certify else None,
        proof=stored,
        proof_bytes=len(got.proof) if stored else sum(c.proof_bytes for c in record.cubes) if record else 0,
        symmetry=answering.options.symmetry if hooks.certify else None,
        split=record,
    )
    circuit = answering.decode(got.model) if got.status == Status.SAT and got.model is not None else None
    return Answer(query, circuit, answering)


def _conquer(
    enc: Encoding, split: CubeOptions, solver: str, hooks: Hooks, rest: float | None, stem: str, before: _Solved
) -> _Solved:
    """The query split into cubes (:mod:`exactsyn.sat.conquer`) once it stayed open on its own."""
    if rest is not None and rest <= 0:
        return before
    won = conquer(
        enc,
        split,
        engine=make_engine(split),
        certify=hooks.certify,
        solver=solver,
        time_limit=rest,
        proof_sink=hooks.proof,
        stem=stem,
        progress=hooks.observer,
    )
    conflicts = (before.conflicts or 0) + won.conflicts
    return _Solved(won.status, won.model, conflicts, won.solver, b"", won.split)


def _race(enc: Encoding, rival: Rival, solver: str, certify: bool, rest: float | None, before: _Solved) -> _Solved:
    """The query raced against ``rival`` once it stayed open on its own (one solver on when no time is left
    to build the rival)."""
    if rest is not None and rest <= rival.seconds + QUICK_SECONDS:
        return _solve(enc.clauses, solver, rest, certify) if rest > 0 else before
    built = time.perf_counter()
    other = rival.build()
    if rest is not None:  # building it took part of the time left (and may have taken more than expected)
        rest -= time.perf_counter() - built
        if rest <= 0:
            return before
    outcome = race(
        [enc.clauses, other.clauses],
        certify=certify,
        solver=solver,
        time_limit=rest,
        solvers=[solver, RACE_SOLVER],  # with certify the first is CaDiCaL 1.9.5 (sat/solver.py)
    )
    return _solved(outcome.outcome, other if outcome.winner == 1 else None)
