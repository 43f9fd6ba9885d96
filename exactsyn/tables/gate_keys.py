"""The gates of a library as packed permutations (the one bridge to the gate model).

The tables work on packed keys (:mod:`exactsyn.tables.keys`); circuits leave this
subpackage as :class:`exactsyn.core.gates.Gate` objects.  This module is the only place
that imports the project's gate and library definitions, so moving those modules changes
one import block here.

A library qualifies for class tables when every gate is its own inverse and relabelling
the lines of a gate gives a gate of the library (then the optimum is constant on the
classes of :mod:`exactsyn.tables.keys`, ``2·n!`` transforms); :func:`gate_set` checks both.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property, lru_cache

import numpy as np

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.tables.keys import KeyLayout, layout

#: Libraries class tables are made for (on every line count the engine has).
TABLE_LIBRARIES = ("mct", "nct", "mixed")


@dataclass(frozen=True)
class GateSet:
    """``keys[j]`` is the packed permutation of ``gates[j]`` (library order) on ``layout.lines`` lines."""

    library: str
    layout: KeyLayout
    gates: tuple[Gate, ...]
    keys: tuple[int, ...]

    def __len__(self) -> int:
        return len(self.gates)

    @property
    def lines(self) -> int:
        return self.layout.lines

    def key_array(self) -> np.ndarray:
        return self.layout.array(self.keys)

    @cached_property
    def all_even(self) -> bool:
        return not any(self.layout.is_odd(k) for k in self.keys)

    def describe(self) -> list[str]:
        """One line per gate (its text form), for manifests."""
        return [str(g) for g in self.gates]

    def circuit_key(self, gates: tuple[Gate, ...]) -> int:
        """Packed permutation computed by ``gates`` (application order), by simulation."""
        return self.layout.pack(Circuit(self.lines, gates).permutation())


def relabel_gate(gate: Gate, sigma: tuple[int, ...]) -> Gate:
    """The gate with line ``l`` renamed ``σ[l]``."""
    return Gate(
        gate.family,
        tuple(sigma[t] for t in gate.targets),
        tuple(sorted(sigma[c] for c in gate.controls)),
        tuple(sorted(sigma[c] for c in gate.negative_controls)),
    )


@lru_cache(maxsize=16)
def gate_set(library: str, lines: int = 4) -> GateSet:
    """The gates of a preset on ``lines`` lines, checked for the two symmetries the tables use."""
    name = library.strip().lower()
    if name not in TABLE_LIBRARIES:
        raise ExactsynError(f"class tables exist for {', '.join(TABLE_LIBRARIES)}, not {library!r}")
    lay = layout(lines)
    lib = make_library(name, lines)
    gates = tuple(lib.gates)
    keys = tuple(lay.pack(g.permutation(lines)) for g in gates)
    key_set = set(keys)
    if len(key_set) != len(keys):
        raise ExactsynError(f"library {name}: two gates compute the same permutation")
    for g, k in zip(gates, keys, strict=True):
        if lay.compose(k, k) != lay.identity:
            raise ExactsynError(f"library {name}: gate {g} is not its own inverse; class tables do not apply")
        for sigma in lay.relabellings:
            if lay.conjugate(k, sigma) not in key_set:
                raise ExactsynError(f"library {name}: relabelling gate {g} leaves the library")
    return GateSet(name, lay, gates, keys)
