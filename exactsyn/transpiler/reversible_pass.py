"""A qiskit ``TransformationPass`` that resynthesises the reversible blocks of a circuit.

Every maximal block of classical-reversible operations (:mod:`exactsyn.transpiler.blocks`)
is optimised by :func:`exactsyn.optimise.optimise_circuit` — exact resynthesis of small
windows with proven-optimal circuits (its module docstring gives the method and the
argument why the result is the same function).  A block is replaced only when the result
is strictly better under the objective (fewer gates; or for ``gates-then-cost`` fewer
gates, or as many and a lower cost), and only after a second check of the pass's own:
the replacement is converted to qiskit gates, read back by the same reader that read the
block, and simulated against the block on every input (:func:`exactsyn.optimise.check_equivalent`;
every input up to 24 lines, a seeded sample beyond).  The replacement keeps the block's
global phase, so the circuit's unitary is unchanged, not only up to phase.  Every other
operation stays where it is: blocks are collapsed and expanded in place by
``DAGCircuit.replace_block_with_op`` and ``substitute_node_with_dag``.

Figures before and after (summed over the blocks; the depth is the sum of the blocks'
depths, the measures of :func:`exactsyn.optimise.measure` on each block's own lines) are
recorded in the property set under :data:`PROPERTY_KEY` as a :class:`PassFigures`.
"""

from __future__ import annotations

import cmath
import operator
import time
from collections.abc import Iterable
from dataclasses import dataclass, field, fields

from qiskit.circuit import AncillaQubit, QuantumCircuit, Qubit
from qiskit.circuit import Gate as QiskitGate
from qiskit.converters import circuit_to_dag
from qiskit.dagcircuit import DAGCircuit
from qiskit.transpiler import TransformationPass
from qiskit.transpiler.exceptions import TranspilerError

from exactsyn.core.circuit import Circuit
from exactsyn.core.costs import cost_model
from exactsyn.core.library import kinds_of
from exactsyn.errors import ExactsynError
from exactsyn.optimise import (
    WINDOW_OBJECTIVES,
    InternalCheckError,
    Metrics,
    check_equivalent,
    measure,
    optimise_circuit,
)
from exactsyn.optimise.allowed_gates import GateSet, gate_set
from exactsyn.optimise.driver import DEFAULT_HORIZON, default_window, window_answerers
from exactsyn.optimise.equivalence import dirty_zero_line
from exactsyn.optimise.resynthesis import WindowResynthesis
from exactsyn.transpiler.blocks import Block, reversible_blocks
from exactsyn.transpiler.convert import placed, reversible, to_qiskit

#: The property-set key of the pass's figures.
PROPERTY_KEY = "exactsyn_reversible"
_ZERO = Metrics(0, 0, 0, 0, 0)


def _plus(a: Metrics, b: Metrics) -> Metrics:
    return Metrics(*(getattr(a, f.name) + getattr(b, f.name) for f in fields(Metrics)))


@dataclass(frozen=True)
class PassFigures:
    """What one run of the pass found and did (reversible parts only, summed over blocks)."""

    before: Metrics
    after: Metrics
    blocks: int  # maximal reversible blocks found
    optimised: int  # blocks of two or more gates handed to the optimiser
    improved: int  # blocks replaced
    skipped: tuple[str, ...]  # why a block was left as it was (gates outside the library)
    seconds: float
    in_context: int = 0  # blocks replaced with the ancilla context (zero_qubits) in force

    def to_dict(self) -> dict[str, object]:
        return {
            "before": self.before.to_dict(),
            "after": self.after.to_dict(),
            "blocks": self.blocks,
            "optimised": self.optimised,
            "improved": self.improved,
            "skipped": list(self.skipped),
            "seconds": self.seconds,
            "in_context": self.in_context,
        }


@dataclass
class _Tally:
    before: Metrics = _ZERO
    after: Metrics = _ZERO
    blocks: int = 0
    optimised: int = 0
    improved: int = 0
    skipped: list[str] = field(default_factory=list)
    in_context: int = 0


def _replacement(output: Circuit, phase: float) -> QuantumCircuit:
    qc = QuantumCircuit(output.lines, global_phase=phase)
    for g in output.gates:
        op, args = to_qiskit(g)
        qc.append(op, list(args))
    return qc


def _read_back(qc: QuantumCircuit) -> tuple[Circuit, float]:
    """The replacement as the pass's reader sees it: the check covers the conversion too."""
    position = {q: i for i, q in enumerate(qc.qubits)}
    gates = []
    phase = float(qc.global_phase)
    for item in qc.data:
        found = reversible(item.operation)
        if found is None:
            raise InternalCheckError(f"internal error: a replacement gate {item.operation.name} is not reversible")
        gates += [placed(g, [position[q] for q in item.qubits]) for g in found.gates]
        phase += found.phase
    return Circuit(qc.num_qubits, tuple(gates)), phase


