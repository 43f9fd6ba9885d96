"""exactsyn as a plugin of qiskit's optimization stage: ``transpile(qc, optimization_method="exactsyn")``.

The stage runs qiskit's own optimisation for the level (the ``default`` plugin), then
:class:`~exactsyn.transpiler.reversible_pass.ReversibleBlockOptimiser`, then — as the
default stage does after its loop — a translation to the basis when a gate is outside it.
The pass may use controls only as far as the basis has gates for them: ``mcx`` in the
basis allows any number, else ``ccx`` two, ``cx`` one, otherwise none (a reversible block
can then only be NOT gates).  With a coupling map the pass is left out (its replacements
do not yet respect connectivity or gate direction) and a warning says so.

Registered in ``pyproject.toml`` under the entry-point group
``qiskit.transpiler.optimization`` with the name :data:`PLUGIN_NAME`.
"""

from __future__ import annotations

import warnings
from typing import Any

from qiskit.passmanager.flow_controllers import ConditionalController
from qiskit.transpiler import PassManager
from qiskit.transpiler.passes import GatesInBasis
from qiskit.transpiler.preset_passmanagers.plugin import PassManagerStagePlugin, PassManagerStagePluginManager

from exactsyn.transpiler.reversible_pass import ReversibleBlockOptimiser

PLUGIN_NAME = "exactsyn"


def _basis(config: Any) -> set[str] | None:
    if config.basis_gates is not None:
        return set(config.basis_gates)
    if config.target is not None:
        return set(config.target.operation_names)
    return None


def control_cap(basis: set[str] | None) -> int | None:
    """The most controls a replacement gate may have, from the basis names (module docstring)."""
    if basis is None or "mcx" in basis:
        return None
    for name, cap in (("ccx", 2), ("cx", 1)):
        if name in basis:
            return cap
    return 0


def _has_coupling(config: Any) -> bool:
    if config.coupling_map is not None:
        return True
    target = config.target
    return target is not None and target.build_coupling_map() is not None


class ExactsynOptimisation(PassManagerStagePlugin):  # type: ignore[misc]
    """qiskit's optimisation for the level, then exact resynthesis of the reversible blocks."""

    def pass_manager(self, pass_manager_config: Any, optimization_level: int | None = None) -> PassManager:
        stages = PassManagerStagePluginManager()
        default = stages.get_passmanager_stage(
            "optimization", "default", pass_manager_config, optimization_level=optimization_level
        )
        manager = PassManager()
        if default is not None:
            manager.append(default.to_flow_controller())
        if _has_coupling(pass_manager_config):
            warnings.warn(
                "exactsyn's reversible-block pass is left out under a coupling map (its replacements do not "
                "respect connectivity yet); only qiskit's optimisation ran",
                stacklevel=2,
            )
            return manager
        basis = _basis(pass_manager_config)
        manager.append(ReversibleBlockOptimiser(max_controls=control_cap(basis)))
        translation = stages.get_passmanager_stage(
            "translation",
            pass_manager_config.translation_method or "default",
            pass_manager_config,
            optimization_level=optimization_level,
        )
        if translation is not None:
            manager.append(GatesInBasis(pass_manager_config.basis_gates, target=pass_manager_config.target))
            manager.append(
                ConditionalController(
                    translation.to_flow_controller(), condition=lambda props: not props["all_gates_in_basis"]
                )
            )
        return manager
