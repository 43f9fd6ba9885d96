"""The one exception type that carries a message meant for the user.

Every stage raises :class:`ExactsynError` for bad input (a malformed permutation, an
unknown library, an unreadable file, ...).  The command line turns it into one line on
stderr and exit status 2; nothing else in the package prints.
"""

from __future__ import annotations


class ExactsynError(Exception):
    """Bad input or an impossible request, with a one-line message for the user."""

    def __init__(self, message: str) -> None:
        super().__init__(message)
        self.message = message

    def __str__(self) -> str:
        return self.message


class NoCircuitError(ExactsynError):
    """No circuit of the library computes the function, or none was found within the limits (exit 1)."""
