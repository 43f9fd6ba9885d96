"""Whole-circuit optimisation by exact resynthesis of small windows, with an equivalence proof.

Modules, one job each:

* :mod:`~exactsyn.optimise.allowed_gates` — which gates input and output may use (no enumeration);
* :mod:`~exactsyn.optimise.commute` — exact commutation of two gates;
* :mod:`~exactsyn.optimise.windows` — convex windows on the gate dependency graph;
* :mod:`~exactsyn.optimise.resynthesis` — optimal circuits of window permutations (interface and tables);
* :mod:`~exactsyn.optimise.partial_windows` — windows with don't-cares (lines known to be 0);
* :mod:`~exactsyn.optimise.reachable` — the states a window can start in, by simulating the prefix;
* :mod:`~exactsyn.optimise.class_windows`, :mod:`~exactsyn.optimise.distance_windows` — 4-line windows;
* :mod:`~exactsyn.optimise.wide_windows` — 5-line windows: a cached 5-line class table, else bounded SAT;
* :mod:`~exactsyn.optimise.revisit` — scans that found nothing, skipped while their gates are unchanged;
* :mod:`~exactsyn.optimise.driver` — the passes, to a fixpoint, and :func:`optimise_circuit`;
* :mod:`~exactsyn.optimise.equivalence` — bit-parallel simulation of input against output;
* :mod:`~exactsyn.optimise.metrics` and :mod:`~exactsyn.optimise.summary` — measures and the log;
* :mod:`~exactsyn.optimise.output` — the output file, read back and re-checked before it is kept.

Imports: the base modules, :mod:`exactsyn.core`, :mod:`exactsyn.io` and :mod:`exactsyn.tables`
(the exhaustive tables of windows), :mod:`exactsyn.specification` and :mod:`exactsyn.sat` (partial
windows by SAT with don't-cares, 5-line windows by bounded SAT); :mod:`exactsyn.search` uses it
to shrink fallbacks.
"""

from exactsyn.optimise.allowed_gates import GateSet, gate_set
from exactsyn.optimise.driver import (
    MAX_LINES,
    WINDOW_OBJECTIVES,
    EquivalenceError,
    InternalCheckError,
    OptimiseResult,
    ProgressEvent,
    WindowCount,
    ZeroLineError,
    optimise_circuit,
)
from exactsyn.optimise.equivalence import EquivalenceCheck, check_equivalent
from exactsyn.optimise.metrics import Metrics, measure
from exactsyn.optimise.resynthesis import Optimum, TableResynthesis, WindowProblem, WindowResynthesis

__all__ = [
    "MAX_LINES",
    "WINDOW_OBJECTIVES",
    "EquivalenceCheck",
    "EquivalenceError",
    "GateSet",
    "InternalCheckError",
    "Metrics",
    "OptimiseResult",
    "Optimum",
    "ProgressEvent",
    "TableResynthesis",
    "WindowCount",
    "WindowProblem",
    "WindowResynthesis",
    "ZeroLineError",
    "check_equivalent",
    "gate_set",
    "measure",
    "optimise_circuit",
]
