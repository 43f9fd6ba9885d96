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
* The proof is read line by line (bytes, text, or any iterable of byte lines such
  as :func:`exactsyn.proof.certificate.open_proof`, which bounds the size a
  compressed file may unpack to), so memory holds the live clauses, never the
  whole proof, and a bad line is rejected as soon as it is read.

Malformed *formulas* (a zero literal, a variable outside ``1..num_vars``) are
bad input and raise :class:`~exactsyn.errors.ExactsynError`; every problem in
the *proof* is reported in the returned :class:`LratReport`.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Iterator, Sequence
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


Proof = bytes | str | Iterable[bytes]
"""LRAT text: bytes, a string, or byte lines (each ending with ``\\n``, the last one may not)."""


def _lines(proof: Proof) -> Iterator[bytes]:
    """The proof's lines without their ``\\n``; a final empty piece (text ending in ``\\n``) is no line."""
    if isinstance(proof, str):
        proof = proof.encode("utf-8")
    if isinstance(proof, bytes | bytearray | memoryview):
        pieces = bytes(proof).split(b"\n")
        if pieces[-1] == b"":
            pieces.pop()
        yield from pieces
        return
    if not isinstance(proof, Iterable):
        raise ExactsynError(f"proof must be bytes or str, got {type(proof).__name__}")
    for raw in proof:
        yield raw[:-1] if raw.endswith(b"\n") else raw


_FOREIGN = re.compile(rb"[^0-9d -]")
_LRAT_BYTES = b"0123456789d -"


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


def _delete_step(toks: list[bytes], db: dict[int, tuple[int, ...]]) -> None:
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


@dataclass(frozen=True, eq=False)
class Prepared:
    """A formula read once, for checking many refutations of it plus a few clauses each
    (the cubes of a split query): :func:`check_lrat_extended` copies it instead of reading
    the formula again."""

    num_vars: int
    db: dict[int, tuple[int, ...]]


def prepare(num_vars: int, clauses: Sequence[Sequence[int]]) -> Prepared:
    """Validate and index ``clauses`` (ids ``1..m``) once."""
    return Prepared(num_vars, _formula_db(num_vars, clauses))


def check_lrat(num_vars: int, clauses: Sequence[Sequence[int]], proof: Proof) -> LratReport:
    """Check that ``proof`` is an LRAT refutation of ``clauses``.

    See the module docstring for the exact rules.
    """
    return _check(_formula_db(num_vars, clauses), num_vars, proof)


def check_lrat_extended(base: Prepared, extra: Sequence[Sequence[int]], proof: Proof) -> LratReport:
    """Like :func:`check_lrat` for the formula ``base`` followed by the clauses ``extra``
    (ids ``m+1, m+2, …``), without reading ``base`` again."""
    more = _formula_db(base.num_vars, extra)
    m = len(base.db)
    db = dict(base.db)
    db.update({m + cid: clause for cid, clause in more.items()})
    return _check(db, base.num_vars, proof)


def _foreign(line: bytes, lineno: int) -> str | None:
    """Why a line is not LRAT text, or None."""
    if not line.translate(None, _LRAT_BYTES):  # the common case, without a regular expression
        return None
    bad = _FOREIGN.search(line)
    assert bad is not None
    char = bad.group()
    shown = repr(char.decode("ascii")) if char[0] < 128 else f"byte 0x{char[0]:02x}"
    return f"line {lineno}: character {shown} is not LRAT text (text LRAT only; binary LRAT is not supported)"


def _check(db: dict[int, tuple[int, ...]], num_vars: int, proof: Proof) -> LratReport:
    max_id = len(db)
    derived_empty = False
    steps = 0  # lines accepted so far; the line being checked is number steps + 1
    line = b""
    try:
        for line in _lines(proof):
            why = _foreign(line, steps + 1)
            if why is not None:
                return LratReport(False, steps, steps + 1, why)
            toks = line.split()
            if len(toks) >= 2 and toks[1] == b"d":
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
        text = line.decode("ascii")
        shown = text if len(text) <= 80 else text[:77] + "..."
        return LratReport(False, steps, lineno, f"line {lineno}: {bad.why}: {shown!r}")

    if not derived_empty:
        return LratReport(False, steps, None, "proof does not derive the empty clause")
    return LratReport(True, steps, None, "empty clause derived; every step checks")
