"""What every command shares: the one-line error and writing output."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import NoReturn

import click

from exactsyn.errors import ExactsynError
from exactsyn.io.formats import write_data


def fail(message: str, code: int = 2) -> NoReturn:
    """One line on stderr, then exit (2 = bad input, 1 = no circuit within the limits)."""
    click.echo(f"exactsyn: error: {message}", err=True)
    sys.exit(code)


def emit(data: str | bytes, output: str | Path | None) -> None:
    """Print ``data`` to stdout, or write it to ``output`` (binary data only to a file or a pipe)."""
    if output is not None:
        write_data(data, output)
        return
    if isinstance(data, bytes):
        if sys.stdout.isatty():
            raise ExactsynError("PNG is binary: give -o FILE or redirect stdout to a file")
        click.echo(data, nl=False)  # bytes go to the binary stream
        return
    click.echo(data, nl=not data.endswith("\n"))
