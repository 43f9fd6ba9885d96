"""``exactsyn synth`` with split queries: the options reach the search, bad combinations exit 2."""

from __future__ import annotations

import json
from pathlib import Path

from click.testing import CliRunner

from exactsyn.cli import main
from exactsyn.core.library import make_library
from exactsyn.search.bfs import optimal_sizes

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
