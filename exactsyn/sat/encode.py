"""CNF encoding of "is there a circuit of exactly k library gates that meets the spec?".

The formulation is the classic one of exact SAT-based reversible synthesis (Große,
Chen, Dueck, Drechsler, "Exact multiple-control Toffoli network synthesis with SAT
techniques", IEEE TCAD 28(5), 2009): a gate choice per position and, for every
specified truth-table row, the value of every line between consecutive gates.

Variables (all named through :class:`pysat.formula.IDPool`)
-----------------------------------------------------------
``("g", d, j)``
    position ``d`` (0 ≤ d < k) holds library gate ``j`` (one-hot over the library).
``("t", d, l)``
    the gate at position ``d`` targets line ``l``; ``t[d][l] ↔ ∨ {g[d][j] : j targets l}``.
``("x", r, d, l)``
    value of line ``l`` on row ``r`` after ``d`` gates.  At ``d = 0`` the value is the
    row's input bit and at ``d = k`` the specified output bit, so in the ``onehot``
    encoding both are substituted as constants (only unspecified output bits remain
    variables); the ``textbook`` encoding keeps them as variables fixed by unit clauses.
    Rows whose outputs are entirely unspecified are left out.

Clause families, for every row ``r``, position ``d`` and gate ``j`` with target ``τ``,
positive controls ``P`` and negative controls ``N`` (``a = x[r][d]``, ``b = x[r][d+1]``,
``fail = ∨_{c∈P} ¬a_c ∨ ∨_{c∈N} a_c`` says "some control does not fire"):

* **fires**: ``¬g ∨ fail ∨ a_τ ∨ b_τ`` and ``¬g ∨ fail ∨ ¬a_τ ∨ ¬b_τ`` — all controls
  fire, so the target flips;
* **blocked**: for each ``c ∈ P``: ``¬g ∨ a_c ∨ (a_τ ↔ b_τ)`` (two clauses), likewise
  with ``¬a_c`` for ``c ∈ N`` — a control does not fire, the target keeps its value;
* **frame**: ``t[d][l] ∨ (a_l ↔ b_l)`` for every line — an untargeted line keeps its value;
* **choice**: exactly one ``g[d][·]`` per position (at-least-one clause plus an
  at-most-one: pairwise in ``textbook``, a sequential counter in ``onehot`` for large
  libraries), and the ``t`` definitions in both directions.

* **embedding freedoms** (:mod:`exactsyn.spec.embed`): an open constant line ``l`` has one
  variable ``("const", l)`` for its input value on every row; an output placed by the
  solver has one-hot variables ``("y", o, l)`` over its candidate lines (at most one
  output per line) and clauses ``¬y[o][l] ∨ (x[r][k][l] = f_o(r))`` for every row where
  the output is specified.

With no symmetry breaking the models are exactly the k-gate circuits of the library
that meet the spec (each model decodes to one circuit and each circuit gives one model:
the line values are functions of the gates).

Symmetry breaking and redundant clauses (``onehot`` only; each keeps an optimal circuit)
-------------------------------------------------------------------------------------
Order circuits of equal length lexicographically by their sequence of library indices.
Among the optimal (minimum-length) circuits for the spec take the lexicographically
smallest one, ``C*``.  Every rule below is satisfied by ``C*``, hence by at least one
optimal circuit, whatever combination of rules is switched on:

* ``no-repeat`` — ``¬g[d][j] ∨ ¬g[d+1][j]``.  Every gate is self-inverse, so two equal
  adjacent gates cancel and the circuit without them is shorter: ``C*`` (optimal) has
  no such pair.
* ``commute`` — ``¬g[d][j] ∨ ¬g[d+1][i]`` for ``i < j`` when gates ``i`` and ``j``
  commute (checked by composing their permutations both ways).  Swapping such a pair
  gives a circuit of the same length computing the same function that is
  lexicographically smaller, so ``C*`` has no such pair.
* ``window2``, ``window3``, ``window4`` — forbid every run of 2 / 3 / 4 consecutive
  gates that is not the least optimal circuit of its own function (precomputed by
  enumeration in :mod:`exactsyn.sat.windows`, where the argument is spelt out: each window
  of ``C*`` is the least optimal circuit of its function, else ``C*`` could be
  shortened or made smaller).  ``window2`` contains ``no-repeat`` and ``commute``.
  A window length is skipped when ``|G|^w`` exceeds the enumeration cap.
* ``trace`` — the lexicographic normal form of the circuit's class under swapping
  adjacent commuting gates (see :func:`_trace_rule`): no gate may commute with every
  gate from some earlier position ``i`` up to it while being smaller than the gate at
  ``i``.  Moving it to position ``i`` gives an equivalent circuit of the same length
  that is lexicographically smaller, so ``C*`` satisfies the rule.  It contains
  ``commute``; each class of equivalent circuits keeps exactly one member (its least),
  which is what ``--all`` enumeration counts.
* ``touch`` (redundant, implied) — ``∨_d t[d][l]`` for every line ``l`` whose output
  differs from its input on a specified row: only a gate targeting ``l`` changes ``l``.
  Every circuit meeting the spec satisfies it.

``no-repeat`` forbids a gate followed by its inverse (:func:`inverse_pairs`); for the
self-inverse kinds that is the gate itself.  Gate kinds: ``x`` gates as above; a swap
with targets ``p, q`` exchanges them when its controls fire; a Peres gate on ``(a; m, t)``
gets ``m' = m ⊕ a`` and ``t' = t ⊕ a·m`` (:func:`gate_clauses`).

Cost limits (:class:`CostLimit`, for the cost objectives of :mod:`exactsyn.search.objectives`)
-------------------------------------------------------------------------------------
With a cost limit ``C`` the query is "k gates and total cost ≤ C".  Every rule keeps its
argument: take, among the circuits of
minimum length that meet the spec with cost ≤ C, the lexicographically smallest.  Two
adjacent inverse gates could be removed without raising the cost (costs are ≥ 0), so it
has none; ``commute`` and ``trace`` reorder without changing the gate multiset, hence the
cost; ``touch`` holds for every circuit.  The window rules change meaning under a cost
limit: they forbid windows that are not the least circuit of their function in the
order of :attr:`CostLimit.order` (cost first, or gate count first), whose argument is in
:func:`exactsyn.sat.windows.weighted_forbidden_windows`; the plain window rules would
replace a window by a shorter one of higher cost.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

from pysat.card import CardEnc, EncType
from pysat.formula import IDPool

from exactsyn.caches import memo
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, invert_permutation
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.sat.windows import forbidden_windows, weighted_forbidden_windows, window_size_ok
from exactsyn.spec.reversible import Spec

ENCODINGS = {
    "onehot": "one-hot gate choice, constants substituted, symmetry breaking (default)",
    "textbook": "one-hot gate choice, no symmetry breaking: the baseline every speed-up is measured against",
}
SYMMETRY_RULES = ("no-repeat", "commute", "trace", "touch", "window2", "window3", "window4")
DEFAULT_SYMMETRY = ("no-repeat", "commute", "touch")
ENCODING_VERSION = 1

Lit = int | bool


@dataclass(frozen=True)
class EncodingOptions:
    """Which encoding and which symmetry-breaking rules; part of every certificate."""

    name: str = "onehot"
    symmetry: tuple[str, ...] = DEFAULT_SYMMETRY

    def __post_init__(self) -> None:
        if self.name not in ENCODINGS:
            raise ExactsynError(f"unknown encoding {self.name!r}; choose one of: {', '.join(ENCODINGS)}")
        bad = [s for s in self.symmetry if s not in SYMMETRY_RULES]
        if bad:
            raise ExactsynError(f"unknown symmetry rule {bad[0]!r}; known: {', '.join(SYMMETRY_RULES)}")
        if self.name == "textbook" and self.symmetry:
            object.__setattr__(self, "symmetry", ())

    def describe(self) -> dict[str, object]:
        return {"name": self.name, "version": ENCODING_VERSION, "symmetry": list(self.symmetry)}


def options_for(name: str) -> EncodingOptions:
    return EncodingOptions(name, DEFAULT_SYMMETRY if name == "onehot" else ())


@dataclass(frozen=True)
class Encoding:
    """The CNF of one k-query and what is needed to decode its models."""

    spec: Spec
    library: Library
    k: int
    options: EncodingOptions
    clauses: list[list[int]] = field(repr=False)
    num_vars: int
    gate_vars: tuple[tuple[int, ...], ...] = field(repr=False)
    trivially_unsat: bool = False
    optional: bool = False  # positions may stay empty (the depth encoding's slots)

    def decode(self, model: Iterable[int]) -> Circuit:
        """Read the circuit out of a satisfying assignment."""
        true = {v for v in model if v > 0}
        gates: list[Gate] = []
        for d, row in enumerate(self.gate_vars):
            chosen = [j for j, v in enumerate(row) if v in true]
            if self.optional and not chosen:
                continue
            if len(chosen) != 1:
                raise RuntimeError(f"model selects {len(chosen)} gates at position {d}")
            gates.append(self.library.gates[chosen[0]])
        return Circuit(self.library.lines, tuple(gates))


@memo(maxsize=64)
def commuting_pairs(library: Library) -> frozenset[tuple[int, int]]:
    """Pairs ``(i, j)``, ``i < j``, of library gates that commute as permutations."""
    n = library.lines
    perms = [g.permutation(n) for g in library.gates]
    out = set()
    for j, pj in enumerate(perms):
        for i in range(j):
            pi = perms[i]
            gates_i, gates_j = library.gates[i], library.gates[j]
            if not (gates_i.lines & gates_j.lines):
                out.add((i, j))
                continue
            if all(pj[pi[s]] == pi[pj[s]] for s in range(1 << n)):
                out.add((i, j))
    return frozenset(out)


@dataclass(frozen=True)
class CostLimit:
    """Every gate has a cost (aligned with the library's gates); the circuit's total must not exceed ``limit``."""

    costs: tuple[int, ...]
    limit: int
    order: str = "cost"  # which circuits the window rules keep: see windows.weighted_forbidden_windows


class _Builder:
    """Collects clauses, folding Python booleans (known line values) away."""

    def __init__(self, pool: IDPool | None = None) -> None:
        self.pool = pool or IDPool()
        self.clauses: list[list[int]] = []
        self.empty = False

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


def _neg(lit: Lit) -> Lit:
    if isinstance(lit, bool):
        return not lit
    return -lit


def _iff_clauses(b: _Builder, pre: list[Lit], x: Lit, y: Lit) -> None:
    """``pre ∨ (x ↔ y)`` as two clauses."""
    b.add([*pre, _neg(x), y])
    b.add([*pre, x, _neg(y)])


def gate_clauses(b: _Builder, g: Gate, not_sel: Lit, a: Sequence[Lit], nxt: Sequence[Lit]) -> None:
    """Clauses saying: if the gate is selected (``not_sel`` false), ``nxt`` is ``g`` applied to ``a``.

    Only the gate's targets are constrained here; the frame clauses keep the other lines.
    """
    fail = [_neg(a[c]) for c in g.controls] + [a[c] for c in g.negative_controls]
    blocked = [a[c] for c in g.controls] + [_neg(a[c]) for c in g.negative_controls]
    if g.family == "x":
        tau = g.target
        b.add([not_sel, *fail, a[tau], nxt[tau]])
        b.add([not_sel, *fail, _neg(a[tau]), _neg(nxt[tau])])
        for lit in blocked:
            _iff_clauses(b, [not_sel, lit], a[tau], nxt[tau])
    elif g.family == "swap":
        p, q = g.targets
        # fires: the targets exchange their values; blocked: each keeps its own.
        _iff_clauses(b, [not_sel, *fail], a[q], nxt[p])
        _iff_clauses(b, [not_sel, *fail], a[p], nxt[q])
        for lit in blocked:
            _iff_clauses(b, [not_sel, lit], a[p], nxt[p])
            _iff_clauses(b, [not_sel, lit], a[q], nxt[q])
    elif g.family == "peres":
        (x,), (m, t) = g.controls, g.targets
        # m' = m ⊕ x
        _iff_clauses(b, [not_sel, a[x]], a[m], nxt[m])
        _iff_clauses(b, [not_sel, _neg(a[x])], a[m], _neg(nxt[m]))
        # t' = t ⊕ (x ∧ m)
        _iff_clauses(b, [not_sel, _neg(a[x]), _neg(a[m])], a[t], _neg(nxt[t]))
        _iff_clauses(b, [not_sel, a[x]], a[t], nxt[t])
        _iff_clauses(b, [not_sel, a[m]], a[t], nxt[t])
    else:  # pragma: no cover - Gate validates its kind
        raise ExactsynError(f"the encoder has no clauses for gate kind {g.family!r}")


@memo(maxsize=64)
def inverse_pairs(library: Library) -> tuple[tuple[int, int], ...]:
    """Pairs ``(i, j)`` of library gates with ``g_j ∘ g_i`` the identity (``i == j`` for involutions)."""
    perms = [g.permutation(library.lines) for g in library.gates]
    index = {p: j for j, p in enumerate(perms)}
    out = []
    for i, perm in enumerate(perms):
        j = index.get(invert_permutation(perm))
        if j is not None:
            out.append((i, j))
    return tuple(out)


def encode(
    spec: Spec,
    library: Library,
    k: int,
    options: EncodingOptions | None = None,
    *,
    guard: bool = False,
    pool: IDPool | None = None,
    cost_limit: CostLimit | None = None,
    slots: Sequence[Sequence[int]] | None = None,
) -> Encoding:
    """Build the CNF for exactly ``k`` gates (see the module docstring).

    ``guard=True`` (for incremental solving across k, measured in
    ``scripts/exp_incremental.py``) keeps the line values after the last gate as
    variables and makes every clause that depends on k — the spec at depth k and the
    ``touch`` rule — conditional on the activation literal ``("act", k)``, so one solver
    can hold the queries of several k at once; ``pool`` shares variable names.
    """
    opts = options or EncodingOptions()
    if spec.lines != library.lines:
        raise ExactsynError(f"spec has {spec.lines} lines but the library is built for {library.lines}")
    if k < 0:
        raise ExactsynError("gate count must be non-negative")
    if cost_limit is not None:
        if len(cost_limit.costs) != len(library.gates) or min(cost_limit.costs, default=0) < 0:
            raise ExactsynError("a cost limit needs one non-negative cost per library gate")
    if slots is not None and (len(slots) != k or opts.symmetry not in ((), ("touch",))):
        raise ExactsynError("slots need one gate subset per position and no ordering rules")
    n, gates = spec.lines, library.gates
    b = _Builder(pool)
    textbook = opts.name == "textbook"
    act = b.var("act", k) if guard else None

    gvars = tuple(tuple(b.var("g", d, j) for j in range(len(gates))) for d in range(k))
    tvars = [[b.var("t", d, line) for line in range(n)] for d in range(k)]
    rows = spec.specified_rows()
    open_lines = set(spec.open_lines)

    # Line values; constants substituted at both ends unless textbook.
    def value(r: int, d: int, line: int) -> Lit:
        if d == 0 and line in open_lines:
            return b.var("const", line)  # one value for every row, chosen by the solver
        if d == 0 and not textbook:
            return bool(r >> line & 1)
        if d == k and not textbook and not guard and spec.care[r] >> line & 1:
            return bool(spec.outputs[r] >> line & 1)
        return b.var("x", r, d, line)

    if guard and not textbook:
        assert act is not None
        for r in rows:
            for line in range(n):
                if spec.care[r] >> line & 1:
                    v = value(r, k, line)
                    b.add([-act, v if spec.outputs[r] >> line & 1 else _neg(v)])

    if textbook:
        for r in rows:
            for line in range(n):
                if line not in open_lines:
                    b.add([value(r, 0, line) if r >> line & 1 else _neg(value(r, 0, line))])
                if spec.care[r] >> line & 1:
                    v = value(r, k, line)
                    b.add([v if spec.outputs[r] >> line & 1 else _neg(v)])

    # Outputs placed by the solver: y[o][l] = output o is read on line l (exactly one
    # line per output, at most one output per line); then the line's final value must
    # be the output's value on every row where it is specified.
    cands = spec.output_candidates
    if spec.output_targets:
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
                for r in rows:
                    if target[r] >= 0:
                        v = value(r, k, line)
                        b.add([-yv[o][li], v if target[r] else _neg(v)])

    # Choice: exactly one gate per position; t[d][l] ↔ some gate targeting l.
    amo_enc = EncType.pairwise if textbook or len(gates) <= 24 else EncType.seqcounter
    by_target = [[j for j, g in enumerate(gates) if line in g.targets] for line in range(n)]
    allowed = [set(range(len(gates))) for _ in range(k)] if slots is None else [set(s) for s in slots]
    for d in range(k):
        for j in range(len(gates)):
            if j not in allowed[d]:
                b.add([-gvars[d][j]])
        if slots is None:
            b.add(list(gvars[d]))
        amo = CardEnc.atmost(list(gvars[d]), 1, vpool=b.pool, encoding=amo_enc)
        for cl in amo.clauses:
            b.add(cl)
        for line in range(n):
            t = tvars[d][line]
            b.add([-t] + [gvars[d][j] for j in by_target[line]])
            for j in by_target[line]:
                b.add([-gvars[d][j], t])

    # Semantics per row and position.
    for r in rows:
        for d in range(k):
            a = [value(r, d, line) for line in range(n)]
            nxt = [value(r, d + 1, line) for line in range(n)]
            for line in range(n):
                t = tvars[d][line]
                b.add([t, _neg(a[line]), nxt[line]])
                b.add([t, a[line], _neg(nxt[line])])
            for j, g in enumerate(gates):
                if j in allowed[d]:
                    gate_clauses(b, g, -gvars[d][j], a, nxt)

    # Symmetry breaking (arguments in the module docstring).
    if "no-repeat" in opts.symmetry:
        for d in range(k - 1):
            for i, j in inverse_pairs(library):
                b.add([-gvars[d][i], -gvars[d + 1][j]])
    if "commute" in opts.symmetry:
        pairs = commuting_pairs(library)
        for d in range(k - 1):
            for i, j in pairs:
                b.add([-gvars[d][j], -gvars[d + 1][i]])
    for w in (2, 3, 4):
        if f"window{w}" in opts.symmetry and window_size_ok(library, w):
            forbidden = (
                forbidden_windows(library, w)
                if cost_limit is None
                else weighted_forbidden_windows(library, w, cost_limit.costs, cost_limit.order)
            )
            for seq in forbidden:
                for d in range(k - w + 1):
                    b.add([-gvars[d + i][j] for i, j in enumerate(seq)])
    if "trace" in opts.symmetry:
        _trace_rule(b, library, gvars)
    if "touch" in opts.symmetry:
        for line in spec.changed_lines():
            b.add(([-act] if act is not None else []) + [tvars[d][line] for d in range(k)])
    if cost_limit is not None:
        _cost_clauses(b, cost_limit, gvars)

    if k == 0 and not spec.is_identity() and not guard:
        b.empty = True  # no gate at all: the spec must already be the identity
    if b.empty:
        # A clause became empty after substituting constants: keep a two-clause
        # contradiction so the CNF stays a plain, checkable UNSAT formula.
        z = b.var("false")
        b.clauses.extend([[z], [-z]])
    return Encoding(
        spec=spec,
        library=library,
        k=k,
        options=opts,
        clauses=b.clauses,
        num_vars=b.pool.top,
        gate_vars=gvars,
        trivially_unsat=b.empty,
        optional=slots is not None,
    )


def _cost_clauses(b: _Builder, cl: CostLimit, gvars: tuple[tuple[int, ...], ...]) -> None:
    """Total cost ≤ limit, as a cardinality constraint over unary per-position costs.

    Every gate costs at least ``base = min(costs)``, so the total is ``k·base`` plus the
    extra cost above ``base`` of each position.  Position ``d`` gets a ladder
    ``u[d][1] ← u[d][2] ← …`` and ``g[d][j] → u[d][cost_j − base]``; a model's true ``u``
    literals are at least the extra cost, so a totalizer (Bailleux & Boufkhad, CP 2003)
    bounding their number by ``limit − k·base`` bounds the total cost.
    """
    base = min(cl.costs)
    extra = [c - base for c in cl.costs]
    top = max(extra)
    lits: list[int] = []
    for d, row in enumerate(gvars):
        ladder = [b.var("cost", d, v) for v in range(1, top + 1)]
        for v in range(1, top):
            b.add([-ladder[v], ladder[v - 1]])
        for j, e in enumerate(extra):
            if e > 0:
                b.add([-row[j], ladder[e - 1]])
        lits.extend(ladder)
    room = cl.limit - base * len(gvars)
    if room < 0:
        b.empty = True
    elif room < len(lits):
        card = CardEnc.atmost(lits, room, vpool=b.pool, encoding=EncType.totalizer)
        for c in card.clauses:
            b.add(c)


def _trace_rule(b: _Builder, library: Library, gvars: tuple[tuple[int, ...], ...]) -> None:
    """Lexicographic normal form of traces (Anisimov & Knuth 1979; Diekert & Rozenberg, "The
    Book of Traces", 1995): no position ``j`` holds a gate that commutes with every gate at
    positions ``i..j−1`` and is smaller than the gate at ``i``.

    ``K[i][h]`` — the gate at ``i`` commutes with gate ``h``; ``cb[j][i]`` — the gate at
    ``j`` commutes with all gates at ``i..j−1``; ``gt[i][h]`` — the gate at ``i`` is larger
    than ``h``.  Each auxiliary is only forced true (implications from the gate choice),
    which is all the forbidding clause ``¬cb[j][i] ∨ ¬g[j][h] ∨ ¬gt[i][h]`` needs.
    """
    k, m = len(gvars), len(library.gates)
    if k < 2:
        return
    pairs = commuting_pairs(library)
    comm: list[set[int]] = [{h} for h in range(m)]
    for i, j in pairs:
        comm[i].add(j)
        comm[j].add(i)
    for i in range(k):
        for h in range(m):
            kv = b.var("comm", i, h)
            for a in comm[h]:
                b.add([-gvars[i][a], kv])
        for h in range(m - 1):
            b.add([-gvars[i][h + 1], b.var("gt", i, h)])
            if h + 2 < m:
                b.add([-b.var("gt", i, h + 1), b.var("gt", i, h)])
    for j in range(1, k):
        for i in range(j - 1, -1, -1):
            cb = b.var("cb", j, i)
            for h in range(m):
                # gate h at j commutes with the gate at i (and with i+1..j-1) -> cb[j][i]
                prev = [] if i == j - 1 else [-b.var("cb", j, i + 1)]
                b.add([-gvars[j][h], -b.var("comm", i, h), *prev, cb])
            for h in range(m - 1):
                b.add([-cb, -gvars[j][h], -b.var("gt", i, h)])
