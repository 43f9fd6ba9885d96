"""The states a window can start in, by simulating the circuit's prefix on every honoured input.

With zero lines (clean ancillas, :mod:`exactsyn.optimise.driver`) only the inputs with those
lines 0 matter.  When there are few enough of them, the current circuit is simulated on all
of them at once (the bit-parallel simulation of :mod:`exactsyn.optimise.equivalence`), and
the states of a window's lines where it starts are read off: exactly the states that window
can be in, on some honoured input.  That is never fewer don't-cares than the zero-line rules
give (a line those rules know to be 0 is 0 in every simulated state) and often more: a carry
computed earlier is a function of the lines it was computed from.

Why a replacement that agrees with the window on these states keeps the circuit's function
on every honoured input: on each such input the window starts in one of them, so the
replacement leaves the same state behind and every later gate sees what it saw before.

The simulated states are kept per position (the state before each gate) and dropped from a
position on when the gates there change; only used while the free lines are at most
:data:`MAX_FREE_LINES` and the kept states fit in :data:`MAX_BYTES` (else the driver falls
back to the zero-line rules).
"""

from __future__ import annotations

import numpy as np

from exactsyn.core.gates import Gate
from exactsyn.optimise.equivalence import compile_gates, honoured_vectors, simulate

#: Free lines (not declared zero) up to which the prefix is simulated on every honoured input.
MAX_FREE_LINES = 16
#: Bytes the kept states may take (one ``lines × words`` array per gate position).
MAX_BYTES = 64 << 20


class ReachableStates:
    """States before each position of the gate order ``seq`` (ids into ``gates``), on every
    honoured input; ``seq`` and ``gates`` are the driver's own lists, read as they change."""

    def __init__(self, lines: int, zero_lines: tuple[int, ...], seq: list[int], gates: list[Gate]) -> None:
        init, exhaustive, count = honoured_vectors(lines, zero_lines, MAX_FREE_LINES, 0, 0)
        assert exhaustive
        self.seq, self.gates, self.count = seq, gates, count
        self.snapshots: list[np.ndarray] = [init]

    @staticmethod
    def fits(lines: int, zero_lines: tuple[int, ...], gate_count: int) -> bool:
        free = lines - len(zero_lines)
        words = max(1, (1 << free) // 64)
        return free <= MAX_FREE_LINES and (gate_count + 1) * lines * words * 8 <= MAX_BYTES

    def before(self, position: int) -> np.ndarray:
        """The state before the gate at ``position`` (simulated on demand from the last kept one)."""
        while len(self.snapshots) <= position:
            state = self.snapshots[-1].copy()
            simulate(state, compile_gates((self.gates[self.seq[len(self.snapshots) - 1]],)))
            self.snapshots.append(state)
        return self.snapshots[position]

    def changed(self, position: int) -> None:
        """The gates from ``position`` on changed: forget the states after it."""
        del self.snapshots[position + 1 :]

    def window_states(self, start: int, before: tuple[int, ...], lines: tuple[int, ...]) -> tuple[int, ...]:
        """The distinct states of ``lines`` (local bit ``i`` = ``lines[i]``) where a window at
        ``start`` begins, the gates at positions ``before`` moved in front of it."""
        state = self.before(start)
        if before:
            state = state.copy()
            simulate(state, compile_gates(tuple(self.gates[self.seq[p]] for p in before)))
        rows = np.ascontiguousarray(state[list(lines)])
        bits = np.unpackbits(rows.view(np.uint8), axis=1, bitorder="little")[:, : self.count]
        local = np.zeros(self.count, dtype=np.int64)
        for i in range(len(lines)):
            local |= bits[i].astype(np.int64) << i
        return tuple(int(v) for v in np.unique(local))

    def never(self, position: int, controls: tuple[int, ...], negative: tuple[int, ...]) -> bool:
        """Is the control condition of a gate at ``position`` false in every state there?"""
        if not controls and not negative:
            return False
        state = self.before(position)
        cond = np.full(state.shape[1], np.uint64(0xFFFF_FFFF_FFFF_FFFF))
        for c in controls:
            cond &= state[c]
        for c in negative:
            cond &= ~state[c]
        bits = np.unpackbits(cond.view(np.uint8), bitorder="little")[: self.count]
        return not bits.any()
