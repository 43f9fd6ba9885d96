"""What ``exactsyn synth`` shows while it searches, on the display of :mod:`exactsyn.cli.progress`.

What the search reports (:mod:`exactsyn.search.events`) is shown as:

* the status line, live on a terminal: what runs now with a running timer — "building
  distance table of nct … 3.2 s", "k = 12: SAT solver running … 41.0 s of 120"; while a
  query is split into cubes (:mod:`exactsyn.sat.conquer`) it counts them — "k = 11: cubes
  12/25 (unsat 12), 5:10 elapsed, ETA 5:40";
* permanent lines, live and plain (``--progress`` on a non-terminal, e.g. a log file):
  each answered query, the fallback circuit, "k = 8..11 excluded by the table", and for
  a split query a line when it starts, every :data:`CUBE_LINE_SECONDS` while it runs and
  when it ends;
* in plain mode, when nothing was printed for :data:`~exactsyn.cli.progress.PLAIN_SECONDS`,
  a line with what still runs and for how long (a step of an objective or of the listing
  of optima may take minutes);
* nothing with ``-q``, or on a non-terminal without ``--progress``.

The display only formats; it never changes what is computed.
"""

from __future__ import annotations

import threading
import time
from typing import Any

from rich.console import Console

from exactsyn.cli.progress import Display, clock
from exactsyn.core.words import count
from exactsyn.sat.conquer import CubeEvent
from exactsyn.sat.query import Query
from exactsyn.sat.status import Status
from exactsyn.search.events import SearchEvent

#: A permanent cube-count line at most this often (the live line updates on every cube).
CUBE_LINE_SECONDS = 30.0


def query_line(q: Query) -> str:
    """One answered query: ``k=5   UNSAT     0.07 s   (551 vars, 9577 clauses, 2355 conflicts)``."""
    if q.objective != "gates":
        return f"{q.label():<18} {q.status.upper():<7} {q.seconds:8.2f} s"
    conflicts = "conflicts not reported" if q.conflicts is None else f"{q.conflicts} conflicts"
    return (
        f"k={q.k:<3} {q.status.upper():<7} {q.seconds:8.2f} s"
        f"   ({q.variables} vars, {q.clauses} clauses, {conflicts}; {q.solver or 'solver'}"
        + ("" if q.split is None else f"; {count(len(q.split.cubes), 'cube')}")
        + ")"
    )


def cube_line(k: int, done: int, total: int, counts: dict[str, int], elapsed: float) -> str:
    """``k = 11: cubes 12/25 (unsat 12), 5:10 elapsed, ETA 5:40`` (the ETA from the mean cube so far)."""
    parts = ", ".join(f"{name} {n}" for name, n in counts.items() if n)
    eta = f", ETA {clock(elapsed / done * (total - done))}" if 0 < done < total else ""
    return f"k = {k}: cubes {done}/{total}" + (f" ({parts})" if parts else "") + f", {clock(elapsed)} elapsed{eta}"


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


class SynthDisplay(Display):
    """The ``progress`` callback of :func:`exactsyn.synthesise` for the command line (module docstring)."""

    def __init__(self, mode: str, console: Console | None = None) -> None:
        super().__init__(mode, console)
        self.now.label = "starting"
        self._cubes: dict[str, int] = {}
        self._cube_start = self._cube_said = 0.0
        self._scan_step = ""  # the table scan the status line times (its timer runs over its chunks)
        self._last_line = time.perf_counter()
        self._closed = threading.Event()

    def __enter__(self) -> SynthDisplay:
        super().__enter__()
        if self.mode == "plain":  # no live timer: a line now and then says the step still runs
            threading.Thread(target=self._heartbeat, name="exactsyn-progress", daemon=True).start()
        return self

    def close(self) -> None:
        self._closed.set()
        super().close()

    def line(self, text: str) -> None:
        self._last_line = time.perf_counter()
        super().line(text)

    def _heartbeat(self) -> None:
        """Plain mode: when nothing was printed for :data:`PLAIN_SECONDS`, say what still runs."""
        while not self._closed.wait(min(self.every / 4, 0.5)):
            now = time.perf_counter()
            if now - self._last_line >= self.every and self.now.label:
                self.line(f"{self.now.label} … {clock(now - self.now.since)} elapsed")

    def cube(self, event: CubeEvent) -> None:
        """The ``cube_progress`` callback: per-cube counts on the status line (module docstring)."""
        if self.mode == "off":
            return
        now = time.perf_counter()
        if event.phase == "start":
            self._cubes, self._cube_start = {"unsat": 0, "sat": 0, "unknown": 0}, now
            self._cube_said = now
            self.line(f"k = {event.k}: split into {count(event.total, 'cube')}")
        elif event.phase == "cube":
            self._cubes[event.status] = self._cubes.get(event.status, 0) + 1
        text = cube_line(event.k, event.done, event.total, self._cubes, now - self._cube_start)
        self.status(text, restart=event.phase == "start")  # the timer keeps counting from the split
        if event.phase == "end" or (event.phase == "cube" and now - self._cube_said >= CUBE_LINE_SECONDS):
            self._cube_said = now
            self.line(text)

    def __call__(self, item: Any) -> None:
        if self.mode == "off":
            return
        if isinstance(item, Query):
            self.line(query_line(item))
            if item.status != Status.UNKNOWN:
                self.status("next step")
            return
        if isinstance(item, CubeEvent):
            self.cube(item)
            return
        if not isinstance(item, SearchEvent):
            return
        starts = {
            "table-start": f"building {item.detail}",
            "table-lookup": f"looking the function up in the {item.detail}",
            "objective-start": f"gate count settled; optimising the {item.detail}",
            "optima-start": "gate count settled; " + ("counting" if item.detail == "count" else "listing")
            + " the optimal circuits",
        }
        if item.phase in starts:
            self.status(starts[item.phase])
            if self.live is None:
                self.line(f"{starts[item.phase]} …")
        elif item.phase == "query-start":
            self.status(f"k = {item.k}: SAT solver running", item.seconds)
        elif item.phase == "table-scan":
            same_step, self._scan_step = item.detail == self._scan_step, item.detail
            self.status(f"{item.detail}: {item.low:,}/{item.high:,} classes", restart=not same_step)
        text = event_line(item)
        if text is not None:
            self.line(text)
