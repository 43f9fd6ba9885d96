"""LRAT capture (exactsyn.sat.lrat_capture, run by exactsyn.sat.solver.solve with proof=True) and the
independent checker (exactsyn.proof.lrat).

Outside references used here:
* Pigeonhole formulas PHP(n) (n+1 pigeons, n holes) are unsatisfiable, and
  minimally so: dropping any one clause leaves a satisfiable formula (common
  practice; the generator's own docs cite A. Haken, "The Intractability of
  Resolution", 1985).  We do not rely on the "minimally" part: every mutated
  formula is re-decided by an independent solver (MiniSat 2.2 from python-sat)
  and its model is checked clause by clause here.
* The LRAT rules are those of Cruz-Filipe et al., "Efficient Certified RAT
  Verification", CADE 2017; the tiny hand examples follow them step by step.
"""

from __future__ import annotations

import random
import re
import time
from dataclasses import dataclass, replace
from typing import Any

import pytest
from pysat.examples.genhard import PHP
from pysat.solvers import Minisat22

from exactsyn.errors import ExactsynError
from exactsyn.proof.lrat import check_lrat
from exactsyn.sat.lrat_capture import HOOK_NAME
from exactsyn.sat.solver import Outcome, solve

# ---------------------------------------------------------------- helpers


def solve_with_lrat(clauses: Any, time_limit: Any = None) -> Outcome:
    """Certified solving through the one solver entry: CaDiCaL 1.9.5 with LRAT capture."""
    return solve(clauses, time_limit=time_limit, proof=True)


def num_vars_of(clauses: list[list[int]]) -> int:
    return max((abs(lit) for c in clauses for lit in c), default=0)


def php(n: int) -> list[list[int]]:
    return [list(c) for c in PHP(n).clauses]


def minisat(clauses: list[list[int]]) -> list[int] | None:
    """Independent reference decision: a model, or None when UNSAT."""
    with Minisat22(bootstrap_with=clauses) as s:
        return list(s.get_model() or []) if s.solve() else None


def satisfies(model: list[int] | tuple[int, ...], clauses: list[list[int]]) -> bool:
    true = set(model)
    return all(any(lit in true for lit in c) for c in clauses)


@dataclass(frozen=True)
class Add:
    id: int
    lits: tuple[int, ...]
    hints: tuple[int, ...]


@dataclass(frozen=True)
class Delete:
    lead: int
    ids: tuple[int, ...]


Line = Add | Delete


def parse(proof: bytes) -> list[Line]:
    out: list[Line] = []
    for raw in proof.decode().splitlines():
        toks = raw.split()
        if toks[1] == "d":
            out.append(Delete(int(toks[0]), tuple(int(t) for t in toks[2:-1])))
        else:
            nums = [int(t) for t in toks]
            sep = nums.index(0, 1)
            out.append(Add(nums[0], tuple(nums[1:sep]), tuple(nums[sep + 1 : -1])))
    return out


def render(lines: list[Line]) -> bytes:
    rows = []
    for ln in lines:
        if isinstance(ln, Delete):
            rows.append(" ".join(map(str, (ln.lead, "d", *ln.ids, 0))))
        else:
            rows.append(" ".join(map(str, (ln.id, *ln.lits, 0, *ln.hints, 0))))
    return ("\n".join(rows) + "\n").encode()


def contents(formula: list[list[int]], lines: list[Line]) -> dict[int, tuple[int, ...]]:
    """Clause of every id ever defined (ids are unique, so this is well defined)."""
    got = {k: tuple(c) for k, c in enumerate(formula, start=1)}
    got.update({ln.id: ln.lits for ln in lines if isinstance(ln, Add)})
    return got


def live_before(formula: list[list[int]], lines: list[Line], index: int) -> set[int]:
    live = set(range(1, len(formula) + 1))
    for ln in lines[:index]:
        if isinstance(ln, Add):
            live.add(ln.id)
        else:
            live.difference_update(ln.ids)
    return live


def hints_entail(hint_clauses: list[tuple[int, ...]], clause: tuple[int, ...]) -> bool:
    """Does the conjunction of hint_clauses imply clause?  Decided by MiniSat, not by us."""
    return minisat([list(c) for c in hint_clauses] + [[-lit] for lit in clause]) is None


