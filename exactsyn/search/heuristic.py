"""Transformation-based synthesis: a fast constructive (not minimal) MCT circuit.

Miller, Maslov, Dueck, "A transformation based algorithm for reversible logic
synthesis", DAC 2003.  The function is walked row by row in increasing input order;
each row ``i`` is made to map to itself with multiple-control Toffoli gates chosen so
that the rows ``j < i`` already fixed stay fixed.

* basic (output side): the gates are applied after the function, ``g∘f``;
* bidirectional: at each row the gates go on the output side (fix ``f(i)``) or on the
  input side (fix ``f⁻¹(i)``, i.e. ``f∘g``), whichever needs fewer gates.

Used as the fallback when exact search runs out of time.  The step count per row is
the Hamming distance between ``i`` and the value being moved, so the whole circuit has
at most ``n·2^n`` gates.
"""

from __future__ import annotations

from collections.abc import Sequence

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, invert_permutation, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.specification.reversible import MAX_LINES


def _ones(value: int, lines: int) -> tuple[int, ...]:
    return tuple(b for b in range(lines) if value >> b & 1)


def _fix_row(q: list[int], i: int, lines: int) -> list[Gate]:
    """Output-side step for row ``i``: append gates after ``q`` so that ``q[i] == i``.

    ``q`` is updated in place (every value goes through each gate) and the gates are
    returned in the order they are applied after ``q``.

    Why rows ``j < i`` (already ``q[j] == j``) are not disturbed: let ``o = q[i]``;
    ``o`` is not any ``j < i`` (those values are taken), so ``o > i``.

    1. For each bit ``b`` set in ``i`` but clear in ``o``: an x gate on ``b`` controlled
       by the 1-bits of ``o``.  It fires only on values that contain every 1-bit of
       ``o``, and such a value is ``≥ o > i > j``, so no fixed row fires.  It does fire
       on the current value of row ``i``, which only gains bits (still containing
       ``o``).  Afterwards the value ``o'`` contains every 1-bit of ``i``.
    2. For each bit ``b`` set in ``o'`` but clear in ``i``: an x gate on ``b`` controlled
       by the 1-bits of ``i``.  It fires only on values containing every 1-bit of
       ``i``, hence ``≥ i``: never on a row ``j < i`` (for ``i = 0`` there are no such
       rows, and the gates are plain NOTs).  Row ``i`` still contains ``i`` after each
       flip and ends exactly at ``i``.

    Targets are never among the controls (step 1: ``b`` is clear in ``o``; step 2:
    ``b`` is clear in ``i``), so every gate is a valid MCT gate.
    """
    o = q[i]
    gates: list[Gate] = []
    ctl_o = _ones(o, lines)
    for b in range(lines):
        if (i >> b & 1) and not (o >> b & 1):
            gates.append(x_gate(b, ctl_o))
    value = o | i
    ctl_i = _ones(i, lines)
    for b in range(lines):
        if (value >> b & 1) and not (i >> b & 1):
            gates.append(x_gate(b, ctl_i))
    for g in gates:
        for k in range(len(q)):
            q[k] = g.apply_int(q[k])
    if q[i] != i:  # pragma: no cover - guarded by the argument above
        raise ExactsynError("internal error: transformation step did not fix its row")
    return gates


def _inverse(q: list[int]) -> list[int]:
    return list(invert_permutation(q))


def cancel_pairs(gates: Sequence[Gate]) -> tuple[Gate, ...]:
    """Drop adjacent identical gates (every gate here is self-inverse), repeatedly."""
    out: list[Gate] = []
    for g in gates:
        if out and out[-1] == g:
            out.pop()
        else:
            out.append(g)
    return tuple(out)


def _check(perm: Sequence[int], lines: int) -> list[int]:
    if not isinstance(lines, int) or isinstance(lines, bool) or not 1 <= lines <= MAX_LINES:
        raise ExactsynError(f"transformation-based synthesis handles 1 to {MAX_LINES} lines, not {lines!r}")
    size = 1 << lines
    values = list(perm)
    if len(values) != size:
        raise ExactsynError(f"a function on {lines} lines has {size} entries, got {len(values)}")
    if any(not isinstance(v, int) or isinstance(v, bool) for v in values):
        raise ExactsynError("permutation entries must be integers")
    if sorted(values) != list(range(size)):
        raise ExactsynError(f"not a permutation of 0..{size - 1}")
    return [int(v) for v in values]


def transformation_based(perm: Sequence[int], lines: int, bidirectional: bool = True) -> Circuit:
    """An MCT circuit realising ``perm`` (``perm[i]`` = output for input ``i``).

    Bookkeeping: we drive ``A∘f∘B`` to the identity, with output-side gates
    ``a1, a2, ...`` (``A = ... a2∘a1``) and input-side gates ``b1, b2, ...``
    (``B = b1∘b2∘...``).  Then ``f = A⁻¹∘B⁻¹``, so in application order the circuit
    is ``b1, b2, ..., bm`` followed by ``ak, ..., a2, a1`` (output-side gates
    reversed); every MCT gate is its own inverse.
    """
    cur = _check(perm, lines)
    inv = _inverse(cur)
    out_side: list[Gate] = []
    in_side: list[Gate] = []
    for i in range(1 << lines):
        if cur[i] == i:
            continue
        out_cost = bin(cur[i] ^ i).count("1")
        in_cost = bin(inv[i] ^ i).count("1")
        if bidirectional and in_cost < out_cost:
            # input side on f is the output side on f⁻¹: (f∘g)⁻¹ = g∘f⁻¹
            in_side.extend(_fix_row(inv, i, lines))
            cur = _inverse(inv)
        else:
            out_side.extend(_fix_row(cur, i, lines))
            inv = _inverse(cur)
    return Circuit(lines, cancel_pairs(in_side + out_side[::-1]))
