"""Capture an LRAT refutation from CaDiCaL 1.9.5 (the solver object and the search come from
:mod:`exactsyn.sat.solver`).

The solver is CaDiCaL (A. Biere, K. Fazekas, M. Fleury, M. Heisinger, "CaDiCaL,
Kissat, Paracooba, Plingeling and Treengeling entering the SAT Competition
2020"), reached through python-sat (A. Ignatiev, A. Morgado, J. Marques-Silva,
"PySAT: A Python Toolkit for Prototyping with SAT Oracles", SAT 2018).  The
proof format is LRAT (L. Cruz-Filipe et al., "Efficient Certified RAT
Verification", CADE 2017); :mod:`exactsyn.proof.lrat` checks it.

How capture works, and why it needs care:

* python-sat exposes proof tracing for CaDiCaL 1.9.5 only through its C module
  (``pysolvers.cadical195_tracepr``, :data:`HOOK_NAME`).  Options ``lrat=1``
  and ``binary=0`` are set *before* tracing starts: the solver picks the
  proof format and encoding when the tracer is created.
* A certificate must name the formula's clauses ``1..m`` in the order given.
  CaDiCaL draws original and derived clause ids from one counter, and it
  derives clauses *while clauses are being added* (dropping a repeated
  literal, a literal already false at the root, propagating a new unit).
  Each such step takes the next id, so later input clauses are shifted.
  We therefore watch the trace file after every added clause: the ids of the
  addition lines written while clause ``k`` was added, together with clause
  ``k``'s own id, must be the next consecutive block of ids; clause ``k``'s
  id is the one not printed.  Anything else (a gap, a second missing id, a
  partial line, a later step reusing an id) raises
  :class:`~exactsyn.errors.ExactsynError` instead of producing a certificate.
  The proof is then renumbered so that clause ``k`` has id ``k`` and the
  clauses derived while adding come next, in order.  Either way the
  renumbered proof is only a claim: :func:`exactsyn.proof.lrat.check_lrat` decides.
* Checking the file after every clause costs a system call per clause (about 0.5 s
  for the 170,000 clauses of a 5-line query, paid again by every cube of a split
  query).  So clauses that cannot make CaDiCaL derive anything while being added —
  two or more literals, none repeated, no complementary pair, and no variable of a
  unit clause added or derived before — go in blocks, and the file size is compared
  once per block: unchanged means each clause of the block took the next id, which
  is the per-clause model again.  Any other clause is added on its own and watched.
  If a block grows the file after all, the capture starts again clause by clause
  (:class:`_Surprise`), so the fast path can never change a proof, only its speed.
* If the formula contains the empty clause, CaDiCaL writes no step for it;
  we append the one-step derivation ``id 0 k 0`` (``k`` = the first empty
  clause), which the checker verifies like any other step.
* The solver object comes from the caller (:mod:`exactsyn.sat.solver`, the one module
  that builds solvers), and so does the search (``search(solver)``), which may run in
  conflict-budget slices: an incremental re-solve keeps the same proof trace, so the
  proof stays one valid LRAT refutation.
"""

from __future__ import annotations

import itertools
import os
import re
import tempfile
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

from exactsyn.errors import ExactsynError
from exactsyn.sat.status import Status

HOOK_NAME = "cadical195_tracepr"
"""The python-sat C-module function that proof capture relies on."""

SOLVER_NAME = "CaDiCaL 1.9.5"

# CaDiCaL sizes its tables by the largest variable, so a stray huge index would
# exhaust memory rather than fail; this cap (far above any formula we build) turns
# that into a clear error.
_MAX_VAR = 50_000_000


@dataclass(frozen=True)
class Captured:
    """What :func:`capture` got from the solver.

    ``model`` lists one literal per variable ``1..num_vars`` (positive = true)
    when ``status == "sat"``.  ``proof`` is LRAT text whose clause ids ``1..m``
    are the input clauses in order; it is empty unless ``status == "unsat"``.
    ``conflicts`` is the solver's conflict count (``None`` if it did not say).
    """

    status: Status
    model: tuple[int, ...] | None
    proof: bytes
    conflicts: int | None


NewSolver = Callable[[], Any]
"""Returns a fresh, empty CaDiCaL 1.9.5 object of python-sat (the caller builds it)."""
Search = Callable[[Any], bool | None]
"""Runs the search on the solver: True (SAT), False (UNSAT) or None (stopped: unknown)."""


def _pysolvers() -> Any:
    import pysolvers  # python-sat's C module; imported lazily, it has no stubs

    return pysolvers