def _timed(clauses: list[list[int]]) -> tuple[Outcome, float]:
    """The run and the wall-clock time around it, measured here."""
    started = time.perf_counter()
    run = solve_with_lrat(clauses)
    return run, time.perf_counter() - started


@pytest.fixture(scope="module")
def php_runs() -> dict[int, tuple[list[list[int]], Outcome, float]]:
    return {n: (php(n), *_timed(php(n))) for n in (2, 3, 4, 5, 6, 7)}


# ------------------------------------------------ capture + check end to end


@pytest.mark.parametrize("n", [2, 3, 4, 5, 6, 7])
def test_pigeonhole_refutations_check(php_runs, n):
    clauses, run, wall = php_runs[n]
    assert run.status == "unsat"  # PHP(n) is UNSAT (Haken 1985; common practice)
    assert run.model is None
    assert run.solver.startswith("CaDiCaL 1.9.5")
    # a CDCL solver concludes UNSAT only from a conflict (common practice), so at least one
    assert isinstance(run.conflicts, int) and run.conflicts >= 1
    # the run's own time lies within the wall-clock time measured around the call
    assert 0 < run.seconds <= wall
    report = check_lrat(n * (n + 1), clauses, run.proof)  # PHP(n): a variable per pigeon and hole
    assert report.ok, report.reason
    assert report.failed_step is None
    assert report.steps == len(run.proof.splitlines())


@pytest.mark.parametrize("n", [3, 4])
def test_every_step_is_entailed_by_its_hints_per_another_solver(php_runs, n):
    # Soundness cross-check that does not trust our checker: each derived
    # clause must follow from the clauses its hints name (decided by MiniSat).
    clauses, run, _ = php_runs[n]
    lines = parse(run.proof)
    content = contents(clauses, lines)
    adds = [ln for ln in lines if isinstance(ln, Add)]
    assert adds and adds[-1].lits == ()
    for ln in adds:
        assert hints_entail([content[h] for h in ln.hints], ln.lits), ln


def test_satisfiable_formula_gives_a_model():
    # PHP(5) without the last pigeon's "somewhere" clause: 5 pigeons, 5 holes, SAT.
    clauses = php(5)
    clauses.pop(5)
    assert minisat(clauses) is not None  # independent confirmation
    run = solve_with_lrat(clauses)
    assert run.status == "sat"
    assert run.proof == b""
    assert run.model is not None and len(run.model) == 30
    assert [abs(v) for v in run.model] == list(range(1, 31))
    assert satisfies(run.model, clauses)


# Formulas that make CaDiCaL derive clauses *while they are added* (root units,
# repeated literals, falsified literals, tautologies, the empty clause), which
# shifts its clause ids; the captured proof must still name clause k as k.
AWKWARD: dict[str, list[list[int]]] = {
    "unit then strengthened": [[1], [-1, 2], [-2]],
    "repeated literals": [[1, 1, 2], [-1, -1], [-2, -2, -2], [1, 2]],
    "tautologies": [[1, -1], [1, 2], [-1, 2], [1, -2], [-1, -2], [3, -3, 1]],
    "empty clause first": [[], [1], [-1]],
    "empty clause in the middle": [[1, 2], [], [-1]],
    "only the empty clause": [[]],
    "clauses after inconsistency": [[1], [-1], [2, 3], [-2], [-3]],
    "falsified literal": [[1], [-1, 2, 3], [-2], [-3]],
    "sparse variables": [[5], [-5, 7], [-7]],
    "satisfied clause": [[1], [1, 2], [-1, 3], [-3]],
    "repeated clause": [[1, 2], [1, 2], [-1, 2], [1, -2], [-1, -2], [-1, -2]],
}


@pytest.mark.parametrize("name", sorted(AWKWARD))
def test_awkward_inputs_keep_input_numbering(name):
    clauses = AWKWARD[name]
    assert minisat(clauses) is None  # independent: all of these are UNSAT
    run = solve_with_lrat(clauses)
    assert run.status == "unsat"
    report = check_lrat(num_vars_of(clauses), clauses, run.proof)
    assert report.ok, (name, run.proof, report)


