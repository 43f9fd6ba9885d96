"""Check a query that was split into cubes: every cube refuted, and the cubes cover the query.

A certificate's query with a ``split`` object (format in :mod:`exactsyn.proof.certificate`)
is refuted when

1. every listed cube is marked ``unsat`` and its own LRAT proof refutes the re-derived
   CNF followed by the cube's clauses (ids ``m+1, …``), checked by
   :func:`exactsyn.proof.lrat.check_lrat_extended` (the CNF is read once for all cubes);
2. the cubes cover the query, folded up by :func:`exactsyn.proof.cover.check_coverage`,
   which says whether each branching closed by construction (the branches' clauses
   contain a clause of the CNF) or by unit propagation.

Nothing is taken from the splitter: a cube that is missing, changed, or refuted by a
proof of some other formula fails one of the two.  Like the rest of the checker this
imports no SAT solver.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from exactsyn.errors import ExactsynError
from exactsyn.proof.certificate import open_proof
from exactsyn.proof.cover import check_coverage
from exactsyn.proof.lrat import check_lrat_extended, prepare

Note = Callable[[str, bool, str], None]


def _cube_clauses(raw: Any, num_vars: int) -> tuple[tuple[int, ...], ...]:
    if not isinstance(raw, list) or not raw:
        raise ValueError("a cube needs a non-empty list of clauses")
    out = []
    for c in raw:
        if not isinstance(c, list) or not c:
            raise ValueError("a cube clause must be a non-empty list of literals")
        if any(type(x) is not int or x == 0 or abs(x) > num_vars for x in c):
            raise ValueError(f"a cube clause has a literal outside +-{num_vars}")
        out.append(tuple(c))
    return tuple(out)


def check_split(
    directory: Path,
    split: Any,
    num_vars: int,
    clauses: Sequence[Sequence[int]],
    label: str,
    note: Note,
) -> bool:
    """Check the ``split`` object of one query; ``note`` gets one line per failure and one summary."""
    t0 = time.perf_counter()
    try:
        raw_cubes = split["cubes"]
        if not isinstance(raw_cubes, list) or not raw_cubes:
            raise ValueError("no cubes")
        cubes = [
            (_cube_clauses(c["clauses"], num_vars), c.get("status"), c.get("proof"), c.get("index")) for c in raw_cubes
        ]
    except (KeyError, TypeError, ValueError) as e:
        note(label, False, f"malformed split: {e}")
        return False
    base = prepare(num_vars, clauses)
    steps = 0
    ok = True
    for cl, status, proof_name, index in cubes:
        name = f"{label} cube {index}"
        if status != "unsat" or not proof_name:
            note(name, False, f"cube is {status!r}, not refuted")
            ok = False
            continue
        try:
            rep = check_lrat_extended(base, cl, open_proof(directory, str(proof_name), len(clauses) + len(cl)))
        except ExactsynError as e:
            note(name, False, e.message)
            ok = False
            continue
        if not rep.ok:
            note(name, False, f"LRAT step {rep.failed_step} failed: {rep.reason}")
            ok = False
            continue
        steps += rep.steps
    if not ok:
        return False
    cover = check_coverage(clauses, [c for c, *_ in cubes])
    if not cover.ok:
        note(label, False, f"coverage: {cover.detail}")
        return False
    dt = time.perf_counter() - t0
    note(label, True, f"{len(cubes)} cube refutations checked ({steps} LRAT steps, {dt:.2f} s); {cover.detail}")
    return True
