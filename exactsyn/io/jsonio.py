"""Circuits as JSON.

Each gate is an object::

    {"type": "x",    "target": 2,       "controls": [0], "negative_controls": [1]}
    {"type": "swap", "targets": [0, 1], "controls": [2], "negative_controls": []}
    {"type": "peres", "controls": [0], "targets": [1, 2]}

``type`` is ``"x"`` for the NOT / CNOT / Toffoli / MCT family, ``"swap"`` for SWAP /
Fredkin and their controlled relatives and ``"peres"`` for the Peres gate of
:func:`exactsyn.core.gates.peres_gate`: ``controls`` is ``[a]`` and ``targets`` is ``[b, c]``
in that order (``c ^= a·b``, then ``b ^= a``); both keys are required, with exactly one
control and two targets, and a Peres gate takes no ``negative_controls`` key (not even
an empty list).  A circuit is ``{"lines": n, "gate_count": k, "gates": [...]}``;
readers need only ``lines`` and ``gates`` and ignore every other key, so a whole
synthesis result can be read back as a circuit.  Lines are numbered as in
:mod:`exactsyn.core.gates` (line 0 is the least significant bit of a state).

Every malformed input raises :class:`~exactsyn.errors.ExactsynError` with a one-line
message naming what is wrong.
"""

from __future__ import annotations

import json
from typing import Any

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io.limits import check_gates, check_lines, load_json

_X_KEYS = frozenset({"type", "target", "controls", "negative_controls"})
_SWAP_KEYS = frozenset({"type", "targets", "controls", "negative_controls"})
_PERES_KEYS = frozenset({"type", "controls", "targets"})
_ALLOWED = {"x": _X_KEYS, "swap": _SWAP_KEYS, "peres": _PERES_KEYS}


def gate_to_dict(g: Gate) -> dict[str, Any]:
    """One gate as a JSON-ready dict."""
    if g.family == "peres":
        return {"type": "peres", "controls": list(g.controls), "targets": list(g.targets)}
    d: dict[str, Any] = {"type": g.family}
    if g.family == "x":
        d["target"] = g.targets[0]
    else:
        d["targets"] = list(g.targets)
    d["controls"] = list(g.controls)
    d["negative_controls"] = list(g.negative_controls)
    return d


def _show(v: object) -> str:
    """A short one-line rendering of a bad value for an error message."""
    try:
        text = json.dumps(v, default=repr)
    except (TypeError, ValueError):
        text = repr(v)
    return text if len(text) <= 40 else text[:37] + "..."


def _line(where: str, key: str, v: object) -> int:
    if isinstance(v, bool) or not isinstance(v, int) or v < 0:
        raise ExactsynError(f"{where}: '{key}' must be a non-negative integer, not {_show(v)}")
    return v


def _line_list(where: str, key: str, v: object, length: int | None = None) -> list[int]:
    if not isinstance(v, list):
        raise ExactsynError(f"{where}: '{key}' must be a list of line numbers, not {_show(v)}")
    if length is not None and len(v) != length:
        lines = "line" if length == 1 else "lines"
        raise ExactsynError(f"{where}: '{key}' must list exactly {length} {lines}, not {len(v)}")
    return [_line(where, key, item) for item in v]


def gate_from_dict(d: object, where: str = "gate") -> Gate:
    """Read one gate dict (see the module docstring); ``where`` prefixes error messages."""
    if not isinstance(d, dict):
        raise ExactsynError(f"{where}: a gate must be a JSON object, not {_show(d)}")
    kind = d.get("type")
    if not isinstance(kind, str) or kind not in _ALLOWED:
        raise ExactsynError(f'{where}: \'type\' must be "x", "swap" or "peres", not {_show(kind)}')
    allowed = _ALLOWED[kind]
    unknown = sorted(set(d) - allowed)
    if kind == "peres" and "negative_controls" in unknown:
        raise ExactsynError(f"{where}: a peres gate has no negative controls (drop 'negative_controls')")
    if unknown:
        raise ExactsynError(
            f"{where}: unknown key '{unknown[0]}' for a {kind} gate (allowed: {', '.join(sorted(allowed))})"
        )
    try:
        if kind == "peres":
            return _peres_from_dict(d, where)
        controls = _line_list(where, "controls", d.get("controls", []))
        negative = _line_list(where, "negative_controls", d.get("negative_controls", []))
        if kind == "x":
            if "target" not in d:
                raise ExactsynError(f"{where}: an x gate needs 'target'")
            return x_gate(_line(where, "target", d["target"]), controls, negative)
        if "targets" not in d:
            raise ExactsynError(f"{where}: a swap gate needs 'targets' (a list of 2 lines)")
        a, b = _line_list(where, "targets", d["targets"], length=2)
        return swap_gate(a, b, controls, negative)
    except ExactsynError as e:
        if e.message.startswith(where):
            raise
        raise ExactsynError(f"{where}: {e.message.removeprefix('gate: ')}") from None


def _peres_from_dict(d: dict[str, Any], where: str) -> Gate:
    for key, what in (("controls", "[a]"), ("targets", "[b, c]")):
        if key not in d:
            raise ExactsynError(f"{where}: a peres gate needs '{key}' ({what})")
    (a,) = _line_list(where, "controls", d["controls"], length=1)
    b, c = _line_list(where, "targets", d["targets"], length=2)
    return peres_gate(a, b, c)


def circuit_to_dict(c: Circuit) -> dict[str, Any]:
    """``{"lines": n, "gate_count": k, "gates": [...]}``."""
    return {"lines": c.lines, "gate_count": c.gate_count, "gates": [gate_to_dict(g) for g in c.gates]}


def circuit_from_dict(d: object) -> Circuit:
    """Read a circuit from any dict with ``lines`` and ``gates`` (other keys are ignored)."""
    if not isinstance(d, dict):
        raise ExactsynError(f"a circuit must be a JSON object, not {type(d).__name__}")
    for key in ("lines", "gates"):
        if key not in d:
            raise ExactsynError(f"circuit: missing key '{key}'")
    lines = d["lines"]
    if isinstance(lines, bool) or not isinstance(lines, int) or lines < 1:
        raise ExactsynError(f"circuit: 'lines' must be a positive integer, not {_show(lines)}")
    check_lines(lines, "circuit: 'lines' says")
    gates_in = d["gates"]
    if not isinstance(gates_in, list):
        raise ExactsynError("circuit: 'gates' must be a list")
    check_gates(len(gates_in), "circuit: 'gates'")
    gates = []
    for i, gd in enumerate(gates_in):
        where = f"gate {i}"
        g = gate_from_dict(gd, where)
        outside = sorted(line for line in g.lines if line >= lines)
        if outside:
            raise ExactsynError(f"{where}: line {outside[0]} is outside 0..{lines - 1}")
        gates.append(g)
    return Circuit(lines, tuple(gates))


def load_json_circuit(text: str) -> Circuit:
    """Parse JSON text holding a circuit (or a result object with ``lines`` and ``gates``)."""
    return circuit_from_dict(load_json(text, "the circuit"))
