"""Maximal blocks of classical-reversible operations in a ``DAGCircuit``, as exactsyn circuits.

The blocks are collected by qiskit's own ``BlockCollector`` (``qiskit.dagcircuit``): it
alternates between the largest set of non-matching and the largest set of matching
operations reachable from the front of the circuit, so every block it returns is convex
(no path leaves the block and comes back; this is what lets ``replace_block_with_op``
collapse it) and cannot grow by one more matching operation at its front.  Blocks are
split into parts over disjoint qubit sets (``split_blocks``), which the optimiser would
treat independently anyway.

The collector is greedy: a qubit with nothing to do in one round runs ahead, and its
next reversible gates may be taken into an earlier block than the gates they meet (``x``
on q1 taken with the block before a layer of Hadamards that q1 skips, the ``cx(q1, q0)``
after that layer in another).  So blocks that follow each other on a qubit wire are
merged when their union is still convex: no operation outside the union is both reached
from it and reaches it (followed along every wire, classical ones included).  Every
merge makes one block of two, so the merging ends; each result is convex by that check.

A block becomes an exactsyn :class:`~exactsyn.core.circuit.Circuit` on its qubits, numbered
in the circuit's qubit order, with the sum of its operations' global phases
(:mod:`exactsyn.transpiler.convert`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from qiskit.dagcircuit import BlockCollector, DAGCircuit, DAGOpNode

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate
from exactsyn.transpiler.convert import Reversible, placed, reversible


@dataclass(frozen=True)
class Block:
    """One block: its DAG nodes in topological order, its qubits (as DAG qubit objects) and
    the exactsyn circuit they form on lines ``0 … len(qubits)-1``, with its global phase."""

    nodes: tuple[DAGOpNode, ...]
    qubits: tuple[Any, ...]
    circuit: Circuit
    phase: float


def _reader(dag: DAGCircuit) -> tuple[dict[int, Reversible], Any]:
    """A memo of the nodes read so far and the filter the collector calls."""
    memo: dict[int, Reversible] = {}
    refused: set[int] = set()

    def matches(node: Any) -> bool:
        if not isinstance(node, DAGOpNode) or node.cargs:
            return False
        key = node._node_id
        if key in memo:
            return True
        if key in refused:
            return False
        found = reversible(node.op)
        if found is None:
            refused.add(key)
            return False
        memo[key] = found
        return True

    return memo, matches


def _reach(dag: DAGCircuit, nodes: list[DAGOpNode], forward: bool, order: dict[int, int], stop: int) -> set[int]:
    """Ids of the operations reached from ``nodes`` (after them, or before them), not going past
    topological position ``stop``: a path between two nodes of a set never leaves its span."""
    step = dag.op_successors if forward else dag.op_predecessors
    seen: set[int] = set()
    stack = list(nodes)
    while stack:
        for m in step(stack.pop()):
            key = m._node_id
            if key not in seen and (order[key] <= stop if forward else order[key] >= stop):
                seen.add(key)
                stack.append(m)
    return seen


def convex(dag: DAGCircuit, nodes: list[DAGOpNode], order: dict[int, int] | None = None) -> bool:
    """No operation outside ``nodes`` lies on a path between two of them.  ``order``: the
    position of every operation in one topological order (computed when not given)."""
    if order is None:
        order = {n._node_id: i for i, n in enumerate(dag.topological_op_nodes())}
    ids = {n._node_id for n in nodes}
    first, last = min(order[i] for i in ids), max(order[i] for i in ids)
    after = _reach(dag, nodes, True, order, last) - ids
    before = _reach(dag, nodes, False, order, first) - ids
    return not after & before


def _merged(dag: DAGCircuit, blocks: list[list[DAGOpNode]], order: dict[int, int]) -> list[list[DAGOpNode]]:
    """Blocks adjacent on a qubit wire merged while the union stays convex (module docstring)."""
    groups: list[list[DAGOpNode] | None] = [list(b) for b in blocks]
    owner = {n._node_id: i for i, b in enumerate(blocks) for n in b}
    tried: set[tuple[int, int, int, int]] = set()
    changed = True
    while changed:
        changed = False
        for i, group in enumerate(groups):
            if group is None:
                continue
            after = {owner.get(m._node_id, i) for n in group for m in dag.quantum_successors(n)} - {i}
            for j in sorted(after):
                other = groups[j]
                key = (i, j, len(group), len(other or ()))
                if other is None or key in tried:
                    continue
                tried.add(key)
                if convex(dag, group + other, order):
                    group += other
                    owner.update((n._node_id, i) for n in other)
                    groups[j] = None
                    changed = True
    return [g for g in groups if g is not None]


def reversible_blocks(dag: DAGCircuit) -> list[Block]:
    """The maximal blocks of reversible operations of ``dag`` (module docstring)."""
    memo, matches = _reader(dag)
    collected = BlockCollector(dag).collect_all_matching_blocks(
        matches, split_blocks=True, min_block_size=1, split_layers=False
    )
    order = {node._node_id: i for i, node in enumerate(dag.topological_op_nodes())}
    collected = _merged(dag, collected, order)
    blocks: list[Block] = []
    for nodes in collected:
        ordered = tuple(sorted(nodes, key=lambda n: order[n._node_id]))
        qubits = sorted({q for n in ordered for q in n.qargs}, key=lambda q: dag.find_bit(q).index)
        line = {q: i for i, q in enumerate(qubits)}
        gates: list[Gate] = []
        phase = 0.0
        for node in ordered:
            found = memo[node._node_id]
            where = [line[q] for q in node.qargs]
            gates += [placed(g, where) for g in found.gates]
            phase += found.phase
        blocks.append(Block(ordered, tuple(qubits), Circuit(len(qubits), tuple(gates)), phase))
    return blocks
