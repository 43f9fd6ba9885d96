"""Live progress of ``exactsyn synth`` on stderr (rich).

What the search reports (:mod:`exactsyn.search.events`) is shown in one of three modes:

* ``live`` (stderr is a terminal, or ``--progress``): a spinner line with a running timer
  for the current phase — "building distance table of nct … 3.2 s", "k = 12: SAT solver
  running … 41.0 s of 120" — and one permanent line per finished step: each answered
  query, the fallback circuit, "k = 8..11 excluded by the table";
* ``plain`` (``--progress`` on a non-terminal, e.g. a log file): the permanent lines
  only, no animation;
* ``off`` (``-q``, or stderr is not a terminal and ``--progress`` was not given).

The display only formats; it never changes what is computed.
"""

from __future__ import annotations

import time
from typing import Any

from rich.console import Console
from rich.live import Live
from rich.spinner import Spinner
from rich.text import Text

from exactsyn.io.words import count
from exactsyn.sat.query import Query
from exactsyn.sat.status import Status
from exactsyn.search.events import SearchEvent

MODES = ("live", "plain", "off")


def choose_mode(quiet: bool, forced: bool, console: Console | None = None) -> str:
    """``off`` with ``-q``; ``live`` on a terminal; ``plain`` when forced onto a non-terminal."""
    if quiet:
        return "off"
    terminal = (console or Console(stderr=True)).is_terminal
    if terminal:
        return "live"
    return "plain" if forced else "off"


def query_line(q: Query) -> str:
    """One answered query: ``k=5   UNSAT     0.07 s   (551 vars, 9577 clauses, 2355 conflicts)``."""
    if q.objective != "gates":
        return f"{q.label():<18} {q.status.upper():<7} {q.seconds:8.2f} s"
    conflicts = "conflicts not reported" if q.conflicts is None else f"{q.conflicts} conflicts"
    return (
        f"k={q.k:<3} {q.status.upper():<7} {q.seconds:8.2f} s"
        f"   ({q.variables} vars, {q.clauses} clauses, {conflicts}; {q.solver or 'solver'})"
    )


def event_line(e: SearchEvent) -> str | None:
    """The permanent line of a finished step, or ``None`` for phases shown only live."""
    if e.phase == "table-done":
        took = f"{e.seconds:.1f} s" if e.seconds is not None else ""
        if e.value is None:
            return f"{e.detail}: stopped at the time limit after {took}"
        return f"{e.detail}: done in {took}"
    if e.phase == "table-bound":
        if e.low == e.high:
            return f"k = {e.low} excluded by the table"
        return f"k = {e.low}..{e.high} excluded by the table"
    if e.phase in ("fallback", "sub-library"):
        return f"upper bound: {_gates(e.value)} ({e.detail})"
    return None


def _gates(n: int | None) -> str:
    return "no circuit" if n is None else count(n, "gate")


class _Now:
    """The live line: a spinner, what runs, and its running time (re-rendered by rich)."""

    def __init__(self) -> None:
        self.spinner = Spinner("dots")
        self.label = "starting"
        self.since = time.perf_counter()
        self.budget: float | None = None

    def set(self, label: str, budget: float | None = None) -> None:
        self.label, self.since, self.budget = label, time.perf_counter(), budget

    def __rich__(self) -> Spinner:
        elapsed = time.perf_counter() - self.since
        limit = "" if self.budget is None else f" (at most {self.budget:.0f} s left)"
        self.spinner.text = Text(f"{self.label} … {elapsed:.1f} s{limit}")
        return self.spinner


class SynthProgress:
    """The ``progress`` callback of :func:`exactsyn.synthesise` for the command line (module docstring)."""

    def __init__(self, mode: str, console: Console | None = None) -> None:
        if mode not in MODES:
            raise ValueError(f"unknown progress mode {mode!r}")
        self.mode = mode
        self.console = console or Console(stderr=True, highlight=False)
        self.now = _Now()
        self.live: Live | None = None

    def __enter__(self) -> SynthProgress:
        if self.mode == "live" and self.console.is_terminal:
            self.live = Live(self.now, console=self.console, refresh_per_second=8, transient=True)
            self.live.start()
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def close(self) -> None:
        if self.live is not None:
            self.live.stop()
            self.live = None

    def line(self, text: str) -> None:
        if self.mode != "off":
            self.console.print(text, markup=False, highlight=False, soft_wrap=True)

    def __call__(self, item: Any) -> None:
        if self.mode == "off":
            return
        if isinstance(item, Query):
            self.line(query_line(item))
            if item.status != Status.UNKNOWN:
                self.now.set("next step")
            return
        if not isinstance(item, SearchEvent):
            return
        if item.phase == "table-start":
            self.now.set(f"building {item.detail}")
            if self.live is None:
                self.line(f"building {item.detail} …")
        elif item.phase == "query-start":
            self.now.set(f"k = {item.k}: SAT solver running", item.seconds)
        text = event_line(item)
        if text is not None:
            self.line(text)
