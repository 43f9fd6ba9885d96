"""A circuit in every library when the proof cannot finish: the upper bound of the gate search.

The gate search (:mod:`exactsyn.search.loop`) needs a circuit before it starts: it ends
the search as soon as the proven lower bound meets that circuit's size, and it is what a
time-out returns, marked *not proven optimal*.  The circuit is made in four steps:

1. **A full permutation.**  A spec with don't-cares, constant inputs or outputs the
   solver may place is completed to a permutation first: one choice of constants and
   output lines, then a perfect matching of inputs to outputs that meet every specified
   bit (augmenting paths, Kuhn's method; candidates nearest in Hamming distance first).
2. **An MCT circuit.**  Transformation-based synthesis (Miller, Maslov & Dueck, DAC 2003,
   :mod:`exactsyn.search.heuristic`) of the permutation and of its inverse (reversed),
   each also after relabelling the lines (all ``n!`` relabellings up to 4 lines, a seeded
   sample of :data:`VARIANTS` beyond): the result depends a lot on the order of the lines
   (on seeded 4-line functions the NCT fallback ranged from 19 to 61 gates).  Each
   candidate is scored by what it will cost in the library (an odd gate the library lacks
   costs a conjugation, a gate with too many controls its Barenco decomposition) and the
   :data:`FINALISTS` best go through steps 3 and 4; the shortest result is kept.  An
   affine permutation in a library without Toffoli-type gates is written as NOT/CNOT
   gates by Gaussian elimination instead (:mod:`exactsyn.search.affine`).
3. **The library asked for.**  :mod:`exactsyn.search.rewrite`: odd gates paired and
   conjugated, controls beyond the cap split with borrowed lines (Barenco et al. 1995),
   Toffoli from Peres and CNOT, and SWAP routing on a coupling graph.
4. **Shrunk.**  The window optimiser (:func:`exactsyn.optimise.optimise_circuit`, which
   keeps the library, control cap and coupling) replaces windows of up to 3 lines — 4
   lines on 4-line functions once the library's distance table exists — by optimal ones.
   When the class table of a library inside this one is cached (:func:`replace_runs_from_table`, asking
   :func:`exactsyn.tables.oracle.table_roles`), every run of consecutive gates whose
   function the table holds may be replaced by an optimal circuit of it (the cheapest set
   of runs by dynamic programming over the cut points).

The result is simulated against the spec; the search verifies it again before use.

**Circuits from a smaller library.**  Every circuit of a sub-library (``nct ⊆ mct ⊆
mixed``, ``nct ⊆ nct-swap``, ``mct ⊆ mct-swap``, …) is a circuit of the library, so its
size is an upper bound too.  On 4 lines the distance table of ``mct`` (32 gates) reaches
exact optima up to 11 gates, where the table of ``mixed`` (108 gates) stops much lower;
when the search consults its own table, :func:`improve_upper` also tries the table of the
largest smaller preset (``mct`` for ``mixed`` and the swap presets, ``nct`` for
``nct-swap`` and ``nct-peres``) and keeps the smaller circuit.

When no circuit can be made, :attr:`Fallback.reason` says why, and :func:`next_steps`
what to try instead (as :class:`Suggestion` values the command line words as its options).
"""

from __future__ import annotations

import itertools
import random
import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from exactsyn.caches import memo
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, invert_permutation, permutation_is_odd, x_gate
from exactsyn.core.library import Edge, Library, make_library
from exactsyn.errors import ExactsynError
from exactsyn.search.affine import affine_circuit, affine_parts
from exactsyn.search.events import SearchEvent, SearchProgress, emit
from exactsyn.search.heuristic import transformation_based
from exactsyn.search.rewrite import CannotRewrite, rewrite_circuit, uncoupled
from exactsyn.specification.reversible import Spec
from exactsyn.tables.oracle import DistanceOracle, GateOracle, distance_oracle, table_roles

