"""Progress of ``exactsyn batch`` — count, rate, ETA, done / timed out / failed — and of the
cubes of a split query (:class:`CubeProgressView`) on the same display.

On a terminal a live bar (rich); otherwise — a log file, a cluster job's output — one
plain line every ``interval`` seconds and one at the end.  It consumes
:class:`exactsyn.batch.run.Event` values (cube events are translated into them); the
command line owns it and points it at stderr, so the library never prints.
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
from exactsyn.sat.conquer import CubeEvent

_COLOURS = ("green", "yellow", "red")


class _Rate(ProgressColumn):
    def render(self, task: Task) -> Text:
        speed = task.finished_speed or task.speed
        return Text("--/s" if speed is None else f"{speed:.1f}/s")


def _clock(seconds: float) -> str:
    s = int(seconds)
    return f"{s // 3600}:{s % 3600 // 60:02d}:{s % 60:02d}"


class BatchProgress:
    """Context manager; call it with each event."""

    def __init__(
        self,
        console: Console | None = None,
        interval: float = 30.0,
        label: str = "batch",
        statuses: tuple[str, ...] = ("done", "timeout", "failed"),
    ) -> None:
        self.console = console or Console(stderr=True)
        self.live = self.console.is_terminal
        self.interval = interval
        self.label = label
        counts = " ".join(
            f"{name} [{_COLOURS[i % 3]}]{{task.fields[{name}]}}[/]" for i, name in enumerate(statuses)
        )
        self._progress = Progress(
            TextColumn(f"[bold]{label}"),
            BarColumn(bar_width=30),
            MofNCompleteColumn(),
            _Rate(),
            TimeElapsedColumn(),
            TextColumn("ETA"),
            TimeRemainingColumn(),
            TextColumn(counts),
            console=self.console,
            speed_estimate_period=60,
        )
        self._task: Any = None
        self._counts = dict.fromkeys(statuses, 0)
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
                self.console.print(f"{event.skipped} items already finished in the store: skipped", highlight=False)
            self._total = event.total
            self._started = self._last = time.monotonic()
            fields: dict[str, Any] = dict(self._counts)
            self._task = self._progress.add_task(self.label, total=event.total, **fields)
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
            f"{self.label} {n}/{self._total}  {rate:.1f}/s  elapsed {_clock(elapsed)}  ETA {eta}  "
            + "  ".join(f"{k} {v}" for k, v in self._counts.items()),
            highlight=False,
            soft_wrap=True,
        )


class CubeProgressView:
    """Per-cube progress of split queries (done/total, elapsed, ETA, unsat / sat / unknown), one
    bar per split k-query on the batch display; call it with each
    :class:`~exactsyn.sat.conquer.CubeEvent`."""

    STATUSES = ("unsat", "sat", "unknown")

    def __init__(self, console: Console | None = None, interval: float = 30.0) -> None:
        self.console = console
        self.interval = interval
        self._bar: BatchProgress | None = None

    def __call__(self, event: CubeEvent) -> None:
        if event.phase == "start":
            self._close()
            self._bar = BatchProgress(self.console, self.interval, f"k={event.k} cubes", self.STATUSES)
            self._bar.__enter__()
            self._bar(Event("start", total=event.total))
        elif event.phase == "cube" and self._bar is not None:
            self._bar(Event("item", status=event.status, key=event.label, seconds=event.seconds))
        elif event.phase == "end":
            self._close()

    def _close(self) -> None:
        if self._bar is not None:
            self._bar.__exit__(None, None, None)
            self._bar = None
