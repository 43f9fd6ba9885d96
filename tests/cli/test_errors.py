"""Every bad input is one line on stderr with exit 2 — never a traceback, never a usage block.

The cases are the ones a new user met (certificate and store paths that cannot exist,
click's own errors in every command, malformed values, files of the wrong kind), plus
"did you mean" for near-misses.  Most run in-process (CliRunner); a few run as real
processes, where a traceback would show.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner
from helpers import ROOT

from exactsyn.cli import main

PERM = "1,0,3,2,5,7,4,6"


def invoke(*args: str) -> tuple[int, str, str]:
    r = CliRunner().invoke(main, list(args))
    return r.exit_code, r.stdout, r.stderr


def one_line(code: int, err: str, needle: str = "") -> str:
    assert code == 2, err
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("exactsyn: error: "), err
    assert "Traceback" not in err and "Usage:" not in err
    assert needle.lower() in lines[0].lower(), (needle, lines[0])
    return lines[0]


@pytest.mark.parametrize(
    ("path", "needle"),
    [("/dev/null/x", "/dev/null is not a directory"), ("/proc/x", "/proc/x")],
)
def test_certificate_directory_that_cannot_exist(tmp_path: Path, path: str, needle: str) -> None:
    code, out, err = invoke("synth", "--perm", PERM, "--certificate", path)
    one_line(code, err, needle)
    assert out == ""


def test_store_under_a_file_names_the_real_reason(tmp_path: Path) -> None:
    for args in (
        ["batch", "--every", "1", "--store", "/dev/null/x.sqlite", "-q"],
        ["table", "--store", "/dev/null/x.sqlite"],
        ["report", "--store", "/dev/null/x.sqlite", "-o", str(tmp_path / "r.html")],
    ):
        code, _, err = invoke(*args)
        line = one_line(code, err, "/dev/null")
        assert "File exists" not in line


COMMANDS = ["synth", "optimise", "check", "apply", "batch", "table", "draw", "report"]


@pytest.mark.parametrize("command", COMMANDS)
def test_click_usage_errors_are_one_line_in_every_command(command: str) -> None:
    code, _, err = invoke(command, "--no-such-option")
    line = one_line(code, err, "no such option")
    assert command in line and "--help" in line


@pytest.mark.parametrize(
    ("args", "needle"),
    [
        (["synth", "--perm", PERM, "--format", "pdf"], "'pdf' is not one of"),
        (["synth", "--perm", PERM, "--time-limit", "abc"], "--time-limit"),
        (["synth", "--perm", PERM, "--time-limit", "-3"], "--time-limit"),
        (["synth", "--perm", PERM, "--jobs", "0"], "--jobs"),
        (["synth", "--perm", PERM, "--objective", "gate"], "did you mean 'gates'"),
        (["synth", "--perm", PERM, "--solver", "cadical"], "did you mean 'cadical195'"),
        (["synth", "--perm"], "requires an argument"),
        (["batch", "--every", "x"], "--every"),
        (["batch", "--every", "2", "--engine", "dsk"], "did you mean 'dask'"),
        (["draw", "x.json", "--format", "pdf"], "'pdf' is not one of"),
        (["draw", "x.json", "--wrap", "many"], "--wrap"),
        (["optimise", "x.qasm", "--window", "x"], "--window"),
        (["table", "extra-argument"], "unexpected extra argument"),
    ],
)
def test_bad_option_values_are_one_line(args: list[str], needle: str) -> None:
    code, _, err = invoke(*args)
    one_line(code, err, needle)


@pytest.mark.parametrize("command", ["synth", "apply", "draw", "optimise", "check"])
def test_a_directory_where_a_file_is_expected(tmp_path: Path, command: str) -> None:
    code, _, err = invoke(command, str(tmp_path))
    line = one_line(code, err)
    assert "directory" in line and (str(tmp_path) in line or "'" in line)


def test_check_of_a_directory_without_result_json_names_it(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    code, _, err = invoke("check", ".")
    line = one_line(code, err, "result.json")
    assert str(tmp_path) in line


@pytest.mark.parametrize("perm", ["1,,0,3,2", ",1,0", "1,0,", "[1,0", "1,0,x", "1.5,0", ""])
def test_malformed_permutations(perm: str) -> None:
    code, _, err = invoke("synth", "--perm", perm)
    one_line(code, err)


def test_the_bad_kind_of_a_library_is_named_with_a_suggestion() -> None:
    code, _, err = invoke("synth", "--perm", PERM, "--library", "not,cnot,toffolli")
    line = one_line(code, err, "'toffolli'")
    assert "did you mean 'toffoli'" in line
    code, _, err = invoke("synth", "--perm", PERM, "--library", "mtc")
    one_line(code, err, "did you mean 'mct'")


def test_unknown_spec_keys_get_a_suggestion(tmp_path: Path) -> None:
    f = tmp_path / "s.toml"
    f.write_text("permutaton = [1, 0, 3, 2]\n")
    code, _, err = invoke("synth", str(f))
    one_line(code, err, "did you mean 'permutation'")
    g = tmp_path / "b.toml"
    g.write_text('inputs = ["a"]\noutput = ["y"]\n[expressions]\ny = "a"\n')
    code, _, err = invoke("synth", str(g))
    one_line(code, err, "did you mean 'outputs'")


@pytest.mark.parametrize("command", ["apply", "draw", "optimise"])
def test_a_spec_file_given_where_a_circuit_is_read(tmp_path: Path, command: str) -> None:
    for name in ("s.toml", "s.qasm"):
        f = tmp_path / name
        f.write_text("permutation = [1, 0, 3, 2]\n")
        args = [command, str(f)] + (["-o", str(tmp_path / "o.qasm")] if command == "optimise" else [])
        code, _, err = invoke(*args)
        one_line(code, err, "is a spec file")
    assert not (tmp_path / "o.qasm").exists()


@pytest.mark.parametrize(
    ("content", "needle"),
    [("", "is empty"), ("   \n", "is empty"), ("[1, 0, 3, 2]", "JSON list"), ("[]", "JSON list"), ("{", "JSON")],
)
def test_json_files_that_are_not_circuits_get_json_messages(tmp_path: Path, content: str, needle: str) -> None:
    f = tmp_path / "c.json"
    f.write_text(content)
    for command in ("synth", "apply"):
        code, _, err = invoke(command, str(f))
        line = one_line(code, err, needle)
        assert "OPENQASM" not in line and ";" not in line.split(":", 2)[-1][:3]


def test_a_certificate_result_given_to_apply_says_what_it_is(tmp_path: Path) -> None:
    d = tmp_path / "cert"
    assert invoke("synth", "--perm", PERM, "--certificate", str(d), "-q")[0] == 0
    code, _, err = invoke("apply", str(d / "result.json"))
    one_line(code, err, "exactsyn check")


def test_unknown_output_suffixes_are_refused_and_format_wins(tmp_path: Path) -> None:
    code, _, err = invoke("synth", "--perm", PERM, "-o", str(tmp_path / "c.pdf"))
    one_line(code, err, ".pdf")
    assert not (tmp_path / "c.pdf").exists()
    code, _, err = invoke("draw", str(tmp_path / "none.json"), "-o", str(tmp_path / "x.pdf"))
    one_line(code, err)
    assert not (tmp_path / "x.pdf").exists()
    code, _, err = invoke("synth", "--perm", PERM, "--format", "json", "-o", str(tmp_path / "c.data"), "-q")
    assert code == 0, err
    assert json.loads((tmp_path / "c.data").read_text())["gate_count"] >= 1


def test_synth_writes_svg_when_the_suffix_says_so(tmp_path: Path) -> None:
    code, _, err = invoke("synth", "--perm", PERM, "-o", str(tmp_path / "c.svg"), "-q")
    assert code == 0, err
    text = (tmp_path / "c.svg").read_text()
    assert text.lstrip().startswith("<svg") and "⊕" not in text.split(">", 1)[0]


def test_an_output_file_that_cannot_be_written_fails_before_the_search(tmp_path: Path) -> None:
    blocker = tmp_path / "file"
    blocker.write_text("x")
    code, out, err = invoke("synth", "--perm", PERM, "-o", str(blocker / "c.json"))
    one_line(code, err, "is not a directory")
    assert out == ""


def run_process(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "exactsyn", *args], capture_output=True, text=True, cwd=ROOT, timeout=120
    )


def test_real_processes_print_no_traceback() -> None:
    for args in (
        ["synth", "--perm", PERM, "--certificate", "/proc/x"],
        ["synth", "--perm", PERM, "--time-limit", "abc"],
        ["check", "/"],
        ["batch", "--every", "2", "--store", "/dev/null/x.sqlite"],
    ):
        r = run_process(*args)
        one_line(r.returncode, r.stderr)
        assert r.stdout == ""


def test_spellings_of_the_previous_release_are_refused_naming_the_new_one(tmp_path: Path) -> None:
    store = tmp_path / "s.sqlite"
    cases = [
        (["synth", "--cycles", "(5 6)", "--count"], "'--count': it is now --optima count"),
        (["synth", "--cycles", "(5 6)", "--all"], "'--all': it is now --optima all"),
        (["synth", "--cycles", "(5 6)", "--optima", "all", "--all-limit", "2"], "it is now --optima-limit"),
        (["batch", "--all", "1", "--store", str(store), "-q"], "'--all': it is now --every"),
        (["batch", "--random", "2", "--count", "3", "--store", str(store), "-q"], "it is now --sample"),
        (["report", str(store), "-o", str(tmp_path / "r.html")], "it is now --store"),
    ]
    for args, needle in cases:
        code, out, err = invoke(*args)
        one_line(code, err, needle)
        assert out == ""
    assert not store.exists() and not (tmp_path / "r.html").exists()  # nothing was run
    code, _, err = invoke("synth", "--cycles", "(5 6)", "--cont")
    assert "did you mean '--cost'" in one_line(code, err)  # other unknown options keep the suggestion


def test_the_time_limit_of_a_command_counts_from_the_start_of_the_process() -> None:
    # a process that has been alive for 1 s before it asks: its start-up is taken off the limit
    import subprocess
    import sys

    code = (
        "import time; time.sleep(1.0)\n"
        "from exactsyn.cli.options import command_time_limit, started_seconds_ago\n"
        "print(started_seconds_ago(), command_time_limit(30.0), command_time_limit(0.05))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split()
    age, limit, tiny = (float(x) for x in out)
    assert 1.0 <= age < 20.0
    assert 10.0 < limit <= 29.0 and abs(limit - (30.0 - age)) < 0.5
    assert tiny == 0.05  # a limit smaller than the start-up is left alone, not made zero
