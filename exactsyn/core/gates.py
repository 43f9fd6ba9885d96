"""Reversible gates: the multiple-control Toffoli family and the controlled-swap family.

Conventions (kept stable, scripts outside the project rely on them): a state of ``n``
lines is an integer; line ``l`` carries bit ``l`` (line 0 is the least significant bit).

* ``family == "x"``: one target; the target bit is flipped when every positive control
  is 1 and every negative control is 0.  NOT, CNOT, Toffoli and the multiple-control
  Toffoli gates (MCT) are the cases with 0, 1, 2 and more positive controls
  (Toffoli, "Reversible computing", ICALP 1980).
* ``family == "swap"``: two targets whose bits are exchanged under the same control rule
  (SWAP, Fredkin and its multiple-control relatives; Fredkin & Toffoli, "Conservative
  logic", 1982).
* ``family == "peres"``: the Peres gate (Peres, "Reversible logic and quantum
  computers", Phys. Rev. A 32, 1985) as a gate of its own: ``controls == (a,)`` and
  ``targets == (b, c)``; it maps ``c ← c ⊕ a·b`` and then ``b ← b ⊕ a`` (a Toffoli
  on ``c`` followed by a CNOT on ``b``).  It has no negative controls.

Every ``x`` and ``swap`` gate is its own inverse; a Peres gate is not (its inverse is
the CNOT first, then the Toffoli), see :meth:`Gate.is_involution`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from exactsyn.errors import ExactsynError

GATE_FAMILIES = ("x", "swap", "peres")


@dataclass(frozen=True)
class Gate:
    """One gate.  Build with :func:`x_gate` / :func:`swap_gate`, which validate."""

    family: str
    targets: tuple[int, ...]
    controls: tuple[int, ...] = ()
    negative_controls: tuple[int, ...] = ()

    # ----------------------------------------------------------------- structure
    @property
    def target(self) -> int:
        """The single target of an ``x`` gate (the first target of a swap)."""
        return self.targets[0]

    @property
    def lines(self) -> frozenset[int]:
        """Every line the gate touches (targets and both kinds of control)."""
        return frozenset(self.targets + self.controls + self.negative_controls)

    @property
    def num_controls(self) -> int:
        return len(self.controls) + len(self.negative_controls)

    @property
    def positive_mask(self) -> int:
        return _mask(self.controls)

    @property
    def negative_mask(self) -> int:
        return _mask(self.negative_controls)

    @property
    def target_mask(self) -> int:
        return _mask(self.targets)

    @property
    def is_involution(self) -> bool:
        """True when the gate is its own inverse (every family but Peres)."""
        return self.family != "peres"

    def inverse_gates(self) -> tuple[Gate, ...]:
        """Gates whose product is this gate's inverse (itself, or CNOT then Toffoli for Peres)."""
        if self.family != "peres":
            return (self,)
        (a,), (b, c) = self.controls, self.targets
        return (Gate("x", (b,), (a,), ()), Gate("x", (c,), tuple(sorted((a, b))), ()))

    def name(self) -> str:
        """The trade's name for the gate: NOT, CNOT, Toffoli, C3X, SWAP, Fredkin, Peres, ..."""
        c = self.num_controls
        if self.family == "peres":
            return "Peres"
        if self.family == "x":
            return {0: "NOT", 1: "CNOT", 2: "Toffoli"}.get(c, f"C{c}X")
        return {0: "SWAP", 1: "Fredkin"}.get(c, f"C{c}SWAP")

    def __str__(self) -> str:
        parts = [f"{self.family}(" + ",".join(map(str, self.targets))]
        ctl = [str(c) for c in self.controls] + [f"~{c}" for c in self.negative_controls]
        if ctl:
            parts.append("; " + ",".join(ctl))
        return "".join(parts) + ")"

    # ----------------------------------------------------------------- semantics
    def apply(self, states: np.ndarray) -> np.ndarray:
        """Apply the gate to an integer array of states (a new array is returned)."""
        pm, nm = self.positive_mask, self.negative_mask
        if self.family == "peres":
            (a,), (b, c) = self.controls, self.targets
            abit = (states >> a) & 1
            out = states ^ ((abit & (states >> b) & 1) << c)
            return out ^ (abit << b)
        active = ((states & pm) == pm) & ((states & nm) == 0)
        if self.family == "x":
            flip = np.int64(1 << self.targets[0])
        else:
            a, b = self.targets
            differ = ((states >> a) ^ (states >> b)) & 1
            active = active & (differ == 1)
            flip = np.int64((1 << a) | (1 << b))
        return np.where(active, states ^ flip, states)

    def apply_int(self, state: int) -> int:
        """Apply the gate to one state."""
        pm, nm = self.positive_mask, self.negative_mask
        if self.family == "peres":
            (a,), (b, c) = self.controls, self.targets
            abit = (state >> a) & 1
            state ^= (abit & (state >> b) & 1) << c
            return state ^ (abit << b)
        if (state & pm) != pm or (state & nm) != 0:
            return state
        if self.family == "x":
            return state ^ (1 << self.targets[0])
        a, b = self.targets
        if ((state >> a) ^ (state >> b)) & 1:
            return state ^ ((1 << a) | (1 << b))
        return state

    def permutation(self, lines: int) -> tuple[int, ...]:
        """The gate as a permutation of ``range(2**lines)``."""
        return tuple(int(v) for v in self.apply(np.arange(1 << lines, dtype=np.int64)))

    def sort_key(self) -> tuple[int, int, int, tuple[int, ...], tuple[int, ...], tuple[int, ...]]:
        """Fewer controls first, then by target, then by controls."""
        return (
            GATE_FAMILIES.index(self.family),
            self.num_controls,
            len(self.negative_controls),
            self.targets,
            self.controls,
            self.negative_controls,
        )


