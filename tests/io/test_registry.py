"""The format registry: one registration makes a format choosable, writable and readable everywhere.

A toy circuit format (one gate per line, as JSON) is registered here and nowhere else;
the checks go through the public readers, writers and commands, and the circuit read
back is compared with the one written by simulation (``Circuit.permutation``).
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from pathlib import Path

import pytest
from click.testing import CliRunner

import exactsyn as ex
from exactsyn.cli import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io import registry
from exactsyn.io.formats import format_for, kind_of_text, read_circuit_layout, render
from exactsyn.io.jsonio import gate_from_dict, gate_to_dict
from exactsyn.io.layout import Layout
from exactsyn.specification.loader import load_any

HEAD = "toy-circuit"


def _write_toy(circuit: Circuit, options: registry.RenderOptions) -> str:
    return "\n".join([f"{HEAD} {circuit.lines}", *(json.dumps(gate_to_dict(g)) for g in circuit.gates)]) + "\n"


def _read_toy(text: str) -> tuple[Circuit, Layout, str]:
    head, *rows = text.strip().splitlines()
    lines = int(head.split()[1])
    return Circuit(lines, tuple(gate_from_dict(json.loads(r)) for r in rows)), Layout.single(lines), "toy"


TOY = registry.Format(
    "toy", (".toy",), registry.CIRCUIT, _write_toy, "toy circuit", _read_toy, lambda s, _: s.startswith(HEAD)
)
# 3 lines: a Toffoli, a CNOT with a negative control and a swap (no gate is its own neighbour's inverse)
CIRCUIT = Circuit(3, (x_gate(2, [0, 1]), x_gate(0, [1], [2]), swap_gate(1, 2)))


@pytest.fixture
def toy() -> Iterator[registry.Format]:
    registry.register(TOY)
    try:
        yield TOY
    finally:
        registry.unregister("toy")


def test_a_registered_format_is_chosen_by_suffix_and_option_and_gone_after(toy: registry.Format) -> None:
    assert format_for("c.toy") == "toy" and format_for(None, "toy") == "toy"
    assert format_for("c.toy", kind=registry.CIRCUIT) == "toy"
    with pytest.raises(ExactsynError, match="from its suffix"):
        format_for("c.toy", kind=registry.PICTURE)
    assert "toy" in registry.names(readable=True) and ".toy" in registry.suffixes()
    registry.unregister("toy")
    with pytest.raises(ExactsynError, match="cannot tell the format of c.toy"):
        format_for("c.toy")
    with pytest.raises(ExactsynError, match="unknown format 'toy'"):
        render(CIRCUIT, "toy")
    registry.register(TOY)  # for the fixture's unregister


def test_a_registered_format_is_written_and_read_back_through_the_library(toy: registry.Format, tmp_path: Path) -> None:
    path = tmp_path / "c.toy"
    ex.write_circuit(CIRCUIT, path)
    assert path.read_text().startswith(f"{HEAD} 3\n")
    assert kind_of_text(path.read_text(), ".txt") == "toy"  # by content, whatever the suffix
    back, layout, fmt = read_circuit_layout(path)
    assert (back, fmt, layout.is_single) == (CIRCUIT, "toy", True)
    assert ex.read_circuit(path).permutation() == CIRCUIT.permutation()
    spec, _ = load_any(path)  # what 'synth FILE' reads
    assert spec.outputs == CIRCUIT.permutation()
    ex.write_toy(CIRCUIT, tmp_path / "d.data")  # write_<format> of the package root
    assert (tmp_path / "d.data").read_text() == path.read_text()


def test_a_registered_format_is_a_choice_of_the_commands(toy: registry.Format, tmp_path: Path) -> None:
    runner = CliRunner()
    perm = ",".join(map(str, CIRCUIT.permutation()))
    out = tmp_path / "s.toy"
    res = runner.invoke(main, ["synth", "--perm", perm, "-o", str(out), "-q"])
    assert res.exit_code == 0, res.output
    assert ex.read_circuit(out).permutation() == CIRCUIT.permutation()
    res = runner.invoke(main, ["synth", "--perm", perm, "--format", "toy", "-q"])
    assert res.exit_code == 0 and res.stdout.startswith(HEAD)
    res = runner.invoke(main, ["apply", str(out), "--perm"])
    assert res.exit_code == 0 and res.stdout.strip() == perm
    src = tmp_path / "in.toy"
    longer = Circuit(3, CIRCUIT.gates + CIRCUIT.inverse().gates + CIRCUIT.gates)  # 9 gates, the function of 3
    src.write_text(_write_toy(longer, registry.RenderOptions()))
    res = runner.invoke(main, ["optimise", str(src), "-o", str(tmp_path / "o.toy"), "-q", "--no-log"])
    assert res.exit_code == 0, res.output
    optimised = ex.read_circuit(tmp_path / "o.toy")
    assert optimised.permutation() == CIRCUIT.permutation() and optimised.gate_count < longer.gate_count
    res = runner.invoke(main, ["draw", str(out), "--format", "toy"])
    assert res.exit_code == 2 and "'toy' is not one of" in res.stderr  # a circuit text, not a picture


def test_registration_refuses_what_could_not_work() -> None:
    with pytest.raises(ValueError, match="registered already"):
        registry.register(registry.get("json"))
    with pytest.raises(ValueError, match="needs a reader"):
        registry.register(registry.Format("half", (".half",), registry.CIRCUIT, _write_toy, "half"))
    with pytest.raises(ValueError, match="lower case"):
        registry.register(registry.Format("up", (".UP",), registry.PICTURE, _write_toy, "up"))
    assert "half" not in registry.names() and "up" not in registry.names()


def test_the_built_in_formats_and_what_texts_they_claim() -> None:
    assert registry.names() == ("text", "json", "qasm2", "qasm3", "svg", "png")
    assert registry.names(registry.PICTURE) == ("text", "svg", "png")
    assert registry.names(readable=True) == ("json", "qasm2", "qasm3")
    assert format_for("c.qasm") == "qasm2"  # OpenQASM 2.0: the version every reader knows
    assert [format_for(f"c{s}") for s in (".json", ".qasm2", ".qasm3", ".txt", ".svg", ".png")] == [
        "json", "qasm2", "qasm3", "text", "svg", "png"
    ]  # fmt: skip
    assert kind_of_text('{"lines": 1, "gates": []}') == "json"
    assert kind_of_text("OPENQASM 2.0;\nqreg q[1];\n") == "qasm2"
    assert kind_of_text("OPENQASM 3;\nqubit[1] q;\n") == "qasm3"
    assert kind_of_text("qubit[1] q;\n", ".qasm") == "qasm2"  # by suffix; the reader tells the version
    assert read_circuit_text_format("qubit[1] q;\nx q[0];\n", ".qasm") == "qasm3"
    assert kind_of_text("permutation = [1, 0]\n", ".qasm") == "spec"
    assert kind_of_text("[constants]\nx = 1\n", ".toml") == "spec"  # a TOML table header, not a JSON list
    assert kind_of_text("[other]\nx = 1\n", ".toml") == "unknown"
    assert kind_of_text(" \n") == "empty"


def read_circuit_text_format(text: str, suffix: str) -> str:
    from exactsyn.io.formats import circuit_layout_from_text

    return circuit_layout_from_text(text, f"c{suffix}")[2]
