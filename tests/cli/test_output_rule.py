"""One rule for every output, read-only commands that stay read-only, and advice that fits the command.

The rule (``exactsyn.io.formats.output_path``): a command creates the file or directory it
is asked to write, never the folders above it; it writes through a symbolic link and
never replaces the link.  Read-only commands open a store read-only: an empty file stays
empty, a missing store is not created.  A store whose folder cannot be written says so.
"""

from __future__ import annotations

import os
import sqlite3
from pathlib import Path

import pytest
from click.testing import CliRunner

from exactsyn.cli import main

PERM = "1,0,3,2"


def invoke(*args: str) -> tuple[int, str, str]:
    r = CliRunner().invoke(main, list(args))
    return r.exit_code, r.stdout, r.stderr


def one_line(code: int, err: str) -> str:
    assert code == 2, err
    assert err.count("\n") == 1 and err.startswith("exactsyn: error: "), err
    return err


def test_output_through_a_symbolic_link_keeps_the_link(tmp_path: Path) -> None:
    real = tmp_path / "real.qasm"
    real.write_text("")
    link = tmp_path / "link.qasm"
    link.symlink_to(real.name)
    code, _, err = invoke("synth", "--perm", PERM, "-q", "-o", str(link))
    assert code == 0, err
    assert link.is_symlink() and link.resolve() == real.resolve()
    assert real.read_text().startswith("OPENQASM")


@pytest.mark.parametrize(
    "args",
    [
        ["synth", "--perm", PERM, "-q", "-o", "{d}/c.qasm"],
        ["synth", "--perm", PERM, "-q", "--certificate", "{d}/cert"],
        ["synth", "--perm", PERM, "-q", "--dimacs", "{d}/cnf"],
    ],
)
def test_no_output_creates_the_folders_above_it(tmp_path: Path, args: list[str]) -> None:
    missing = tmp_path / "missing"
    one_line(*invoke(*[a.format(d=missing) for a in args])[::2])
    assert not missing.exists()


def test_table_chart_and_files_follow_the_same_rule(tmp_path: Path) -> None:
    store = tmp_path / "s.sqlite"
    assert invoke("batch", "--every", "1", "--store", str(store), "-q")[0] == 0
    missing = tmp_path / "missing"
    for opt, name in (("--chart", "c"), ("--csv", "t.csv"), ("--json", "t.json")):
        one_line(*invoke("table", "--store", str(store), opt, str(missing / name))[::2])
    assert not missing.exists()
    code, _, err = invoke("table", "--store", str(store), "--chart", str(tmp_path / "c"))
    assert code == 0 and (tmp_path / "c.png").stat().st_size > 0 and (tmp_path / "c.svg").stat().st_size > 0, err


@pytest.mark.parametrize("command", [["table"], ["table", "--list"], ["report", "-o", "r.html"]])
def test_read_only_commands_never_create_or_change_a_store(tmp_path: Path, command: list[str]) -> None:
    empty = tmp_path / "empty.sqlite"
    empty.write_bytes(b"")
    err = one_line(*invoke(*command, "--store", str(empty))[::2])
    assert "empty" in err and empty.stat().st_size == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == ["empty.sqlite"]  # no -wal, -shm or .certs
    missing = tmp_path / "none.sqlite"
    one_line(*invoke(*command, "--store", str(missing))[::2])
    assert not missing.exists()


def test_reading_a_store_leaves_its_bytes_alone(tmp_path: Path) -> None:
    store = tmp_path / "s.sqlite"
    assert invoke("batch", "--every", "1", "--store", str(store), "-q")[0] == 0
    con = sqlite3.connect(store)
    con.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    con.close()
    before = store.read_bytes()
    for command in (["table"], ["table", "--list"]):
        code, out, err = invoke(*command, "--store", str(store))
        assert code == 0, err
    assert store.read_bytes() == before  # (SQLite may add its shared-memory file beside a WAL store)


def _unwritable_folder(tmp_path: Path) -> Path:
    """A folder this process cannot write in, tested by writing (permission bits do not tell an administrator)."""
    candidates = [tmp_path / "ro"]
    candidates[0].mkdir()
    os.chmod(candidates[0], 0o555)
    candidates += [Path("/sys"), Path("/proc")]
    for folder in candidates:
        try:
            (folder / ".exactsyn-probe").touch()
        except OSError:
            return folder
        (folder / ".exactsyn-probe").unlink()
    pytest.skip("no folder here refuses writes")


def test_a_store_in_an_unwritable_folder_names_the_cause(tmp_path: Path) -> None:
    folder = _unwritable_folder(tmp_path)
    err = one_line(*invoke("batch", "--every", "1", "--store", str(folder / "s.sqlite"), "-q")[::2])
    assert f"folder {folder} is not writable" in err and "unable to open database file" not in err


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
