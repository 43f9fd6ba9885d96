"""Cost models: what a circuit costs beyond its gate count.

A :class:`CostModel` gives each gate on ``n`` lines an integer cost; a circuit costs
the sum over its gates (:func:`circuit_cost`).  Built-in models (:data:`COST_MODELS`):

* ``gates`` — 1 per gate.
* ``ncv`` — the quantum cost in NOT, CNOT and controlled-V/V† gates.  NOT 1, CNOT 1,
  Toffoli 5 (Barenco et al., "Elementary gates for quantum computation", Phys. Rev.
  A 52, 1995); C^cX with ``c >= 2`` controls and no ancilla ``2^(c+1) − 3`` (C3X 13,
  C4X 29: the usual table built on Barenco et al. 1995; from memory beyond the
  Toffoli gate); SWAP 3 (three CNOTs; common practice); Fredkin 5 (Smolin &
  DiVincenzo, "Five two-bit quantum gates are sufficient to implement the quantum
  Fredkin gate", Phys. Rev. A 53, 1996); a swap with ``c >= 2`` controls
  cost(C^{c+1}X) + 2 (the C^{c+1}X between two CNOTs; common practice); Peres 4
  (Hung, Song, Yang, Perkowski, "Optimal synthesis of multiple output Boolean
  functions using a set of quantum gates by symbolic reachability analysis", IEEE
  TCAD 25(9), 2006; from memory).  Each negative control adds 2 (a NOT before and
  after the line; common practice).  Cheaper realisations of mixed-polarity gates are
  published; they are not used here.
* ``t-count`` and ``cnot-count`` — the T/T† and CNOT counts of the Clifford+T
  decomposition of :mod:`exactsyn.core.cliffordt`, so a circuit's cost equals what
  :func:`exactsyn.io.qasm.clifford_t_to_qasm2` writes for it.  They depend on the line count:
  C^{n-1}X on ``n >= 4`` lines uses one clean ancilla and is cheaper than with a
  borrowed line (C3X: T-count 21 on 4 lines, 28 on 5).  Some gates cost 0 here
  (NOT and CNOT in ``t-count``, NOT in ``cnot-count``), see :meth:`CostModel.min_cost`.

User tables (:func:`load_cost_table`) are TOML or JSON objects whose keys are the gate
names of :meth:`~exactsyn.core.gates.Gate.name` (``NOT``, ``CNOT``, ``Toffoli``, ``C3X``,
``C4X``, ..., ``SWAP``, ``Fredkin``, ``C2SWAP``, ..., ``Peres``) or the OpenQASM names
exactsyn writes (``x``, ``cx``, ``ccx``, ``xc3``, ..., ``swap``, ``cswap``, ``swapc2``, ...,
``peres``; also ``C1X``, ``C2X``, ``C1SWAP``; letter case is ignored for these), plus an
optional ``negative_control`` surcharge per negative control (default 0)::

    NOT = 1
    CNOT = 1
    Toffoli = 5
    negative_control = 2

A gate name left out is an error only when a gate of that name is costed (or
checked, :meth:`CostModel.check`).  Costs must be integers of at least 1: a search for
the cheapest circuit bounds the number of gates by ``cost / (least gate cost)``,
which needs a positive least cost, and integer costs keep that bound and the search
over cost values exact.
"""

from __future__ import annotations

import json
import re
import tomllib
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from pathlib import Path
from types import MappingProxyType

from exactsyn.core.circuit import Circuit
from exactsyn.core.cliffordt import gate_cnot_count, gate_t_count
from exactsyn.core.gates import GATE_FAMILIES, Gate
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError, did_you_mean

CostRule = Callable[[Gate, int], int]

NEGATIVE_CONTROL_KEY = "negative_control"
# Gate.name(): C<c>X for c >= 3 controls, C<c>SWAP for c >= 2.
_GATE_NAME = re.compile(r"NOT|CNOT|Toffoli|SWAP|Fredkin|Peres|C([3-9]|[1-9]\d+)X|C([2-9]|[1-9]\d+)SWAP")

#: Other spellings of gate names a cost table may use: the OpenQASM names exactsyn writes
#: (x, cx, ccx, xc3, swap, cswap, swapc2, peres; io/qasm.py) and C<m>X / C<m>SWAP for every m.
_ALIAS = re.compile(r"(?P<qx>xc)(?P<qm>\d+)|(?P<qs>swapc)(?P<sm>\d+)|c(?P<cm>\d+)(?P<cf>x|swap)")
_FIXED = {"x": "NOT", "not": "NOT", "cx": "CNOT", "cnot": "CNOT", "ccx": "Toffoli", "toffoli": "Toffoli",
          "swap": "SWAP", "cswap": "Fredkin", "fredkin": "Fredkin", "peres": "Peres"}


