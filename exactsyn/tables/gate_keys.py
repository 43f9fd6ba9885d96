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
#: A layer table steps by layers instead of gates: ``mct-layers`` holds, for every function,
#: its minimum depth over the ``mct`` gates (gates on disjoint lines share a layer).
LAYERS = "-layers"
LAYER_LIBRARIES = tuple(name + LAYERS for name in TABLE_LIBRARIES)


@dataclass(frozen=True)
class GateSet:
    """The steps of a table on ``layout.lines`` lines: ``keys[j]`` is the packed permutation of
    step ``j``, the gates ``steps[j]`` (one gate in library order for a gate table; a layer of
    gates on disjoint lines for a layer table).  ``gates`` are the library's gates."""

    library: str
    layout: KeyLayout
    gates: tuple[Gate, ...]
    keys: tuple[int, ...]
    steps: tuple[tuple[Gate, ...], ...] = ()

    def __post_init__(self) -> None:
        if not self.steps:
            object.__setattr__(self, "steps", tuple((g,) for g in self.gates))

    def __len__(self) -> int:
        return len(self.keys)

    @property
    def lines(self) -> int:
        return self.layout.lines

    def key_array(self) -> np.ndarray:
        return self.layout.array(self.keys)

    @cached_property
    def all_even(self) -> bool:
        return not any(self.layout.is_odd(k) for k in self.keys)

    def describe(self) -> list[str]:
        """One line per step (its gates' text forms), for manifests."""
        return [" ".join(str(g) for g in step) for step in self.steps]

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


def layers(gates: tuple[Gate, ...]) -> tuple[tuple[Gate, ...], ...]:
    """Every non-empty set of gates on pairwise disjoint lines (each in library order)."""
    out: list[tuple[Gate, ...]] = []

    def grow(start: int, used: frozenset[int], chosen: tuple[Gate, ...]) -> None:
        if chosen:
            out.append(chosen)
        for i in range(start, len(gates)):
            if used.isdisjoint(gates[i].lines):
                grow(i + 1, used | set(gates[i].lines), chosen + (gates[i],))

    grow(0, frozenset(), ())
    return tuple(out)


@lru_cache(maxsize=16)
def gate_set(library: str, lines: int = 4) -> GateSet:
    """The gates (or layers) of a preset on ``lines`` lines, checked for the two symmetries the tables use."""
    name = library.strip().lower()
    base = name[: -len(LAYERS)] if name.endswith(LAYERS) else name
    if base not in TABLE_LIBRARIES:
        names = ", ".join(TABLE_LIBRARIES + LAYER_LIBRARIES)
        raise ExactsynError(f"class tables exist for {names}, not {library!r}")
    lay = layout(lines)
    lib_gates = tuple(make_library(base, lines).gates)
    steps = layers(lib_gates) if name != base else tuple((g,) for g in lib_gates)
    keys = tuple(lay.pack(Circuit(lines, step).permutation()) for step in steps)
    key_set = set(keys)
    if len(key_set) != len(keys):
        raise ExactsynError(f"library {name}: two steps compute the same permutation")
    for step, k in zip(steps, keys, strict=True):
        if lay.compose(k, k) != lay.identity:
            raise ExactsynError(f"library {name}: {step} is not its own inverse; class tables do not apply")
        for sigma in lay.relabellings:
            if lay.conjugate(k, sigma) not in key_set:
                raise ExactsynError(f"library {name}: relabelling {step} leaves the library")
    return GateSet(name, lay, lib_gates, keys, steps)
