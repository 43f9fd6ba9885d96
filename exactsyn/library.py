"""Gate libraries: which gates a circuit may use.

Presets (names of our own; the gates are the trade's):

* ``nct`` — NOT, CNOT and Toffoli: ``x`` gates with at most 2 positive controls.
* ``mct`` — every multiple-control Toffoli gate on ``n`` lines: up to ``n − 1``
  positive controls (on 4 lines, 4 + 12 + 12 + 4 = 32 gates, the library of
  Golubitsky, Falconer & Maslov, DAC 2010).

``max_controls`` caps the number of controls of any preset.  The order of
:attr:`Library.gates` is fixed (fewer controls first); symmetry breaking in the
encoder uses it as the "lexicographic" order of gates.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from itertools import combinations

import numpy as np

from exactsyn.errors import ExactsynError
from exactsyn.gates import Gate, x_gate

PRESETS = {
    "nct": "NOT, CNOT, Toffoli (x gates with at most 2 controls)",
    "mct": "all multiple-control Toffoli gates (up to n-1 controls)",
}


@dataclass(frozen=True)
class Library:
    name: str
    lines: int
    gates: tuple[Gate, ...]
    preset: str = ""
    control_cap: int | None = None  # make_library(preset, lines, control_cap) rebuilds it

    def __len__(self) -> int:
        return len(self.gates)

    def index(self, gate: Gate) -> int:
        return self.gates.index(gate)

    def contains(self, gate: Gate) -> bool:
        return gate in self._set

    @property
    def _set(self) -> frozenset[Gate]:
        return frozenset(self.gates)

    @property
    def only_x(self) -> bool:
        return all(g.kind == "x" for g in self.gates)

    @property
    def max_controls(self) -> int:
        return max((g.num_controls for g in self.gates), default=0)

    @property
    def all_even(self) -> bool:
        """True when every gate is an even permutation of the 2^n states.

        An ``x`` gate with ``c`` controls on ``n`` lines is a product of 2^(n−1−c)
        disjoint transpositions, so it is odd only when ``c = n − 1`` (Shende, Prasad,
        Markov, Hayes, IEEE TCAD 22(6), 2003).  A swap with ``c`` controls is
        2^(n−2−c) transpositions: odd only when ``c = n − 2``.
        """
        for g in self.gates:
            free = self.lines - len(g.lines)
            if g.kind == "x" and free == 0:
                return False
            if g.kind == "swap" and free == 0:
                return False
        return True


@lru_cache(maxsize=32)
def gate_table(library: Library) -> np.ndarray:
    """``(len(library), 2**n)`` uint8 matrix, read-only: row ``j`` is gate ``j`` as a permutation."""
    size = 1 << library.lines
    states = np.arange(size, dtype=np.int64)
    if not library.gates:
        table = np.zeros((0, size), dtype=np.uint8)
    else:
        table = np.stack([g.apply(states) for g in library.gates]).astype(np.uint8)
    table.flags.writeable = False
    return table


def mct_gates(lines: int, max_controls: int) -> list[Gate]:
    gates = []
    for c in range(0, max_controls + 1):
        for t in range(lines):
            others = [line for line in range(lines) if line != t]
            for ctl in combinations(others, c):
                gates.append(x_gate(t, ctl))
    return sorted(gates, key=Gate.sort_key)


def make_library(name: str, lines: int, max_controls: int | None = None) -> Library:
    """Build a preset library on ``lines`` lines, optionally capping the controls."""
    key = name.strip().lower()
    if key not in PRESETS:
        raise ExactsynError(f"unknown library {name!r}; choose one of: {', '.join(PRESETS)}")
    if lines < 1:
        raise ExactsynError("a library needs at least one line")
    if max_controls is not None and max_controls < 0:
        raise ExactsynError("max controls must be 0 or more")
    cap = {"nct": 2, "mct": lines - 1}[key]
    if max_controls is not None:
        cap = min(cap, max_controls)
    cap = min(cap, lines - 1)
    label = key if max_controls is None or cap == {"nct": 2, "mct": lines - 1}[key] else f"{key}:c{cap}"
    return Library(label, lines, tuple(mct_gates(lines, cap)), key, cap)
