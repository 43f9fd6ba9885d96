"""The clause families of the k-gate encoding, one function each.

The formulation is that of Große, Chen, Dueck, Drechsler, "Exact multiple-control Toffoli
network synthesis with SAT techniques", IEEE TCAD 28(5), 2009: a one-hot gate choice per
position and, for every specified truth-table row, the value of every line between
consecutive gates.  :func:`exactsyn.sat.encode.encode_question` runs the families in a fixed
order; the order and the variable names are part of the certificate format (certificates
store the SHA-256 of the DIMACS text), so neither may change.

Every family has the signature ``family(b, v)``: ``b`` collects the clauses, ``v`` is the
question's :class:`VariableLayout` (its variables and line values).  A family that does not apply to
the question's mode adds nothing.  With no symmetry breaking the models are exactly the
k-gate circuits of the library that meet the spec (each model decodes to one circuit and
each circuit gives one model: the line values are functions of the gates).
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from pysat.card import CardEnc, EncType
from pysat.formula import IDPool

from exactsyn.core.gates import Gate
from exactsyn.errors import ExactsynError
from exactsyn.sat.question import Question
from exactsyn.sat.sigint import keep_python_sigint

keep_python_sigint()  # CardEnc below would otherwise install python-sat's SIGINT handler (exactsyn.sat.sigint)

Lit = int | bool


class EncodingOutOfTime(Exception):
    """The deadline given to :class:`ClauseBuilder` passed while the CNF was being built."""


#: Clauses added between two looks at the clock (a look costs about 50 ns; 4096 clauses about 5 ms).
_CLOCK_EVERY = 4096


class ClauseBuilder:
    """Collects clauses, folding Python booleans (known line values) away.

    With a ``deadline`` (a :func:`time.perf_counter` value) it raises :class:`EncodingOutOfTime`
    once the clock passes it, looking every :data:`_CLOCK_EVERY` clauses: an encoding of
    millions of clauses (the cost objective's window rule) then keeps a time limit."""

    def __init__(self, pool: IDPool | None = None, deadline: float | None = None) -> None:
        self.pool = pool or IDPool()
        self.clauses: list[list[int]] = []
        self.empty = False
        self._deadline = deadline
        self._next_look = _CLOCK_EVERY

    def var(self, *key: object) -> int:
        return self.pool.id(key)

    def add(self, lits: Sequence[Lit]) -> None:
        out: list[int] = []
        for lit in lits:
            if lit is True:
                return
            if lit is False:
                continue
            out.append(lit)  # type: ignore[arg-type]
        if not out:
            self.empty = True
            return
        self.clauses.append(out)
        if self._deadline is not None and len(self.clauses) >= self._next_look:
            self._next_look += _CLOCK_EVERY
            if time.perf_counter() >= self._deadline:
                raise EncodingOutOfTime(f"{len(self.clauses)} clauses built when time ran out")


def neg(lit: Lit) -> Lit:
    if isinstance(lit, bool):
        return not lit
    return -lit


def iff_clauses(b: ClauseBuilder, pre: list[Lit], x: Lit, y: Lit) -> None:
    """``pre ∨ (x ↔ y)`` as two clauses."""
    b.add([*pre, neg(x), y])
    b.add([*pre, x, neg(y)])


@dataclass(frozen=True)
class VariableLayout:
    """The variables of one question (all named through :class:`pysat.formula.IDPool`).

    ``("g", d, j)``
        position ``d`` (0 ≤ d < k) holds library gate ``j`` (one-hot over the library).
    ``("t", d, l)``
        the gate at position ``d`` targets line ``l``; ``t[d][l] ↔ ∨ {g[d][j] : j targets l}``.
    ``("x", r, d, l)``
        value of line ``l`` on row ``r`` after ``d`` gates (:meth:`value`), created on
        first use.  Rows whose outputs are entirely unspecified are left out.
    ``("act", k)``
        the activation literal of a guarded question.

    The families name their own auxiliaries: ``("const", l)`` (open constant lines),
    ``("y", o, l)`` (output placement), ``("cost", d, u)`` (cost limit), ``("comm", i, h)``,
    ``("gt", i, h)``, ``("cb", j, i)`` (the ``trace`` rule) and ``("false",)`` (the
    contradiction of a trivially UNSAT question); the cardinality encodings of python-sat add
    unnamed ones.
    """

    question: Question
    pool: IDPool
    act: int | None
    gate_vars: tuple[tuple[int, ...], ...]
    target_vars: tuple[tuple[int, ...], ...]
    rows: tuple[int, ...]
    allowed: tuple[frozenset[int], ...]  # library gates allowed per position
    open_lines: frozenset[int]
    inputs_known: bool  # input_end == "constant": input bits substituted
    outputs_known: bool  # output_end == "constant": specified output bits substituted

    def value(self, r: int, d: int, line: int) -> Lit:
        """Line ``line`` on row ``r`` after ``d`` gates: a variable, or a known bit.

        At ``d = 0`` the value is the row's input bit and at ``d = k`` the specified
        output bit; an end whose :class:`~exactsyn.sat.question.End` is ``constant``
        substitutes them (only unspecified output bits remain variables), the others keep
        variables that :func:`spec_at_ends` fixes.  An open constant line has one
        variable ``("const", l)``, its input value on every row, chosen by the solver.
        """
        if d == 0 and line in self.open_lines:
            return self.pool.id(("const", line))
        if d == 0 and self.inputs_known:
            return bool(r >> line & 1)
        if d == self.question.k and self.outputs_known and self.question.spec.care[r] >> line & 1:
            return bool(self.question.spec.outputs[r] >> line & 1)
        return self.pool.id(("x", r, d, line))


def layout(b: ClauseBuilder, q: Question) -> VariableLayout:
    """Create the question's fixed variables, in this order: ``act``, then ``g``, then ``t``."""
    n, m = q.spec.lines, len(q.library.gates)
    act = b.var("act", q.k) if q.guarded else None
    gvars = tuple(tuple(b.var("g", d, j) for j in range(m)) for d in range(q.k))
    tvars = tuple(tuple(b.var("t", d, line) for line in range(n)) for d in range(q.k))
    everything = frozenset(range(m))
    allowed = tuple(everything for _ in range(q.k)) if q.slots is None else tuple(frozenset(s) for s in q.slots)
    return VariableLayout(
        q,
        b.pool,
        act,
        gvars,
        tvars,
        tuple(q.spec.specified_rows()),
        allowed,
        frozenset(q.spec.open_lines),
        inputs_known=q.input_end == "constant",
        outputs_known=q.output_end == "constant",
    )


ClauseFamily = Callable[[ClauseBuilder, VariableLayout], None]


def spec_at_ends(b: ClauseBuilder, v: VariableLayout) -> None:
    """The spec on line variables, where the ends are not substituted.

    Row by row and line by line: the input bit as a unit clause (``unit`` inputs, open
    constant lines excepted), then the specified output bit after the last gate, as a
    unit clause (``unit``) or as ``¬act ∨ bit`` (``guarded``).
    """
    q = v.question
    units_in, out_end = q.input_end == "unit", q.output_end
    if not units_in and out_end == "constant":
        return
    spec, k = q.spec, q.k
    pre: list[Lit] = [-v.act] if out_end == "guarded" and v.act is not None else []
    for r in v.rows:
        for line in range(spec.lines):
            if units_in and line not in v.open_lines:
                x = v.value(r, 0, line)
                b.add([x if r >> line & 1 else neg(x)])
            if out_end != "constant" and spec.care[r] >> line & 1:
                y = v.value(r, k, line)
                b.add([*pre, y if spec.outputs[r] >> line & 1 else neg(y)])


def output_placement(b: ClauseBuilder, v: VariableLayout) -> None:
    """Outputs placed by the solver (:mod:`exactsyn.specification.embed`).

    ``y[o][l]``: output ``o`` is read on line ``l`` — exactly one line per output
    (pairwise at-most-one), at most one output per line — and then
    ``¬y[o][l] ∨ (x[r][k][l] = f_o(r))`` for every row where the output is specified.
    """
    spec, k = v.question.spec, v.question.k
    if not spec.output_targets:
        return
    cands = spec.output_candidates
    yv = [[b.var("y", o, line) for line in cands] for o in range(len(spec.output_targets))]
    for row_y in yv:
        b.add(row_y)
        for i in range(len(row_y)):
            for j in range(i + 1, len(row_y)):
                b.add([-row_y[i], -row_y[j]])
    for li in range(len(cands)):
        col = [yv[o][li] for o in range(len(yv))]
        for i in range(len(col)):
            for j in range(i + 1, len(col)):
                b.add([-col[i], -col[j]])
    for o, target in enumerate(spec.output_targets):
        for li, line in enumerate(cands):
            for r in v.rows:
                if target[r] >= 0:
                    x = v.value(r, k, line)
                    b.add([-yv[o][li], x if target[r] else neg(x)])


def gate_choice(b: ClauseBuilder, v: VariableLayout) -> None:
    """One gate per position, and the target variables.

    Per position: a unit ``¬g[d][j]`` for every gate outside the position's slot, an
    at-least-one clause (left out with slots: the position may stay empty), an
    at-most-one (pairwise in ``textbook`` and for libraries of up to 24 gates, a
    sequential counter otherwise — Sinz, CP 2005), and ``t[d][l] ↔ ∨ {g[d][j] : j
    targets l}`` in both directions.
    """
    q = v.question
    gates, n = q.library.gates, q.spec.lines
    amo_enc = EncType.pairwise if q.textbook or len(gates) <= 24 else EncType.seqcounter
    by_target = [[j for j, g in enumerate(gates) if line in g.targets] for line in range(n)]
    for d, row in enumerate(v.gate_vars):
        allowed = v.allowed[d]
        for j in range(len(gates)):
            if j not in allowed:
                b.add([-row[j]])
        if q.slots is None:
            b.add(list(row))
        amo = CardEnc.atmost(list(row), 1, vpool=b.pool, encoding=amo_enc)
        for cl in amo.clauses:
            b.add(cl)
        for line in range(n):
            t = v.target_vars[d][line]
            b.add([-t] + [row[j] for j in by_target[line]])
            for j in by_target[line]:
                b.add([-row[j], t])


def row_semantics(b: ClauseBuilder, v: VariableLayout) -> None:
    """For every row and position: the frame, then each allowed gate's clauses.

    **frame**: ``t[d][l] ∨ (a_l ↔ b_l)`` for every line — an untargeted line keeps its
    value (``a = x[r][d]``, ``b = x[r][d+1]``); the gate clauses are :func:`gate_clauses`.
    An empty position (slots) targets nothing, so the frame keeps every line.
    """
    q = v.question
    n, gates = q.spec.lines, q.library.gates
    value = v.value
    if q.k == 0:
        return  # no position; asking for the values before it would name variables no clause uses
    for r in v.rows:
        nxt = [value(r, 0, line) for line in range(n)]
        for d in range(q.k):
            a = nxt  # the values after d gates were made (named) by the previous step
            nxt = [value(r, d + 1, line) for line in range(n)]
            tv = v.target_vars[d]
            for line in range(n):
                t = tv[line]
                b.add([t, neg(a[line]), nxt[line]])
                b.add([t, a[line], neg(nxt[line])])
            allowed, gv = v.allowed[d], v.gate_vars[d]
            for j, g in enumerate(gates):
                if j in allowed:
                    gate_clauses(b, g, -gv[j], a, nxt)


def gate_clauses(b: ClauseBuilder, g: Gate, not_sel: Lit, a: Sequence[Lit], nxt: Sequence[Lit]) -> None:
    """Clauses saying: if the gate is selected (``not_sel`` false), ``nxt`` is ``g`` applied to ``a``.

    Only the gate's targets are constrained here; the frame clauses keep the other lines.
    For an ``x`` gate with target ``τ``, positive controls ``P`` and negative controls
    ``N`` (``fail = ∨_{c∈P} ¬a_c ∨ ∨_{c∈N} a_c`` says "some control does not fire"):

    * **fires**: ``¬g ∨ fail ∨ a_τ ∨ b_τ`` and ``¬g ∨ fail ∨ ¬a_τ ∨ ¬b_τ`` — all controls
      fire, so the target flips;
    * **blocked**: for each ``c ∈ P``: ``¬g ∨ a_c ∨ (a_τ ↔ b_τ)`` (two clauses), likewise
      with ``¬a_c`` for ``c ∈ N`` — a control does not fire, the target keeps its value.

    A swap with targets ``p, q`` exchanges them when its controls fire; a Peres gate on
    ``(a; m, t)`` gets ``m' = m ⊕ a`` and ``t' = t ⊕ a·m``.
    """
    fail = [neg(a[c]) for c in g.controls] + [a[c] for c in g.negative_controls]
    blocked = [a[c] for c in g.controls] + [neg(a[c]) for c in g.negative_controls]
    if g.family == "x":
        tau = g.target
        b.add([not_sel, *fail, a[tau], nxt[tau]])
        b.add([not_sel, *fail, neg(a[tau]), neg(nxt[tau])])
        for lit in blocked:
            iff_clauses(b, [not_sel, lit], a[tau], nxt[tau])
    elif g.family == "swap":
        p, q = g.targets
        # fires: the targets exchange their values; blocked: each keeps its own.
        iff_clauses(b, [not_sel, *fail], a[q], nxt[p])
        iff_clauses(b, [not_sel, *fail], a[p], nxt[q])
        for lit in blocked:
            iff_clauses(b, [not_sel, lit], a[p], nxt[p])
            iff_clauses(b, [not_sel, lit], a[q], nxt[q])
    elif g.family == "peres":
        (x,), (m, t) = g.controls, g.targets
        # m' = m ⊕ x
        iff_clauses(b, [not_sel, a[x]], a[m], nxt[m])
        iff_clauses(b, [not_sel, neg(a[x])], a[m], neg(nxt[m]))
        # t' = t ⊕ (x ∧ m)
        iff_clauses(b, [not_sel, neg(a[x]), neg(a[m])], a[t], neg(nxt[t]))
        iff_clauses(b, [not_sel, a[x]], a[t], nxt[t])
        iff_clauses(b, [not_sel, a[m]], a[t], nxt[t])
    else:  # pragma: no cover - Gate validates its kind
        raise ExactsynError(f"the encoder has no clauses for gate family {g.family!r}")


def within_cost_limit(b: ClauseBuilder, v: VariableLayout) -> None:
    """Total cost ≤ limit, as a cardinality constraint over unary per-position costs.

    Every gate costs at least ``base = min(costs)``, so the total is ``k·base`` plus the
    extra cost above ``base`` of each position.  Position ``d`` gets a ladder
    ``u[d][1] ← u[d][2] ← …`` and ``g[d][j] → u[d][cost_j − base]``; a model's true ``u``
    literals are at least the extra cost, so a totalizer (Bailleux & Boufkhad, CP 2003)
    bounding their number by ``limit − k·base`` bounds the total cost.
    """
    cl = v.question.cost_limit
    if cl is None:
        return
    base = min(cl.costs)
    extra = [c - base for c in cl.costs]
    top = max(extra)
    lits: list[int] = []
    for d, row in enumerate(v.gate_vars):
        ladder = [b.var("cost", d, u) for u in range(1, top + 1)]
        for u in range(1, top):
            b.add([-ladder[u], ladder[u - 1]])
        for j, e in enumerate(extra):
            if e > 0:
                b.add([-row[j], ladder[e - 1]])
        lits.extend(ladder)
    room = cl.limit - base * len(v.gate_vars)
    if room < 0:
        b.empty = True
    elif room < len(lits):
        card = CardEnc.atmost(lits, room, vpool=b.pool, encoding=EncType.totalizer)
        for c in card.clauses:
            b.add(c)


def no_gates(b: ClauseBuilder, v: VariableLayout) -> None:
    """``k = 0`` (unguarded): the empty circuit must meet the spec, else the CNF is UNSAT."""
    q = v.question
    if q.k == 0 and not q.guarded and not q.spec.is_identity():
        b.empty = True