def _normalise(clauses: Sequence[Sequence[int]]) -> tuple[list[list[int]], int]:
    if isinstance(clauses, str | bytes) or not isinstance(clauses, Sequence):
        raise ExactsynError("clauses must be a list of lists of integers")
    out: list[list[int]] = []
    for k, clause in enumerate(clauses, start=1):
        if not isinstance(clause, list | tuple) and (
            isinstance(clause, str | bytes) or not isinstance(clause, Sequence)
        ):
            raise ExactsynError(f"clause {k} is not a list of integers")
        out.append(list(clause))
    flat = list(itertools.chain.from_iterable(out))
    if not flat:
        return out, 0
    # One pass over all literals at C speed; the slow search below only names a bad one.
    if set(map(type, flat)) == {int} and 0 not in flat:  # bool is not int here
        top = max(max(flat), -min(flat))
        if top <= _MAX_VAR:
            return out, top
    for k, lits in enumerate(out, start=1):
        if lits:
            if not all(type(lit) is int for lit in lits) or 0 in lits:
                bad = next(lit for lit in lits if type(lit) is not int or lit == 0)
                raise ExactsynError(f"clause {k} has literal {bad!r}, not a non-zero integer")
            top = max(max(lits), -min(lits))
            if top > _MAX_VAR:
                raise ExactsynError(f"clause {k} has variable {top}, above the limit {_MAX_VAR}")
    raise AssertionError("unreachable: a bad literal was found above")  # pragma: no cover


_BLOCK = 4096  # clauses added between two file-size checks on the fast path


class _Surprise(Exception):
    """The trace grew inside a block the fast path expected to stay silent."""


def _plain(clause: list[int], fixed: set[int]) -> bool:
    """True when adding ``clause`` cannot make CaDiCaL write a trace line (see the module docstring)."""
    if len(clause) < 2:
        return False
    vs = set(map(abs, clause))
    return len(vs) == len(clause) and (not fixed or vs.isdisjoint(fixed))


class _IdWatch:
    """Learns CaDiCaL's id for each input clause from the lines written while adding it."""

    def __init__(self) -> None:
        self.counter = 0  # largest id handed out so far
        self.original: list[int] = []  # CaDiCaL id of input clause k at index k-1
        self.derived: list[int] = []  # CaDiCaL ids of steps written while adding, in order

    def after_add(self, written: bytes) -> None:
        if not written:  # the common case: nothing derived, the clause takes the next id
            self.counter += 1
            self.original.append(self.counter)
            return
        if not written.endswith(b"\n"):
            raise ExactsynError("proof capture: the solver left a partial proof line; refusing to guess ids")
        printed = []
        for line in written.splitlines():
            toks = line.split()
            if len(toks) < 2:
                raise ExactsynError(f"proof capture: unexpected trace line {line[:60]!r}")
            if toks[1] != b"d":
                printed.append(int(toks[0]))
        block = set(range(self.counter + 1, self.counter + len(printed) + 2))
        missing = block.difference(printed)
        if len(printed) != len(set(printed)) or not set(printed) <= block or len(missing) != 1:
            raise ExactsynError(
                f"proof capture: solver ids {printed} after id {self.counter} break the numbering model"
            )
        self.original.append(missing.pop())
        self.derived.extend(printed)
        self.counter += len(printed) + 1

    def renumbering(self) -> dict[int, int] | None:
        """Map from CaDiCaL ids (those up to ``counter``) to ours, or None if it is the identity."""
        mapping = {cad: k for k, cad in enumerate(self.original, start=1)}
        m = len(self.original)
        mapping.update({cad: m + j for j, cad in enumerate(self.derived, start=1)})
        if all(cad == ours for cad, ours in mapping.items()):
            return None
        return mapping


def _renumber(text: bytes, mapping: dict[int, int]) -> bytes:
    def tr(tok: bytes) -> bytes:
        v = int(tok)
        return str(mapping[v]).encode() if v in mapping else tok

    out = []
    for line in text.splitlines():
        toks = line.split()
        if len(toks) >= 2 and toks[1] == b"d":
            new = [tr(toks[0]), b"d", *map(tr, toks[2:])]
        else:
            sep = toks.index(b"0", 1)
            new = [tr(toks[0]), *toks[1 : sep + 1], *map(tr, toks[sep + 1 :])]
        out.append(b" ".join(new))
    return b"\n".join(out) + b"\n" if out else b""


def _check_solve_phase(text: bytes, counter: int) -> None:
    for line in text.splitlines():
        toks = line.split()
        if len(toks) >= 2 and toks[1] != b"d":
            if int(toks[0]) <= counter:
                raise ExactsynError(
                    f"proof capture: solver step id {int(toks[0])} reuses an input-phase id (<= {counter})"
                )
            return


def _last_addition_id(text: bytes, floor: int) -> int:
    last = floor
    for line in text.splitlines():
        toks = line.split()
        if len(toks) >= 2 and toks[1] != b"d":
            last = max(last, int(toks[0]))
    return last


_EMPTY_STEP = re.compile(rb"^[0-9]+ 0 ", re.MULTILINE)


def _derives_empty(text: bytes) -> bool:
    return _EMPTY_STEP.search(text) is not None