def test_random_formulas_with_units_and_repeats_agree_with_reference_solver():
    # Seeded random 3-CNF near the threshold, salted with unit clauses and
    # repeated literals so that the solver derives clauses during input.
    rng = random.Random(20240611)
    seen = {"sat": 0, "unsat": 0}
    for _ in range(120):
        nv = rng.randint(6, 14)
        clauses = []
        for _ in range(int(nv * rng.uniform(3.6, 5.0))):
            c = [rng.choice((-1, 1)) * rng.randint(1, nv) for _ in range(3)]
            if rng.random() < 0.15:
                c.append(c[0])
            clauses.append(c)
        for _ in range(rng.randint(0, 3)):
            clauses.insert(rng.randrange(len(clauses) + 1), [rng.choice((-1, 1)) * rng.randint(1, nv)])
        run = solve_with_lrat(clauses)
        reference = minisat(clauses)
        assert run.status == ("sat" if reference is not None else "unsat")
        seen[run.status] += 1
        if run.status == "sat":
            assert run.model is not None and satisfies(run.model, clauses)
        else:
            report = check_lrat(max(nv, num_vars_of(clauses)), clauses, run.proof)
            assert report.ok, (clauses, run.proof, report)
    assert seen["sat"] >= 10 and seen["unsat"] >= 10  # both sides exercised


def test_time_limit_gives_unknown_promptly():
    clauses = php(11)  # far beyond a fraction of a second for a resolution-based solver
    started = time.perf_counter()
    run = solve_with_lrat(clauses, time_limit=0.3)
    elapsed = time.perf_counter() - started
    assert run.status == "unknown"
    assert run.proof == b"" and run.model is None
    assert 0.3 <= elapsed < 2.0


def test_time_limit_large_enough_still_proves():
    # With a limit the search runs in conflict-budget chunks (the first is 2000
    # conflicts); PHP(7) needs more, so the proof spans several solver calls.
    clauses = php(7)
    run = solve_with_lrat(clauses, time_limit=60)
    assert run.status == "unsat"
    assert run.conflicts is not None and run.conflicts > 2000
    assert check_lrat(num_vars_of(clauses), clauses, run.proof).ok


@pytest.mark.parametrize(
    "clauses, limit",
    [
        ([[1, 0]], None),
        ([[1, True]], None),
        ([["1"]], None),
        ([[2**40]], None),
        ("1 2 0", None),
        ([[1]], 0),
        ([[1]], -1.0),
        ([[1]], float("nan")),
        ([[1]], "5"),
    ],
)
def test_bad_input_is_rejected_with_our_error(clauses, limit):
    with pytest.raises(ExactsynError):
        solve_with_lrat(clauses, time_limit=limit)


# ------------------------------------------------------ the solver hook


def test_tracing_hook_is_still_what_capture_relies_on():
    # Fails loudly if python-sat changes the internal hook proof capture uses.
    import pysat
    import pysolvers
    from pysat.solvers import Cadical195

    assert pysat.__version__ == "1.9.dev24"  # the pinned version the hook was read from
    assert hasattr(pysolvers, HOOK_NAME), f"pysolvers.{HOOK_NAME} is gone"
    assert hasattr(Cadical195(), "cadical")  # the raw handle the hook takes
    probe = [[1, 2], [-1, 2], [1, -2], [-1, -2]]
    assert check_lrat(2, probe, solve_with_lrat(probe).proof).ok  # the hook yields a checkable proof

    tiny = [[1, 2], [-1, 2], [1, -2], [-1, -2]]
    run = solve_with_lrat(tiny)
    assert run.status == "unsat"
    assert run.proof, "LRAT trace is empty"
    text = run.proof.decode("ascii")  # binary LRAT would not decode / would not match
    grammar = re.compile(r"(\d+ (-?[1-9]\d* )*0 ([1-9]\d* )*0|\d+ d ([1-9]\d* )*0)")
    for line in text.splitlines():
        assert grammar.fullmatch(line), f"not an LRAT text line: {line!r}"
    # LRAT (unlike DRAT) carries hints: the final empty clause names its antecedents.
    last = text.splitlines()[-1].split()
    assert last[1] == "0" and len(last) > 3
    assert check_lrat(2, tiny, run.proof).ok


