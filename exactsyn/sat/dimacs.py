"""DIMACS CNF text and the hash that identifies a k-query in a certificate."""

from __future__ import annotations

import hashlib
from collections.abc import Callable, Iterable, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from exactsyn.errors import ExactsynError
from exactsyn.version import __version__

if TYPE_CHECKING:  # types only
    from exactsyn.sat.encode import Encoding


def dimacs_text(num_vars: int, clauses: Iterable[Sequence[int]], comments: Sequence[str] = ()) -> str:
    cls = list(clauses)
    head = "".join(f"c {c}\n" for c in comments)
    body = "".join(" ".join(map(str, cl)) + " 0\n" for cl in cls)
    return f"{head}p cnf {num_vars} {len(cls)}\n{body}"


def cnf_sha256(num_vars: int, clauses: Iterable[Sequence[int]]) -> str:
    """SHA-256 of the DIMACS text without comments: names the exact formula proved."""
    return hashlib.sha256(dimacs_text(num_vars, clauses).encode()).hexdigest()


def dimacs_writer(directory: Path) -> Callable[[Encoding], None]:
    """A sink that writes every k-query as ``k05.cnf`` … into ``directory`` (for outside solvers).

    The clause order is the encoder's, so LRAT clause ids of a certificate refer to it.
    """
    try:
        directory.mkdir(exist_ok=True)
    except OSError as e:
        raise ExactsynError(f"cannot create {directory}: {e.strerror}") from None

    def sink(enc: Encoding) -> None:
        comments = [
            f"exactsyn {__version__}: does a circuit of exactly {enc.k} gates of library "
            f"{enc.library.name} meet the spec {enc.spec.name or ''}?",
            f"encoding {enc.options.name} v{enc.options.describe()['version']}, symmetry "
            f"{','.join(enc.options.symmetry) or 'none'}; variables ('g', d, j) = gate j at position d",
        ]
        path = directory / f"k{enc.k:02d}.cnf"
        try:
            path.write_text(dimacs_text(enc.num_vars, enc.clauses, comments))
        except OSError as e:
            raise ExactsynError(f"cannot write {path}: {e.strerror}") from None

    return sink
