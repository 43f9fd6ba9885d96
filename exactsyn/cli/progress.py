"""The one progress display of the command line: rich, on stderr.

Three modes (:func:`choose_mode`):

* ``live`` (stderr is a terminal): a line with a spinner and a running timer for what runs
  now (:meth:`Display.status`), a bar when the work has a size (:meth:`Display.update`),
  and permanent lines (:meth:`Display.line`) printed above them;
* ``plain`` (not a terminal — a log file, a cluster job's output — where the command
  shows progress there by default or was given ``--progress``): the permanent lines, and
  the bar as one plain line at most every :data:`PLAIN_SECONDS` and once at the end;
* ``off`` (``-q``, or not a terminal and no ``--progress`` where that is needed).

What each command shows is a small adapter over :class:`Display`:
:mod:`exactsyn.cli.synth_display` (``synth``: the search's steps and queries),
:mod:`exactsyn.cli.batch_display` (``batch``: items, rate, ETA), :class:`OptimiseDisplay`
(``optimise``: rounds and the equivalence check) and :func:`step_bar` (``tables
build/verify``: a described bar).  The library never prints:
it reports through callbacks, and the display only formats what it is handed.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any, Self

from rich.console import Console, Group, RenderableType
from rich.live import Live
from rich.progress import (
    BarColumn,
    MofNCompleteColumn,
    Progress,
    ProgressColumn,
    TaskID,
    TaskProgressColumn,
    TextColumn,
    TimeElapsedColumn,
)
from rich.spinner import Spinner
from rich.text import Text

from exactsyn.errors import ExactsynError
from exactsyn.optimise.driver import ProgressEvent

MODES = ("live", "plain", "off")
#: A plain progress line (not on a terminal) at most this often.
PLAIN_SECONDS = 10.0


def choose_mode(quiet: bool, forced: bool, console: Console | None = None) -> str:
    """``off`` with ``-q``; ``live`` on a terminal; ``plain`` when forced onto a non-terminal, else ``off``."""
    if quiet:
        return "off"
    if (console or Console(stderr=True)).is_terminal:
        return "live"
    return "plain" if forced else "off"


def progress_mode(quiet: bool, show_progress: bool) -> str:
    """:func:`choose_mode` for the commands with both ``-q`` and ``--progress``, which contradict each other."""
    if quiet and show_progress:
        raise ExactsynError("-q and --progress contradict each other: give one of them")
    return choose_mode(quiet, show_progress)


def clock(seconds: float) -> str:
    """``5:10``, or ``1:02:03`` from an hour on."""
    m, s = divmod(int(seconds), 60)
    h, m = divmod(m, 60)
    return f"{h}:{m:02d}:{s:02d}" if h else f"{m}:{s:02d}"


@dataclass(frozen=True)
class BarState:
    """The bar as a plain line sees it."""

    description: str
    done: int
    total: int
    elapsed: float  # seconds since the bar started
    fields: dict[str, Any]


def default_plain_line(bar: BarState) -> str:
    """``round 2: 1200/2200 (gates 980), 0:14 elapsed``."""
    extra = ", ".join(f"{k} {v}" for k, v in bar.fields.items())
    extra = f" ({extra})" if extra else ""
    return f"{bar.description}: {bar.done}/{bar.total}{extra}, {clock(bar.elapsed)} elapsed"


class _Now:
    """The status line: a spinner, what runs, and its running time (re-rendered by rich)."""

    def __init__(self) -> None:
        self.spinner = Spinner("dots")
        self.label: str | None = None
        self.since = time.perf_counter()
        self.budget: float | None = None

    def __rich__(self) -> Spinner:
        elapsed = time.perf_counter() - self.since
        limit = "" if self.budget is None else f" (at most {self.budget:.0f} s left)"
        self.spinner.text = Text(f"{self.label} … {elapsed:.1f} s{limit}")
        return self.spinner


class Display:
    """Context manager: the live region, the plain lines, or nothing (module docstring).

    ``columns`` are the bar's rich columns (default: description, bar, percentage,
    elapsed); ``transient`` clears the live region at the end (else the last bar stays);
    ``delay`` holds the live region back until the work has taken that long;
    ``plain_line`` formats the bar for plain mode.
    """

    def __init__(
        self,
        mode: str,
        console: Console | None = None,
        *,
        columns: Sequence[str | ProgressColumn] = (),
        transient: bool = True,
        delay: float = 0.0,
        plain_line: Callable[[BarState], str] = default_plain_line,
        every: float = PLAIN_SECONDS,
    ) -> None:
        if mode not in MODES:
            raise ValueError(f"unknown progress mode {mode!r}")
        self.mode = mode
        self.console = console or Console(stderr=True, highlight=False)
        self.transient, self.delay, self.every, self.plain_line = transient, delay, every, plain_line
        self.now = _Now()
        columns = columns or (TextColumn("{task.description}"), BarColumn(), TaskProgressColumn(), TimeElapsedColumn())
        self.bars = Progress(*columns, console=self.console, auto_refresh=False, speed_estimate_period=60)
        self.task: TaskID | None = None
        self.live: Live | None = None
        self.started = time.monotonic()
        self._bar_started = self._said = self.started
        self._state: BarState | None = None

    def __enter__(self) -> Self:
        self._show()
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def close(self) -> None:
        """Stop the live region; in plain mode say where the bar ended."""
        if self.live is not None:
            self.live.stop()
            self.live = None
        elif self.mode == "plain" and self._state is not None:
            self.line(self.plain_line(self._state))
            self._state = None

    def __rich__(self) -> RenderableType:
        parts: list[RenderableType] = []
        if self.now.label is not None:
            parts.append(self.now)
        if self.task is not None:
            parts.append(self.bars)
        return Group(*parts)

    def _show(self) -> None:
        """Start the live region once it is due (a terminal, live mode, past ``delay``)."""
        if self.live is not None or self.mode != "live" or not self.console.is_terminal:
            return
        if time.monotonic() - self.started < self.delay:
            return
        self.live = Live(self, console=self.console, refresh_per_second=8, transient=self.transient)
        self.live.start()

    def line(self, text: str) -> None:
        """A permanent line (live and plain)."""
        if self.mode != "off":
            self.console.print(text, markup=False, highlight=False, soft_wrap=True)

    def status(self, label: str, budget: float | None = None, *, restart: bool = True) -> None:
        """What runs now, on the status line with its running time and the time left (``budget``).

        ``restart=False`` only relabels: the timer and the time left stay.
        """
        self.now.label = label
        if restart:
            self.now.since, self.now.budget = time.perf_counter(), budget
        self._show()

    def update(self, description: str, done: int, total: int, /, **fields: Any) -> None:
        """The bar: ``done`` of ``total`` (a new bar when there was none)."""
        if self.mode == "off":
            return
        now = time.monotonic()
        if self.task is None:
            self.task = self.bars.add_task(description, total=max(total, 1), **fields)
            self._bar_started = self._said = now
        self.bars.update(self.task, description=description, completed=done, total=max(total, 1), **fields)
        self._state = BarState(description, done, total, now - self._bar_started, dict(fields))
        self._show()
        if self.mode == "plain" and now - self._said >= self.every:
            self._said = now
            self.line(self.plain_line(self._state))

    def reset(self) -> None:
        """Drop the bar (the next :meth:`update` starts a new one with its own clock)."""
        if self.task is not None:
            self.bars.remove_task(self.task)
            self.task = None
            self._state = None


def step_bar(display: Display, label: str = "") -> Callable[[str, int, int], None]:
    """A ``progress(description, done, total)`` callback (tables build and verify) drawing ``label: description``."""

    def update(description: str, done: int, total: int) -> None:
        display.update(f"{label}: {description}" if label else description, done, total)

    return update


class OptimiseDisplay(Display):
    """The ``progress`` callback of :func:`exactsyn.optimise.optimise_circuit`: a bar per round and one for
    the equivalence check, shown once the work has taken more than a second."""

    def __init__(self, mode: str, console: Console | None = None) -> None:
        columns = (
            TextColumn("{task.description}"),
            BarColumn(bar_width=30),
            MofNCompleteColumn(),
            TextColumn("gates {task.fields[gates]}"),
            TimeElapsedColumn(),
        )
        super().__init__(mode, console, columns=columns, delay=1.0)
        self._phase = ""

    def __call__(self, event: ProgressEvent) -> None:
        label = f"round {event.round}" if event.phase == "optimise" else "equivalence check"
        if label != self._phase:
            self.reset()
            self._phase = label
        self.update(label, event.done, event.total, gates=event.gates)
