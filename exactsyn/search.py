"""The search loop: raise k from a proven lower bound until a k-gate circuit exists.

For each k the encoder builds a fresh CNF (:mod:`exactsyn.encode`) and the solver
answers it; every UNSAT answer raises the proven lower bound to k + 1.  The first SAT
answer is decoded, simulated against the spec, and returned as optimal.  A fast
constructive circuit (transformation-based synthesis, Miller, Maslov & Dueck, DAC 2003)
gives an upper bound first: when every k below its size is refuted, it is itself
optimal and the last SAT call is skipped; when time runs out, it is returned with the
proven lower bound and clearly marked as not proven optimal.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass

from exactsyn.bounds import Bound, lower_bound, parity_obstruction
from exactsyn.circuit import Circuit
from exactsyn.dimacs import cnf_sha256
from exactsyn.encode import Encoding, EncodingOptions, encode
from exactsyn.errors import ExactsynError
from exactsyn.library import Library
from exactsyn.proofcap import solve_with_lrat
from exactsyn.solve import solve_cnf
from exactsyn.spec import Spec


class NoCircuitError(ExactsynError):
    """No circuit exists in the library, or none was found within the limits (exit 1)."""


@dataclass(frozen=True)
class Step:
    """One k-query: its answer, time and size."""

    k: int
    status: str  # "sat" | "unsat" | "unknown"
    seconds: float
    conflicts: int
    variables: int
    clauses: int
    solver: str = ""
    cnf_sha256: str | None = None  # set when certifying
    proof: str | None = None  # where the sink stored the LRAT refutation
    proof_bytes: int = 0


@dataclass(frozen=True)
class Result:
    spec: Spec
    library: Library
    circuit: Circuit | None
    optimal: bool
    lower_bound: int
    upper_bound: int | None
    initial_bound: Bound
    steps: tuple[Step, ...]
    encoding: EncodingOptions
    solver: str
    seconds: float
    source: str  # "sat" | "heuristic" | "bound" (circuit met the lower bound) | "none"


def heuristic_circuit(spec: Spec, library: Library) -> Circuit | None:
    """A quick circuit from transformation-based synthesis, if it fits the library."""
    if not spec.is_permutation:
        return None
    from exactsyn.tbs import tbs

    circ = tbs(spec.permutation, spec.lines)
    if all(library.contains(g) for g in circ.gates) and spec.accepts(circ.permutation()):
        return circ
    return None


def verify(circuit: Circuit, spec: Spec, library: Library) -> None:
    """Simulate on every input; refuse to hand out a circuit that is wrong."""
    if circuit.lines != spec.lines or not spec.accepts(circuit.permutation()):
        raise RuntimeError("internal error: decoded circuit does not meet the spec")
    if not all(library.contains(g) for g in circuit.gates):
        raise RuntimeError("internal error: decoded circuit uses a gate outside the library")


def synthesise(
    spec: Spec,
    library: Library,
    *,
    encoding: EncodingOptions | None = None,
    solver: str = "cadical195",
    time_limit: float | None = None,
    max_gates: int | None = None,
    use_heuristic: bool = True,
    progress: Callable[[Step], None] | None = None,
    proof_sink: Callable[[int, bytes], str] | None = None,
    cnf_sink: Callable[[Encoding], None] | None = None,
) -> Result:
    """Find a minimum-gate circuit; see the module docstring.

    With ``proof_sink`` every k-query is solved by CaDiCaL 1.9.5 with LRAT output and
    each refutation is handed to ``proof_sink(k, proof)``, which stores it and returns
    its name (see :mod:`exactsyn.certificate`).  ``cnf_sink`` receives every k-query's
    encoding (for DIMACS export).  Raises :class:`NoCircuitError` when parity rules
    every circuit out.
    """
    opts = encoding or EncodingOptions()
    start = time.perf_counter()
    reason = parity_obstruction(spec, library)
    if reason:
        raise NoCircuitError(reason)
    bound = lower_bound(spec, library)
    upper = heuristic_circuit(spec, library) if use_heuristic else None
    steps: list[Step] = []

    def result(circuit: Circuit | None, optimal: bool, lb: int, source: str) -> Result:
        if circuit is not None:
            verify(circuit, spec, library)
        return Result(
            spec=spec,
            library=library,
            circuit=circuit,
            optimal=optimal,
            lower_bound=lb,
            upper_bound=None if circuit is None else len(circuit),
            initial_bound=bound,
            steps=tuple(steps),
            encoding=opts,
            solver=solver,
            seconds=time.perf_counter() - start,
            source=source,
        )

    k = bound.value
    if k == 0:
        return result(Circuit(spec.lines), True, 0, "bound")
    while True:
        if upper is not None and k >= len(upper):
            return result(upper, True, k, "heuristic")
        if max_gates is not None and k > max_gates:
            return result(upper, False, k, "heuristic" if upper else "none")
        left = None if time_limit is None else time_limit - (time.perf_counter() - start)
        if left is not None and left <= 0:
            return result(upper, False, k, "heuristic" if upper else "none")
        enc = encode(spec, library, k, opts)
        if cnf_sink:
            cnf_sink(enc)
        if proof_sink is None:
            out = solve_cnf(enc.clauses, solver, left)
            step = Step(k, out.status, out.seconds, out.conflicts, enc.num_vars, len(enc.clauses), solver)
            model = out.model
        else:
            run = solve_with_lrat(enc.clauses, left)
            name = proof_sink(k, run.proof) if run.status == "unsat" else None
            step = Step(
                k,
                run.status,
                run.seconds,
                run.conflicts or 0,
                enc.num_vars,
                len(enc.clauses),
                run.solver,
                cnf_sha256(enc.num_vars, enc.clauses),
                name,
                len(run.proof),
            )
            model = run.model
        steps.append(step)
        if progress:
            progress(step)
        if step.status == "sat":
            assert model is not None
            return result(enc.decode(model), True, k, "sat")
        if step.status == "unknown":
            return result(upper, False, k, "heuristic" if upper else "none")
        k += 1
