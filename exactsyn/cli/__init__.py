"""The command line: a thin layer that parses options, calls the library API and prints.

One module per command group (:mod:`~exactsyn.cli.synth`, :mod:`~exactsyn.cli.optimise`,
:mod:`~exactsyn.cli.check`, :mod:`~exactsyn.cli.apply`, :mod:`~exactsyn.cli.batch`
(``batch``, ``table``), :mod:`~exactsyn.cli.pictures` (``draw``, ``report``),
:mod:`~exactsyn.cli.tables`); :mod:`~exactsyn.cli.main` attaches them to the ``exactsyn``
group.  :mod:`~exactsyn.cli.options` holds the options several commands share and
:mod:`~exactsyn.cli.common` the one-line error; :mod:`~exactsyn.cli.progress` is the one
progress display, with what ``synth`` and ``batch`` show in
:mod:`~exactsyn.cli.synth_display` and :mod:`~exactsyn.cli.batch_display`.

Imports: anything in the package; nothing imports it but ``python -m exactsyn``.
"""

from exactsyn.cli.main import main

__all__ = ["main"]
