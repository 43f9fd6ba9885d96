"""One rule for every output, read-only commands that stay read-only, and advice that fits the command.

The rule (``exactsyn.io.formats.output_path``): a command creates the file or directory it
is asked to write, never the folders above it; it writes through a symbolic link and
never replaces the link.  Read-only commands open a store read-only: an empty file stays
empty, a missing store is not created.  A store whose folder cannot be written says so.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from exactsyn.cli import main

PERM = "1,0,3,2"


def test_out_of_memory_advice_fits_the_command(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    def no_memory(*args: object, **kwargs: object) -> None:
        raise MemoryError

    circuit = tmp_path / "c.qasm"
    circuit.write_text('OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[2];\ncx q[0],q[1];\n')
    monkeypatch.setattr("exactsyn.cli.apply.read_circuit", no_memory)
    monkeypatch.setattr("exactsyn.cli.synth.synthesise_request", no_memory)
    said = {}
    for command in (["apply", str(circuit)], ["synth", "--perm", PERM]):
        with pytest.raises(SystemExit) as stop:
            main.main(args=command, prog_name="exactsyn")
        assert stop.value.code == 1
        said[command[0]] = capsys.readouterr().err
    assert said["apply"].startswith("exactsyn: error: out of memory") and "--inputs" in said["apply"]
    assert "--library" not in said["apply"] and "--bounds" not in said["apply"]
    assert "--library" in said["synth"]
