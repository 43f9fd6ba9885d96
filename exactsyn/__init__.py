"""exactsyn: provably minimal reversible circuits by SAT, with checkable proof logs.

The public API.  Everything here is re-exported from the module that implements it, so
modules can move without breaking ``import exactsyn as ex``::

    import exactsyn as ex
    res = ex.synthesise(ex.parse_cycles("(3 7)"), library="nct",
                        objective="gates-then-cost", cost="t-count", certificate="cert/")
    print(res.circuit, res.optimal, res.lower_bound)
    ex.write_qasm3(res.circuit, "out.qasm")
    assert ex.check_certificate("cert/").ok

Subpackages in layer order, each importing only from those before it: the base modules
(``errors``, ``caches``, ``version``, ``cluster``) → ``core`` (gates, circuits, libraries,
costs) → ``io`` (the format registry, JSON, OpenQASM, drawings) → ``specification`` (what
to synthesise) → ``tables`` (breadth-first and class tables) → ``sat`` (encoders, solver
calls) → ``optimise`` (whole circuits by windows) → ``search`` (the k loop, objectives,
fallbacks) → ``proof`` (certificates, the checker) → ``api`` (one call, its views) →
``batch`` (many functions) → ``cli`` (the command line).

Names are loaded on first use (PEP 562), so ``import exactsyn.proof.checker`` does not pull
in the solvers and ``from exactsyn import __version__`` stays cheap.  ``write_<format>``
(``write_json``, ``write_qasm2``, ``write_qasm3``, ``write_svg``, ...) exists for every
format of :mod:`exactsyn.io.registry` and writes that format whatever the suffix.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

from exactsyn.version import __version__

#: public name -> (implementing module, name there)
_EXPORTS: dict[str, tuple[str, str]] = {
    "synthesise": ("exactsyn.api.synthesis", "synthesise"),
    "Synthesis": ("exactsyn.api.synthesis", "Synthesis"),
    "Circuit": ("exactsyn.core.circuit", "Circuit"),
    "Gate": ("exactsyn.core.gates", "Gate"),
    "x_gate": ("exactsyn.core.gates", "x_gate"),
    "swap_gate": ("exactsyn.core.gates", "swap_gate"),
    "peres_gate": ("exactsyn.core.gates", "peres_gate"),
    "Library": ("exactsyn.core.library", "Library"),
    "make_library": ("exactsyn.core.library", "make_library"),
    "PRESETS": ("exactsyn.core.library", "PRESETS"),
    "CostModel": ("exactsyn.core.costs", "CostModel"),
    "COST_MODELS": ("exactsyn.core.costs", "COST_MODELS"),
    "cost_model": ("exactsyn.core.costs", "cost_model"),
    "ExactsynError": ("exactsyn.errors", "ExactsynError"),
    "NoCircuitError": ("exactsyn.errors", "NoCircuitError"),
    "Spec": ("exactsyn.specification.reversible", "Spec"),
    "from_permutation": ("exactsyn.specification.reversible", "from_permutation"),
    "parse_perm": ("exactsyn.specification.reversible", "parse_perm"),
    "parse_cycles": ("exactsyn.specification.reversible", "parse_cycles"),
    "load_spec": ("exactsyn.specification.loader", "load_any"),
    "read_circuit": ("exactsyn.io.formats", "read_circuit"),
    "write_circuit": ("exactsyn.io.formats", "write_circuit"),
    "Format": ("exactsyn.io.registry", "Format"),
    "formats": ("exactsyn.io.registry", "formats"),
    "register_format": ("exactsyn.io.registry", "register"),
    "render": ("exactsyn.io.formats", "render"),
    "read_qasm": ("exactsyn.io.qasm", "read_qasm"),
    "to_qasm2": ("exactsyn.io.qasm", "to_qasm2"),
    "to_qasm3": ("exactsyn.io.qasm", "to_qasm3"),
    "circuit_to_dict": ("exactsyn.io.jsonio", "circuit_to_dict"),
    "circuit_from_dict": ("exactsyn.io.jsonio", "circuit_from_dict"),
    "check_certificate": ("exactsyn.proof.checker", "check_certificate"),
    "optimise_circuit": ("exactsyn.optimise", "optimise_circuit"),
    "OptimiseResult": ("exactsyn.optimise", "OptimiseResult"),
    "read_circuit_layout": ("exactsyn.io.formats", "read_circuit_layout"),
    "Layout": ("exactsyn.io.layout", "Layout"),
    "CheckReport": ("exactsyn.proof.checker", "CheckReport"),
    "Query": ("exactsyn.sat.query", "Query"),
    "Status": ("exactsyn.sat.status", "Status"),
    "clear_caches": ("exactsyn.caches", "clear"),
}

__all__ = [
    "__version__",
    "COST_MODELS",
    "CheckReport",
    "Circuit",
    "CostModel",
    "ExactsynError",
    "Format",
    "Gate",
    "Layout",
    "Library",
    "NoCircuitError",
    "OptimiseResult",
    "PRESETS",
    "Query",
    "Spec",
    "Status",
    "Synthesis",
    "check_certificate",
    "circuit_from_dict",
    "circuit_to_dict",
    "clear_caches",
    "cost_model",
    "formats",
    "from_permutation",
    "load_spec",
    "make_library",
    "optimise_circuit",
    "parse_cycles",
    "parse_perm",
    "peres_gate",
    "read_circuit",
    "read_circuit_layout",
    "read_qasm",
    "register_format",
    "render",
    "swap_gate",
    "synthesise",
    "to_qasm2",
    "to_qasm3",
    "write_circuit",
    "x_gate",
]
#: ``write_<format>`` for every registered format (module docstring); not in ``__all__``,
#: which stays fixed while formats may be registered later.
_WRITER_PREFIX = "write_"


def __getattr__(name: str) -> Any:
    if name in _EXPORTS:
        module, attr = _EXPORTS[name]
        value = getattr(importlib.import_module(module), attr)
        globals()[name] = value  # later lookups skip this function
        return value
    if name.startswith(_WRITER_PREFIX):
        formats = importlib.import_module("exactsyn.io.formats")
        fmt = name.removeprefix(_WRITER_PREFIX)
        if fmt in formats.registry.names():
            return formats.writer(fmt)  # not cached: the format may be unregistered
    raise AttributeError(f"module 'exactsyn' has no attribute {name!r}")


def __dir__() -> list[str]:
    registry = importlib.import_module("exactsyn.io.registry")
    writers = {_WRITER_PREFIX + name for name in registry.names()}
    return sorted(set(globals()) | set(__all__) | writers)


if TYPE_CHECKING:  # the same names, for type checkers and editors
    from exactsyn.api.synthesis import Synthesis, synthesise
    from exactsyn.caches import clear as clear_caches
    from exactsyn.core.circuit import Circuit
    from exactsyn.core.costs import COST_MODELS, CostModel, cost_model
    from exactsyn.core.gates import Gate, peres_gate, swap_gate, x_gate
    from exactsyn.core.library import PRESETS, Library, make_library
    from exactsyn.errors import ExactsynError, NoCircuitError
    from exactsyn.io.formats import read_circuit, read_circuit_layout, render, write_circuit
    from exactsyn.io.jsonio import circuit_from_dict, circuit_to_dict
    from exactsyn.io.layout import Layout
    from exactsyn.io.qasm import read_qasm, to_qasm2, to_qasm3
    from exactsyn.io.registry import Format, formats
    from exactsyn.io.registry import register as register_format
    from exactsyn.optimise import OptimiseResult, optimise_circuit
    from exactsyn.proof.checker import CheckReport, check_certificate
    from exactsyn.sat.query import Query
    from exactsyn.sat.status import Status
    from exactsyn.specification.loader import load_any as load_spec
    from exactsyn.specification.reversible import Spec, from_permutation, parse_cycles, parse_perm
