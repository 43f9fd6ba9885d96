"""The one progress display: live on a terminal, plain lines elsewhere, nothing when quiet.

Checked against what it was handed (counts, descriptions) and against the commands that
use it; no outside reference is needed for a display.
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import pytest
from click.testing import CliRunner
from rich.console import Console

from exactsyn.batch.run import Event
from exactsyn.cli import main
from exactsyn.cli.batch_display import BatchDisplay
from exactsyn.cli.progress import Display, choose_mode, clock, step_bar
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate
from exactsyn.io.jsonio import circuit_to_dict


def _console(terminal: bool) -> tuple[Console, io.StringIO]:
    buf = io.StringIO()
    return Console(file=buf, force_terminal=terminal, width=120), buf


def test_modes_follow_quiet_terminal_and_progress() -> None:
    terminal, _ = _console(True)
    pipe, _ = _console(False)
    assert choose_mode(True, True, terminal) == "off"
    assert choose_mode(False, False, terminal) == "live"
    assert choose_mode(False, True, pipe) == "plain"
    assert choose_mode(False, False, pipe) == "off"
    with pytest.raises(ValueError):
        Display("loud")


def test_plain_lines_come_at_most_every_interval_and_once_at_the_end() -> None:
    console, buf = _console(False)
    with Display("plain", console, every=3600.0) as d:
        update = step_bar(d, "nct")
        for i in range(5):
            update("level 3", i, 4)
        d.line("a permanent line")
    lines = buf.getvalue().splitlines()
    assert lines[0] == "a permanent line"  # none of the five updates came an hour after the bar started
    assert lines[1].startswith("nct: level 3: 4/4, 0:00 elapsed") and len(lines) == 2
    console, buf = _console(False)
    with Display("plain", console, every=0.0) as d:
        for i in range(3):
            d.update("work", i + 1, 3, items=i + 1)
    assert buf.getvalue().count("work: ") == 4 and "work: 2/3 (items 2)" in buf.getvalue()


def test_off_and_live() -> None:
    console, buf = _console(True)
    with Display("off", console) as d:
        d.update("work", 1, 2)
        d.line("not shown")
        d.status("running")
    assert buf.getvalue() == ""
    with Display("live", console) as d:
        d.status("building a table")
        d.update("round 1", 3, 7)
        assert d.live is not None
        d.line("kept")
    assert "kept" in buf.getvalue() and "building a table" in buf.getvalue() and "round 1" in buf.getvalue()
    assert [clock(s) for s in (5, 310, 3723)] == ["0:05", "5:10", "1:02:03"]


def test_batch_display_counts_items_in_plain_lines() -> None:
    console, buf = _console(False)
    with BatchDisplay("plain", console) as d:
        d(Event("start", total=3, skipped=2))
        for status in ("done", "timeout", "done"):
            d(Event("item", status=status))
    text = buf.getvalue()
    assert "2 items already finished in the store: skipped" in text
    last = text.strip().splitlines()[-1]
    assert last.startswith("batch 3/3") and "done 2  timeout 1  failed 0" in last


def test_optimise_shows_plain_progress_when_asked(tmp_path: Path) -> None:
    src = tmp_path / "c.json"
    c = Circuit(3, (x_gate(2, [0, 1]), x_gate(1, [0]), x_gate(1, [0])))
    src.write_text(json.dumps(circuit_to_dict(c)))
    runner = CliRunner()
    res = runner.invoke(main, ["optimise", str(src), "-o", str(tmp_path / "o.json"), "--no-log", "--progress"])
    assert res.exit_code == 0, res.output
    assert "equivalence check: 1/1 (gates 1)" in res.stderr  # the last bar, said at the end
    res = runner.invoke(main, ["optimise", str(src), "-o", str(tmp_path / "o.json"), "--no-log"])
    assert res.exit_code == 0 and "equivalence check" not in res.stderr  # not a terminal: off unless asked
