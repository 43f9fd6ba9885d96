"""Ctrl-C and SIGTERM end every command the same way: one line, what was kept, exit 130 or 143.

Python turns SIGINT into :class:`KeyboardInterrupt`, and every command cleans up on it
(workers are stopped, temporary files removed, finished work committed).  SIGTERM — what a
job scheduler or ``kill`` sends — is made to take the same path: its handler only notes
that it came, and a watcher thread, woken through :func:`signal.set_wakeup_fd` (so also
while the main thread is inside a SAT solver's C code, where Python runs no handler),
sends SIGINT to this process.  Python then raises the one :class:`KeyboardInterrupt` as
soon as the main thread is back in Python — every solve runs in short conflict-budget
slices, and python-sat's own SIGINT handler is switched off (:mod:`exactsyn.sat.sigint`
says why); there is never a second exception in the middle of a clean-up.  :func:`exit_status` gives 143 for
SIGTERM and 130 for Ctrl-C (128 + the signal number, the shells' convention).

A process that starts with SIGINT ignored (``cmd &`` in a non-interactive shell: the shell
ignores SIGINT for its background jobs) keeps ignoring a SIGINT from outside, but SIGTERM
must still stop it: while the block runs, SIGINT goes to a handler that raises
:class:`KeyboardInterrupt` only once a SIGTERM came (the watcher's own SIGINT).  Before
this, such a process let SIGTERM pass unnoticed and ran on.
"""

from __future__ import annotations

import contextlib
import os
import signal
import sys
import threading
from collections.abc import Iterator
from dataclasses import dataclass
from typing import NoReturn


@dataclass
class Signals:
    """Which signal stopped the command (set by the handlers of :func:`interrupts`)."""

    terminated: bool = False

    def exit_status(self) -> int:
        return 128 + (signal.SIGTERM if self.terminated else signal.SIGINT)

    def what(self) -> str:
        return "terminated (SIGTERM)" if self.terminated else "interrupted"


@contextlib.contextmanager
def interrupts() -> Iterator[Signals]:
    """SIGTERM raises :class:`KeyboardInterrupt` like Ctrl-C for as long as the block runs (module docstring).

    Only in the main thread of the main process; elsewhere nothing changes.
    """
    state = Signals()
    if threading.current_thread() is not threading.main_thread():
        yield state
        return
    read_end, write_end = os.pipe()
    os.set_blocking(write_end, False)

    def on_term(signum: int, frame: object) -> None:
        state.terminated = True  # the watcher sends SIGINT; raising here too could cut a clean-up short

    def watch() -> None:
        while True:
            try:
                data = os.read(read_end, 64)
            except OSError:
                return
            if not data:
                return
            if signal.SIGTERM in data:
                state.terminated = True
                os.kill(os.getpid(), signal.SIGINT)

    def on_int_when_ignored(signum: int, frame: object) -> None:
        if state.terminated:  # the watcher's SIGINT after a SIGTERM; a SIGINT from outside stays ignored
            raise KeyboardInterrupt

    ignored = signal.getsignal(signal.SIGINT) is signal.SIG_IGN
    previous_int = signal.signal(signal.SIGINT, on_int_when_ignored) if ignored else None
    previous = signal.signal(signal.SIGTERM, on_term)
    old_fd = signal.set_wakeup_fd(write_end, warn_on_full_buffer=False)
    watcher = threading.Thread(target=watch, name="exactsyn-signals", daemon=True)
    watcher.start()
    try:
        yield state
    finally:
        signal.set_wakeup_fd(old_fd)
        signal.signal(signal.SIGTERM, previous)
        if ignored:
            signal.signal(signal.SIGINT, previous_int)
        os.close(write_end)  # the watcher reads end-of-file and returns
        watcher.join(1.0)
        os.close(read_end)


def exit_after_interrupt(status: int) -> NoReturn:
    """``sys.exit(status)`` once an interrupt has been handled and reported.

    CPython 3.11 remembers a :class:`KeyboardInterrupt` that passed through code run by
    ``exec`` of a string (dataclasses build their methods that way while modules load) as
    *unhandled*, and a process started with ``python -m`` then ends by SIGINT, exit status
    -2 to its parent, whatever status it asked for (measured: a Ctrl-C at 0.34 s of
    ``python -m exactsyn synth``).  The mark is cleared by the next such ``exec`` that ends
    normally, so one empty ``exec`` before exiting keeps the promised 130 or 143.
    """
    exec("None")
    sys.exit(status)
