"""The gate model: reversible gates, circuits, gate libraries and cost models.

Modules, one job each:

* :mod:`~exactsyn.core.gates` — the multiple-control Toffoli and controlled-swap families (and Peres);
* :mod:`~exactsyn.core.circuit` — a line count and gates in application order, simulated on integers;
* :mod:`~exactsyn.core.library` — which gates a circuit may use, and on which lines (presets, kinds, coupling);
* :mod:`~exactsyn.core.costs` — cost models (NCV, T-count, CNOT count, tables) and the objectives;
* :mod:`~exactsyn.core.cliffordt` — the Clifford+T decomposition and its check by simulation;
* :mod:`~exactsyn.core.words` — counts in words for every message.

Imports: the base modules only (:mod:`exactsyn.errors`, :mod:`exactsyn.caches`); every
other subpackage builds on this one.
"""