#: Smaller presets whose circuits are circuits of a library too, largest first.
SUB_PRESETS = ("mct", "nct")
#: At most this many choices of constants and output lines are tried when completing a spec.
MAX_CHOICES = 16
#: Line relabellings tried beyond 4 lines (identity first, then a seeded sample).
VARIANTS = 24
#: Candidates (by estimated cost in the library) that are rewritten and shrunk.
FINALISTS = 3
#: Under a time limit, the share of it the search's first fallback may take (the rest is for proofs).
FALLBACK_SHARE = 0.2
#: On 5 lines the fallback is shrunk by 4-line windows only once the search asks for this
#: many gates: building the window tables takes about 7 s, while SAT settles k <= 8 in
#: seconds (scripts/bench.py --set five-line: shrinking after the depth-3 table made an
#: optimum-7 function take 7.9 s instead of 1.7 s).
FIVE_SHRINK_FROM = 9


@dataclass(frozen=True)
class Fallback:
    """An upper-bound circuit (``None`` with a ``reason`` when none could be made) and how it was made."""

    circuit: Circuit | None
    how: str
    reason: str = ""


# --------------------------------------------------------------------------- step 1
def _perfect_matching(constraints: list[tuple[int, int]], lines: int) -> list[int] | None:
    """A permutation ``p`` with ``p[x] & mask == value`` for ``constraints[x] = (mask, value)``."""
    size = 1 << lines
    owner = [-1] * size  # owner[y] = x with p[x] = y
    def nearest(x: int) -> list[int]:
        return sorted(range(size), key=lambda y: ((x ^ y).bit_count(), y))

    order = [nearest(x) for x in range(size)]

    def fits(x: int, y: int) -> bool:
        mask, value = constraints[x]
        return (y & mask) == value

    def augment(x: int, seen: list[bool]) -> bool:
        for y in order[x]:
            if seen[y] or not fits(x, y):
                continue
            seen[y] = True
            if owner[y] < 0 or augment(owner[y], seen):
                owner[y] = x
                return True
        return False

    # most constrained rows first keeps the augmenting paths short
    for x in sorted(range(size), key=lambda x: -constraints[x][0].bit_count()):
        if not augment(x, [False] * size):
            return None
    perm = [0] * size
    for y, x in enumerate(owner):
        perm[x] = y
    return perm


def _make_even(perm: list[int], constraints: list[tuple[int, int]]) -> bool:
    """Swap the outputs of two rows whose constraints allow it (flips the parity); False if none can."""
    size = len(perm)
    for x1 in range(size):
        m1, v1 = constraints[x1]
        for x2 in range(x1 + 1, size):
            m2, v2 = constraints[x2]
            if (perm[x2] & m1) == v1 and (perm[x1] & m2) == v2:
                perm[x1], perm[x2] = perm[x2], perm[x1]
                return True
    return False


def complete_permutation(spec: Spec, even: bool = False) -> tuple[int, ...] | None:
    """A full permutation meeting ``spec`` (step 1 of the module docstring), or ``None``.

    With ``even`` the permutation is even (for libraries of even gates only, such as NCT
    on 4 or more lines): an odd completion is fixed by swapping the outputs of two rows
    whose specified bits allow it.
    """
    if spec.is_permutation:
        return spec.permutation if not even or not permutation_is_odd(spec.permutation) else None
    size = 1 << spec.lines
    for constants, placement in spec.choices()[:MAX_CHOICES]:
        cons = [(0, 0)] * size
        ok = True
        for r in spec.specified_rows():
            x = r | constants
            mask, value = spec.care[r], spec.outputs[r] & spec.care[r]
            for targets, line in zip(spec.output_targets, placement, strict=True):
                if targets[r] >= 0:
                    bit = 1 << line
                    if mask & bit and (value & bit) != (targets[r] << line):
                        ok = False
                    mask |= bit
                    value = (value & ~bit) | (targets[r] << line)
            old_mask, old_value = cons[x]
            if (old_value ^ value) & old_mask & mask:
                ok = False
            cons[x] = (old_mask | mask, old_value | value)
        if not ok:
            continue
        perm = _perfect_matching(cons, spec.lines)
        if perm is not None and even and permutation_is_odd(tuple(perm)) and not _make_even(perm, cons):
            continue
        if perm is not None and spec.meets(perm, constants, placement):
            return tuple(perm)
    return None


# --------------------------------------------------------------------------- steps 2-4
def _relabel_perm(perm: tuple[int, ...], sigma: tuple[int, ...]) -> tuple[int, ...]:
    """``σ∘f∘σ⁻¹`` for the line relabelling ``l ↦ σ[l]``."""
    n = len(sigma)

    def move(x: int) -> int:
        return sum(((x >> i) & 1) << sigma[i] for i in range(n))

    out = [0] * len(perm)
    for x, y in enumerate(perm):
        out[move(x)] = move(y)
    return tuple(out)


