"""The gate set of an optimisation: which gates the input may hold and the output may use.

A whole circuit has tens to thousands of lines, so its library is never enumerated
(:func:`exactsyn.core.library.make_library` lists every gate, which is fine for a
window of 3 or 4 lines but not for 64).  :class:`GateSet` answers "is this gate in the
library?" from the kinds, the control cap and the coupling graph, with the rules of
:mod:`exactsyn.core.library` (the tests compare the two on every gate of small line
counts), and builds the enumerated library of one window: the same kinds on the
window's lines, with the coupling graph the window's lines induce.

``auto`` picks the first preset that holds every gate of the input, in the order
``nct, mct, mixed, nct-swap, mct-swap, mixed-swap, nct-peres`` (so an X/CX/CCX circuit
stays in NCT), or the kind list of the gates when no preset does.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from functools import cached_property

from exactsyn.core.gates import Gate
from exactsyn.core.library import (
    KINDS,
    PRESET_KINDS,
    Edge,
    Library,
    capped_controls,
    connected,
    kinds_of,
    make_library,
    parse_coupling,
)
from exactsyn.errors import ExactsynError

AUTO = "auto"
AUTO_ORDER = ("nct", "mct", "mixed", "nct-swap", "mct-swap", "mixed-swap", "nct-peres")


def _kinds_of_gate(g: Gate) -> set[str]:
    """Kinds any one of which admits the gate (polarity aside; :data:`exactsyn.core.library.KINDS`)."""
    c = g.num_controls
    if g.family == "peres":
        return {"peres"}
    if g.family == "x":
        own = {0: "not", 1: "cnot", 2: "toffoli"}.get(c)
        return {"mct"} | ({own} if own else set())
    if c == 0:
        return {"swap"}
    return {"cswap", "fredkin"} if c == 1 else {"cswap"}


def _narrowest_kind(g: Gate) -> str:
    """The kind with the fewest gates that admits ``g``."""
    if g.family == "peres":
        return "peres"
    c = g.num_controls
    if g.family == "x":
        return {0: "not", 1: "cnot", 2: "toffoli"}.get(c, "mct")
    return {0: "swap", 1: "fredkin"}.get(c, "cswap")


def _kinds_admit(kinds: Iterable[str], g: Gate) -> bool:
    kind_set = set(kinds)
    return bool(_kinds_of_gate(g) & kind_set) and (not g.negative_controls or "negative" in kind_set)


@dataclass(frozen=True)
class GateSet:
    """A library by name (preset or kind list) on ``lines`` lines, with a control cap and coupling."""

    name: str
    lines: int
    kinds: tuple[str, ...]
    max_controls: int | None = None
    coupling: tuple[Edge, ...] = ()

    @cached_property
    def _kind_set(self) -> frozenset[str]:
        return frozenset(self.kinds)

    def why_not(self, g: Gate) -> str | None:
        """None when the gate is in the set, else the reason in a few words."""
        if not (_kinds_of_gate(g) & self._kind_set):
            return f"library {self.name} has no {g.name()} gate"
        if g.negative_controls and "negative" not in self._kind_set:
            return f"library {self.name} has no negative controls"
        if self.max_controls is not None and capped_controls(g) > self.max_controls:
            return f"it has more than {self.max_controls} controls"
        if any(line >= self.lines for line in g.lines):
            return f"it uses a line outside 0..{self.lines - 1}"
        if self.coupling and not connected(g.lines, self.coupling):
            return "its lines are not connected in the coupling graph"
        return None

    def allows(self, g: Gate) -> bool:
        return self.why_not(g) is None

    def induced(self, window_lines: tuple[int, ...]) -> tuple[Edge, ...]:
        """The coupling graph on ``window_lines`` (sorted), relabelled to 0..w-1."""
        if not self.coupling:
            return ()
        local = {line: i for i, line in enumerate(window_lines)}
        return tuple(sorted((local[a], local[b]) for a, b in self.coupling if a in local and b in local))

    def window_library(self, width: int, coupling: tuple[Edge, ...]) -> Library | None:
        """The library of a window of ``width`` lines whose lines induce the local ``coupling``
        (None when no gate fits).  With a coupling graph, a gate on two or more lines is kept
        only when its lines are connected by the local edges (none when there are none)."""
        try:
            full = make_library(self._library_name, width, self.max_controls, ())
        except ExactsynError:
            return None
        if not self.coupling:
            return full
        gates = tuple(g for g in full.gates if len(g.lines) == 1 or (coupling and connected(g.lines, coupling)))
        if not gates:
            return None
        label = full.name + "@" + (",".join(f"{a}-{b}" for a, b in coupling) or "none")
        return Library(label, width, gates, full.preset, full.control_cap, coupling)

    @property
    def _library_name(self) -> str:
        return self.name if self.name in PRESET_KINDS else ",".join(self.kinds)


def gate_set(
    name: str,
    lines: int,
    gates: Iterable[Gate] = (),
    max_controls: int | None = None,
    coupling: str | tuple[Edge, ...] = (),
) -> GateSet:
    """A :class:`GateSet` from a preset, a kind list or ``auto`` (chosen from ``gates``)."""
    edges = parse_coupling(coupling, lines) if isinstance(coupling, str) else tuple(sorted(coupling))
    if max_controls is not None and max_controls < 0:
        raise ExactsynError("max controls must be 0 or more")
    if name.strip().lower() != AUTO:
        key = name.strip().lower()
        kinds = kinds_of(key)
        label = key if key in PRESET_KINDS else ",".join(kinds)
        return GateSet(label, lines, kinds, max_controls, edges)
    gates = tuple(gates)
    for preset in AUTO_ORDER:
        if all(_kinds_admit(PRESET_KINDS[preset], g) for g in gates):
            return GateSet(preset, lines, PRESET_KINDS[preset], max_controls, edges)
    needed = {_narrowest_kind(g) for g in gates} | ({"negative"} if any(g.negative_controls for g in gates) else set())
    kinds = tuple(k for k in KINDS if k in needed)
    return GateSet(",".join(kinds), lines, kinds, max_controls, edges)
