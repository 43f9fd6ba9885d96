"""Circuits: a line count and a sequence of gates in application order.

Simulation runs all ``2**n`` basis states at once through numpy; it is the reference
semantics against which every synthesised circuit is checked before it is shown.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from exactsyn.core.gates import Gate
from exactsyn.errors import ExactsynError

#: Up to this many lines a long circuit is simulated gate by gate as permutation tables (:meth:`Circuit.apply`).
TABLE_LINES = 12


@dataclass(frozen=True)
class Circuit:
    lines: int
    gates: tuple[Gate, ...] = ()

    def __post_init__(self) -> None:
        for g in self.gates:
            if any(line >= self.lines for line in g.lines):
                raise ExactsynError(f"gate {g} uses a line outside 0..{self.lines - 1}")

    def __len__(self) -> int:
        return len(self.gates)

    @property
    def gate_count(self) -> int:
        return len(self.gates)

    def apply(self, states: np.ndarray) -> np.ndarray:
        """Run an integer array of input states through the circuit.

        A long circuit on few lines (a gate definition expanded many times) repeats few
        distinct gates: each is then applied as its permutation of the ``2**n`` states,
        made once by :meth:`Gate.apply` and looked up for every later copy.
        """
        out = np.asarray(states, dtype=np.int64).copy()
        size = 1 << self.lines
        outside = out.size > 0 and (int(out.min()) < 0 or int(out.max()) >= size)
        if self.lines > TABLE_LINES or len(self.gates) <= size or outside:
            for g in self.gates:
                out = g.apply(out)
            return out
        everything = np.arange(size, dtype=np.int64)
        tables: dict[Gate, np.ndarray] = {}
        perm = everything
        for g in self.gates:
            table = tables.get(g)
            if table is None:
                table = tables[g] = g.apply(everything)
            perm = table[perm]
        return perm[out]

    def permutation(self) -> tuple[int, ...]:
        """``p[i]`` is the output for input ``i``."""
        return tuple(int(v) for v in self.apply(np.arange(1 << self.lines, dtype=np.int64)))

    def inverse(self) -> Circuit:
        """The gates backwards; a Peres gate (not self-inverse) becomes its CNOT, then its Toffoli."""
        out: list[Gate] = []
        for g in reversed(self.gates):
            out.extend(g.inverse_gates())
        return Circuit(self.lines, tuple(out))

    def then(self, other: Circuit) -> Circuit:
        """This circuit followed by ``other``."""
        if other.lines != self.lines:
            raise ExactsynError("cannot join circuits on different numbers of lines")
        return Circuit(self.lines, self.gates + other.gates)

    def depth(self) -> int:
        """Layers when gates on disjoint lines share a layer (greedy ASAP packing)."""
        level = [0] * self.lines
        for g in self.gates:
            lv = max(level[line] for line in g.lines) + 1
            for line in g.lines:
                level[line] = lv
        return max(level, default=0)
