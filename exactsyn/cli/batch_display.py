"""What ``exactsyn batch`` shows while it runs: count, rate, ETA, done / timed out / failed.

On a terminal a live bar; otherwise — a log file, a cluster job's output — one plain line
at most every :data:`~exactsyn.cli.progress.PLAIN_SECONDS` and one at the end (the
display of :mod:`exactsyn.cli.progress`).  Items another process on the same store
finishes leave the bar's total; a line says when this process waits for items others
hold.  It consumes the :class:`exactsyn.batch.run.Event` values the library reports; the
library never prints.
"""

from __future__ import annotations

from rich.console import Console
from rich.progress import (
    BarColumn,
    MofNCompleteColumn,
    ProgressColumn,
    Task,
    TextColumn,
    TimeElapsedColumn,
    TimeRemainingColumn,
)
from rich.text import Text

from exactsyn.batch.run import Event
from exactsyn.cli.progress import BarState, Display, clock
from exactsyn.core.words import count

LABEL = "batch"


class _Rate(ProgressColumn):
    def render(self, task: Task) -> Text:
        speed = task.finished_speed or task.speed
        return Text("--/s" if speed is None else f"{speed:.1f}/s")


def plain_line(bar: BarState) -> str:
    """``batch 12/40  0.4/s  elapsed 0:30  ETA 1:10  done 11  timeout 1  failed 0``."""
    rate = bar.done / bar.elapsed if bar.elapsed > 0 else 0.0
    eta = clock((bar.total - bar.done) / rate) if rate > 0 else "?"
    return (
        f"{LABEL} {bar.done}/{bar.total}  {rate:.1f}/s  elapsed {clock(bar.elapsed)}  ETA {eta}  "
        + "  ".join(f"{k} {v}" for k, v in bar.fields.items())
    )


class BatchDisplay(Display):
    """Context manager; call it with each event of :func:`exactsyn.batch.run.run_batch`."""

    def __init__(self, mode: str, console: Console | None = None) -> None:
        columns = (
            TextColumn(f"[bold]{LABEL}"),
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
        )
        super().__init__(mode, console, columns=columns, transient=False, plain_line=plain_line)
        self._counts = {"done": 0, "timeout": 0, "failed": 0}
        self._total = 0
        self._elsewhere = 0  # items other processes on the store finished meanwhile
        self._held = 0

    def __call__(self, event: Event) -> None:
        if event.phase == "start":
            if event.skipped:
                self.line(f"{count(event.skipped, 'item')} already finished in the store: skipped")
            self._total = event.total
            self.update(LABEL, 0, self._total, **self._counts)
        elif event.phase == "item" and self.task is not None:
            self._counts[event.status] = self._counts.get(event.status, 0) + 1
            self.update(LABEL, sum(self._counts.values()), self._total, **self._counts)
        elif event.phase == "elsewhere" and self.task is not None:  # another process on the store did it
            self._total -= 1
            self._elsewhere += 1
            self.update(LABEL, sum(self._counts.values()), self._total, **self._counts)
        elif event.phase == "held" and event.total != self._held:
            self._held = event.total
            self.line(f"waiting for {count(event.total, 'item')} that other processes on the store are solving")
