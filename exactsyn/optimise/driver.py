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
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import CostModel, cost_model
from exactsyn.core.gates import Gate
from exactsyn.errors import ExactsynError
from exactsyn.optimise.allowed_gates import GateSet, gate_set
from exactsyn.optimise.class_windows import ClassTableResynthesis, class_table_lines
from exactsyn.optimise.commute import relabel
from exactsyn.optimise.distance_windows import CombinedResynthesis, MeetResynthesis
from exactsyn.optimise.equivalence import EquivalenceCheck, check_equivalent
from exactsyn.optimise.metrics import Metrics, measure
from exactsyn.optimise.resynthesis import TableResynthesis, WindowProblem, WindowResynthesis
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
    ) -> None:
        self.n = circuit.lines
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
        problem = WindowProblem(perm, len(lines), self.gates.induced(lines), below)
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
        if check != perm or len(best.gates) != best.gate_count:
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
) -> OptimiseResult:
    """Optimise ``circuit`` by exact resynthesis of its windows (module docstring).

    ``library`` is a preset, a kind list or ``auto`` (the smallest preset holding the
    input's gates); every input gate must be in it.  ``cost`` (a model name or a cost table
    file) is used by ``objective="gates-then-cost"``.  ``window`` is the largest number of
    lines of a window (default: 4 when a cached class table serves the gate set's 4-line
    windows, else 3; 5 is opt-in: a cached 5-line class table or a bounded SAT search per
    window, see :mod:`exactsyn.optimise.wide_windows`); ``seed`` picks the random sample of
    the equivalence check beyond 24 lines.  Raises :class:`ExactsynError` for bad input and :class:`InternalCheckError`
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
        window = 4 if class_table_lines(gates) == 4 and n >= 4 else 3
    if resynthesis is None:
        resynthesis = window_answerers(gates, n, model, window)
    if not 1 <= window <= resynthesis.max_lines:
        raise ExactsynError(
            f"window {window}: the window resynthesis proves optima for 1 to {resynthesis.max_lines} lines"
        )
    passes = _Passes(circuit, gates, model, resynthesis, min(window, n), horizon, progress)
    passes.run()
    output = passes.circuit()
    if _gate_key(output, model) > _gate_key(circuit, model):  # pragma: no cover - excluded by construction
        raise RuntimeError("internal error: the optimised circuit is worse than the input")

    def check_progress(done: int, total: int) -> None:
        if progress is not None:
            progress(ProgressEvent("check", passes.round, done, total, output.gate_count))

    check = check_equivalent(circuit, output, seed=seed, progress=check_progress)
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
        getattr(resynthesis, "settled_lines", None),
    )
