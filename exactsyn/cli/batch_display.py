"""Progress of ``exactsyn batch``: count, rate, ETA, done / timed out / failed.

On a terminal a live bar (rich); otherwise — a log file, a cluster job's output — one
plain line every ``interval`` seconds and one at the end.  It consumes
:class:`exactsyn.batch.run.Event` values; the command line owns it and points it at
stderr, so the library never prints.
"""

from __future__ import annotations

import time
from typing import Any

from rich.console import Console
from rich.progress import (
    BarColumn,
    MofNCompleteColumn,
    Progress,
    ProgressColumn,
    Task,
    TextColumn,
    TimeElapsedColumn,
    TimeRemainingColumn,
)
from rich.text import Text

from exactsyn.batch.run import Event
from exactsyn.core.words import count


class _Rate(ProgressColumn):
    def render(self, task: Task) -> Text:
        speed = task.finished_speed or task.speed
        return Text("--/s" if speed is None else f"{speed:.1f}/s")


def _clock(seconds: float) -> str:
    s = int(seconds)
    return f"{s // 3600}:{s % 3600 // 60:02d}:{s % 60:02d}"


class BatchProgress:
    """Context manager; call it with each event."""

    def __init__(self, console: Console | None = None, interval: float = 30.0) -> None:
        self.console = console or Console(stderr=True)
        self.live = self.console.is_terminal
        self.interval = interval
        self._progress = Progress(
            TextColumn("[bold]batch"),
            BarColumn(bar_width=30),
            MofNCompleteColumn(),
            _Rate(),
            TimeElapsedColumn(),
            TextColumn("ETA"),
            TimeRemainingColumn(),
            TextColumn(
                "done [green]{task.fields[done]}[/] timeout [yellow]{task.fields[timeout]}[/] "
                "failed [red]{task.fields[failed]}[/]"
            ),
            console=self.console,
            speed_estimate_period=60,
        )
        self._task: Any = None
        self._counts = {"done": 0, "timeout": 0, "failed": 0}
        self._total = 0
        self._started = time.monotonic()
        self._last = self._started

    def __enter__(self) -> BatchProgress:
        if self.live:
            self._progress.start()
        return self

    def __exit__(self, *exc: object) -> None:
        if self.live:
            self._progress.stop()
        elif self._task is not None:
            self._line()

    def __call__(self, event: Event) -> None:
        if event.phase == "start":
            if event.skipped:
                done = count(event.skipped, "item")
                self.console.print(f"{done} already finished in the store: skipped", highlight=False)
            self._total = event.total
            self._started = self._last = time.monotonic()
            fields: dict[str, Any] = dict(self._counts)
            self._task = self._progress.add_task("batch", total=event.total, **fields)
        elif event.phase == "item" and self._task is not None:
            self._counts[event.status] = self._counts.get(event.status, 0) + 1
            fields = dict(self._counts)
            self._progress.update(self._task, advance=1, **fields)
            if not self.live and time.monotonic() - self._last >= self.interval:
                self._line()

    def _line(self) -> None:
        now = time.monotonic()
        self._last = now
        n = sum(self._counts.values())
        elapsed = now - self._started
        rate = n / elapsed if elapsed > 0 else 0.0
        eta = _clock((self._total - n) / rate) if rate > 0 else "?"
        self.console.print(
            f"batch {n}/{self._total}  {rate:.1f}/s  elapsed {_clock(elapsed)}  ETA {eta}  "
            + "  ".join(f"{k} {v}" for k, v in self._counts.items()),
            highlight=False,
            soft_wrap=True,
        )
