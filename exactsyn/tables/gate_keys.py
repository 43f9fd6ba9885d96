"""The gates of a library as packed 4-line permutations (the one bridge to the gate model).

The tables work on packed keys (:mod:`exactsyn.tables.keys`); circuits leave this
subpackage as :class:`exactsyn.gates.Gate` objects.  This module is the only place that
imports the project's gate and library definitions, so moving those modules changes
one import block here.

A library qualifies for class tables when every gate is its own inverse and relabelling
the lines of a gate gives a gate of the library (then the optimum is constant on the
48-function classes of :mod:`exactsyn.tables.keys`); :func:`gate_set` checks both.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.tables import keys as perm4

#: Libraries the 4-line class tables are made for.
TABLE_LIBRARIES = ("mct", "nct", "mixed")


@dataclass(frozen=True)
class GateSet:
    """``keys[j]`` is the packed permutation of ``gates[j]`` (library order)."""

    library: str
    gates: tuple[Gate, ...]
    keys: tuple[int, ...]

    def __len__(self) -> int:
        return len(self.gates)

    def key_array(self) -> np.ndarray:
        return np.array(self.keys, dtype=np.uint64)

    @property
    def all_even(self) -> bool:
        return not any(perm4.is_odd(k) for k in self.keys)

    def describe(self) -> list[str]:
        """One line per gate (its text form), for manifests."""
        return [str(g) for g in self.gates]


def relabel_gate(gate: Gate, sigma: tuple[int, ...]) -> Gate:
    """The gate with line ``l`` renamed ``σ[l]``."""
    return Gate(
        gate.family,
        tuple(sigma[t] for t in gate.targets),
        tuple(sorted(sigma[c] for c in gate.controls)),
        tuple(sorted(sigma[c] for c in gate.negative_controls)),
    )


def circuit_key(gates: tuple[Gate, ...]) -> int:
    """Packed permutation computed by ``gates`` (application order), by simulation."""
    return perm4.pack(Circuit(perm4.LINES, gates).permutation())


@lru_cache(maxsize=8)
def gate_set(library: str) -> GateSet:
    """The gates of a preset on 4 lines, checked for the two symmetries the tables use."""
    name = library.strip().lower()
    if name not in TABLE_LIBRARIES:
        raise ExactsynError(f"4-line tables exist for {', '.join(TABLE_LIBRARIES)}, not {library!r}")
    lib = make_library(name, perm4.LINES)
    gates = tuple(lib.gates)
    keys = tuple(perm4.pack(g.permutation(perm4.LINES)) for g in gates)
    key_set = set(keys)
    if len(key_set) != len(keys):
        raise ExactsynError(f"library {name}: two gates compute the same permutation")
    for g, k in zip(gates, keys, strict=True):
        if perm4.compose(k, k) != perm4.IDENTITY:
            raise ExactsynError(f"library {name}: gate {g} is not its own inverse; class tables do not apply")
        for sigma in perm4.RELABELLINGS:
            if perm4.conjugate(k, sigma) not in key_set:
                raise ExactsynError(f"library {name}: relabelling gate {g} leaves the library")
    return GateSet(name, gates, keys)
