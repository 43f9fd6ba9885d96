"""The one exception type that carries a message meant for the user.

Every stage raises :class:`ExactsynError` for bad input (a malformed permutation, an
unknown library, an unreadable file, ...).  The command line turns it into one line on
stderr and exit status 2; nothing else in the package prints.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable


class ExactsynError(Exception):
    """Bad input or an impossible request, with a one-line message for the user."""

    def __init__(self, message: str) -> None:
        super().__init__(message)
        self.message = message

    def __str__(self) -> str:
        return self.message


class NoCircuitError(ExactsynError):
    """No circuit of the library computes the function, or none was found within the limits (exit 1)."""


def did_you_mean(word: object, choices: Iterable[object]) -> str:
    """``"; did you mean 'x'?"`` for the closest choice (difflib), or ``""`` when none is close."""
    options = [str(c) for c in choices]
    close = difflib.get_close_matches(str(word).strip().lower(), options, n=1, cutoff=0.6)
    if not close:
        close = difflib.get_close_matches(str(word).strip(), options, n=1, cutoff=0.6)
    return f"; did you mean {close[0]!r}?" if close else ""


class Interrupted(KeyboardInterrupt):
    """Ctrl-C or SIGTERM, after the command cleaned up: ``kept`` says in a few words what stays on
    disk (the command line prints it on its one line)."""

    def __init__(self, kept: str) -> None:
        super().__init__(kept)
        self.kept = kept


def is_interrupt(error: BaseException) -> bool:
    """Is this the error a SAT solver of python-sat raises when SIGINT reaches it mid-solve?

    python-sat would install its own SIGINT handler around every solve (also where SIGINT
    is ignored) and turn the signal into an ordinary exception.  :mod:`exactsyn.sat.sigint`
    switches that handler off; should it ever fire, callers turn its exception back into
    :class:`KeyboardInterrupt` so that an interrupt is never taken for a failed item.
    """
    return type(error).__name__ == "error" and "keyboard interrupt" in str(error).lower()
