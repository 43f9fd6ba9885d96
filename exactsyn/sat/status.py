"""The answer of one SAT query: one type for every query of the search, objectives and batches."""

from __future__ import annotations

from enum import StrEnum


class Status(StrEnum):
    """``sat`` (a circuit exists), ``unsat`` (refuted), ``unknown`` (time ran out).

    A :class:`~enum.StrEnum`: it compares equal to, prints as and serialises to the plain
    strings ``"sat"``, ``"unsat"`` and ``"unknown"`` that JSON results and certificates hold.
    """

    SAT = "sat"
    UNSAT = "unsat"
    UNKNOWN = "unknown"