def _mct_candidates(perm: tuple[int, ...], lines: int, deadline: float | None = None) -> list[Circuit]:
    """Transformation-based circuits of ``perm`` over line relabellings and both directions (step 2).

    The identity relabelling always; the others while ``deadline`` has not passed.
    """
    sigmas: list[tuple[int, ...]] = list(itertools.permutations(range(lines)))
    if len(sigmas) > VARIANTS:
        rest = sigmas[1:]
        random.Random(lines).shuffle(rest)
        sigmas = sigmas[:1] + rest[: VARIANTS - 1]
    out: list[Circuit] = []
    for sigma in sigmas:
        if out and deadline is not None and time.perf_counter() >= deadline:
            break
        q = _relabel_perm(perm, sigma)
        back = {sigma[i]: i for i in range(lines)}
        for c in (transformation_based(q, lines), transformation_based(invert_permutation(q), lines).inverse()):
            gates = tuple(x_gate(back[g.target], [back[x] for x in g.controls]) for g in c.gates)
            out.append(Circuit(lines, gates))
    return out


def _estimate(circuit: Circuit, has: Callable[[Gate], bool]) -> int:
    """Gates the circuit will have in the library after step 3 (a rough count, for ranking only)."""
    n, total = circuit.lines, 0
    for g in circuit.gates:
        m = g.num_controls
        if has(g):
            total += 1
        elif m == n - 1:
            total += 5 * n - 10  # half a conjugated pair: two movers and a gate with n-2 controls
        elif m >= 3:
            total += 4 * (m - 2) if n - m - 1 >= m - 2 else 10 * (m - 2)
        else:
            total += 3
    return total


def _has_multi_control(library: Library) -> bool:
    """Does the library have a gate that is not affine (Toffoli-type, controlled swap, Peres)?"""
    return any(
        g.family == "peres" or (g.family == "x" and g.num_controls >= 2) or (g.family == "swap" and g.num_controls)
        for g in library.gates
    )


class _OutOfTime(Exception):
    pass


class _Until:
    """Window answers that stop at ``deadline``: checked before every window, and passed to
    the class tables' meet in the middle (one 4-line window can scan for seconds)."""

    def __init__(self, inner: Any, deadline: float | None) -> None:
        self.inner, self.deadline = inner, deadline

    @property
    def max_lines(self) -> int:
        return int(self.inner.max_lines)

    def optimum(self, problem: Any) -> Any:
        if self.deadline is not None and time.perf_counter() >= self.deadline:
            raise _OutOfTime
        from exactsyn.optimise.class_windows import ClassTableResynthesis

        if isinstance(self.inner, ClassTableResynthesis):
            return self.inner.optimum(problem, deadline=self.deadline)
        return self.inner.optimum(problem)


@memo(maxsize=16)
def _window_answers(preset: str, lines: int, cap: int | None, coupling: tuple[Edge, ...], window: int) -> Any:
    """The window resynthesis of a library, kept per process (its 3-line tables take 0.1 s to build;
    4-line windows come from the cached class tables when they serve the library, else from its
    distance table)."""
    from exactsyn.optimise.allowed_gates import gate_set
    from exactsyn.optimise.driver import window_answerers

    return window_answerers(gate_set(preset, lines, (), cap, coupling), lines, None, window)


def shrink(circuit: Circuit, library: Library, deadline: float | None, window: int = 3) -> Circuit:
    """The window optimiser on ``circuit`` (step 4); the input unchanged when the deadline passes first."""
    from exactsyn.optimise import optimise_circuit  # the optimiser imports the distance tables; only here

    if not circuit.gates or not library.preset:
        return circuit
    if deadline is not None and time.perf_counter() >= deadline:
        return circuit

    def watch(_: object) -> None:
        if deadline is not None and time.perf_counter() >= deadline:
            raise _OutOfTime

    window = min(window, circuit.lines)
    answers = _window_answers(library.preset, library.lines, library.control_cap, library.coupling, window)
    try:
        res = optimise_circuit(
            circuit,
            library=library.preset,
            max_controls=library.control_cap,
            coupling=library.coupling,
            window=window,
            resynthesis=_Until(answers, deadline),
            progress=watch,
        )
    except (_OutOfTime, ExactsynError):
        return circuit
    return res.output


