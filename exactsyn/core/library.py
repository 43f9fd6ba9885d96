"""Gate libraries: which gates a circuit may use, and on which lines.

A library is a list of gate *kinds* (names of our own; the gates are the trade's), an
optional cap on the number of controls, and an optional coupling graph.

Kinds:

* ``not``, ``cnot``, ``toffoli`` — ``x`` gates with 0, 1 and 2 controls;
* ``mct`` — every multiple-control Toffoli gate (0 to n − 1 controls);
* ``swap`` — SWAP; ``fredkin`` — the swap with one control (Fredkin & Toffoli 1982);
  ``cswap`` — swaps with one or more controls (the Fredkin family);
* ``peres`` — the Peres gate as a gate of its own (:func:`exactsyn.core.gates.peres_gate`);
* ``negative`` — a modifier: controls of ``x`` and swap gates may also be negative
  (mixed polarity), every combination of polarities is a gate of its own.

Presets: ``nct`` = not,cnot,toffoli; ``mct`` (on 4 lines 4 + 12 + 12 + 4 = 32 gates,
the library of Golubitsky, Falconer & Maslov, DAC 2010); ``mixed`` = mct,negative;
``nct-swap`` = not,cnot,toffoli,swap,fredkin; ``mct-swap`` = mct,swap,cswap;
``mixed-swap`` = mct,swap,cswap,negative; ``nct-peres`` = not,cnot,toffoli,peres.

``max_controls`` caps the number of controls of every kind (a Peres gate counts as
its Toffoli: 2 controls).

Connectivity (:func:`parse_coupling`): with a coupling graph on the lines, a gate on one
line is always allowed, a gate on two lines only when they are a coupled pair, and a gate
on more lines only when its lines (targets and controls) form a connected set of the
coupling graph.

The order of :attr:`Library.gates` is fixed (kind, then fewer controls first); symmetry
breaking in the encoder uses it as the "lexicographic" order of gates.
"""

from __future__ import annotations

from dataclasses import dataclass
from itertools import combinations, permutations, product

import numpy as np

from exactsyn.caches import memo
from exactsyn.core.gates import Gate, peres_gate, permutation_is_odd, swap_gate, x_gate
from exactsyn.errors import ExactsynError, did_you_mean

KINDS = {
    "not": "NOT (x gate, no control)",
    "cnot": "CNOT (one control)",
    "toffoli": "Toffoli (two controls)",
    "mct": "multiple-control Toffoli, 0 to n-1 controls",
    "swap": "SWAP",
    "fredkin": "Fredkin (controlled swap, one control)",
    "cswap": "controlled swaps with one or more controls",
    "peres": "Peres gate (Toffoli then CNOT, as one gate)",
    "negative": "modifier: controls may also be negative (mixed polarity)",
}
PRESET_KINDS = {
    "nct": ("not", "cnot", "toffoli"),
    "mct": ("mct",),
    "mixed": ("mct", "negative"),
    "nct-swap": ("not", "cnot", "toffoli", "swap", "fredkin"),
    "mct-swap": ("mct", "swap", "cswap"),
    "mixed-swap": ("mct", "swap", "cswap", "negative"),
    "nct-peres": ("not", "cnot", "toffoli", "peres"),
}
PRESETS = {
    "nct": "NOT, CNOT, Toffoli (x gates with at most 2 controls)",
    "mct": "all multiple-control Toffoli gates (up to n-1 controls)",
    "mixed": "mct with mixed-polarity (positive and negative) controls",
    "nct-swap": "nct plus SWAP and Fredkin",
    "mct-swap": "mct plus SWAP and controlled swaps with any number of controls",
    "mixed-swap": "mixed-polarity mct and controlled swaps",
    "nct-peres": "nct plus the Peres gate",
}

Edge = tuple[int, int]


