"""Ctrl-C stays Python's: python-sat's own SIGINT handler is never installed.

python-sat (the version pinned in pyproject.toml) installs, around every solve and every
cardinality encoding made in the main thread, a C handler for SIGINT that ``longjmp``-s out
of the solver and raises an ordinary exception ("Caught keyboard interrupt").  Measured on
this project's machine kind (the interrupt tests, and a pigeonhole CNF in a loop):

* after the jump SIGINT stays *blocked* in the main thread (``SigBlk`` 0x2 in
  ``/proc/self/status``: the jump leaves the signal handler without restoring the mask), so a
  second signal is delivered to some other thread;
* a SIGINT sent from another thread of the process while a solve runs — which is how the
  SIGTERM watcher of :mod:`exactsyn.cli.stopping` turns SIGTERM into Ctrl-C — is lost: the
  solve runs on to its end;
* the handler is installed even in worker processes that ignore SIGINT, and during
  encoding the exception is not a :class:`KeyboardInterrupt`, so a Ctrl-C could be reported
  as a failed item.

python-sat asks ``pysat._utils.MainThread.check()`` whether to install the handler;
:func:`keep_python_sigint` makes it answer no.  SIGINT then reaches Python's own handler,
which raises :class:`KeyboardInterrupt` as soon as the solver returns to Python — so every
solve runs in conflict-budget slices (:func:`exactsyn.sat.solver._search`), and a Ctrl-C is
answered within one slice (about a quarter of a second).  Cardinality encodings return in
milliseconds.  ``tests/sat/test_sigint.py`` checks both halves on a hard formula.
"""

from __future__ import annotations

import pysat._utils


def _never_main_thread() -> bool:
    return False


def keep_python_sigint() -> None:
    """Tell python-sat never to install its SIGINT handler (module docstring); idempotent."""
    pysat._utils.MainThread.check = staticmethod(_never_main_thread)  # type: ignore[method-assign]