def test_numbering_model_violations_fail_loudly():
    # The capture learns each input clause's solver id from the trace lines
    # written while adding it; a trace that fits no consistent numbering must
    # raise rather than yield a certificate with wrong ids.
    from exactsyn.sat.lrat_capture import _IdWatch

    watch = _IdWatch()
    watch.after_add(b"")  # clause 1 -> id 1
    watch.after_add(b"3 2 0 1 2 0\n3 d 2 0\n")  # clause 2 -> id 2, step 3 derived
    watch.after_add(b"4 -1 0 3 0\n")  # step 4 derived first, so clause 3 -> id 5
    assert watch.original == [1, 2, 5] and watch.derived == [3, 4] and watch.counter == 5
    assert watch.renumbering() == {1: 1, 2: 2, 5: 3, 3: 4, 4: 5}
    for bad in (
        b"5 2 0 1 0\n",
        b"2 1 0 1 0\n2 1 0 1 0\n",
        b"3 1 0 1 0",
        b"7\n",
        b"2 1 0 1 0\n5 1 0 1 0\n",
    ):
        watch = _IdWatch()
        watch.after_add(b"")
        with pytest.raises(ExactsynError):
            watch.after_add(bad)


# ------------------------------------------------ checker: hand examples

XOR_UNSAT = [[1, 2], [-1, 2], [1, -2], [-1, -2]]
# Worked by hand: step 5 = (2): assume -2; hint 1 gives 1; hint 2 (-1 2) is falsified.
# Step 6 = (): hint 5 gives 2; hint 3 gives 1; hint 4 (-1 -2) is falsified.
XOR_PROOF = "5 2 0 1 2 0\n6 0 5 3 4 0\n"


def test_hand_proof_accepted():
    report = check_lrat(2, XOR_UNSAT, XOR_PROOF)
    assert report == check_lrat(2, XOR_UNSAT, XOR_PROOF.encode())
    assert report.ok and report.steps == 2 and report.failed_step is None


@pytest.mark.parametrize(
    "proof, line, words",
    [
        ("5 2 0 1 2 0\n", None, "does not derive the empty clause"),
        ("", None, "does not derive the empty clause"),
        ("5 2 0 1 2 0\n\n6 0 5 3 4 0\n", 2, "empty line"),
        ("5 2 0 1 2 0\n6 0 5 3 4\n", 2, "must be"),
        ("5 2 0 1 2 0\n6 0 5 3 x 0\n", 2, "not LRAT text"),
        ("5 2 0 1 2 0\r\n6 0 5 3 4 0\r\n", 1, "not LRAT text"),
        ("5 2 0 1 2 0\n6 0 5 3 4 0 c\n", 2, "not LRAT text"),
        ("5 2 0 1 2 0\n5 0 5 3 4 0\n", 2, "not larger"),
        ("4 2 0 1 2 0\n6 0 5 3 4 0\n", 1, "not larger"),
        ("5 2 0 1 2 0\n6 0 5 -3 4 0\n", 2, "RAT"),
        ("5 2 0 1 2 0\n6 0 5 3 0 4 0\n", 2, "extra 0"),
        ("5 2 0 1 2 0\n6 0 5 3 9 0\n", 2, "not a live clause"),
        ("5 2 0 1 2 0\n6 0 5 3 6 0\n", 2, "not a live clause"),
        ("5 2 0 1 2 0\n5 d 3 0\n6 0 5 3 4 0\n", 3, "not a live clause"),
        ("5 2 0 1 2 0\n5 d 7 0\n", 2, "unknown or already-deleted"),
        ("5 2 0 1 2 0\n5 d 3 3 0\n", 2, "unknown or already-deleted"),
        ("5 2 0 1 2 0\n6 0 5 3 4 1 0\n", 2, "after the conflict"),
        ("5 2 0 1 0\n", 1, "without a conflict"),
        ("5 0 1 2 0\n", 1, "neither unit nor falsified"),
        ("5 2 0 1 1 2 0\n", 1, "already satisfied"),
        ("5 2 -2 0 1 0\n", 1, "tautology"),
        ("5 3 0 1 2 0\n", 1, "outside"),
        ("5 2 0 1 2 0\n6 0 5 3 4 0\nbogus\n", 3, "not LRAT text"),
    ],
)
def test_checker_rejects_with_named_line(proof, line, words):
    report = check_lrat(2, XOR_UNSAT, proof)
    assert not report.ok
    assert report.failed_step == line
    assert words in report.reason, report.reason


