"""Maximal blocks of classical-reversible operations in a ``DAGCircuit``, as exactsyn circuits.

The blocks are collected by qiskit's own ``BlockCollector`` (``qiskit.dagcircuit``): it
alternates between the largest set of non-matching and the largest set of matching
operations reachable from the front of the circuit, so every block it returns is convex
(no path leaves the block and comes back; this is what lets ``replace_block_with_op``
collapse it) and cannot grow by one more matching operation at its front.  Blocks are
split into parts over disjoint qubit sets (``split_blocks``), which the optimiser would
treat independently anyway.

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


def reversible_blocks(dag: DAGCircuit) -> list[Block]:
    """The maximal blocks of reversible operations of ``dag`` (module docstring)."""
    memo, matches = _reader(dag)
    collected = BlockCollector(dag).collect_all_matching_blocks(
        matches, split_blocks=True, min_block_size=1, split_layers=False
    )
    order = {node._node_id: i for i, node in enumerate(dag.topological_op_nodes())}
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
