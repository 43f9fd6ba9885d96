"""An independent checker for LRAT refutations (the RUP fragment).

Format: L. Cruz-Filipe, M. J. H. Heule, W. A. Hunt Jr., M. Kaufmann and
P. Schneider-Kamp, "Efficient Certified RAT Verification", CADE-26, 2017.  The
check of each step is reverse unit propagation (RUP), E. Goldberg and
Y. Novikov, "Verification of proofs of unsatisfiability for CNF formulas",
DATE 2003, with the propagation order given by the hints, so the checker never
searches.

What is accepted (text LRAT only):

* The formula's clauses have ids ``1..m`` in the order given.
* An addition line ``id lit* 0 hint* 0``: ``id`` must exceed every id seen so
  far (the formula's and the proof's).  Check: make every literal of the new
  clause false, then walk the hints in order.  Each hint must name a live
  clause that is *unit* (all literals false but one unassigned one, which is
  then made true) or *falsified* (all literals false: a conflict).  The step
  holds when a conflict is reached; a hint that is neither unit nor falsified
  (already satisfied, or two or more literals unassigned), an unknown or
  deleted id, hints left over after the conflict, or hints that run out before
  a conflict all reject the proof.
* A deletion line ``id d id* 0`` removes live clauses.  The leading id must
  be a non-negative integer but carries no meaning (CaDiCaL writes the latest
  id, ``0`` before its first step); deleting an unknown or already-deleted id
  rejects the proof (strict: a deletion can never make a bad proof pass, but a
  typo in one should not go unnoticed either).
* The proof is accepted only if some addition line derives the empty clause
  and every line of the proof checks.

Decisions, each of which can only make the checker reject more, never accept
something unsound:

* Negative hints (RAT steps) are rejected with their own reason.  CaDiCaL
  1.9.5 in LRAT mode writes plain resolution chains for our formulas (seen on
  every proof the tests capture), so the RAT case is left out rather than
  carried untested.
* Literals must name variables ``1..num_vars``.
* A repeated literal in any clause counts once.  A tautological *added* clause
  (containing ``x`` and ``-x``) is rejected: it is trivially implied, but a
  solver never needs one, so seeing one means something is off.  Tautologies
  in the *formula* are allowed; they can never be unit or falsified, so a
  hint naming one fails.
* The text may hold only digits, ``-``, ``d``, spaces and ``\\n``; blank
  lines, comments, ``\\r``, tabs and binary LRAT are rejected.  A failure
  names the 1-based line.

Malformed *formulas* (a zero literal, a variable outside ``1..num_vars``) are
bad input and raise :class:`~exactsyn.errors.ExactsynError`; every problem in
the *proof* is reported in the returned :class:`LratReport`.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass
from operator import neg

from exactsyn.errors import ExactsynError


@dataclass(frozen=True)
class LratReport:
    """Outcome of :func:`check_lrat`.

    ``steps`` counts the proof lines that were checked and accepted.
    ``failed_step`` is the 1-based line number of the first rejected line, or
    ``None`` when every line passed (``ok`` is then true exactly when the empty
    clause was derived).
    """

    ok: bool
    steps: int
    failed_step: int | None
    reason: str


def _formula_db(num_vars: int, clauses: Sequence[Sequence[int]]) -> dict[int, tuple[int, ...]]:
    if isinstance(num_vars, bool) or not isinstance(num_vars, int) or num_vars < 0:
        raise ExactsynError(f"num_vars must be a non-negative integer, got {num_vars!r}")
    db: dict[int, tuple[int, ...]] = {}
    for cid, clause in enumerate(clauses, start=1):
        for lit in clause:
            if isinstance(lit, bool) or not isinstance(lit, int) or lit == 0 or abs(lit) > num_vars:
                raise ExactsynError(
                    f"formula clause {cid} has literal {lit!r}, not a non-zero integer within +-{num_vars}"
                )
        db[cid] = tuple(dict.fromkeys(clause))
    return db


def _decode(proof: bytes | str) -> str | None:
    if isinstance(proof, str):
        return proof
    if isinstance(proof, bytes | bytearray | memoryview):
        try:
            return bytes(proof).decode("ascii")
        except UnicodeDecodeError:
            return None
    raise ExactsynError(f"proof must be bytes or str, got {type(proof).__name__}")


_FOREIGN = re.compile(r"[^0-9d \n-]")


class _Reject(Exception):
    def __init__(self, why: str) -> None:
        self.why = why


def _add_step(
    nums: list[int], db: dict[int, tuple[int, ...]], max_id: int, num_vars: int
) -> tuple[int, tuple[int, ...]]:
    """Check one addition line (already split into integers); return its id and clause."""
    if len(nums) < 3 or nums[-1] != 0:
        raise _Reject("addition line must be 'id lit* 0 hint* 0'")
    try:
        sep = nums.index(0, 1, len(nums) - 1)
    except ValueError:
        raise _Reject("addition line has no 0 after its literals") from None
    cid = nums[0]
    lits = nums[1:sep]
    hints = nums[sep + 1 : -1]
    if cid <= max_id:
        raise _Reject(f"id {cid} is not larger than every earlier id (largest so far {max_id})")
    if lits and (max(lits) > num_vars or min(lits) < -num_vars):
        raise _Reject(f"literal outside +-{num_vars}")
    if hints and min(hints) <= 0:
        if 0 in hints:
            raise _Reject("extra 0 in hint list")
        raise _Reject("negative hint (RAT step) is not supported")

    # Reverse unit propagation along the hints.  `false` holds the literals
    # currently assigned false (so a literal is true iff its negation is in
    # it): first the new clause's literals, then the negation of each unit.
    false = set(lits)
    if not false.isdisjoint(map(neg, lits)):
        raise _Reject("added clause is a tautology")
    clause = tuple(lits) if len(false) == len(lits) else tuple(dict.fromkeys(lits))
    last = len(hints) - 1
    for pos, h in enumerate(hints):
        try:
            hint = db[h]
        except KeyError:
            raise _Reject(f"hint {h} is not a live clause") from None
        free = 0  # the one literal of the hint that is not false, if any
        for lit in hint:
            if lit in false:
                continue
            if -lit in false:
                raise _Reject(f"hint {h} is already satisfied")
            if free:
                raise _Reject(f"hint {h} is neither unit nor falsified")
            free = lit
        if not free:  # every literal false: conflict, the step holds
            if pos != last:
                raise _Reject(f"hints continue after the conflict at hint {h}")
            return cid, clause
        false.add(-free)  # unit: make `free` true
    raise _Reject("hints end without a conflict")


def _delete_step(toks: list[str], db: dict[int, tuple[int, ...]]) -> None:
    """Check and apply one deletion line ``id d id* 0``."""
    try:
        nums = list(map(int, toks[2:]))
        lead = int(toks[0])
    except ValueError:
        raise _Reject("malformed deletion line (not an integer)") from None
    if not nums or nums[-1] != 0:
        raise _Reject("deletion line does not end with 0")
    if lead < 0:
        raise _Reject("line id must not be negative")
    for cid in nums[:-1]:
        if cid <= 0:
            raise _Reject(f"deletion of non-positive id {cid}")
        if db.pop(cid, None) is None:
            raise _Reject(f"deletion of unknown or already-deleted clause {cid}")


def check_lrat(num_vars: int, clauses: Sequence[Sequence[int]], proof: bytes | str) -> LratReport:
    """Check that ``proof`` is an LRAT refutation of ``clauses``.

    See the module docstring for the exact rules.
    """
    db = _formula_db(num_vars, clauses)
    text = _decode(proof)
    if text is None:
        return LratReport(False, 0, 1, "proof is not ASCII text (binary LRAT is not supported)")

    foreign = _FOREIGN.search(text)
    if foreign is not None:
        lineno = text.count("\n", 0, foreign.start()) + 1
        why = (
            f"line {lineno}: character {foreign.group()!r} is not LRAT text "
            "(text LRAT only; binary LRAT is not supported)"
        )
        return LratReport(False, 0, lineno, why)

    max_id = len(db)
    derived_empty = False
    steps = 0  # lines accepted so far; the line being checked is number steps + 1
    line = ""
    try:
        for line in text.splitlines():
            toks = line.split()
            if len(toks) >= 2 and toks[1] == "d":
                _delete_step(toks, db)
            elif not toks:
                raise _Reject("empty line")
            else:
                try:
                    nums = list(map(int, toks))
                except ValueError:
                    raise _Reject("malformed line (not an integer)") from None
                max_id, clause = _add_step(nums, db, max_id, num_vars)
                db[max_id] = clause
                if not clause:
                    derived_empty = True
            steps += 1
    except _Reject as bad:
        lineno = steps + 1
        shown = line if len(line) <= 80 else line[:77] + "..."
        return LratReport(False, steps, lineno, f"line {lineno}: {bad.why}: {shown!r}")

    if not derived_empty:
        return LratReport(False, steps, None, "proof does not derive the empty clause")
    return LratReport(True, steps, None, "empty clause derived; every step checks")
