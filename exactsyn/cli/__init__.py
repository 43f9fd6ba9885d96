"""The command line: a thin layer that parses options, calls the library API and prints.

One module per command group (:mod:`~exactsyn.cli.synth`, :mod:`~exactsyn.cli.optimise`,
:mod:`~exactsyn.cli.check`, :mod:`~exactsyn.cli.apply`, :mod:`~exactsyn.cli.batch`
(``batch``, ``table``), :mod:`~exactsyn.cli.pictures` (``draw``, ``report``),
:mod:`~exactsyn.cli.tables`); :mod:`~exactsyn.cli.main` attaches them to the ``exactsyn``
group.  :mod:`~exactsyn.cli.options` holds the options several commands share and
:mod:`~exactsyn.cli.common` the one-line error; :mod:`~exactsyn.cli.progress` is the one
progress display, with what ``synth`` and ``batch`` show in
:mod:`~exactsyn.cli.synth_display` and :mod:`~exactsyn.cli.batch_display`.

Imports: anything in the package; nothing imports it but ``python -m exactsyn``.  Loading
the commands takes about half a second; Ctrl-C or SIGTERM in that time ends the process
with the same one line as later (:mod:`exactsyn.cli.stopping`), not a traceback.  Only a
Ctrl-C in the first tenth of a second, while Python itself starts (its site module, the
package's first imports), ends with Python's own traceback and status.
"""

import signal as _signal
import sys as _sys
import threading as _threading

_terminated: list[int] = []


def _term_while_loading(signum: int, frame: object) -> None:
    _terminated.append(signum)
    raise KeyboardInterrupt


_main_thread = _threading.current_thread() is _threading.main_thread()
_previous = _signal.signal(_signal.SIGTERM, _term_while_loading) if _main_thread else None
try:
    from exactsyn.cli.main import main
except KeyboardInterrupt:
    _what = "terminated (SIGTERM)" if _terminated else "interrupted"
    print(f"exactsyn: {_what}: nothing was written", file=_sys.stderr)
    exec("None")  # clears CPython's 'unhandled interrupt' mark: exactsyn.cli.stopping.exit_after_interrupt
    _sys.exit(143 if _terminated else 130)
finally:
    if _main_thread:
        _signal.signal(_signal.SIGTERM, _previous)

__all__ = ["main"]
