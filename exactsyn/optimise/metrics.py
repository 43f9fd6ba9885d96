"""What a circuit costs, in the measures the optimiser reports before and after.

* gates;
* NCV quantum cost (:data:`exactsyn.core.costs.COST_MODELS` ``ncv``: NOT and CNOT 1,
  Toffoli 5, Barenco et al., Phys. Rev. A 52, 1995);
* T-count and CNOT count of the Clifford+T decomposition that
  :mod:`exactsyn.core.cliffordt` writes (Toffoli: 7 T/T† and 6 CNOT, Nielsen & Chuang
  2000; the counts of a circuit are the sums over its gates, see that module);
* depth: layers when gates on disjoint lines share a layer
  (:meth:`exactsyn.core.circuit.Circuit.depth`).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import COST_MODELS, CostModel


@dataclass(frozen=True)
class Metrics:
    gates: int
    ncv: int
    t_count: int
    cnot_count: int
    depth: int

    def to_dict(self) -> dict[str, int]:
        """Keyed by the names the rest of the output uses: cost model names (``t-count``,
        ``cnot-count``, as in a result's ``costs``), ``gates`` and ``depth``."""
        return {k.replace("_", "-"): v for k, v in asdict(self).items()}


FIELDS = ("gates", "ncv", "t_count", "cnot_count", "depth")
LABELS = {"gates": "gates", "ncv": "NCV cost", "t_count": "T-count", "cnot_count": "CNOT count", "depth": "depth"}


def _total(circuit: Circuit, model: CostModel) -> int:
    memo: dict[object, int] = {}
    total = 0
    for g in circuit.gates:
        c = memo.get(g)
        if c is None:
            c = memo[g] = model.cost(g, circuit.lines)
        total += c
    return total


def measure(circuit: Circuit) -> Metrics:
    """The five measures of the module docstring."""
    return Metrics(
        circuit.gate_count,
        _total(circuit, COST_MODELS["ncv"]),
        _total(circuit, COST_MODELS["t-count"]),
        _total(circuit, COST_MODELS["cnot-count"]),
        circuit.depth(),
    )
