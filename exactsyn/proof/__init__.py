"""Certificates of optimality and their independent check.

Modules, one job each:

* :mod:`~exactsyn.proof.certificate` — the certificate format (``result.json`` and LRAT files) and writing it;
* :mod:`~exactsyn.proof.checker` — re-check a certificate without trusting the solver or the search;
* :mod:`~exactsyn.proof.lrat` — an LRAT checker of its own (the RUP fragment);
* :mod:`~exactsyn.proof.cover` and :mod:`~exactsyn.proof.cube_check` — a split query's cubes cover it,
  and each is refuted.

Imports: everything below it (base modules, :mod:`exactsyn.core`, :mod:`exactsyn.io`,
:mod:`exactsyn.specification`, :mod:`exactsyn.tables`, :mod:`exactsyn.sat`,
:mod:`exactsyn.search`); the checker re-derives each CNF with the encoder and checks the
proofs with its own code.
"""
