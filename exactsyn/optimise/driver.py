"""The optimiser: replace windows by proven-optimal circuits until nothing changes, then prove equality.

:func:`optimise_circuit` runs rounds of two passes over the gate order, one growing
windows forward from every gate and one backward (:func:`exactsyn.optimise.windows.grow`).
Each window's permutation of its lines is looked up in the window resynthesis
(:mod:`exactsyn.optimise.resynthesis`); when the optimum is smaller under the objective —
fewer gates, or for ``gates-then-cost`` as many gates and a lower cost — the window is
replaced in place and the span reordered.  Rounds repeat until one changes nothing.

Why it ends, and why the result is never worse: every replacement lowers the circuit's
(gate count, cost) pair strictly in lexicographic order, and a pair of non-negative
integers cannot fall forever.

Why the result is the same function, three times over:

1. each replacement is simulated on its window's lines and must give the window's
   permutation (the optimum's gates are looked up, then checked);
2. reordering moves a gate only past gates it commutes with (the convexity argument of
   :mod:`exactsyn.optimise.windows`), and commutation is exact
   (:mod:`exactsyn.optimise.commute`);
3. the whole output is compared with the input by :func:`check_equivalent`: every input
   state up to 24 lines, a seeded random sample of at least 10^5 beyond (where 1 and 2
   are the argument).  A difference raises :class:`EquivalenceError`.

Output gates are in the library: input gates are checked against it, and replacements
come from the library of their window.

**Ancilla context** (``zero_lines``): lines that start at 0 and that the circuit returns to
0 (clean ancillas; the claim is checked on the input, :class:`ZeroLineError` when false).
Then only the *honoured* inputs matter — those lines 0 — and the output must equal the
input on them only.  Invariant: the current circuit equals the input on every honoured
input (true at the start; kept by every replacement, below).  The states a window can start
in are found by simulating the current circuit's prefix on every honoured input when there
are few enough (:mod:`exactsyn.optimise.reachable`; this also knows a line that an uncompute
block returned to 0 in the middle of the circuit).  Otherwise a zero line ``l`` is known to
be 0 where a window starts (after its span is reordered) by one of two rules, both read off
the current gate order only, so they stay sound after any replacement:

* *before its first target*: no gate placed before the window targets ``l`` (controls do
  not change a line), so ``l`` still holds its input value, 0;
* *after its last target*: no gate of the window or placed after it targets ``l``, so ``l``
  already holds its final value, which is 0 on honoured inputs (the invariant and the
  checked claim).

A window with such lines is a partial function: it is replaced by a circuit that agrees with
it on the states with those lines 0 (:mod:`exactsyn.optimise.partial_windows`), simulated on
exactly those states first; the circuit's state at the window's start is one of them on
every honoured input, so the invariant is kept.  A single gate whose controls are never all
met there (by simulation; by the rules: a positive control on a line known 0) is the
identity on every honoured input and is removed.  The final check
compares on the honoured inputs only and says so.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import CostModel, cost_model
from exactsyn.core.gates import Gate
from exactsyn.errors import ExactsynError
from exactsyn.optimise.allowed_gates import GateSet, gate_set
from exactsyn.optimise.class_windows import ClassTableResynthesis, class_table_lines
from exactsyn.optimise.commute import relabel
from exactsyn.optimise.distance_windows import CombinedResynthesis, MeetResynthesis
from exactsyn.optimise.equivalence import EquivalenceCheck, check_equivalent, dirty_zero_line
from exactsyn.optimise.metrics import Metrics, measure
from exactsyn.optimise.partial_windows import PartialResynthesis
from exactsyn.optimise.reachable import ReachableStates
from exactsyn.optimise.resynthesis import TableResynthesis, WindowProblem, WindowResynthesis, honoured_states
from exactsyn.optimise.revisit import Revisits
from exactsyn.optimise.wide_windows import WIDE_LINES, wide_answerers
from exactsyn.optimise.windows import GatePool, Window, grow, scan_window

#: The objectives of :data:`exactsyn.core.costs.OBJECTIVES` a window replacement can lower.
WINDOW_OBJECTIVES = ("gates", "gates-then-cost")
#: Largest line count accepted (windows and random simulation have no hard limit; this keeps
#: a mistyped register size from becoming a huge allocation).
MAX_LINES = 1024
#: Gates scanned past the last one that joined a window before its growth stops.
DEFAULT_HORIZON = 24


class InternalCheckError(ExactsynError):
    """A check of the optimiser's own work failed (a bug): no circuit is returned."""


