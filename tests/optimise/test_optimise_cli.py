"""``exactsyn optimise`` as a user meets it: files in and out, the summary, the log, exit codes."""

from __future__ import annotations

import json
from pathlib import Path

import click
import numpy as np
import pytest
from click.testing import CliRunner

from exactsyn.cli.optimise import optimise
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate
from exactsyn.io.jsonio import circuit_to_dict
from exactsyn.io.qasm import read_qasm_layout, to_qasm2

ADDER_QASM = """OPENQASM 2.0;
include "qelib1.inc";
qreg cin[1];
qreg a[2];
qreg b[2];
qreg cout[1];
cx a[0],b[0];
cx a[0],cin[0];
ccx cin[0],b[0],a[0];
cx a[1],b[1];
cx a[1],a[0];
ccx a[0],b[1],a[1];
cx a[1],cout[0];
ccx a[0],b[1],a[1];
cx a[1],a[0];
cx a[0],b[1];
ccx cin[0],b[0],a[0];
cx a[0],cin[0];
cx cin[0],b[0];
"""  # a 2-bit ripple-carry adder in the register layout qiskit writes (our own transcription)


@pytest.fixture
def group() -> click.Group:
    """The command attached to a group, as the main command line attaches it."""

    @click.group()
    def cli() -> None:
        pass

    cli.add_command(optimise)
    return cli


def invoke(group: click.Group, *args: str) -> tuple[int, str, str]:
    res = CliRunner().invoke(group, ["optimise", *args])
    return res.exit_code, res.stdout, res.stderr


def test_optimises_a_multi_register_file_and_writes_log_and_registers(group: click.Group, tmp_path: Path) -> None:
    src = tmp_path / "adder.qasm"
    src.write_text(ADDER_QASM)
    out = tmp_path / "adder-opt.qasm"
    code, stdout, stderr = invoke(group, str(src), "-o", str(out), "--window", "4")
    assert code == 0, stderr
    assert "gates" in stdout and "13" in stdout and "10" in stdout and "equivalence: exhaustive" in stdout
    before, layout = read_qasm_layout(ADDER_QASM)
    after, back_layout = read_qasm_layout(out.read_text())
    assert back_layout == layout and [name for name, _ in layout.registers] == ["cin", "a", "b", "cout"]
    assert out.read_text().startswith("OPENQASM 2.0")  # .qasm keeps the input's version
    assert after.gate_count == 10 and after.permutation() == before.permutation()
    qiskit_reads_the_same(out.read_text(), before)
    log = json.loads((tmp_path / "adder-opt.log.json").read_text())
    assert log["before"]["gates"] == 13 and log["after"]["gates"] == 10
    assert log["window"] == 4 and log["registers"][0] == {"name": "cin", "size": 1}
    assert log["windows_replaced"] and log["equivalence"]["equal"] is True


def test_formats_by_suffix_and_option(group: click.Group, tmp_path: Path) -> None:
    c = Circuit(3, (x_gate(2, [0, 1]), x_gate(1, [0]), x_gate(2, [0, 1]), x_gate(1, [0])))
    src = tmp_path / "c.json"
    src.write_text(json.dumps(circuit_to_dict(c)))
    for name, head in (("o.qasm3", "OPENQASM 3.0"), ("o.qasm2", "OPENQASM 2.0"), ("o.qasm", "OPENQASM 3.0")):
        code, _, stderr = invoke(group, str(src), "-o", str(tmp_path / name), "-q", "--no-log")
        assert code == 0, stderr
        assert (tmp_path / name).read_text().startswith(head)
        assert not (tmp_path / name).with_suffix(".log.json").exists()
    for name in ("o.qasm3", "o.qasm2"):
        qiskit_reads_the_same((tmp_path / name).read_text(), c)
    code, stdout, stderr = invoke(group, str(src), "--format", "json")
    assert code == 0
    data = json.loads(stdout)
    assert data["gate_count"] == 1 and "registers" not in data
    assert "equivalence" in stderr  # without -o the summary goes to stderr
    code, _, stderr = invoke(group, str(src), "-o", str(tmp_path / "o.txt"))
    assert code == 2 and "from its suffix" in stderr


