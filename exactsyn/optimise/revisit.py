"""Scans that found nothing are not repeated while the gates they looked at stay as they were.

The optimiser's passes grow a window from every position, round after round, until a round
changes nothing; most of the later rounds' scans look at gates no replacement touched.
A scan (:func:`exactsyn.optimise.windows.scan_window`) is a function of the gates it looked
at — from its seed to where it stopped, in order — of the width, the horizon and the
direction, and of whether it reached the end of the circuit; the window's answer is a
function of the window (every answerer gives the same answer to the same question, and
remembers it).  So a scan whose window was not replaced gives the same "nothing" as long as
the same gates lie in the same order from the same seed.

Gates are told apart by *occurrence*: each gate placed in the circuit gets a number that it
keeps while it stays (a replacement's new gates get new numbers; the gates a replacement
moves keep theirs, and moving them changes the order a later comparison sees).  A scan that
found nothing is remembered as the occurrences it looked at; a later scan from the same seed
occurrence, direction and width is skipped when the same occurrences lie there in the same
order (and, if the first scan reached the end of the circuit, this one would too).  Skipping
it changes no result, only the work (common practice: the dirty-region bookkeeping of
incremental program analysis).
"""

from __future__ import annotations


class Revisits:
    """Occurrence numbers of the current gate order and the scans that found nothing."""

    def __init__(self, gates: int) -> None:
        self.occ: list[int] = list(range(gates))
        self._next = gates
        self._empty: dict[tuple[int, bool, int], tuple[tuple[int, ...], bool]] = {}

    def splice(self, start: int, stop: int, before: list[int], new: int, after: list[int]) -> None:
        """Follow a replacement: positions ``start..stop`` become the old positions ``before``,
        ``new`` new gates, then the old positions ``after``."""
        occ = self.occ
        fresh = list(range(self._next, self._next + new))
        self._next += new
        occ[start:stop] = [occ[p] for p in before] + fresh + [occ[p] for p in after]

    def _seen(self, seed: int, forward: bool, stop: int) -> tuple[tuple[int, ...], bool]:
        """The occurrences a scan from ``seed`` to ``stop`` looked at, and whether it reached the end."""
        if forward:
            return tuple(self.occ[seed:stop]), stop >= len(self.occ)
        return tuple(self.occ[stop + 1 : seed + 1]), stop < 0

    def unchanged(self, seed: int, forward: bool, width: int) -> bool:
        """Did a scan from this seed, direction and width find nothing, with the same gates since?"""
        got = self._empty.get((self.occ[seed], forward, width))
        if got is None:
            return False
        seen, at_end = got
        if forward:
            stop = seed + len(seen)
            return tuple(self.occ[seed:stop]) == seen and (not at_end or stop == len(self.occ))
        stop = seed - len(seen)
        return stop >= -1 and tuple(self.occ[stop + 1 : seed + 1]) == seen and (not at_end or stop == -1)

    def found_nothing(self, seed: int, forward: bool, width: int, stop: int) -> None:
        """Remember a scan from ``seed`` that stopped before ``stop`` and found nothing."""
        self._empty[(self.occ[seed], forward, width)] = self._seen(seed, forward, stop)