class EquivalenceError(InternalCheckError):
    """A replacement, or the whole output, differs from what it stands for."""


class ZeroLineError(ExactsynError):
    """A line declared zero (a clean ancilla) is not returned to 0 by the input circuit."""


@dataclass(frozen=True)
class WindowCount:
    """Replacements made for windows of one line count."""

    lines: int
    windows: int
    gates_removed: int
    cost_removed: int


@dataclass(frozen=True)
class ProgressEvent:
    phase: str  # "optimise" (a pass over the gates) or "check" (the equivalence check)
    round: int
    done: int
    total: int
    gates: int  # current gate count


@dataclass(frozen=True)
class OptimiseResult:
    """Input and output circuits, their measures, what was replaced and how equality was checked."""

    input: Circuit
    output: Circuit
    library: str
    objective: str
    cost_model: str | None
    window: int
    before: Metrics
    after: Metrics
    replaced: tuple[WindowCount, ...]
    rounds: int
    windows_tried: int
    resynthesis: str
    check: EquivalenceCheck
    seconds: float
    zero_lines: tuple[int, ...] = ()  # clean ancillas: the output equals the input where these are 0
    settled_lines: int | None = None  # every window of up to this many lines left in place is optimal (None: window)


OptimiseProgress = Callable[[ProgressEvent], None]


def _gate_key(circuit: Circuit, model: CostModel | None) -> tuple[int, int]:
    cost = circuit.gate_count if model is None else sum(model.cost(g, circuit.lines) for g in circuit.gates)
    return circuit.gate_count, cost


