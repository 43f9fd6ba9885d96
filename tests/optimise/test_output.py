"""The optimiser's output files: the format by suffix, and nothing kept that does not read back.

A writer with a bug is simulated by a format registered here whose text drops the last
gate: the read-back check (simulation of what was read against the optimised circuit)
must refuse it and leave no file.  qiskit reads the OpenQASM that is kept (reference reader).
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pytest

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io import registry
from exactsyn.io.jsonio import circuit_to_dict, load_json_circuit
from exactsyn.io.layout import Layout
from exactsyn.optimise import EquivalenceError, OptimiseResult, optimise_circuit
from exactsyn.optimise.output import checked_text, output_format, write_checked, write_log

HEAD = "lossy "
# a Toffoli and a CNOT written twice: optimised to the 2 gates that remain
INPUT = Circuit(3, (x_gate(2, [0, 1]), x_gate(1, [0]), x_gate(0, [2]), x_gate(0, [2])))


def _write_lossy(circuit: Circuit, options: registry.RenderOptions) -> str:
    shorter = Circuit(circuit.lines, circuit.gates[:-1])  # the bug: the last gate is lost
    return HEAD + json.dumps(circuit_to_dict(shorter)) + "\n"


def _read_lossy(text: str) -> tuple[Circuit, Layout, str]:
    circuit = load_json_circuit(text.strip().removeprefix(HEAD.strip()))
    return circuit, Layout.single(circuit.lines), "lossy"


@pytest.fixture
def lossy() -> Iterator[None]:
    fmt = registry.Format(
        "lossy", (".lossy",), registry.CIRCUIT, _write_lossy, "lossy", _read_lossy, lambda s, _: s.startswith(HEAD)
    )
    registry.register(fmt)
    try:
        yield
    finally:
        registry.unregister("lossy")


@pytest.fixture(scope="module")
def result() -> OptimiseResult:
    res = optimise_circuit(INPUT)
    assert res.output.gate_count == 2 and res.output.permutation() == INPUT.permutation()
    return res


def test_a_file_that_does_not_read_back_is_refused_and_not_left(
    lossy: None, result: OptimiseResult, tmp_path: Path
) -> None:
    out = tmp_path / "o.lossy"
    with pytest.raises(EquivalenceError, match="does not read back"):
        write_checked(result, output_format(None, out, "json"), out, layout=Layout.single(3))
    assert list(tmp_path.iterdir()) == []  # neither the file nor its temporary
    with pytest.raises(EquivalenceError):
        checked_text(result, "lossy", layout=Layout.single(3))


def test_a_file_that_reads_back_is_kept_and_read_by_qiskit(result: OptimiseResult, tmp_path: Path) -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    layout = Layout((("a", 2), ("c", 1)))
    out = write_checked(result, "qasm2", tmp_path / "o.qasm", layout=layout)
    assert list(tmp_path.iterdir()) == [out]
    qc = qiskit.qasm2.loads(out.read_text())  # qiskit as reference reader
    assert [r.name for r in qc.qregs] == ["a", "c"]
    perm = INPUT.permutation()
    expected = np.zeros((8, 8))
    expected[list(perm), np.arange(8)] = 1.0
    assert np.allclose(Operator(qc).data, expected)
    log = write_log(result, tmp_path / "o.log.json", input="in.qasm", output=out, fmt="qasm2", layout=layout)
    data = json.loads(log.read_text())
    assert data["registers"] == [{"name": "a", "size": 2}, {"name": "c", "size": 1}] and data["format"] == "qasm2"


def test_the_output_format_by_suffix() -> None:
    assert output_format(None, "o.qasm", "qasm2") == "qasm2"  # .qasm keeps the input's version
    assert output_format(None, "o.qasm", "qasm3") == "qasm3"
    assert output_format(None, "o.qasm", "json") == "qasm3"  # else the newer version
    assert output_format(None, "o.JSON", "qasm2") == "json"
    assert output_format(None, None, "qasm3") == "qasm3"
    assert output_format("qasm2", "o.json", "json") == "qasm2"
    for fmt, out in ((None, "o.svg"), ("svg", None), (None, "o.txt")):
        with pytest.raises(ExactsynError):
            output_format(fmt, out, "json")
