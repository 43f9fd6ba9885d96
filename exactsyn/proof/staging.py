"""A certificate directory is complete or absent: written under a hidden name, renamed at the end.

The proofs of a search are written while it runs, ``result.json`` only at its end.  So that
an interrupt, a crash or a kill never leaves a directory that looks like a certificate but
is missing its ``result.json`` (or holds proofs of an earlier run beside a new one), every
file goes to a hidden sibling ``.<name>.partial-<pid>-<token>`` first
(:func:`stage`), which is renamed to the directory asked for once ``result.json`` is in it
(:func:`publish`; a certificate already there is replaced, in two renames) or removed
(:func:`discard`).  A killed process leaves at most the hidden directory, whose name says
what it is and which ``exactsyn check`` refuses in one line (it holds no ``result.json``).

The directory asked for is created, never the folders above it (the rule of every output
of the command line); a directory that already holds files other than a certificate's is
refused rather than replaced.
"""

from __future__ import annotations

import os
import re
import secrets
import shutil
from pathlib import Path

from exactsyn.errors import ExactsynError
from exactsyn.io.formats import path_problem

#: The files a certificate directory may hold (result.json, its temporary, the proofs).
_OWN = re.compile(r"result\.json(\.tmp)?|[\w.-]+\.lrat\.gz")


def _check_target(target: Path) -> None:
    if target.exists() and not target.is_dir():
        raise ExactsynError(f"certificate directory {target} is a file")
    parent = target.parent
    if not parent.is_dir():
        raise ExactsynError(f"cannot write certificate {target}: {parent} is not a directory (create it first)")
    if target.is_dir():
        foreign = sorted(p.name for p in target.iterdir() if not _OWN.fullmatch(p.name))
        if foreign:
            raise ExactsynError(
                f"certificate directory {target} holds other files ({foreign[0]}"
                + (f" and {len(foreign) - 1} more" if len(foreign) > 1 else "")
                + "); give a new or empty directory, or a certificate directory to replace"
            )


def stage(target: Path) -> Path:
    """A fresh hidden directory beside ``target`` for the certificate's files (module docstring)."""
    _check_target(target)
    work = target.parent / f".{target.name}.partial-{os.getpid()}-{secrets.token_hex(4)}"
    try:
        work.mkdir()
    except OSError as e:
        raise ExactsynError(f"cannot write certificate {target}: {path_problem(work, e)}") from None
    return work


def publish(work: Path, target: Path) -> Path:
    """Move the finished certificate in ``work`` to ``target`` (replacing a certificate there)."""
    old: Path | None = None
    try:
        if target.exists():
            _check_target(target)  # nothing else was put there meanwhile
            old = target.parent / f".{target.name}.old-{secrets.token_hex(4)}"
            target.rename(old)
        work.rename(target)
    except OSError as e:
        if old is not None and not target.exists():
            old.rename(target)  # put the earlier certificate back
        raise ExactsynError(f"cannot write certificate {target}: {path_problem(target, e)}") from None
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)
    return target


def discard(work: Path) -> None:
    """Remove a staged directory (the search did not finish)."""
    shutil.rmtree(work, ignore_errors=True)
