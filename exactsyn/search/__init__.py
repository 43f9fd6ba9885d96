"""The search for proven optima: the k loop, objectives beyond gate count, bounds and fallbacks.

Modules, one job each:

* :mod:`~exactsyn.search.loop` — raise k from a proven lower bound until a k-gate circuit exists;
* :mod:`~exactsyn.search.bounds` and :mod:`~exactsyn.tables.oracle` — lower bounds and exact
  answers without SAT (cheap facts, distance and class tables);
* :mod:`~exactsyn.search.objectives` — cost and depth, each proven by refutations;
* :mod:`~exactsyn.search.all_optima` — every optimal circuit, up to commuting neighbours;
* :mod:`~exactsyn.search.fallback`, :mod:`~exactsyn.search.heuristic`, :mod:`~exactsyn.search.rewrite`,
  :mod:`~exactsyn.search.affine` — an upper-bound circuit in every library when no proof finishes;
* :mod:`~exactsyn.search.events` — what the search reports while it runs.

Imports: the base modules, :mod:`exactsyn.core`, :mod:`exactsyn.specification`,
:mod:`exactsyn.tables`, :mod:`exactsyn.sat` and :mod:`exactsyn.optimise` (shrinking fallbacks).
"""