def _same_phase(a: float, b: float) -> bool:
    return abs(cmath.exp(1j * a) - cmath.exp(1j * b)) < 1e-9


class ReversibleBlockOptimiser(TransformationPass):  # type: ignore[misc]
    """Resynthesise every maximal block of classical-reversible gates (module docstring).

    ``library``, ``objective`` (``gates`` or ``gates-then-cost``), ``cost``, ``window``,
    ``horizon`` and ``max_controls`` are those of :func:`exactsyn.optimise.optimise_circuit`.
    A block whose gates lie outside the library is left as it was (and named in the
    figures' ``skipped``).  The window answerers, and the tables they build, are kept by the
    pass instance and shared by every block of the same gate set and window width.

    ``zero_qubits`` (indices of qubits known to be |0⟩ at the start of the circuit): the
    ancilla context.  A block that holds the first operation on such a qubit starts with it
    at |0⟩; the qubits of that kind that the block also returns to |0⟩ (found by simulating
    the block on every input with them 0, to a fixpoint) are its clean ancillas, passed to
    :func:`~exactsyn.optimise.optimise_circuit` as ``zero_lines``: the block is then a partial
    function, resynthesised with don't-cares, and its replacement is checked equal on the
    inputs with those qubits 0 — the only inputs the block meets in the circuit, so the
    whole circuit's unitary is unchanged on every state with the ``zero_qubits`` at |0⟩.
    Blocks on more than :data:`CONTEXT_LINES` qubits are optimised without context.
    ``ancillas_zero=True`` adds every qubit of an ancilla register (qiskit's
    ``AncillaQubit``: by the library's convention a clean ancilla).  Both default to none,
    so by default the circuit's unitary is kept on every input.
    """

    def __init__(
        self,
        *,
        library: str = "auto",
        objective: str = "gates",
        cost: str = "ncv",
        window: int | None = None,
        horizon: int = DEFAULT_HORIZON,
        max_controls: int | None = None,
        zero_qubits: Iterable[int] = (),
        ancillas_zero: bool = False,
        seed: int = 0,
    ) -> None:
        super().__init__()
        try:
            if library.strip().lower() != "auto" and "peres" in kinds_of(library):
                raise ExactsynError("qiskit has no Peres gate: choose a library without peres")
            if objective not in WINDOW_OBJECTIVES:
                raise ExactsynError(f"unknown objective {objective!r}; choose one of: {', '.join(WINDOW_OBJECTIVES)}")
            if objective == "gates-then-cost":
                cost_model(cost)
        except ExactsynError as exc:
            raise TranspilerError(str(exc)) from None
        given = tuple(zero_qubits)
        try:
            zeros = tuple(operator.index(q) for q in given if not isinstance(q, bool))
        except TypeError:
            zeros = ()
        if len(zeros) != len(given) or any(q < 0 for q in zeros):
            raise TranspilerError("zero_qubits must be qubit indices (integers 0 or more)")
        if len(set(zeros)) != len(zeros):
            raise TranspilerError("zero_qubits names a qubit twice")
        if window is not None and window < 1 or horizon < 1:
            raise TranspilerError("window and horizon must be 1 or more")
        self.library = library
        self.objective = objective
        self.cost = cost
        self.window = window
        self.horizon = horizon
        self.max_controls = max_controls
        self.zero_qubits = tuple(sorted(zeros))
        self.ancillas_zero = ancillas_zero
        self.seed = seed
        self._answerers_cache: dict[tuple[GateSet, str, str, int], WindowResynthesis] = {}

    def run(self, dag: DAGCircuit) -> DAGCircuit:
        if self.zero_qubits and self.zero_qubits[-1] >= dag.num_qubits():
            raise TranspilerError(
                f"zero_qubits names qubit {self.zero_qubits[-1]} but the circuit has {dag.num_qubits()} qubits"
            )
        start = time.perf_counter()
        tally = _Tally()
        ancillas = [i for i, q in enumerate(dag.qubits) if isinstance(q, AncillaQubit)] if self.ancillas_zero else []
        firsts = _first_operations(dag, tuple(sorted({*self.zero_qubits, *ancillas})))
        for block in reversible_blocks(dag):
            self._one_block(dag, block, tally, _clean_ancillas(block, firsts))
        self.property_set[PROPERTY_KEY] = PassFigures(
            tally.before,
            tally.after,
            tally.blocks,
            tally.optimised,
            tally.improved,
            tuple(tally.skipped),
            time.perf_counter() - start,
            tally.in_context,
        )
        return dag

    def _answerers(self, circuit: Circuit) -> tuple[int, WindowResynthesis]:
        """The window and the window answerers for a block: the optimiser's defaults, kept
        for every later block of the same gate set and width (their tables are built once)."""
        n = circuit.lines
        gates = gate_set(self.library, n, circuit.gates, self.max_controls)
        window = min(default_window(gates, n) if self.window is None else self.window, n)
        key = (gates, self.objective, self.cost, window)
        found = self._answerers_cache.get(key)
        if found is None:
            model = cost_model(self.cost) if self.objective == "gates-then-cost" else None
            found = self._answerers_cache[key] = window_answerers(gates, n, model, window)
        return window, found

    def _optimise(self, block: Block, zero_lines: tuple[int, ...]) -> tuple[Circuit, Metrics, Metrics] | None:
        """The block's optimised circuit and both measures, or None when the library refuses it."""
        try:
            window, answerers = self._answerers(block.circuit)
            result = optimise_circuit(
                block.circuit,
                library=self.library,
                objective=self.objective,
                cost=self.cost,
                max_controls=self.max_controls,
                window=window,
                horizon=self.horizon,
                resynthesis=answerers,
                seed=self.seed,
                zero_lines=zero_lines,
            )
        except InternalCheckError:
            raise
        except ExactsynError:
            return None
        return result.output, result.before, result.after

    def _better(self, block: Block, output: Circuit) -> bool:
        if self.objective == "gates":
            return output.gate_count < block.circuit.gate_count
        model = cost_model(self.cost)

        def key(c: Circuit) -> tuple[int, int]:
            return c.gate_count, sum(model.cost(g, c.lines) for g in c.gates)

        return key(output) < key(block.circuit)

    def _one_block(self, dag: DAGCircuit, block: Block, tally: _Tally, zero_lines: tuple[int, ...]) -> None:
        tally.blocks += 1
        found = self._optimise(block, zero_lines) if block.circuit.gate_count >= 2 else None
        if found is None:
            if block.circuit.gate_count >= 2:
                tally.skipped.append(f"block of {block.circuit.gate_count} gates on {block.circuit.lines} qubits")
            same = measure(block.circuit)
            tally.before, tally.after = _plus(tally.before, same), _plus(tally.after, same)
            return
        output, before, after = found
        tally.optimised += 1
        tally.before = _plus(tally.before, before)
        if not self._better(block, output):
            tally.after = _plus(tally.after, before)
            return
        replacement = _replacement(output, block.phase)
        back, phase = _read_back(replacement)
        check = check_equivalent(block.circuit, back, seed=self.seed, zero_lines=zero_lines)
        if not check.equal or not _same_phase(phase, block.phase):
            raise InternalCheckError(
                f"internal error: the replacement of a block of {block.circuit.gate_count} gates differs from it "
                f"on input {check.counterexample} (or in its global phase); the pass stopped and returned no circuit"
            )
        tally.after = _plus(tally.after, after)
        tally.improved += 1
        tally.in_context += bool(zero_lines)
        _substitute(dag, block, replacement)


