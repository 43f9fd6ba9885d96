"""Counts in words: ``1 gate``, ``2 gates``, ``1 entry``, ``3 entries`` — never ``1 gates`` or ``gate(s)``."""

from __future__ import annotations

_IRREGULAR = {"entry": "entries", "batch": "batches", "class": "classes", "query": "queries", "circuit(s)": "circuits"}


def plural(noun: str, n: int) -> str:
    """``noun`` for one, its plural otherwise."""
    if n == 1:
        return noun
    return _IRREGULAR.get(noun, noun + "s")


def count(n: int, noun: str) -> str:
    """``"1 gate"``, ``"2 gates"``, ``"0 entries"``."""
    return f"{n} {plural(noun, n)}"
