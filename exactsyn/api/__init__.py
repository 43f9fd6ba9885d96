"""The library API: one call from a function to a proven circuit, and the result's views.

:mod:`~exactsyn.api.synthesis` runs the pipeline (:func:`~exactsyn.api.synthesis.synthesise`
and its result :class:`~exactsyn.api.synthesis.Synthesis`); :mod:`~exactsyn.api.view` turns a
result into JSON data, text and the OpenQASM header.  The package root (:mod:`exactsyn`)
re-exports the public names.
"""