#: Largest block (qubits) whose clean ancillas are found by simulating every input.
CONTEXT_LINES = 20


def _first_operations(dag: DAGCircuit, qubits: tuple[int, ...]) -> dict[Qubit, int]:
    """The node id of the first operation on each of ``qubits`` (by index); a qubit never used has none."""
    out: dict[Qubit, int] = {}
    for index in qubits:
        qubit = dag.qubits[index]
        first = next(iter(dag.nodes_on_wire(qubit, only_ops=True)), None)
        if first is not None:
            out[qubit] = first._node_id
    return out


def _clean_ancillas(block: Block, firsts: dict[Qubit, int]) -> tuple[int, ...]:
    """The block's lines that start at |0⟩ (it holds their first operation) and that it
    returns to |0⟩ on every input with them 0, by the optimiser's own check
    (:func:`~exactsyn.optimise.equivalence.dirty_zero_line`, every input at this size),
    dropping a line it leaves at 1 until none is left.  Dropping one at a time ends where
    dropping all at once would: fewer zero lines honour more inputs, so a dirty line stays
    dirty."""
    if block.circuit.lines > CONTEXT_LINES or not firsts:
        return ()
    members = {node._node_id for node in block.nodes}
    zero = {line for line, qubit in enumerate(block.qubits) if firsts.get(qubit, -1) in members}
    while (dirty := dirty_zero_line(block.circuit, tuple(sorted(zero)))) is not None:
        zero.discard(dirty[0])
    return tuple(sorted(zero))


def _substitute(dag: DAGCircuit, block: Block, replacement: QuantumCircuit) -> None:
    """Collapse the block's nodes into one placeholder and expand the replacement there."""
    wires: dict[Qubit, int] = {q: i for i, q in enumerate(block.qubits)}
    placeholder = QiskitGate("exactsyn_block", len(block.qubits), [])
    node = dag.replace_block_with_op(list(block.nodes), placeholder, wires, cycle_check=True)
    dag.substitute_node_with_dag(node, circuit_to_dag(replacement))
