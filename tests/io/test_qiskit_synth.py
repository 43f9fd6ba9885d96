"""Synthesised circuits read back by qiskit (test-only reference reader of OpenQASM 2)."""

from __future__ import annotations

import random

import numpy as np
from helpers import random_perm
from optional import need_qiskit

from exactsyn.core.library import make_library
from exactsyn.io.qasm import to_qasm2
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation

qiskit = need_qiskit()  # the test-only reference reader
from qiskit import QuantumCircuit  # noqa: E402
from qiskit.quantum_info import Operator  # noqa: E402


def permutation_from_unitary(u: np.ndarray) -> list[int]:
    """qiskit's basis index is little-endian: index i has q[0] as bit 0 — our convention."""
    size = u.shape[0]
    out = []
    for i in range(size):
        col = u[:, i]
        j = int(np.argmax(np.abs(col)))
        assert np.isclose(col[j], 1.0) and np.allclose(np.delete(col, j), 0)
        out.append(j)
    return out


def test_qiskit_reads_back_110_synthesised_circuits() -> None:
    rng = random.Random(5)
    cases = [(random_perm(rng, 3), "nct") for _ in range(100)]
    # 4-line functions with mct: built from 4 random gates, so the search stays short.
    lib4 = make_library("mct", 4)
    for _ in range(10):
        states = np.arange(16)
        for _ in range(4):
            states = lib4.gates[rng.randrange(len(lib4))].apply(states)
        cases.append(([int(v) for v in states], "mct"))
    for perm, lib in cases:
        spec = from_permutation(perm)
        res = minimise_gates(spec, make_library(lib, spec.lines))
        assert res.circuit is not None
        qc = QuantumCircuit.from_qasm_str(to_qasm2(res.circuit))
        assert permutation_from_unitary(Operator(qc).data) == perm
