"""DIMACS CNF text and the hash that identifies a k-query in a certificate."""

from __future__ import annotations

import hashlib
from collections.abc import Iterable, Sequence


def dimacs_text(num_vars: int, clauses: Iterable[Sequence[int]], comments: Sequence[str] = ()) -> str:
    cls = list(clauses)
    head = "".join(f"c {c}\n" for c in comments)
    body = "".join(" ".join(map(str, cl)) + " 0\n" for cl in cls)
    return f"{head}p cnf {num_vars} {len(cls)}\n{body}"


def cnf_sha256(num_vars: int, clauses: Iterable[Sequence[int]]) -> str:
    """SHA-256 of the DIMACS text without comments: names the exact formula proved."""
    return hashlib.sha256(dimacs_text(num_vars, clauses).encode()).hexdigest()