def gate_name(key: str) -> str | None:
    """The name :meth:`~exactsyn.core.gates.Gate.name` gives a gate spelled ``key`` in any accepted way
    (module docstring; letter case is ignored), or ``None``."""
    if _GATE_NAME.fullmatch(key):
        return key
    low = key.strip().lower()
    if low in _FIXED:
        return _FIXED[low]
    m = _ALIAS.fullmatch(low)
    if m is None:
        return None
    controls = int(m["qm"] or m["sm"] or m["cm"])
    family = "x" if m["qx"] or m["cf"] == "x" else "swap"
    if family == "x":
        return {0: "NOT", 1: "CNOT", 2: "Toffoli"}.get(controls, f"C{controls}X")
    return {0: "SWAP", 1: "Fredkin"}.get(controls, f"C{controls}SWAP")


@dataclass(frozen=True)
class CostModel:
    """A named cost per gate; ``rule(gate, lines)`` gives the integer cost."""

    name: str
    description: str
    citation: str
    rule: CostRule

    def cost(self, gate: Gate, lines: int) -> int:
        """The cost of ``gate`` in a circuit on ``lines`` lines."""
        if gate.family not in GATE_FAMILIES:
            raise ExactsynError(f"unknown gate family {gate.family!r}; expected one of {', '.join(GATE_FAMILIES)}")
        return self.rule(gate, lines)

    def check(self, gates: Iterable[Gate], lines: int | None = None) -> None:
        """Raise :class:`ExactsynError` when some gate has no cost (a table missing its name).

        ``lines`` defaults to one more than the highest line the gates use."""
        gates = tuple(gates)
        n = lines if lines is not None else 1 + max((max(g.lines) for g in gates), default=0)
        for g in gates:
            self.cost(g, n)

    def min_cost(self, gates: Iterable[Gate], lines: int) -> int:
        """The least cost of the given gates (0 for none); a search bounding the gate count by
        ``cost / min_cost`` needs this to be positive, which ``t-count`` and ``cnot-count`` are
        not when NOT (or CNOT) gates are allowed."""
        return min((self.cost(g, lines) for g in gates), default=0)


# ---------------------------------------------------------------------------- built-in rules
def _unit(gate: Gate, lines: int) -> int:
    return 1


def _ncv_mcx(c: int) -> int:
    """NOT 1, CNOT 1, C^cX (c >= 2) 2^(c+1) - 3 (module docstring)."""
    return 1 if c < 2 else (1 << (c + 1)) - 3


def _ncv(gate: Gate, lines: int) -> int:
    if gate.family == "peres":
        return 4
    c = gate.num_controls
    if gate.family == "x":
        base = _ncv_mcx(c)
    else:
        base = {0: 3, 1: 5}.get(c, _ncv_mcx(c + 1) + 2)
    return base + 2 * len(gate.negative_controls)


@dataclass(frozen=True)
class TableRule:
    """Costs looked up by :meth:`Gate.name`, plus a surcharge per negative control."""

    costs: tuple[tuple[str, int], ...]
    negative_control: int
    source: str

    def __call__(self, gate: Gate, lines: int) -> int:
        name = gate.name()
        for key, value in self.costs:
            if key == name:
                return value + self.negative_control * len(gate.negative_controls)
        raise ExactsynError(f"cost table {self.source} has no cost for {name} (needed for gate {gate})")


COST_MODELS: Mapping[str, CostModel] = MappingProxyType(
    {
        "gates": CostModel("gates", "1 per gate", "", _unit),
        "ncv": CostModel(
            "ncv",
            "NCV quantum cost: NOT/CNOT 1, Toffoli 5, C^cX 2^(c+1)-3, SWAP 3, Fredkin 5, Peres 4, "
            "+2 per negative control",
            "Barenco et al., Phys. Rev. A 52 (1995); Smolin & DiVincenzo, Phys. Rev. A 53 (1996); "
            "Hung, Song, Yang, Perkowski, IEEE TCAD 25(9) (2006)",
            _ncv,
        ),
        "t-count": CostModel(
            "t-count",
            "T/T-dagger gates of the Clifford+T decomposition (one clean ancilla when a gate touches every line)",
            "Nielsen & Chuang (2000), Fig. 4.9; Barenco et al., Phys. Rev. A 52 (1995)",
            gate_t_count,
        ),
        "cnot-count": CostModel(
            "cnot-count",
            "CNOT gates of the Clifford+T decomposition (one clean ancilla when a gate touches every line)",
            "Nielsen & Chuang (2000), Fig. 4.9; Barenco et al., Phys. Rev. A 52 (1995)",
            gate_cnot_count,
        ),
    }
)