@dataclass(frozen=True)
class Library:
    name: str
    lines: int
    gates: tuple[Gate, ...]
    preset: str = ""  # a preset name or a comma-separated kind list: make_library rebuilds it
    control_cap: int | None = None
    coupling: tuple[Edge, ...] = ()  # empty: every set of lines may interact

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
        return all(g.family == "x" for g in self.gates)

    @property
    def involutive(self) -> bool:
        """True when every gate is its own inverse (no Peres gate)."""
        return all(g.is_involution for g in self.gates)

    @property
    def max_controls(self) -> int:
        return max((g.num_controls for g in self.gates), default=0)

    @property
    def all_even(self) -> bool:
        """True when every gate is an even permutation of the 2^n states.

        An ``x`` gate with ``c`` controls on ``n`` lines is a product of 2^(n−1−c)
        disjoint transpositions, so it is odd only when ``c = n − 1`` (Shende, Prasad,
        Markov, Hayes, IEEE TCAD 22(6), 2003); a swap with ``c`` controls is 2^(n−2−c)
        transpositions.  Here the parity of every gate is computed from its permutation.
        """
        return not any(permutation_is_odd(g.permutation(self.lines)) for g in self.gates)


@memo(maxsize=32)
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


def kinds_of(name: str) -> tuple[str, ...]:
    """The kind list of a preset or of a comma-separated list of kinds (validated, sorted)."""
    key = name.strip().lower()
    if key in PRESET_KINDS:
        return PRESET_KINDS[key]
    kinds = tuple(k.strip() for k in key.split(",") if k.strip())
    bad = [k for k in kinds if k not in KINDS]
    if bad or not kinds:
        if len(kinds) > 1:
            raise ExactsynError(
                f"unknown gate kind {bad[0]!r} in library {name!r}{did_you_mean(bad[0], KINDS)} "
                f"(kinds: {', '.join(KINDS)})"
            )
        raise ExactsynError(
            f"unknown library {name!r}{did_you_mean(key, list(PRESETS) + list(KINDS))} "
            f"(choose a preset: {', '.join(PRESETS)}; or a comma-separated list of kinds: {', '.join(KINDS)})"
        )
    if kinds == ("negative",):
        raise ExactsynError("library 'negative' has no gates: add a kind such as mct")
    return tuple(k for k in KINDS if k in kinds)


def _polarities(controls: tuple[int, ...], mixed: bool) -> list[tuple[tuple[int, ...], tuple[int, ...]]]:
    if not mixed:
        return [(controls, ())]
    out = []
    for signs in product((True, False), repeat=len(controls)):
        pos = tuple(c for c, s in zip(controls, signs, strict=True) if s)
        neg = tuple(c for c, s in zip(controls, signs, strict=True) if not s)
        out.append((pos, neg))
    return out


def _gates(lines: int, kinds: tuple[str, ...]) -> list[Gate]:
    """Every gate of the given kinds on ``lines`` lines, in library order."""
    mixed = "negative" in kinds
    x_counts: set[int] = set()
    swap_counts: set[int] = set()
    for kind, counts, target in (
        ("not", {0}, x_counts),
        ("cnot", {1}, x_counts),
        ("toffoli", {2}, x_counts),
        ("mct", set(range(lines)), x_counts),
        ("swap", {0}, swap_counts),
        ("fredkin", {1}, swap_counts),
        ("cswap", set(range(1, lines)), swap_counts),
    ):
        if kind in kinds:
            target.update(counts)
    gates: set[Gate] = set()
    for c in x_counts:
        for t in range(lines):
            for ctl in combinations([x for x in range(lines) if x != t], c):
                gates.update(x_gate(t, pos, neg) for pos, neg in _polarities(ctl, mixed))
    for c in swap_counts:
        for a, b in combinations(range(lines), 2):
            for ctl in combinations([x for x in range(lines) if x not in (a, b)], c):
                gates.update(swap_gate(a, b, pos, neg) for pos, neg in _polarities(ctl, mixed))
    if "peres" in kinds:
        gates.update(peres_gate(a, b, c) for a, b, c in permutations(range(lines), 3))
    return sorted(gates, key=Gate.sort_key)