def fallback_circuit(spec: Spec, library: Library, deadline: float | None = None) -> Fallback:
    """A circuit of ``library`` meeting ``spec`` (module docstring), not optimal in general."""
    even = library.lines >= 3 and library.all_even
    perm = complete_permutation(spec, even)
    if perm is None:
        what = "an even permutation" if even else "a permutation"
        return Fallback(None, "", f"no completion of the spec to {what} was found for the fallback circuit")
    n = spec.lines
    affine = affine_parts(perm, n)
    try:
        if not _has_multi_control(library):
            if affine is None:
                return Fallback(None, "", f"library {library.name} computes only affine functions")
            gates = affine_circuit(*affine, n)
            assert gates is not None  # a permutation's matrix is invertible
            raw = Circuit(n, tuple(gates))
            return _finish(spec, library, [raw], deadline, "Gaussian elimination of the affine function")
        has = uncoupled(library).contains
        # candidates may use a third of the time, rewriting and shrinking the rest
        start = time.perf_counter()
        until = None if deadline is None else start + max(0.0, deadline - start) / 3
        ranked = sorted(_mct_candidates(perm, n, until), key=lambda c: (_estimate(c, has), len(c)))
        how = "transformation-based synthesis (Miller, Maslov & Dueck 2003)"
        return _finish(spec, library, ranked[:FINALISTS], deadline, how)
    except CannotRewrite as e:
        return Fallback(None, "", f"no fallback circuit in library {library.name}: {e}")


def _finish(spec: Spec, library: Library, candidates: list[Circuit], deadline: float | None, how: str) -> Fallback:
    """Steps 3 and 4 for each candidate (the first always, the others while time allows); the shortest."""
    best: Fallback | None = None
    window = 4 if spec.lines == 4 and _table_ready(library) else 3
    for i, raw in enumerate(candidates):
        if i and deadline is not None and time.perf_counter() >= deadline:
            break
        circuit = rewrite_circuit(raw, library)
        said = how + (f", rewritten for {library.name}" if circuit.gates != raw.gates else "")
        shrunk = shrink(circuit, library, deadline, window)
        if len(shrunk) < len(circuit):
            said += f", shrunk from {len(circuit)} gates by {window}-line window resynthesis"
        inner = table_roles(library).inner
        table_made = None if inner is None else replace_runs_from_table(shrunk, library, inner)
        if table_made is not None and inner is not None:
            said += f", then runs of gates replaced from the {inner.describe()} ({len(shrunk)} gates before)"
            shrunk = table_made
        if best is None or best.circuit is None or len(shrunk) < len(best.circuit):
            best = Fallback(shrunk, said)
    assert best is not None and best.circuit is not None
    if not _meets(best.circuit, spec, library):  # pragma: no cover - every step above keeps the function
        raise RuntimeError("internal error: the fallback circuit does not meet the spec")
    return best


def replace_runs_from_table(circuit: Circuit, library: Library, table: GateOracle, rounds: int = 3) -> Circuit | None:
    """A shorter circuit of the same function from ``table`` (a class table of a library inside
    ``library``, whose circuits are ``library``'s), or None.

    Every run of consecutive gates whose function the table holds directly may be replaced
    by an optimal circuit of it; dynamic programming over the cut points picks the
    replacement of least total size (each run ``i..j`` costs its optimum, a single gate
    outside the table costs 1).  Repeated while it helps, since new cut points appear.
    """
    if circuit.lines != table.library.lines or len(circuit) < 2:
        return None
    best = circuit
    for _ in range(rounds):
        shorter = _shorten_once(best, table)
        if shorter is None:
            break
        if shorter.permutation() != circuit.permutation() or not all(library.contains(g) for g in shorter.gates):
            raise RuntimeError("internal error: table resynthesis changed the function")
        best = shorter
    return best if len(best) < len(circuit) else None


