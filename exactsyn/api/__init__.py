"""The library API: one call from a function to a proven circuit, and the result's views.

:mod:`~exactsyn.api.synthesis` runs the pipeline (:func:`~exactsyn.api.synthesis.synthesise`
and its result :class:`~exactsyn.api.synthesis.Synthesis`); :mod:`~exactsyn.api.view` turns a
result into JSON data, text and the OpenQASM header.  The package root (:mod:`exactsyn`)
re-exports the public names.

Imports: every layer below it (base modules, :mod:`exactsyn.core`, :mod:`exactsyn.io`,
:mod:`exactsyn.specification`, :mod:`exactsyn.tables`, :mod:`exactsyn.sat`,
:mod:`exactsyn.optimise`, :mod:`exactsyn.search`, :mod:`exactsyn.proof`); only
:mod:`exactsyn.batch` and :mod:`exactsyn.cli` import it.
"""