def test_checker_details():
    # Repeated literals in a derived clause count once.
    assert check_lrat(2, XOR_UNSAT, "5 2 2 0 1 2 0\n6 0 5 3 4 0\n").ok
    # ...and in a formula clause: (1 1 2) is unit on 1 once 2 is false.
    assert check_lrat(2, [[1, 1, 2], [-1, 2], [1, -2], [-1, -2]], XOR_PROOF).ok
    # The formula's empty clause can be used as a hint.
    assert check_lrat(0, [[]], "2 0 1 0\n").ok
    # A tautology in the formula can never serve as a unit hint.
    assert not check_lrat(2, [[1, -1, 2], [-1, 2], [1, -2], [-1, -2]], XOR_PROOF).ok
    # Deletion lines may lead with 0 (as the solver writes before its first step).
    assert check_lrat(2, XOR_UNSAT + [[1, 2]], "0 d 5 0\n6 2 0 1 2 0\n7 0 6 3 4 0\n").ok
    # Binary LRAT is refused in so many words.
    assert "binary" in check_lrat(2, XOR_UNSAT, b"a\x05\x04\x00\x02\x04\x00").reason
    bad_formulas: list[Any] = [[[0]], [[3]], [[1, "2"]]]
    for bad_formula in bad_formulas:
        with pytest.raises(ExactsynError):
            check_lrat(2, bad_formula, XOR_PROOF)
    with pytest.raises(ExactsynError):
        check_lrat(-1, XOR_UNSAT, XOR_PROOF)


# ------------------------------------------------------ tampering fuzz
#
# Each mutation below is rejected for a reason that does not depend on how our
# checker is written, so "none may pass" is a fair demand:
#
#  flip      flip one literal of a derived clause C to get C'.  Counted only if
#            MiniSat finds the hint clauses do NOT imply C' (then no RUP chain
#            over those hints exists).  Lines before are untouched, so the
#            rejection must come at exactly that line.
#  drop      remove an addition line whose id is used as a hint later.  ids are
#            unique, so that later hint names a clause that never existed.
#  dangling  change a hint to an id that is not live there (the step's own id,
#            a later step's id, or one never used): forbidden by the format;
#            rejection at exactly that line.
#  rehint    change a hint to another live clause.  Counted only if MiniSat
#            finds the new hint set does not imply C; rejection at that line.
#  swap      exchange two addition lines: their ids are no longer increasing.
#  swapdep   exchange a step j with a step i it uses as a hint, *and* exchange
#            their ids everywhere, so ids stay increasing; step j now comes
#            first and its hint names a clause defined only later.
#  noempty   remove the (single) empty-clause step: nothing derives it.
#  dropfml   remove formula clause k (later ids shift).  Counted only if MiniSat
#            finds the smaller formula satisfiable, with its model checked here:
#            no refutation of a satisfiable formula can be valid.
#  shrinkfml remove from formula clause k the literal that clause k makes unit
#            at its first use as a non-final hint.  At that point every other
#            literal is false (nothing earlier looked at k), so k is falsified
#            there: the conflict comes before the last hint, which the rules
#            forbid; rejection at exactly that line.

KINDS = ("flip", "drop", "dangling", "rehint", "swap", "swapdep", "noempty", "dropfml", "shrinkfml")
QUOTA = 25  # counted mutations per kind; 9 kinds -> 225 in all


def _unit_literal(content: dict[int, tuple[int, ...]], step: Add, pos: int) -> int:
    """Literal that hint number `pos` of a valid step makes true (re-derived here)."""
    true = {-lit for lit in step.lits}
    for h in step.hints[: pos + 1]:
        (free,) = [lit for lit in dict.fromkeys(content[h]) if -lit not in true]
        true.add(free)
    return free


