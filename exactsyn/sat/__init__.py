"""SAT: the k-gate and depth encodings, solver calls, proof capture, and cube and conquer.

Modules, one job each:

* :mod:`~exactsyn.sat.question` — what the encoder is asked (spec, library, k, mode), as data;
* :mod:`~exactsyn.sat.encode`, :mod:`~exactsyn.sat.clauses`, :mod:`~exactsyn.sat.encode_depth` —
  the CNF of "a circuit of exactly k gates" and of "depth at most d";
* :mod:`~exactsyn.sat.symmetry` and :mod:`~exactsyn.sat.forbidden` — symmetry-breaking clause
  families, each with the argument why an optimal circuit survives;
* :mod:`~exactsyn.sat.dimacs` — DIMACS text and the hash that names a query;
* :mod:`~exactsyn.sat.solver`, :mod:`~exactsyn.sat.lrat_capture`, :mod:`~exactsyn.sat.race` —
  solver calls with time limits, LRAT capture, racing two formulations;
* :mod:`~exactsyn.sat.options` — :class:`~exactsyn.sat.options.SearchOptions` and
  :class:`~exactsyn.sat.options.Hooks`, the settings and outlets of one search, built once;
* :mod:`~exactsyn.sat.query` and :mod:`~exactsyn.sat.status` — one answered query and its status;
* :mod:`~exactsyn.sat.cube_split`, :mod:`~exactsyn.sat.conquer`, :mod:`~exactsyn.sat.cube_engines` —
  cube and conquer on processes or Dask.

Imports: the base modules, :mod:`exactsyn.core`, :mod:`exactsyn.specification` and
:mod:`exactsyn.tables` (the breadth-first rows behind the forbidden windows).
"""