def invert_permutation(perm: Sequence[int]) -> tuple[int, ...]:
    """``q`` with ``q[perm[i]] = i``."""
    inv = [0] * len(perm)
    for i, p in enumerate(perm):
        inv[p] = i
    return tuple(inv)


def permutation_is_odd(perm: tuple[int, ...]) -> bool:
    seen = [False] * len(perm)
    cycles = 0
    for i in range(len(perm)):
        if not seen[i]:
            cycles += 1
            j = i
            while not seen[j]:
                seen[j] = True
                j = perm[j]
    return (len(perm) - cycles) % 2 == 1


def _mask(lines: tuple[int, ...]) -> int:
    m = 0
    for line in lines:
        m |= 1 << line
    return m


def _check_lines(where: str, lines: tuple[int, ...]) -> None:
    for line in lines:
        if not isinstance(line, int) or isinstance(line, bool) or line < 0:
            raise ExactsynError(f"{where}: line {line!r} is not a non-negative integer")
    if len(set(lines)) != len(lines):
        raise ExactsynError(f"{where}: a line is used twice in one gate {sorted(lines)}")


def x_gate(
    target: int,
    controls: tuple[int, ...] | list[int] = (),
    negative_controls: tuple[int, ...] | list[int] = (),
) -> Gate:
    """NOT / CNOT / Toffoli / MCT gate flipping ``target`` (controls in any order)."""
    pos, neg = tuple(sorted(controls)), tuple(sorted(negative_controls))
    _check_lines("gate", (target, *pos, *neg))
    return Gate("x", (target,), pos, neg)


def swap_gate(
    a: int,
    b: int,
    controls: tuple[int, ...] | list[int] = (),
    negative_controls: tuple[int, ...] | list[int] = (),
) -> Gate:
    """SWAP / Fredkin / multiple-control swap exchanging lines ``a`` and ``b``."""
    pos, neg = tuple(sorted(controls)), tuple(sorted(negative_controls))
    _check_lines("gate", (a, b, *pos, *neg))
    return Gate("swap", (min(a, b), max(a, b)), pos, neg)


def peres_gate(a: int, b: int, c: int) -> Gate:
    """Peres gate on control ``a``, middle line ``b`` and target ``c``:
    ``c ← c ⊕ a·b`` then ``b ← b ⊕ a``."""
    _check_lines("gate", (a, b, c))
    return Gate("peres", (b, c), (a,), ())
