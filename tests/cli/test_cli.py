"""The command line as a user meets it: outputs, exit codes and one-line errors."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner
from helpers import ROOT

from exactsyn.cli import main
from exactsyn.core.library import make_library
from exactsyn.tables.bfs import optimal_sizes


def run(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "exactsyn", *args], capture_output=True, text=True, cwd=ROOT, timeout=120
    )


def test_json_output_has_the_agreed_fields() -> None:
    r = run("synth", "--perm", "0,1,2,3,4,5,7,6", "--library", "nct", "--format", "json", "--quiet")
    assert r.returncode == 0, r.stderr
    data = json.loads(r.stdout)
    for key in ("lines", "gate_count", "optimal", "lower_bound", "library", "gates"):
        assert key in data
    assert data["lines"] == 3 and data["gate_count"] == 1 and data["optimal"] is True
    # 6 <-> 7 flips line 0 when lines 1 and 2 are 1 (line 0 = least significant bit):
    # one Toffoli gate (common practice).
    assert data["gates"] == [{"type": "x", "target": 0, "controls": [1, 2], "negative_controls": []}]
    assert data["library"] == "nct"


def test_progress_lines_go_to_stderr_when_asked_unless_quiet() -> None:
    # stderr is a pipe here, not a terminal: progress only with --progress
    r = run("synth", "--cycles", "(1 2)", "--format", "json", "--bounds", "cheap", "--progress")
    assert r.returncode == 0
    assert "k=2" in r.stderr and "UNSAT" in r.stderr
    json.loads(r.stdout)  # stdout stays clean JSON
    plain = run("synth", "--cycles", "(1 2)", "--format", "json", "--bounds", "cheap")
    assert "k=2" not in plain.stderr and len(plain.stderr.strip().splitlines()) == 1  # the summary only
    t = run("synth", "--cycles", "(1 2)", "--format", "json")
    assert "table" in t.stderr  # the distance table decided it
    q = run("synth", "--cycles", "(1 2)", "--format", "json", "--quiet")
    assert q.stderr == ""


def test_qasm_outputs_and_apply_round_trip(tmp_path: Path) -> None:
    perm = "1,0,3,2,5,7,4,6"
    for fmt in ("qasm2", "qasm3", "json"):
        out = tmp_path / f"c.{fmt}"
        r = run("synth", "--perm", perm, "--format", fmt, "-o", str(out), "-q")
        assert r.returncode == 0, r.stderr
        a = run("apply", str(out), "--perm")
        assert a.returncode == 0, a.stderr
        assert a.stdout.strip() == perm


def test_apply_prints_a_truth_table(tmp_path: Path) -> None:
    out = tmp_path / "t.qasm"
    assert run("synth", "--cycles", "(6 7)", "--format", "qasm2", "-o", str(out), "-q").returncode == 0
    a = run("apply", str(out), "--inputs", "6,7")
    lines = a.stdout.strip().splitlines()
    assert lines[1].split() == ["6", "110", "->", "111", "7"]
    assert lines[2].split() == ["7", "111", "->", "110", "6"]


def test_spec_file_instance() -> None:
    r = run("synth", "instances/lift-gray-step.toml", "--format", "json", "-q")
    assert r.returncode == 0, r.stderr
    data = json.loads(r.stdout)
    # the file's definition: Gray code g(f) = f ^ (f >> 1) of floor f moves to g(f + 1 mod 8)
    gray = [f ^ (f >> 1) for f in range(8)]
    step = [0] * 8
    for f in range(8):
        step[gray[f]] = gray[(f + 1) % 8]
    assert data["name"] == "lift-gray-step" and data["permutation"] == step
    # breadth-first search (no SAT) gives the optimum
    assert data["optimal"] is True and data["gate_count"] == optimal_sizes(make_library("nct", 3)).size(step)


BAD_INPUTS = [
    (["synth", "--perm", "0,1,1,3"], "not a permutation"),
    (["synth", "--perm", "0,1,2"], "2^n entries"),
    (["synth", "--perm", ",".join(map(str, range(128)))], "at most 6 lines"),
    (["synth", "--perm", "1,0,3,2", "--library", "fancy"], "unknown library"),
    (["synth", "--cycles", "(0 1"], "malformed cycle"),
    (["synth", "--cycles", "(0 x)"], "malformed cycle"),
    (["synth", "--perm", "1,0", "--cycles", "(0 1)"], "exactly once"),
    (["synth", "--perm", "a,b"], "not an integer"),
    (["apply", "missing-file.qasm"], "cannot read"),
]


@pytest.mark.parametrize(("args", "needle"), BAD_INPUTS)
def test_bad_input_exits_2_with_one_line(args: list[str], needle: str) -> None:
    r = run(*args)
    assert r.returncode == 2
    assert r.stdout == ""
    lines = r.stderr.strip().splitlines()
    assert len(lines) == 1 and needle in lines[0], r.stderr
    assert "Traceback" not in r.stderr


@pytest.mark.parametrize(
    "content",
    [
        "permutation = [0, 1, 1, 3]\n",
        "permutation = [0, 1\n",
        "cycles = 5\n",
        "colour = 'red'\npermutation = [1, 0]\n",
        "lines = 3\npermutation = [1, 0, 3, 2]\n",
        "name = 'x'\n",
    ],
)
def test_malformed_spec_file_exits_2(tmp_path: Path, content: str) -> None:
    f = tmp_path / "bad.toml"
    f.write_text(content)
    r = run("synth", str(f))
    assert r.returncode == 2
    assert len(r.stderr.strip().splitlines()) == 1 and "Traceback" not in r.stderr


def test_odd_permutation_nct_four_lines_exit_1_with_reason() -> None:
    perm = ",".join(map(str, [1, 0] + list(range(2, 16))))
    r = run("synth", "--perm", perm, "--library", "nct")
    assert r.returncode == 1
    assert "odd" in r.stderr and len(r.stderr.strip().splitlines()) == 1


def test_help_teaches_by_example() -> None:
    res = CliRunner().invoke(main, ["synth", "--help"])
    assert res.exit_code == 0
    assert "Examples" in res.output and "--perm" in res.output and "Exit status" in res.output


def test_max_gates_below_the_optimum_exits_1_with_the_bound() -> None:
    # SWAP of two lines needs 3 CNOTs (common practice); --max-gates 2 finds none.
    r = run("synth", "--cycles", "(1 2)", "--max-gates", "2", "--format", "json", "--bounds", "cheap")
    assert r.returncode == 1
    data = json.loads(r.stdout)
    assert data["gate_count"] is None and data["optimal"] is False and data["lower_bound"] == 3


def test_check_command_exit_codes(tmp_path: Path) -> None:
    d = tmp_path / "cert"
    assert run("synth", "--perm", "1,0,3,2,5,7,4,6", "--certificate", str(d), "-q", "--bounds", "cheap").returncode == 0
    ok = run("check", str(d))
    assert ok.returncode == 0 and "certificate OK" in ok.stdout
    data = json.loads((d / "result.json").read_text())
    data["spec"]["outputs"][0], data["spec"]["outputs"][1] = data["spec"]["outputs"][1], data["spec"]["outputs"][0]
    (d / "result.json").write_text(json.dumps(data))
    bad = run("check", str(d))
    assert bad.returncode == 1 and "REJECTED" in bad.stdout
    missing = run("check", str(tmp_path / "nowhere"))
    assert missing.returncode == 2 and len(missing.stderr.strip().splitlines()) == 1