@pytest.mark.parametrize(
    ("text", "options", "fragment"),
    [
        ("OPENQASM 2.0;\nqreg q[4];\nc3x q[0],q[1],q[2],q[3];\n", ["--library", "nct"], "has no C3X"),
        ("OPENQASM 2.0;\nqreg q[3];\nh q[0];\n", [], "unsupported gate 'h'"),
        ("OPENQASM 2.0;\nqreg q[3];\n", [], "no gates"),
        ("OPENQASM 2.0;\nqreg q[5000];\nx q[0];\n", [], "at most 1,024 lines"),
        ("OPENQASM 2.0;\nqreg q[3];\nx q[0];\n", ["--coupling", "0-7"], "outside"),
        ("OPENQASM 2.0;\nqreg q[3];\nx q[0];\n", ["--cost", "nope", "--objective", "gates-then-cost"], "cost model"),
    ],
)
def test_bad_input_exit_2_and_nothing_written(
    group: click.Group, tmp_path: Path, text: str, options: list[str], fragment: str
) -> None:
    src = tmp_path / "in.qasm"
    src.write_text(text)
    out = tmp_path / "out.qasm"
    code, stdout, stderr = invoke(group, str(src), "-o", str(out), *options)
    assert code == 2
    assert fragment in stderr and stderr.count("\n") == 1 and stderr.startswith("exactsyn: error: ")
    assert not out.exists() and not (tmp_path / "out.log.json").exists()
    assert list(tmp_path.iterdir()) == [src]


def test_missing_file_and_help(group: click.Group, tmp_path: Path) -> None:
    code, _, stderr = invoke(group, str(tmp_path / "none.qasm"), "-o", str(tmp_path / "o.qasm"))
    assert code == 2 and "cannot read" in stderr
    res = CliRunner().invoke(group, ["optimise", "--help"])
    assert res.exit_code == 0 and "exactsyn optimise adder.qasm -o adder-opt.qasm" in res.stdout


def qiskit_reads_the_same(text: str, before: Circuit) -> None:
    """qiskit (reference reader and simulator) reads OUT; its operator is the input's permutation matrix."""
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    qc = qiskit.qasm2.loads(text) if text.startswith("OPENQASM 2") else qiskit.qasm3.loads(text)
    perm = before.permutation()
    expected = np.zeros((len(perm), len(perm)))
    expected[list(perm), np.arange(len(perm))] = 1.0
    assert np.allclose(Operator(qc).data, expected)


def test_an_internal_check_failure_exits_1_and_writes_nothing(
    group: click.Group, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import exactsyn.cli.optimise as command
    from exactsyn.optimise import EquivalenceError

    def broken(*args: object, **kwargs: object) -> None:
        raise EquivalenceError("internal error: the optimised circuit differs from the input on input 5")

    monkeypatch.setattr(command, "optimise_circuit", broken)
    src = tmp_path / "in.qasm"
    src.write_text(ADDER_QASM)
    code, _, stderr = invoke(group, str(src), "-o", str(tmp_path / "out.qasm"))
    assert code == 1 and "differs from the input" in stderr and list(tmp_path.iterdir()) == [src]


def test_qasm2_out_is_read_by_qiskit_with_registers(group: click.Group, tmp_path: Path) -> None:
    qiskit = pytest.importorskip("qiskit")
    from qiskit.quantum_info import Operator

    wide = Circuit(5, (x_gate(4, [0, 1, 2]), x_gate(3, [4]), x_gate(4, [0, 1, 2]), x_gate(0, [1], [2])))
    src = tmp_path / "w.qasm"
    src.write_text(to_qasm2(wide).replace("qreg q[5];", "qreg q[5];", 1))
    out = tmp_path / "w-opt.qasm2"
    code, _, stderr = invoke(group, str(src), "-o", str(out), "--library", "mixed")
    assert code == 0, stderr
    qc = qiskit.qasm2.loads(out.read_text())  # qiskit as reference reader of our OpenQASM 2
    perm = wide.permutation()
    expected = np.zeros((32, 32))
    expected[list(perm), np.arange(32)] = 1.0
    assert np.allclose(Operator(qc).data, expected)