def capture(
    clauses: Sequence[Sequence[int]],
    new_solver: NewSolver,
    search: Search,
    *,
    fast: bool = True,
    deadline: float | None = None,
) -> Captured:
    """Add ``clauses`` (DIMACS-style literals) to ``new_solver()`` with LRAT tracing on, run
    ``search`` on it and, if UNSAT, return an LRAT refutation.

    The proof numbers the input clauses ``1..len(clauses)`` in the order given.
    ``fast=False`` watches the trace after every clause (the fast path is in the module
    docstring; when it is surprised, a second solver from ``new_solver`` starts again clause
    by clause).  When the clock (:func:`time.perf_counter`) passes ``deadline`` while the
    clauses are being added, ``search`` is not run and the status is ``unknown``.  Raises
    :class:`~exactsyn.errors.ExactsynError` on bad input and whenever the captured trace does
    not fit the numbering the certificate needs (see the module docstring).
    """
    lits, num_vars = _normalise(clauses)
    if not tracer_hook_present():
        raise ExactsynError(f"python-sat has no {HOOK_NAME}; proof capture is unavailable")
    if fast:
        try:
            return _capture(new_solver(), lits, num_vars, search, True, deadline)
        except _Surprise:
            pass
    return _capture(new_solver(), lits, num_vars, search, False, deadline)


def _add_all(
    solver: Any, lits: list[list[int]], fd: int, watch: _IdWatch, fast: bool, deadline: float | None
) -> int | None:
    """Add every clause, learning CaDiCaL's ids (see the module docstring); returns the trace
    size, or None when ``deadline`` passed first (looked at every :data:`_BLOCK` clauses)."""
    offset = 0
    fixed: set[int] = set()  # variables of unit clauses, given or derived
    add = solver.add_clause
    i, m = 0, len(lits)
    look = _BLOCK
    while i < m:
        if deadline is not None and i >= look:
            look = i + _BLOCK
            if time.perf_counter() >= deadline:
                return None
        if fast and _plain(lits[i], fixed):
            j = i
            while j < m and j - i < _BLOCK and _plain(lits[j], fixed):
                add(lits[j])
                j += 1
            if os.fstat(fd).st_size != offset:
                raise _Surprise
            watch.counter += j - i
            watch.original.extend(range(watch.counter - (j - i) + 1, watch.counter + 1))
            i = j
            continue
        clause = lits[i]
        add(clause)
        size = os.fstat(fd).st_size
        written = os.pread(fd, size - offset, offset) if size > offset else b""
        watch.after_add(written)
        offset = size
        if len(clause) == 1:
            fixed.add(abs(clause[0]))
        for line in written.splitlines():
            toks = line.split()
            if len(toks) >= 2 and toks[1] != b"d" and toks[2:3] == [b"0"]:
                fixed.add(abs(int(toks[1])))  # a derived unit clause
        i += 1
    return offset


def _capture(
    solver: Any, lits: list[list[int]], num_vars: int, search: Search, fast: bool, deadline: float | None
) -> Captured:
    mod = _pysolvers()
    fd, path = tempfile.mkstemp(prefix="exactsyn-", suffix=".lrat")
    model: list[int] = []
    try:
        solver.configure({"lrat": 1, "binary": 0})
        trace = getattr(mod, HOOK_NAME)(solver.cadical, fd)
        watch = _IdWatch()
        added = _add_all(solver, lits, fd, watch, fast, deadline)
        offset = added or 0
        result = None if added is None else search(solver)
        if result:
            model = list(solver.get_model() or [])
        conflicts = (solver.accum_stats() or {}).get("conflicts")
        if trace is not None and hasattr(mod, "flushpr"):
            mod.flushpr(trace)
        solver.delete()  # the trace is complete once the solver is gone
        raw = b""
        if result is False:
            with open(path, "rb") as fh:
                raw = fh.read()
    finally:
        solver.delete()
        os.close(fd)
        os.unlink(path)

    def finish(status: Status, values: tuple[int, ...] | None, proof: bytes) -> Captured:
        return Captured(
            status=status,
            model=values,
            proof=proof,
            conflicts=int(conflicts) if conflicts is not None else None,
        )

    if result is None:
        return finish(Status.UNKNOWN, None, b"")
    if result:
        value = {abs(v): v for v in model}
        return finish(Status.SAT, tuple(value.get(v, -v) for v in range(1, num_vars + 1)), b"")

    _check_solve_phase(raw[offset:], watch.counter)
    mapping = watch.renumbering()
    proof = _renumber(raw, mapping) if mapping is not None else raw
    empties = [k for k, clause in enumerate(lits, start=1) if not clause]
    if empties:
        next_id = _last_addition_id(proof, len(lits)) + 1
        proof += f"{next_id} 0 {empties[0]} 0\n".encode()
    if not _derives_empty(proof):
        raise ExactsynError("proof capture: solver reported UNSAT but its trace derives no empty clause")
    return finish(Status.UNSAT, None, proof)


def tracer_hook_present() -> bool:
    """True when python-sat's C module has the tracing hook (no solving)."""
    try:
        return hasattr(_pysolvers(), HOOK_NAME)
    except ImportError:
        return False
