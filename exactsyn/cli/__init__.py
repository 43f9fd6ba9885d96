"""The command line: a thin layer that parses options, calls the library API and prints.

One module per command group (``synth``, ``check``, ``apply``, ``batch`` and ``table``,
``draw`` and ``report``); :mod:`exactsyn.cli.main` attaches them to the ``exactsyn``
group.
"""

from exactsyn.cli.main import main

__all__ = ["main"]
