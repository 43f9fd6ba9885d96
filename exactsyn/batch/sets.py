"""Generated sets of reversible functions and their reduction to classes.

Sets: every ``n``-line function (``(2^n)!`` of them, so ``n ≤ 3`` in practice), a
seeded random sample of distinct functions, or one representative per class.

Classes.  Two symmetries map a circuit to a circuit of the same size:

* **line relabelling** — for a permutation ``σ`` of the lines (``σ[l]`` is the new
  label of line ``l``) let ``π_σ`` move bit ``l`` of a state to bit ``σ[l]``.  Renaming
  every gate's lines by ``σ`` turns a circuit for ``f`` into one for
  ``π_σ ∘ f ∘ π_σ⁻¹`` (conjugation), with the same number of gates;
* **inversion** — every gate here is its own inverse, so the reversed circuit computes
  ``f⁻¹``.

Both preserve the optimum in a library that is closed under them: renaming the lines of
a library gate gives a library gate, and the inverse of a library gate is a library gate.
That holds for ``nct`` and ``mct`` (controls capped by count only, every line treated
alike) and fails for a library with a coupling restriction, e.g. CNOTs only between
neighbouring lines: :func:`reduction_obstacle` checks it gate by gate and names the gate
that breaks it, and the caller falls back to the plain set.  This is the reduction
Shende, Prasad, Markov & Hayes (IEEE TCAD 22(6), 2003) use for their 3-line tables
(wire relabelling and inversion); the ``n!·2`` transforms form the group acting here.

A class representative is the least permutation (as a tuple) in its class.  A result
for the representative ``r`` serves every member ``m = t(r)``, where the transform
``t = (σ, inverted)`` maps ``f`` to ``π_σ ∘ g ∘ π_σ⁻¹`` with ``g = f⁻¹`` if inverted else
``f``; :func:`transform_circuit` turns ``r``'s circuit into one for ``m``.
"""

from __future__ import annotations

import itertools
import math
import random
from collections.abc import Iterator, Sequence
from dataclasses import dataclass

import numpy as np

from exactsyn.caches import memo
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.core.gates import invert_permutation as invert
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.specification.reversible import MAX_LINES

#: Largest line count for which every function (or every class) is enumerated.
MAX_ENUMERATED_LINES = 3

Perm = tuple[int, ...]


@dataclass(frozen=True)
class Transform:
    """``f ↦ π_σ ∘ g ∘ π_σ⁻¹`` with ``g = f⁻¹`` if ``inverted`` else ``f``."""

    sigma: tuple[int, ...]
    inverted: bool = False

    def apply(self, perm: Sequence[int]) -> Perm:
        base = invert(perm) if self.inverted else tuple(perm)
        return relabel(base, self.sigma)

    def describe(self) -> dict[str, object]:
        return {"sigma": list(self.sigma), "inverted": self.inverted}


# ------------------------------------------------------------------ the two symmetries
def _lines_of(perm: Sequence[int]) -> int:
    size = len(perm)
    if size < 2 or size & (size - 1):
        raise ExactsynError(f"a function on n lines has 2^n entries, not {size}")
    return size.bit_length() - 1


def _check_sigma(sigma: Sequence[int], lines: int) -> None:
    if sorted(sigma) != list(range(lines)):
        raise ExactsynError(f"line relabelling {list(sigma)} is not a permutation of 0..{lines - 1}")


@memo(maxsize=64)
def state_map(sigma: tuple[int, ...]) -> Perm:
    """``π_σ``: the state permutation moving bit ``l`` to bit ``σ[l]``."""
    n = len(sigma)
    return tuple(sum(((x >> line) & 1) << sigma[line] for line in range(n)) for x in range(1 << n))


def relabel(perm: Sequence[int], sigma: Sequence[int]) -> Perm:
    """``π_σ ∘ perm ∘ π_σ⁻¹``: the function with lines renamed by ``σ``."""
    _check_sigma(sigma, _lines_of(perm))
    pi = state_map(tuple(sigma))
    pinv = invert(pi)
    return tuple(pi[perm[pinv[y]]] for y in range(len(perm)))


def relabel_gate(gate: Gate, sigma: Sequence[int]) -> Gate:
    ctl = [sigma[c] for c in gate.controls]
    neg = [sigma[c] for c in gate.negative_controls]
    if gate.family == "x":
        return x_gate(sigma[gate.targets[0]], ctl, neg)
    if gate.family == "peres":
        return peres_gate(sigma[gate.controls[0]], sigma[gate.targets[0]], sigma[gate.targets[1]])
    return swap_gate(sigma[gate.targets[0]], sigma[gate.targets[1]], ctl, neg)


def transform_circuit(circuit: Circuit, t: Transform) -> Circuit:
    """A circuit for ``t(f)`` from a circuit for ``f``, with the same number of gates
    (for self-inverse gates; :func:`reduction_obstacle` refuses libraries where inversion
    leaves the library)."""
    _check_sigma(t.sigma, circuit.lines)
    base = circuit.inverse() if t.inverted else circuit
    return Circuit(circuit.lines, tuple(relabel_gate(g, t.sigma) for g in base.gates))


