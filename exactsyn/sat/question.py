"""What the encoder is asked: a spec, a library, a gate count k, and the mode, as data.

A :class:`Question` names one CNF (Große, Chen, Dueck, Drechsler, "Exact multiple-control
Toffoli network synthesis with SAT techniques", IEEE TCAD 28(5), 2009, with the
extensions of :mod:`exactsyn.sat.encode`).  The modes that used to be flags of the
encoder are fields here, and :mod:`exactsyn.sat.clauses` reads them:

========================  =====================  ============================================
field                     default                effect on the CNF
========================  =====================  ============================================
``options.name``          ``onehot``             ``textbook``: the spec at both ends as unit
                                                 clauses on line variables, pairwise
                                                 at-most-one, no symmetry breaking
``options.symmetry``      ``DEFAULT_SYMMETRY``   the symmetry rules (:mod:`exactsyn.sat.symmetry`)
``cost_limit``            none                   total gate cost ≤ limit; window rules follow
                                                 the cost order
``slots``                 none                   position ``d`` may hold only ``slots[d]`` or
                                                 stay empty (the depth encoding)
``guarded``               false                  the spec after the last gate and ``touch``
                                                 hold only under the literal ``("act", k)``,
                                                 for incremental solving across k (the
                                                 ``textbook`` units stay unconditional)
========================  =====================  ============================================

The options are part of every certificate (:meth:`EncodingOptions.describe`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.specification.reversible import Spec

ENCODINGS = {
    "onehot": "one-hot gate choice, constants substituted, symmetry breaking (default)",
    "textbook": "one-hot gate choice, no symmetry breaking: the baseline every speed-up is measured against",
}
SYMMETRY_RULES = ("no-repeat", "commute", "trace", "touch", "window2", "window3", "window4")
DEFAULT_SYMMETRY = ("no-repeat", "commute", "touch")
ENCODING_VERSION = 1

# How the spec is imposed at one end of the circuit: the known bits substituted as
# constants, unit clauses on line variables, or clauses conditional on ("act", k).
End = Literal["constant", "unit", "guarded"]


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
class CostLimit:
    """Every gate has a cost (aligned with the library's gates); the circuit's total must not exceed ``limit``."""

    costs: tuple[int, ...]
    limit: int
    order: str = "cost"  # which circuits the window rules keep: see windows.weighted_forbidden_windows


@dataclass(frozen=True)
class Question:
    """One CNF to build: exactly ``k`` positions of ``library`` gates meeting ``spec``, in a mode."""

    spec: Spec
    library: Library
    k: int
    options: EncodingOptions = field(default_factory=EncodingOptions)
    cost_limit: CostLimit | None = None
    slots: tuple[tuple[int, ...], ...] | None = None  # allowed gates per position; positions may stay empty
    guarded: bool = False

    def __post_init__(self) -> None:
        if self.spec.lines != self.library.lines:
            raise ExactsynError(f"spec has {self.spec.lines} lines but the library is built for {self.library.lines}")
        if self.k < 0:
            raise ExactsynError("gate count must be non-negative")
        cl = self.cost_limit
        if cl is not None and (len(cl.costs) != len(self.library.gates) or min(cl.costs, default=0) < 0):
            raise ExactsynError("a cost limit needs one non-negative cost per library gate")
        if self.slots is not None and (len(self.slots) != self.k or self.options.symmetry not in ((), ("touch",))):
            raise ExactsynError("slots need one gate subset per position and no ordering rules")
        if self.guarded and self.options.name == "textbook":
            # The textbook encoding fixes the outputs by plain unit clauses, which a solver
            # shared across k cannot switch off: refuse rather than build a wrong query.
            raise ExactsynError("a guarded query (one solver across k) needs the onehot encoding")

    @property
    def textbook(self) -> bool:
        return self.options.name == "textbook"

    @property
    def input_end(self) -> End:
        """How the row's input bits are imposed before the first gate."""
        return "unit" if self.textbook else "constant"

    @property
    def output_end(self) -> End:
        """How the specified output bits are imposed after the last gate."""
        if self.textbook:
            return "unit"
        return "guarded" if self.guarded else "constant"
