"""The budgets of every reader: sizes checked before the work they would cause.

A mistaken or hostile file must not make a reader spend minutes or gigabytes before it
says no.  Every size that input controls is checked against one of these limits before
anything proportional to it is done — the integer is bounded before it is converted, a
gate definition's expanded size is added up before it is expanded, a modifier's operand
count is checked before a matrix is built — and a refusal is one line naming the limit,
the statement, and (where there is one) the command that handles bigger input.

* :data:`MAX_FILE_BYTES` — a circuit or spec file (stat before reading).
* :data:`MAX_LINES` — lines of a circuit (qubits, summed over registers): the largest
  circuit ``exactsyn optimise`` works on; ``synth`` takes at most 6 of them
  (:data:`exactsyn.specification.reversible.MAX_LINES`).
* :data:`MAX_GATES` — gates of a circuit once every definition, modifier and power is
  expanded: 1,000,000 explicit gates are read in 22 s (JSON) to 36 s (OpenQASM) with a
  peak of 0.5–0.6 GiB, on 2 shared cores, measured by ``scripts/bench_readers.py``; a
  million made by doubling definitions in about a second.
* :data:`MAX_DIGITS` — digits of any integer a reader converts (register sizes, qubit
  indices, JSON numbers): Python refuses to convert more than 4300 and a number this long
  means nothing to a circuit anyway.
* :data:`MAX_POWER` — the exponent of ``pow(k) @``: a gate sequence is raised to
  ``k mod`` the order of its permutation (:func:`reduced_power`), a unitary by repeated
  squaring, so a large exponent costs little; beyond this it is refused.
"""

from __future__ import annotations

import json
import math
from collections.abc import Sequence
from typing import Any

import numpy as np

from exactsyn.core.gates import Gate
from exactsyn.core.words import count
from exactsyn.errors import ExactsynError

MAX_FILE_BYTES = 64 << 20
MAX_LINES = 1024
MAX_GATES = 1_000_000
MAX_DIGITS = 18
MAX_POWER = 10**18
#: The order of a gate sequence's permutation is found by simulating it on this many lines at most.
ORDER_LINES = 20


def check_file_size(size: int, where: str) -> None:
    """Refuse a file larger than :data:`MAX_FILE_BYTES` before it is read."""
    if size > MAX_FILE_BYTES:
        raise ExactsynError(
            f"{where} is {size / (1 << 20):.0f} MiB; exactsyn reads files of at most {MAX_FILE_BYTES >> 20} MiB"
        )


#: Which command takes how many lines (said with every refusal of a wide circuit).
WHO_HANDLES = f"'exactsyn optimise' works on up to {MAX_LINES:,} lines, 'synth' on 1 to 6"


def check_lines(lines: int, where: str) -> None:
    """Refuse a circuit wider than :data:`MAX_LINES` (``where`` names the statement or field)."""
    if lines > MAX_LINES:
        raise ExactsynError(
            f"{where} {count(lines, 'line')}: exactsyn reads circuits of at most {MAX_LINES:,} lines ({WHO_HANDLES})"
        )


def check_gates(gates: int, where: str) -> None:
    """Refuse more than :data:`MAX_GATES` gates after expansion (``where`` names the statement)."""
    if gates > MAX_GATES:
        shown = f"{gates:,}" if gates < 10**12 else f"about 10^{len(str(gates)) - 1}"
        raise ExactsynError(
            f"{where} expands to {shown} gates; exactsyn reads circuits of at most {MAX_GATES:,} gates "
            "after every definition, modifier and power is expanded"
        )


def _json_int(text: str) -> int:
    if len(text.lstrip("-")) > MAX_DIGITS:
        raise ExactsynError(
            f"JSON number {text[:12]}… has {len(text.lstrip('-'))} digits; exactsyn reads integers of at most "
            f"{MAX_DIGITS} digits"
        )
    return int(text)


def load_json(text: str, what: str) -> Any:
    """Parse JSON whose integers are bounded (:data:`MAX_DIGITS`); one-line errors naming ``what``."""
    try:
        return json.loads(text, parse_int=_json_int)
    except json.JSONDecodeError as e:
        raise ExactsynError(f"malformed JSON in {what} at line {e.lineno} column {e.colno}: {e.msg}") from None
    except RecursionError:
        raise ExactsynError(f"malformed JSON in {what}: nested too deeply") from None
    except ValueError as e:  # a float Python cannot convert, and the like
        raise ExactsynError(f"malformed JSON in {what}: {e}") from None


def check_power(k: int, where: str) -> None:
    """Refuse an exponent beyond :data:`MAX_POWER` (it is reduced afterwards, never expanded)."""
    if abs(k) > MAX_POWER:
        raise ExactsynError(f"{where}: the exponent has {len(str(abs(k)))} digits; at most 10^18 is allowed")


def permutation_order(gates: Sequence[Gate]) -> int | None:
    """The order of the permutation the gates compute (the lcm of its cycle lengths), simulated on
    the lines they touch; None when those are more than :data:`ORDER_LINES`."""
    touched = sorted(set().union(*(g.lines for g in gates)))
    if len(touched) > ORDER_LINES:
        return None
    # states of the touched lines only: local state i has bit j = line touched[j]
    local = np.arange(1 << len(touched), dtype=np.int64)
    spread = np.zeros_like(local)
    for j, line in enumerate(touched):
        spread |= ((local >> j) & 1) << line
    tables: dict[Gate, np.ndarray] = {}  # a long expansion repeats few distinct gates
    perm = local
    for g in gates:
        table = tables.get(g)
        if table is None:
            out = g.apply(spread)
            table = np.zeros_like(local)
            for j, line in enumerate(touched):
                table |= ((out >> line) & 1) << j
            tables[g] = table
        perm = table[perm]
    return _order(perm)


def _order(perm: np.ndarray) -> int:
    """The lcm of the cycle lengths of a permutation array."""
    successor = perm.tolist()
    seen = bytearray(len(successor))
    order = 1
    for start in np.flatnonzero(perm != np.arange(len(perm))).tolist():
        if seen[start]:
            continue
        length, i = 0, start
        while not seen[i]:
            seen[i] = 1
            i = successor[i]
            length += 1
        order = math.lcm(order, length)
    return order


def reduced_power(gates: Sequence[Gate], k: int) -> tuple[int, bool]:
    """``(m, inverse)``: ``gates`` to the power ``k`` is ``m`` repetitions of ``gates`` (of their
    inverse when ``inverse``), ``m`` reduced modulo the permutation's order and taken the shorter
    way round (``g^k = (g^-1)^(order - k)``).  Unreduced when the order is not known."""
    inverse, m = k < 0, abs(k)
    order = permutation_order(gates) if gates and m > 1 else None
    if order is not None:
        m %= order
        if 2 * m > order:
            m, inverse = order - m, not inverse
    return m, inverse