def transforms(lines: int) -> tuple[Transform, ...]:
    """All ``lines!·2`` transforms, the identity first."""
    return tuple(Transform(tuple(s), inv) for inv in (False, True) for s in itertools.permutations(range(lines)))


def class_members(perm: Sequence[int]) -> dict[Perm, Transform]:
    """Every member of ``perm``'s class with one transform that maps ``perm`` to it."""
    out: dict[Perm, Transform] = {}
    for t in transforms(_lines_of(perm)):
        out.setdefault(t.apply(perm), t)
    return out


def canonical(perm: Sequence[int]) -> tuple[Perm, Transform]:
    """The class representative ``r`` (least member) and a transform ``t`` with ``t(r) = perm``."""
    members = class_members(perm)
    rep = min(members)
    return rep, find_transform(rep, perm)


def find_transform(rep: Sequence[int], member: Sequence[int]) -> Transform:
    """A transform ``t`` with ``t(rep) = member``; ExactsynError if they are in different classes."""
    target = tuple(member)
    for t in transforms(_lines_of(rep)):
        if t.apply(rep) == target:
            return t
    raise ExactsynError("the two functions are not in the same class")


def reduction_obstacle(library: Library) -> str | None:
    """Why class reduction would be unsound for ``library`` (None: it is sound).

    Checks every gate: each of its line relabellings must be a library gate, and its
    inverse (as a permutation of the states) must be a library gate.
    """
    n = library.lines
    gates = frozenset(library.gates)
    perms = {g.permutation(n) for g in gates}
    for g in library.gates:
        if invert(g.permutation(n)) not in perms:
            return f"the inverse of gate {g} is not in library {library.name}"
    for sigma in itertools.permutations(range(n)):
        for g in library.gates:
            h = relabel_gate(g, sigma)
            if h not in gates:
                return (
                    f"library {library.name} does not treat every line alike: relabelling lines by "
                    f"{list(sigma)} turns gate {g} into {h}, which it lacks"
                )
    return None


# ------------------------------------------------------------------ generated sets
def _check_enumerable(lines: int) -> None:
    if not 1 <= lines <= MAX_ENUMERATED_LINES:
        raise ExactsynError(
            f"every function on {lines} lines is too many to enumerate; "
            f"use 1 to {MAX_ENUMERATED_LINES} lines or a random sample"
        )


def all_functions(lines: int) -> Iterator[Perm]:
    """Every function on ``lines`` lines, in lexicographic order."""
    _check_enumerable(lines)
    yield from itertools.permutations(range(1 << lines))


def _all_rows(lines: int) -> np.ndarray:
    return np.array(list(itertools.permutations(range(1 << lines))), dtype=np.int64)


def _row_keys(rows: np.ndarray, lines: int) -> np.ndarray:
    """An integer per row whose order is the lexicographic order of the rows."""
    size = rows.shape[1]
    weights = np.array([1 << (lines * (size - 1 - j)) for j in range(size)], dtype=np.int64)
    return rows @ weights


def class_representatives(lines: int) -> list[tuple[Perm, int]]:
    """``(representative, class size)`` for every class of ``lines``-line functions.

    Vectorised over all functions: each of the ``lines!·2`` transforms is applied to the
    whole table at once, and a function is a representative when no image is smaller.
    """
    _check_enumerable(lines)
    rows = _all_rows(lines)
    inv = np.argsort(rows, axis=1)
    images = []
    for t in transforms(lines):
        pi = np.array(state_map(t.sigma), dtype=np.int64)
        pinv = np.argsort(pi)
        base = inv if t.inverted else rows
        images.append(_row_keys(pi[base[:, pinv]], lines))
    keys = np.stack(images, axis=1)  # column 0 is the identity
    least = keys.min(axis=1)
    is_rep = keys[:, 0] == least
    ordered = np.sort(keys[is_rep], axis=1)
    sizes = 1 + (np.diff(ordered, axis=1) != 0).sum(axis=1)
    reps = rows[is_rep]
    return [(tuple(int(v) for v in r), int(s)) for r, s in zip(reps.tolist(), sizes.tolist(), strict=True)]


def random_functions(lines: int, count: int, seed: int) -> list[Perm]:
    """``count`` distinct functions on ``lines`` lines, drawn uniformly with ``random.Random(seed)``."""
    if not 1 <= lines <= MAX_LINES:
        raise ExactsynError(f"{lines} lines requested; exactsyn handles 1 to {MAX_LINES} lines")
    total = math.factorial(1 << lines)
    if not 1 <= count <= total:
        raise ExactsynError(f"a sample of {count} distinct functions on {lines} lines is impossible (1..{total})")
    rng = random.Random(seed)
    seen: set[Perm] = set()
    out: list[Perm] = []
    base = list(range(1 << lines))
    while len(out) < count:
        p = base[:]
        rng.shuffle(p)
        t = tuple(p)
        if t not in seen:
            seen.add(t)
            out.append(t)
    return out
