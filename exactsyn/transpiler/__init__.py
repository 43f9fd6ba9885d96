"""exactsyn inside qiskit: a transpiler pass over the reversible blocks of a circuit, and its plugin.

* :mod:`~exactsyn.transpiler.convert` — which qiskit operations are classical-reversible, as exactsyn gates and back;
* :mod:`~exactsyn.transpiler.blocks` — the maximal reversible blocks of a ``DAGCircuit``;
* :mod:`~exactsyn.transpiler.reversible_pass` — :class:`ReversibleBlockOptimiser`, the ``TransformationPass``;
* :mod:`~exactsyn.transpiler.plugin` — the optimization-stage plugin ``exactsyn`` of ``transpile``.

qiskit is an optional dependency (``pip install "exactsyn[qiskit]"``); only this
subpackage imports it.  Imports: :mod:`exactsyn.core`, :mod:`exactsyn.io` and
:mod:`exactsyn.optimise`; nothing in the package imports this one.
"""

try:
    import qiskit  # noqa: F401
except ImportError as exc:  # pragma: no cover - exercised in a subprocess by the tests
    raise ImportError(
        'exactsyn.transpiler needs qiskit, which is not installed: pip install "exactsyn[qiskit]"'
    ) from exc

from exactsyn.transpiler.reversible_pass import PROPERTY_KEY, PassFigures, ReversibleBlockOptimiser

__all__ = ["PROPERTY_KEY", "PassFigures", "ReversibleBlockOptimiser"]