def parse_coupling(text: str, lines: int) -> tuple[Edge, ...]:
    """Coupled line pairs from ``"0-1-2-3"`` (a path), ``"0-1,1-2,0-2"`` (pairs and paths),
    or the words ``chain`` (0-1-…-(n−1)), ``ring`` (a chain closed to a cycle) and ``star``
    (line 0 coupled to every other).  ``""`` or ``all`` means no restriction."""
    word = text.strip().lower()
    if word in ("", "all"):
        return ()
    if word in ("chain", "ring", "star"):
        if word == "star":
            return tuple((0, i) for i in range(1, lines))
        path = [(i, i + 1) for i in range(lines - 1)]
        if word == "ring" and lines > 2:
            path.append((0, lines - 1))
        return tuple(sorted(path))
    edges: set[Edge] = set()
    for part in word.replace(" ", "").split(","):
        if not part:
            continue
        try:
            nodes = [int(x) for x in part.split("-")]
        except ValueError:
            raise ExactsynError(
                f"coupling {text!r}: write line pairs or paths such as 0-1,1-2 or 0-1-2-3, or chain/ring/star"
            ) from None
        if len(nodes) < 2:
            raise ExactsynError(f"coupling {text!r}: {part!r} is not a pair of lines")
        for a, b in zip(nodes, nodes[1:], strict=False):
            edges.add(_edge(a, b, lines, text))
    return tuple(sorted(edges))


def _edge(a: int, b: int, lines: int, text: str) -> Edge:
    if not (0 <= a < lines and 0 <= b < lines):
        raise ExactsynError(f"coupling {text!r}: line {max(a, b)} is outside 0..{lines - 1}")
    if a == b:
        raise ExactsynError(f"coupling {text!r}: line {a} is coupled to itself")
    return (min(a, b), max(a, b))


def connected(lines: frozenset[int], edges: tuple[Edge, ...]) -> bool:
    """True when ``lines`` induce a connected subgraph of the coupling graph."""
    todo = set(lines)
    if len(todo) <= 1:
        return True
    stack = [todo.pop()]
    while stack:
        u = stack.pop()
        for a, b in edges:
            for x, y in ((a, b), (b, a)):
                if x == u and y in todo:
                    todo.remove(y)
                    stack.append(y)
    return not todo


def capped_controls(gate: Gate) -> int:
    """The controls ``--max-controls`` counts: a Peres gate counts as its Toffoli (2)."""
    return 2 if gate.family == "peres" else gate.num_controls


def make_library(
    name: str,
    lines: int,
    max_controls: int | None = None,
    coupling: tuple[Edge, ...] | str = (),
) -> Library:
    """Build a library from a preset or kind list, optionally capping controls and coupling lines."""
    kinds = kinds_of(name)
    key = name.strip().lower()
    key = key if key in PRESET_KINDS else ",".join(kinds)
    if lines < 1:
        raise ExactsynError("a library needs at least one line")
    if max_controls is not None and max_controls < 0:
        raise ExactsynError("max controls must be 0 or more")
    edges = parse_coupling(coupling, lines) if isinstance(coupling, str) else tuple(sorted(coupling))
    for a, b in edges:
        _edge(a, b, lines, str(coupling))
    full = _gates(lines, kinds)
    most = max((capped_controls(g) for g in full), default=0)
    cap = most if max_controls is None else min(most, max_controls)
    gates = [g for g in full if capped_controls(g) <= cap and (not edges or connected(g.lines, edges))]
    if not gates:
        raise ExactsynError(f"library {key!r} has no gate on {lines} lines with these limits")
    label = key
    if cap < most:
        label += f":c{cap}"
    if edges:
        label += "@" + ",".join(f"{a}-{b}" for a, b in edges)
    return Library(label, lines, tuple(gates), key, cap, edges)
