"""What to synthesise: reversible specifications, Boolean functions and their embedding, spec files.

Modules, one job each:

* :mod:`~exactsyn.specification.reversible` — a permutation spec (with don't-cares), parsed from
  ``--perm``, ``--cycles`` or a TOML table;
* :mod:`~exactsyn.specification.boolean` — irreversible or partial multi-output Boolean functions;
* :mod:`~exactsyn.specification.embed` — their embedding into reversible specs (garbage outputs, constant inputs);
* :mod:`~exactsyn.specification.loader` — a spec from any file: TOML, or a saved circuit's function;
* :mod:`~exactsyn.specification.samples` — seeded random functions for tables, benchmarks and tests.

Imports: the base modules, :mod:`exactsyn.core` and :mod:`exactsyn.io` (circuit files as specs).
"""