def _shorten_once(circuit: Circuit, table: GateOracle) -> Circuit | None:
    """One round of :func:`replace_runs_from_table`: the cheapest cut into table-optimal runs, if shorter."""
    gates, n = circuit.gates, len(circuit)
    perms = [tuple(range(1 << circuit.lines))]
    for g in gates:
        step = g.permutation(circuit.lines)
        perms.append(tuple(step[v] for v in perms[-1]))
    pairs = [(i, j) for j in range(1, n + 1) for i in range(j)]
    runs = {(i, j): _run_function(perms[i], perms[j]) for i, j in pairs}
    level = dict(zip(pairs, table.sizes([runs[p] for p in pairs]), strict=True))
    cost = [0] + [n + 1] * n
    back = [0] * (n + 1)
    for j in range(1, n + 1):
        for i in range(j):
            c = level[(i, j)]
            if c < 0:
                if j - i > 1:
                    continue
                c = 1  # the gate itself
            if cost[i] + c < cost[j]:
                cost[j], back[j] = cost[i] + c, i
    if cost[n] >= n:
        return None
    cuts, j = [], n
    while j > 0:
        cuts.append((back[j], j))
        j = back[j]
    out: list[Gate] = []
    for i, j in reversed(cuts):
        made = table.circuit(runs[(i, j)]) if level[(i, j)] >= 0 else None
        out.extend(gates[i:j] if made is None else made)
    return Circuit(circuit.lines, tuple(out))


def _run_function(before: tuple[int, ...], after: tuple[int, ...]) -> tuple[int, ...]:
    """The function of the gates between two prefixes: ``after ∘ before⁻¹``."""
    run = [0] * len(before)
    for x, y in enumerate(before):
        run[y] = after[x]
    return tuple(run)


def _meets(circuit: Circuit, spec: Spec, library: Library) -> bool:
    return all(library.contains(g) for g in circuit.gates) and spec.accepts(circuit.permutation())


def _table_ready(library: Library) -> bool:
    """Is the library's 4-line distance table already built in this process (no time spent here)?"""
    oracle = distance_oracle(library) if library.lines == 4 else None
    return isinstance(oracle, DistanceOracle) and oracle.ready()


def improve_pays(library: Library, k: int, after_table: bool) -> bool:
    """Should the gate search ask :func:`improve_upper` now?

    Up to 4 lines: right after it consulted its distance table (the window tables are built
    then).  From 5 lines on: once it asks for :data:`FIVE_SHRINK_FROM` gates, when the queries
    take minutes (building the 4-line window tables takes seconds).
    """
    if library.lines <= 4:
        return after_table
    return not after_table and library.lines == 5 and k >= FIVE_SHRINK_FROM


# --------------------------------------------------------------------------- the search's hooks
def initial_upper(spec: Spec, library: Library, deadline: float | None, progress: SearchProgress | None) -> Fallback:
    """The upper bound the gate search starts from (:func:`fallback_circuit`), announced to ``progress``.

    Under a deadline it may take :data:`FALLBACK_SHARE` of the time left (its first
    candidate is always finished, the window optimiser stops at that share).
    """
    if deadline is not None:
        now = time.perf_counter()
        deadline = now + FALLBACK_SHARE * max(0.0, deadline - now)
    fb = fallback_circuit(spec, library, deadline)
    if fb.circuit is not None:
        emit(progress, SearchEvent("fallback", value=len(fb.circuit), detail=fb.how))
    return fb


def sub_libraries(library: Library) -> list[Library]:
    """Presets whose every gate is in ``library`` (same lines, cap and coupling), largest first.

    Presets that come out with the same gates (``mct`` capped at 2 controls is ``nct``) are
    listed once, under the smaller preset's name.
    """
    out: list[Library] = []
    for name in reversed(SUB_PRESETS):  # smallest first, so a duplicate keeps the plainer name
        try:
            sub = make_library(name, library.lines, library.control_cap, library.coupling)
        except ExactsynError:
            continue
        new = sub.gates != library.gates and all(s.gates != sub.gates for s in out)
        if new and all(library.contains(g) for g in sub.gates):
            out.append(sub)
    return out[::-1]


