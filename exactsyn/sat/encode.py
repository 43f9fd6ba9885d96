"""CNF encoding of "is there a circuit of exactly k library gates that meets the spec?".

The formulation is the classic one of exact SAT-based reversible synthesis (Große,
Chen, Dueck, Drechsler, "Exact multiple-control Toffoli network synthesis with SAT
techniques", IEEE TCAD 28(5), 2009): a gate choice per position and, for every
specified truth-table row, the value of every line between consecutive gates.

The encoder is a pipeline over data:

1. a :class:`~exactsyn.sat.question.Question` names the CNF — spec, library, k, and the mode
   (encoding and symmetry rules, cost limit, slots, guarded or not) as fields;
2. :func:`~exactsyn.sat.clauses.layout` creates the fixed variables (``act``, ``g``, ``t``)
   and the line values, substituting known bits at the ends where the mode allows;
3. the clause families of :data:`PIPELINE` run in order, each adding nothing when the
   mode does not call for it:

   * :func:`~exactsyn.sat.clauses.spec_at_ends` — the spec as unit or guarded clauses
     where the ends are variables (``textbook``, guarded queries);
   * :func:`~exactsyn.sat.clauses.output_placement` — outputs placed by the solver
     (embeddings, :mod:`exactsyn.specification.embed`);
   * :func:`~exactsyn.sat.clauses.gate_choice` — one gate per position (or an empty
     slot), the target variables;
   * :func:`~exactsyn.sat.clauses.row_semantics` — the frame and the gate clauses for
     every row and position;
   * :func:`~exactsyn.sat.symmetry.symmetry_breaking` — the chosen rules of
     :data:`exactsyn.sat.symmetry.RULES`, each with its argument that an optimal circuit
     survives;
   * :func:`~exactsyn.sat.clauses.within_cost_limit` — total cost ≤ limit;
   * :func:`~exactsyn.sat.clauses.no_gates` — k = 0 and the spec is not the identity;

4. a clause that became empty after substitution turns into the contradiction
   ``z, ¬z``, so the CNF stays a plain, checkable UNSAT formula.

Certificates store the SHA-256 of the DIMACS text, so the variable order and the clause
order are fixed: ``scripts/encoding_fingerprint.py`` hashes the CNF of many
configurations, to compare before and after any change here.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

from pysat.formula import IDPool

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import Library
from exactsyn.sat.clauses import (
    ClauseBuilder,
    ClauseFamily,
    Lit,
    gate_choice,
    gate_clauses,
    layout,
    no_gates,
    output_placement,
    row_semantics,
    spec_at_ends,
    within_cost_limit,
)
from exactsyn.sat.question import (
    DEFAULT_SYMMETRY,
    ENCODING_VERSION,
    ENCODINGS,
    SYMMETRY_RULES,
    CostLimit,
    EncodingOptions,
    Question,
    options_for,
)
from exactsyn.sat.symmetry import commuting_pairs, inverse_pairs, symmetry_breaking
from exactsyn.specification.reversible import Spec

__all__ = [
    "DEFAULT_SYMMETRY",
    "ENCODINGS",
    "ENCODING_VERSION",
    "PIPELINE",
    "SYMMETRY_RULES",
    "CostLimit",
    "Encoding",
    "EncodingOptions",
    "Lit",
    "Question",
    "commuting_pairs",
    "encode",
    "encode_question",
    "gate_clauses",
    "inverse_pairs",
    "options_for",
]

PIPELINE: tuple[ClauseFamily, ...] = (
    spec_at_ends,
    output_placement,
    gate_choice,
    row_semantics,
    symmetry_breaking,
    within_cost_limit,
    no_gates,
)


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


def encode_question(question: Question, pool: IDPool | None = None, deadline: float | None = None) -> Encoding:
    """Build the CNF of ``question`` (see the module docstring); ``pool`` shares variable names
    between queries, as guarded queries in one incremental solver need.  Past ``deadline`` (a
    :func:`time.perf_counter` value) it raises :class:`~exactsyn.sat.clauses.EncodingOutOfTime`."""
    b = ClauseBuilder(pool, deadline)
    v = layout(b, question)
    for family in PIPELINE:
        family(b, v)
    if b.empty:
        # A clause became empty after substituting constants: keep a two-clause
        # contradiction so the CNF stays a plain, checkable UNSAT formula.
        z = b.var("false")
        b.clauses.extend([[z], [-z]])
    return Encoding(
        spec=question.spec,
        library=question.library,
        k=question.k,
        options=question.options,
        clauses=b.clauses,
        num_vars=b.pool.top,
        gate_vars=v.gate_vars,
        trivially_unsat=b.empty,
        optional=question.slots is not None,
    )


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
    deadline: float | None = None,
) -> Encoding:
    """Build the CNF for exactly ``k`` gates: :func:`encode_question` of the :class:`Question` with these fields
    (and its ``deadline``).

    ``guard=True`` (for incremental solving across k, measured in
    ``scripts/exp_incremental.py``) keeps the line values after the last gate as
    variables and makes every clause that depends on k — the spec at depth k and the
    ``touch`` rule — conditional on the activation literal ``("act", k)``, so one solver
    can hold the queries of several k at once; ``pool`` shares variable names.
    """
    question = Question(
        spec,
        library,
        k,
        options or EncodingOptions(),
        cost_limit=cost_limit,
        slots=None if slots is None else tuple(tuple(s) for s in slots),
        guarded=guard,
    )
    return encode_question(question, pool, deadline)
