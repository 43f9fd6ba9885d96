"""``exactsyn synth`` with split queries: the options reach the search, bad combinations exit 2."""

from __future__ import annotations

import json
from pathlib import Path

from click.testing import CliRunner

from exactsyn.cli import main
from exactsyn.core.library import make_library
from exactsyn.tables.bfs import optimal_sizes

# One of the 577 3-line functions that need 8 NCT gates (Shende et al., IEEE TCAD 2003),
# found by breadth-first search; with --split-after 0 every k-query is split.
HARD3 = [int(v) for v in optimal_sizes(make_library("nct", 3)).permutations()[
    optimal_sizes(make_library("nct", 3)).sizes == 8][0]]  # fmt: skip


def test_split_cubes_prints_the_same_optimum_and_a_checkable_certificate(tmp_path: Path) -> None:
    perm = ",".join(map(str, HARD3))
    runner = CliRunner()
    cert = tmp_path / "c"
    out = runner.invoke(
        main,
        ["synth", "--perm", perm, "--split", "cubes", "--jobs", "1", "--cube-depth", "1", "--split-after", "0",
         "--bounds", "cheap", "--format", "json", "--certificate", str(cert)],
    )  # fmt: skip
    assert out.exit_code == 0, out.output
    data = json.loads(out.stdout)
    assert data["gate_count"] == 8 and data["optimal"] is True
    assert any(step.get("cubes") for step in data["steps"])
    checked = runner.invoke(main, ["check", str(cert)])
    assert checked.exit_code == 0, checked.output


def test_a_scheduler_with_race_or_off_is_bad_input() -> None:
    out = CliRunner().invoke(main, ["synth", "--perm", "1,0,3,2", "--split", "race", "--scheduler", "local"])
    assert out.exit_code == 2
    assert "scheduler" in out.output and "Traceback" not in out.output


def test_progress_counts_cubes_with_an_estimate_and_the_query_line_names_them() -> None:
    import io

    from rich.console import Console

    from exactsyn.cli.synth_display import SynthDisplay, cube_line
    from exactsyn.sat.conquer import CubeEvent

    buf = io.StringIO()
    with SynthDisplay("plain", Console(file=buf, width=120)) as p:
        p.cube(CubeEvent("start", 11, 25))
        for i in range(3):
            p.cube(CubeEvent("cube", 11, 25, i + 1, "unsat", 2.0, f"c{i}"))
        p.cube(CubeEvent("end", 11, 25, 3, seconds=6.0))
    text = buf.getvalue()
    assert "k = 11: split into 25 cubes" in text
    assert "k = 11: cubes 3/25 (unsat 3)" in text  # the closing line
    # 5 of 25 cubes in 100 s: 20 cubes left at 20 s each
    assert cube_line(11, 5, 25, {"unsat": 5, "sat": 0}, 100.0) == "k = 11: cubes 5/25 (unsat 5), 1:40 elapsed, ETA 6:40"


def test_plain_progress_of_a_split_run_on_the_command_line() -> None:
    perm = ",".join(map(str, HARD3))
    out = CliRunner().invoke(
        main,
        ["synth", "--perm", perm, "--split", "cubes", "--jobs", "1", "--cube-depth", "1", "--split-after", "0",
         "--bounds", "cheap", "--format", "json", "--progress"],
    )  # fmt: skip
    assert out.exit_code == 0, out.output
    assert "split into 3 cubes" in out.stderr and "cubes 3/3 (unsat 3)" in out.stderr
    assert "; 3 cubes)" in out.stderr  # the answered query's line