def _mutate(kind, rng, formula, lines):
    """Return (formula, lines, expected failing line or None, description), or None."""
    content = contents(formula, lines)
    adds = [i for i, ln in enumerate(lines) if isinstance(ln, Add)]
    defined = {lines[i].id for i in adds} | set(range(1, len(formula) + 1))
    if kind == "flip":
        i = rng.choice([i for i in adds if lines[i].lits])
        step = lines[i]
        j = rng.randrange(len(step.lits))
        lits = step.lits[:j] + (-step.lits[j],) + step.lits[j + 1 :]
        if hints_entail([content[h] for h in step.hints], lits):
            return None
        return formula, lines[:i] + [replace(step, lits=lits)] + lines[i + 1 :], i + 1, f"flip {i + 1}:{j}"
    if kind == "drop":
        used_later = [i for i in adds if any(lines[i].id in getattr(ln, "hints", ()) for ln in lines[i + 1 :])]
        i = rng.choice(used_later)
        return formula, lines[:i] + lines[i + 1 :], None, f"drop {i + 1}"
    if kind in ("dangling", "rehint"):
        i = rng.choice([i for i in adds if lines[i].hints])
        step = lines[i]
        j = rng.randrange(len(step.hints))
        live = live_before(formula, lines, i)
        if kind == "dangling":
            later = sorted(defined - live - {0})
            new = rng.choice([step.id, max(defined) + rng.randint(1, 50)] + later)
            assert new not in live
        else:
            candidates = sorted(live - set(step.hints))
            new = rng.choice(candidates)
            hints = step.hints[:j] + (new,) + step.hints[j + 1 :]
            if hints_entail([content[h] for h in hints], step.lits):
                return None
        hints = step.hints[:j] + (new,) + step.hints[j + 1 :]
        return formula, lines[:i] + [replace(step, hints=hints)] + lines[i + 1 :], i + 1, f"{kind} {i + 1}"
    if kind == "swap":
        i, j = sorted(rng.sample(adds, 2))
        out = list(lines)
        out[i], out[j] = out[j], out[i]
        return formula, out, None, f"swap {i + 1},{j + 1}"
    if kind == "swapdep":
        pairs = [(i, j) for j in adds for i in adds if i < j and lines[i].id in lines[j].hints]
        i, j = rng.choice(pairs)
        a, b = lines[i].id, lines[j].id
        rename = {a: b, b: a}

        def ren(x: int) -> int:
            return rename.get(x, x)

        renamed: list[Line] = []
        for ln in lines:
            if isinstance(ln, Add):
                renamed.append(Add(ren(ln.id), ln.lits, tuple(map(ren, ln.hints))))
            else:
                renamed.append(Delete(ln.lead, tuple(map(ren, ln.ids))))
        renamed[i], renamed[j] = renamed[j], renamed[i]
        return formula, renamed, None, f"swapdep {i + 1},{j + 1}"
    if kind == "noempty":
        empties = [i for i in adds if not lines[i].lits]
        assert len(empties) == 1
        return formula, lines[: empties[0]] + lines[empties[0] + 1 :], None, "noempty"
    if kind == "dropfml":
        k = rng.randrange(len(formula))
        smaller = formula[:k] + formula[k + 1 :]
        model = minisat(smaller)
        if model is None or not satisfies(model, smaller):
            return None
        return smaller, lines, "any", f"dropfml {k + 1}"
    if kind == "shrinkfml":
        uses = []  # (line index, hint position) of the first use of each formula clause
        first: set[int] = set()
        for i in adds:
            for pos, h in enumerate(lines[i].hints):
                if h <= len(formula) and h not in first:
                    first.add(h)
                    if pos < len(lines[i].hints) - 1:
                        uses.append((i, pos))
        i, pos = rng.choice(uses)
        k = lines[i].hints[pos]
        unit = _unit_literal(content, lines[i], pos)
        shrunk = [list(c) for c in formula]
        shrunk[k - 1] = [lit for lit in shrunk[k - 1] if lit != unit]
        return shrunk, lines, i + 1, f"shrinkfml clause {k} at line {i + 1}"
    raise AssertionError(kind)


def test_tampering_is_always_rejected():
    rng = random.Random(1729)
    bases = []
    for formula in (php(4), php(5), [[3]] + php(4) + [[1, 1, 2, 3, 4]]):
        run = solve_with_lrat(formula)
        assert run.status == "unsat"
        base = check_lrat(num_vars_of(formula), formula, run.proof)
        assert base.ok, base.reason  # positive control: untouched proofs pass
        lines = parse(run.proof)
        assert render(lines) == run.proof  # our parse/render round-trips
        bases.append((formula, lines))

    counted = dict.fromkeys(KINDS, 0)
    passed = []
    for kind in KINDS:
        tries = 0
        while counted[kind] < QUOTA and tries < 20 * QUOTA:
            tries += 1
            formula, lines = rng.choice(bases)
            mutated = _mutate(kind, rng, formula, lines)
            if mutated is None:
                continue  # harmless by the independent test; not counted
            new_formula, new_lines, at, what = mutated
            report = check_lrat(num_vars_of(formula), new_formula, render(new_lines))
            counted[kind] += 1
            if report.ok or (isinstance(at, int) and report.failed_step != at):
                passed.append((what, at, report))
    assert not passed, passed
    assert all(n == QUOTA for n in counted.values()), counted
    assert sum(counted.values()) >= 200