def improve_upper(
    upper: Fallback, spec: Spec, library: Library, deadline: float | None, progress: SearchProgress | None
) -> Fallback:
    """A better upper bound once the search has consulted its distance table (full specs).

    On 4 lines (once the search has built its distance table): 4-line window resynthesis
    of the current circuit with the library's table, and the meet in the middle over the
    table of the largest smaller preset; keeps the best.  On 5 lines (the search calls it
    once k reaches :data:`FIVE_SHRINK_FROM`): 4-line window resynthesis of the current
    circuit, stopped at ``deadline`` (on four seeded 5-line functions built from 12–14
    gates: 17 → 15 and 15 → 12 gates, 22 and 24 unchanged; 7 s the first time in a
    process for the window tables, well under a second after).
    """
    best = upper
    if spec.is_permutation and spec.lines == 5 and best.circuit is not None and library.preset:
        shrunk = shrink(best.circuit, library, deadline, 4)
        if len(shrunk) < len(best.circuit):
            best = Fallback(shrunk, best.how + f", then 4-line window resynthesis from {len(best.circuit)} gates")
            emit(progress, SearchEvent("fallback", value=len(shrunk), detail=best.how))
        return best
    if not spec.is_permutation or spec.lines != 4:
        return best
    if best.circuit is not None and library.involutive and _table_ready(library):
        shrunk = shrink(best.circuit, library, deadline, 4)
        if len(shrunk) < len(best.circuit):
            best = Fallback(shrunk, best.how + f", then 4-line window resynthesis from {len(best.circuit)} gates")
            emit(progress, SearchEvent("fallback", value=len(shrunk), detail=best.how))
    for sub in sub_libraries(library)[:1]:
        if not sub.involutive or (best.circuit is not None and len(best.circuit) <= 1):
            continue
        t0 = time.perf_counter()
        emit(progress, SearchEvent("table-start", detail=f"distance table of {sub.name} (a smaller library)"))
        sub_table = distance_oracle(sub)
        verdict = None if sub_table is None else sub_table.optimum(spec.permutation, deadline)
        found = None if verdict is None else verdict.circuit
        emit(
            progress,
            SearchEvent(
                "table-done",
                value=None if found is None else len(found),
                seconds=time.perf_counter() - t0,
                detail=f"distance table of {sub.name} (a smaller library)",
            ),
        )
        if found is not None and (best.circuit is None or len(found) < len(best.circuit)):
            how = f"optimal in the smaller library {sub.name} (distance table and meet in the middle)"
            best = Fallback(found, how)
            emit(progress, SearchEvent("sub-library", value=len(found), detail=how))
    return best


@dataclass(frozen=True)
class Suggestion:
    """One setting of the search that may bring a circuit when none was found.

    ``setting`` names a keyword of :func:`exactsyn.synthesise` (``max_gates``,
    ``time_limit``, ``library``, ``coupling``, ``max_controls``, ``bounds``); ``value`` is
    the value to try (the least gate limit that can help, a richer preset) or the value
    that did not suffice (the time limit); the command line words them as its options.
    """

    setting: str
    value: object = None

    def describe(self) -> str:
        """The suggestion in words, without command-line spellings."""
        v = self.value
        if self.setting == "max_gates":
            return f"a gate limit of {v} or more" if v is not None else "a higher gate limit"
        if self.setting == "time_limit":
            return f"a longer time limit than {v:g} s" if isinstance(v, int | float) else "a longer time limit"
        if self.setting == "library":
            return f"a richer library such as {v}"
        if self.setting == "coupling":
            return "a coupling graph that connects every line"
        if self.setting == "max_controls":
            return "a higher control cap"
        return "cheap bounds with a certificate, to see which k are refuted"


def next_steps(
    spec: Spec,
    library: Library,
    *,
    lower_bound: int,
    time_limit: float | None,
    max_gates: int | None,
    reason: str = "",
) -> tuple[Suggestion, ...]:
    """What to try when no circuit was found (at least one suggestion)."""
    tips: list[Suggestion] = []
    if max_gates is not None:
        tips.append(Suggestion("max_gates", lower_bound if lower_bound > max_gates else None))
    if time_limit is not None:
        tips.append(Suggestion("time_limit", time_limit))
    richer = [p for p in ("mct", "mixed") if p not in library.name.split("@")[0].split(":")[0]]
    if reason and richer:
        tips.append(Suggestion("library", richer[0]))
    if library.coupling:
        tips.append(Suggestion("coupling"))
    if library.control_cap is not None and library.control_cap < max(1, spec.lines - 1) and reason:
        tips.append(Suggestion("max_controls"))
    if not tips:
        tips.append(Suggestion("bounds", "cheap"))
    return tuple(tips)