class _Passes:
    """The state of one optimisation: the gate order as ids, caches, counters."""

    def __init__(
        self,
        circuit: Circuit,
        gates: GateSet,
        model: CostModel | None,
        resynthesis: WindowResynthesis,
        width: int,
        horizon: int,
        progress: OptimiseProgress | None,
        zero_lines: tuple[int, ...] = (),
    ) -> None:
        self.n = circuit.lines
        self.zero = sum(1 << line for line in zero_lines)  # mask of the zero lines (module docstring)
        self.target_masks: list[int] = []
        self._span: tuple[dict[int, int], dict[int, int]] | None = None
        self.gates = gates
        self.model = model
        self.resynthesis = resynthesis
        self.width = width
        # a 4-line window the distance table cannot settle may still hold a 3-line improvement
        self.widths = (width, width - 1) if width >= 4 else (width,)
        self.horizon = horizon
        self.progress = progress
        self.pool = GatePool()
        self.seq = [self.pool.intern(g) for g in circuit.gates]
        self.revisits = Revisits(len(self.seq))  # scans that found nothing, not repeated on the same gates
        self.wide_gates: int | None = getattr(resynthesis, "window_gates", None)  # most gates of a 5-line window
        self.costs: list[int] = []
        self.local: dict[tuple[int, tuple[int, ...]], tuple[int, ...]] = {}
        self.stats: dict[int, list[int]] = {}
        self.tried = 0
        self.round = 0
        self.methods: set[str] = set()
        self.reach: ReachableStates | None = None
        if zero_lines and ReachableStates.fits(self.n, zero_lines, len(self.seq)):
            self.reach = ReachableStates(self.n, zero_lines, self.seq, self.pool.gates)

    def cost(self, gid: int) -> int:
        while len(self.costs) <= gid:
            g = self.pool.gates[len(self.costs)]
            self.costs.append(1 if self.model is None else self.model.cost(g, self.n))
        return self.costs[gid]

    def local_perm(self, gid: int, lines: tuple[int, ...]) -> tuple[int, ...]:
        key = (gid, lines)
        perm = self.local.get(key)
        if perm is None:
            g = relabel(self.pool.gates[gid], {line: i for i, line in enumerate(lines)})
            perm = self.local[key] = g.permutation(len(lines))
        return perm

    def target_mask(self, gid: int) -> int:
        while len(self.target_masks) <= gid:
            mask = 0
            for t in self.pool.gates[len(self.target_masks)].targets:
                mask |= 1 << t
            self.target_masks.append(mask)
        return self.target_masks[gid]

    def target_span(self) -> tuple[dict[int, int], dict[int, int]]:
        """The first and the last position at which each zero line is a target (current order)."""
        if self._span is None:
            first: dict[int, int] = {}
            last: dict[int, int] = {}
            for p, gid in enumerate(self.seq):
                m = self.target_mask(gid) & self.zero
                while m:
                    low = m & -m
                    first.setdefault(low.bit_length() - 1, p)
                    last[low.bit_length() - 1] = p
                    m ^= low
            self._span = (first, last)
        return self._span

    def respan(self, start: int, old_stop: int, new_stop: int) -> None:
        """Update :meth:`target_span` after positions ``start .. old_stop`` became ``start ..
        new_stop``: positions past the span shift, and only the span is scanned again (the
        rest of the order only when a line's first or last target was in the span and is gone)."""
        if self._span is None:
            return
        first, last = self._span
        delta = new_stop - old_stop
        inside: dict[int, tuple[int, int]] = {}
        for p in range(start, new_stop):
            m = self.target_mask(self.seq[p]) & self.zero
            while m:
                low = m & -m
                m ^= low
                line = low.bit_length() - 1
                inside[line] = (inside.get(line, (p, p))[0], p)
        m = self.zero
        while m:
            low = m & -m
            m ^= low
            line = low.bit_length() - 1
            f, la, span = first.get(line), last.get(line), inside.get(line)
            if f is None or f >= start:
                if span is not None:
                    first[line] = span[0]
                elif f is not None and f >= old_stop:
                    first[line] = f + delta
                elif f is not None:  # its first target was in the span and is gone
                    later = (p for p in range(new_stop, len(self.seq)) if self.target_mask(self.seq[p]) & low)
                    first[line] = next(later, -1)
            if la is not None and la >= old_stop:
                last[line] = la + delta
            elif span is not None:
                last[line] = span[1]
            elif la is not None and la >= start:  # its last target was in the span and is gone
                earlier = (p for p in range(start - 1, -1, -1) if self.target_mask(self.seq[p]) & low)
                last[line] = next(earlier, -1)
            if first.get(line) == -1 or last.get(line) == -1:
                first.pop(line, None)
                last.pop(line, None)

    def known_zero(self, mask: int, start: int, before: tuple[int, ...] = ()) -> int:
        """The lines of ``mask`` known to be 0 where a window starts at position ``start`` with
        the gates at ``before`` moved in front of it (the two rules of the module docstring)."""
        first, last = self.target_span()
        known = 0
        m = mask & self.zero
        while m:
            low = m & -m
            line = low.bit_length() - 1
            m ^= low
            if last.get(line, -1) < start:
                known |= low  # after its last target
            elif first[line] >= start and not any(self.target_mask(self.seq[p]) & low for p in before):
                known |= low  # before its first target
        return known

    def window_states(self, win: Window) -> tuple[int, ...] | None:
        """The local states the window can start in on an honoured input: simulated
        (:mod:`exactsyn.optimise.reachable`) when that is cheap, else every state in which the
        lines known to be 0 there (the rules of the module docstring) are 0; None: every state."""
        lines = win.lines
        if not self.zero:
            return None
        if self.reach is not None:
            states = self.reach.window_states(win.start, win.before, lines)
            return None if len(states) == 1 << len(lines) else states
        known = self.known_zero(win.mask, win.start, win.before) if self.zero & win.mask else 0
        local = sum(1 << i for i, line in enumerate(lines) if known >> line & 1)
        return honoured_states(len(lines), local) if local else None

    def dead_gate(self, i: int) -> bool:
        """Remove the gate at ``i`` when its controls are never all met there on an honoured input
        (simulated; by the rules: a positive control on a line known 0); it is then the identity
        on every honoured input (module docstring)."""
        gid = self.seq[i]
        g = self.pool.gates[gid]
        if self.reach is not None:
            if not self.reach.never(i, g.controls, g.negative_controls):
                return False
        else:
            controls = sum(1 << c for c in g.controls)
            if not controls & self.zero or not self.known_zero(controls, i):
                return False
        del self.seq[i]
        self.respan(i, i + 1, i)
        if self.reach is not None:
            self.reach.changed(i)
        row = self.stats.setdefault(len(self.pool.gates[gid].lines), [0, 0, 0])
        row[0] += 1
        row[1] += 1
        row[2] += self.cost(gid)
        self.methods.add("a gate with a control known to be 0 is removed")
        return True

    def window_perm(self, ids: list[int], lines: tuple[int, ...]) -> tuple[int, ...]:
        perm = tuple(range(1 << len(lines)))
        for gid in ids:
            step = self.local_perm(gid, lines)
            perm = tuple(step[v] for v in perm)
        return perm

    def improve(self, win: Window) -> list[int] | None:
        """The ids of an optimal replacement when it is better than the window, else None."""
        self.tried += 1
        ids = [self.seq[p] for p in win.members]
        lines = win.lines
        perm = self.window_perm(ids, lines)
        below = len(ids) + (0 if self.model is None else 1)  # gates-then-cost: as many gates may do
        honoured = self.window_states(win)
        problem = WindowProblem(perm, len(lines), self.gates.induced(lines), below, honoured)
        best = self.resynthesis.optimum(problem)
        if best is None:
            return None
        now = (len(ids), sum(self.cost(g) for g in ids))
        if (best.gate_count, best.cost) >= now:
            return None
        check = tuple(range(1 << len(lines)))
        for g in best.gates:
            step = g.permutation(len(lines))
            check = tuple(step[v] for v in check)
        states = range(1 << len(lines)) if honoured is None else honoured
        if any(check[s] != perm[s] for s in states) or len(best.gates) != best.gate_count:
            raise EquivalenceError(
                f"internal error: a replacement does not compute its window's function ({best.method}); "
                "nothing was written"
            )
        back = dict(enumerate(lines))
        new: list[Gate] = [relabel(g, back) for g in best.gates]
        for g in new:
            reason = self.gates.why_not(g)
            if reason is not None:
                raise InternalCheckError(f"internal error: replacement gate {g} is outside the library: {reason}")
        new_ids = [self.pool.intern(g) for g in new]
        if (len(new_ids), sum(self.cost(g) for g in new_ids)) != (best.gate_count, best.cost):
            raise InternalCheckError("internal error: the replacement's cost differs from the table's")
        row = self.stats.setdefault(len(lines), [0, 0, 0])
        row[0] += 1
        row[1] += now[0] - best.gate_count
        row[2] += now[1] - best.cost
        self.methods.add(best.method)
        return new_ids

    def wide_pair(self, i: int, forward: bool) -> Window | None:
        """A gate wider than the windows and an identical partner it can be moved next to: the
        pair is the identity (see :func:`exactsyn.optimise.windows.grow`), so both go."""
        gid = self.seq[i]
        g = self.pool.gates[gid]
        if not g.is_involution:
            return None
        win = grow(self.seq, self.pool, i, self.width, self.horizon, forward, partner=True)
        if win is None:
            return None
        self.tried += 1
        if [self.seq[p] for p in win.members] != [gid, gid]:  # pragma: no cover - grow's contract
            raise RuntimeError("internal error: a wide pair that is not two identical gates")
        row = self.stats.setdefault(len(g.lines), [0, 0, 0])
        row[0] += 1
        row[1] += 2
        row[2] += 2 * self.cost(gid)
        self.methods.add("identical self-inverse gates cancel")
        return win

    def splice(self, win: Window, new_ids: list[int]) -> int:
        """Put the reordered span in place; return the position of the first new gate."""
        seq = self.seq
        head = [seq[p] for p in win.before]
        seq[win.start : win.stop] = head + new_ids + [seq[p] for p in win.after]
        self.respan(win.start, win.stop, win.start + len(win.before) + len(new_ids) + len(win.after))
        if self.reach is not None:
            self.reach.changed(win.start)
        self.revisits.splice(win.start, win.stop, list(win.before), len(new_ids), list(win.after))
        return win.start + len(head)

    def run_pass(self, forward: bool) -> bool:
        changed = False
        i = 0 if forward else len(self.seq) - 1
        report_every = max(64, len(self.seq) // 200)  # about 200 updates a pass
        count = 0
        while 0 <= i < len(self.seq):
            count += 1
            if self.progress is not None and count % report_every == 0:
                done = i if forward else len(self.seq) - 1 - i
                self.progress(ProgressEvent("optimise", self.round, done, len(self.seq), len(self.seq)))
            if self.zero and self.dead_gate(i):
                changed = True
                i -= 0 if forward else 1  # forward: the next gate has moved to position i
                continue
            win: Window | None = None
            new_ids: list[int] | None = None
            if self.pool.masks[self.seq[i]].bit_count() > self.width:
                win = self.wide_pair(i, forward)
                new_ids = None if win is None else []
            else:
                for width in self.widths:
                    if self.revisits.unchanged(i, forward, width):
                        win, new_ids = None, None
                        continue
                    cap = self.wide_gates if width >= WIDE_LINES else None
                    win, stop = scan_window(self.seq, self.pool, i, width, self.horizon, forward, max_gates=cap)
                    new_ids = None if win is None else self.improve(win)
                    if new_ids is not None:
                        break
                    self.revisits.found_nothing(i, forward, width, stop)
            if win is None or new_ids is None:
                i += 1 if forward else -1
                continue
            changed = True
            first = self.splice(win, new_ids)
            # retry from the new block: forward from its first gate, backward from its last
            i = first if forward else first + len(new_ids) - 1
            if not forward and not new_ids:
                i = first - 1
            i = min(max(i, 0), len(self.seq) - 1) if self.seq else 0
        return changed

    def run(self) -> None:
        while True:
            self.round += 1
            forward = self.run_pass(True)
            backward = self.run_pass(False)
            if not (forward or backward):
                return

    def circuit(self) -> Circuit:
        return Circuit(self.n, tuple(self.pool.gates[g] for g in self.seq))


def default_window(gates: GateSet, n: int) -> int:
    """The window when none is asked for: 4 lines when a cached class table serves the gate
    set's 4-line windows (and the circuit has 4 lines), else 3."""
    return 4 if class_table_lines(gates) == 4 and n >= 4 else 3


def window_answerers(gates: GateSet, n: int, model: CostModel | None, window: int) -> WindowResynthesis:
    """The window answerers: exhaustive tables up to 3 lines; 4-line windows from the cached
    class tables (gates and gates-then-cost), else from the distance table (gates only);
    5-line windows from a cached 5-line class table, else by SAT with a small gate bound
    (:mod:`exactsyn.optimise.wide_windows`)."""
    if window >= WIDE_LINES:
        narrow = 4 if model is None or class_table_lines(gates) == 4 else 3
        return wide_answerers(gates, n, model, window_answerers(gates, n, model, narrow))
    small = TableResynthesis(gates, n, model)
    if window < 4:
        return small
    if class_table_lines(gates) == 4:
        return ClassTableResynthesis(gates, n, model, small)
    if model is not None:
        raise ExactsynError(
            "4-line windows under gates-then-cost need the cached class tables (`exactsyn tables build`); "
            "use window 3"
        )
    return CombinedResynthesis(small, MeetResynthesis(gates))


def zero_line_tuple(circuit: Circuit, zero_lines: Iterable[int], seed: int) -> tuple[int, ...]:
    """The declared zero lines, sorted; :class:`ExactsynError` for a line outside the circuit and
    :class:`ZeroLineError` when the circuit does not return one to 0 on an input with them all 0."""
    lines: set[int] = set()
    for line in zero_lines:
        if isinstance(line, bool) or not isinstance(line, int) or not 0 <= line < circuit.lines:
            raise ExactsynError(f"zero line {line!r} is not a line of the circuit (0..{circuit.lines - 1})")
        lines.add(line)
    zero = tuple(sorted(lines))
    dirty = dirty_zero_line(circuit, zero, seed=seed)
    if dirty is not None:
        line, state = dirty
        raise ZeroLineError(
            f"line {line} is declared zero (0 at the start and returned to 0 at the end), but the circuit "
            f"leaves it at 1 on input {state} (binary, line 0 last: {state:0{circuit.lines}b}); nothing was written"
        )
    return zero


def optimise_circuit(
    circuit: Circuit,
    *,
    library: str = "auto",
    objective: str = "gates",
    cost: str = "ncv",
    coupling: str | tuple[tuple[int, int], ...] = "",
    max_controls: int | None = None,
    window: int | None = None,
    horizon: int = DEFAULT_HORIZON,
    resynthesis: WindowResynthesis | None = None,
    seed: int = 0,
    progress: OptimiseProgress | None = None,
    zero_lines: Iterable[int] = (),
) -> OptimiseResult:
    """Optimise ``circuit`` by exact resynthesis of its windows (module docstring).

    ``library`` is a preset, a kind list or ``auto`` (the smallest preset holding the
    input's gates); every input gate must be in it.  ``cost`` (a model name or a cost table
    file) is used by ``objective="gates-then-cost"``.  ``window`` is the largest number of
    lines of a window (default: 4 when a cached class table serves the gate set's 4-line
    windows, else 3; 5 is opt-in: a cached 5-line class table or a bounded SAT search per
    window, see :mod:`exactsyn.optimise.wide_windows`); ``seed`` picks the random sample of
    the equivalence check beyond 24 lines.  ``zero_lines``: clean ancillas, lines that are 0
    at the start and that the circuit returns to 0; windows on them are partial functions and
    the output equals the input on the inputs with them 0 (module docstring).  The claim is
    checked on the input circuit by simulation of every such input (a seeded sample beyond 24
    free lines): a line it leaves at 1 raises :class:`ZeroLineError`, naming the line and the
    input.  Raises :class:`ExactsynError` for bad input and :class:`InternalCheckError`
    (:class:`EquivalenceError` when a function changed) if a check of the work fails.
    """
    start = time.perf_counter()
    n = circuit.lines
    if n > MAX_LINES:
        raise ExactsynError(f"the circuit has {n} lines; exactsyn optimises circuits of at most {MAX_LINES} lines")
    if not circuit.gates:
        raise ExactsynError("the circuit has no gates: nothing to optimise")
    if objective not in WINDOW_OBJECTIVES:
        raise ExactsynError(
            f"unknown objective {objective!r} for the optimiser; choose one of: {', '.join(WINDOW_OBJECTIVES)}"
        )
    if horizon < 1:
        raise ExactsynError("the horizon must be 1 or more")
    gates = gate_set(library, n, circuit.gates, max_controls, coupling)
    for index, g in enumerate(circuit.gates):
        reason = gates.why_not(g)
        if reason is not None:
            raise ExactsynError(f"gate {index} ({g.name()} {g}) is not in the gate set: {reason}")
    model = cost_model(cost) if objective == "gates-then-cost" else None
    if model is not None:
        model.check(circuit.gates, n)
    if window is None:
        window = default_window(gates, n)
    zero = zero_line_tuple(circuit, zero_lines, seed)
    if resynthesis is None:
        resynthesis = window_answerers(gates, n, model, window)
    if not 1 <= window <= resynthesis.max_lines:
        raise ExactsynError(
            f"window {window}: the window resynthesis proves optima for 1 to {resynthesis.max_lines} lines"
        )
    if zero:
        resynthesis = PartialResynthesis(resynthesis, gates, n, model)
    passes = _Passes(circuit, gates, model, resynthesis, min(window, n), horizon, progress, zero)
    passes.run()
    output = passes.circuit()
    if _gate_key(output, model) > _gate_key(circuit, model):  # pragma: no cover - excluded by construction
        raise RuntimeError("internal error: the optimised circuit is worse than the input")

    def check_progress(done: int, total: int) -> None:
        if progress is not None:
            progress(ProgressEvent("check", passes.round, done, total, output.gate_count))

    check = check_equivalent(circuit, output, seed=seed, progress=check_progress, zero_lines=zero)
    if not check.equal:
        raise EquivalenceError(
            f"internal error: the optimised circuit differs from the input on input {check.counterexample} "
            f"({check.method} check); nothing was written"
        )
    replaced = tuple(WindowCount(k, *passes.stats[k]) for k in sorted(passes.stats))
    return OptimiseResult(
        circuit,
        output,
        gates.name,
        objective,
        None if model is None else model.name,
        window,
        measure(circuit),
        measure(output),
        replaced,
        passes.round,
        passes.tried,
        "; ".join(sorted(passes.methods)),
        check,
        time.perf_counter() - start,
        zero,
        getattr(resynthesis, "settled_lines", None),
    )