# ---------------------------------------------------------------------------- user tables
def _read_table(path: Path) -> dict[str, object]:
    suffix = path.suffix.lower()
    if suffix not in (".toml", ".json"):
        raise ExactsynError(f"cost table {path.name}: expected a .toml or .json file")
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise ExactsynError(f"cannot read cost table {path}: {exc.strerror or exc}") from exc
    try:
        data = tomllib.loads(text) if suffix == ".toml" else json.loads(text)
    except (tomllib.TOMLDecodeError, json.JSONDecodeError) as exc:
        first = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise ExactsynError(f"cost table {path.name} is not valid {suffix[1:].upper()}: {first}") from exc
    if not isinstance(data, dict):
        raise ExactsynError(f"cost table {path.name}: expected an object of gate name = cost")
    return data


def cost_table(table: Mapping[str, object], source: str = "table") -> CostModel:
    """A :class:`CostModel` from a mapping of gate name → cost (and ``negative_control``)."""
    costs: list[tuple[str, int]] = []
    surcharge = 0
    for key, value in table.items():
        if key == NEGATIVE_CONTROL_KEY:
            if not isinstance(value, int) or isinstance(value, bool) or value < 0:
                raise ExactsynError(f"cost table {source}: {key} must be an integer >= 0, not {value!r}")
            surcharge = value
            continue
        name = gate_name(key)
        if name is None:
            raise ExactsynError(
                f"cost table {source}: unknown gate name {key!r} (use NOT, CNOT, Toffoli, C3X, ..., "
                f"SWAP, Fredkin, C2SWAP, ..., Peres, {NEGATIVE_CONTROL_KEY}; or OpenQASM names: x, cx, ccx, xc3, ...)"
            )
        if name in dict(costs):
            raise ExactsynError(f"cost table {source}: {key!r} names {name}, which is costed twice")
        if not isinstance(value, int) or isinstance(value, bool) or value < 1:
            raise ExactsynError(f"cost table {source}: cost of {key} must be an integer >= 1, not {value!r}")
        costs.append((name, value))
    listed = ", ".join(f"{k} {v}" for k, v in costs)
    description = f"table {source}: {listed}" + (f", +{surcharge} per negative control" if surcharge else "")
    return CostModel(f"table:{source}", description, "user-supplied", TableRule(tuple(costs), surcharge, source))


def load_cost_table(path: str | Path) -> CostModel:
    """Read a TOML or JSON cost table (module docstring)."""
    p = Path(path)
    return cost_table(_read_table(p), p.name)


def cost_model(name_or_path: str) -> CostModel:
    """A built-in model by name (``gates``, ``ncv``, ``t-count``, ``cnot-count``) or a table file."""
    key = name_or_path.strip().lower().replace("_", "-")  # t_count (the JSON spelling) = t-count
    if key in COST_MODELS:
        return COST_MODELS[key]
    path = Path(name_or_path.strip())
    if path.suffix.lower() in (".toml", ".json") or path.exists():
        return load_cost_table(path)
    raise ExactsynError(
        f"unknown cost model {name_or_path!r}{did_you_mean(key, COST_MODELS)} "
        f"(choose one of: {', '.join(COST_MODELS)}, or a .toml/.json cost table)"
    )


def circuit_cost(circuit: Circuit, model: CostModel) -> int:
    """The sum of the gates' costs on the circuit's line count."""
    return sum(model.cost(g, circuit.lines) for g in circuit.gates)


def library_costs(library: Library, model: CostModel, *, positive: bool = False) -> tuple[int, ...]:
    """Costs aligned with the library's gates; ``positive`` requires every cost ≥ 1.

    The ``cost`` objective needs positive costs: it bounds the number of gates by
    ``cost / (least gate cost)``, and with a zero cost circuits of any length could tie.
    """
    model.check(library.gates, library.lines)
    costs = tuple(model.cost(g, library.lines) for g in library.gates)
    if positive and min(costs) < 1:
        zero = library.gates[costs.index(min(costs))]
        raise ExactsynError(
            f"cost model {model.name} gives {zero.name()} cost 0, so circuits of any length could tie; "
            "objective 'cost' needs every gate to cost at least 1 (use gates-then-cost, or a cost table)"
        )
    return costs


#: What a search or an optimisation can minimise, by name (the one list: ``synth --objective``
#: offers all of them, ``optimise --objective`` those a window replacement can lower).
OBJECTIVES: Mapping[str, str] = MappingProxyType(
    {
        "gates": "fewest gates (the default)",
        "gates-then-cost": "fewest gates, then the least cost among those",
        "cost": "least cost over circuits of any length (may need more gates; small functions)",
        "depth": "fewest layers, gates on disjoint lines sharing a layer",
    }
)


def objective_value(circuit: Circuit, library: Library, costs: tuple[int, ...] | None) -> int:
    """The circuit's cost under ``costs`` (one per library gate), or its depth when ``costs`` is None."""
    if costs is None:
        return circuit.depth()
    return sum(costs[library.index(g)] for g in circuit.gates)
