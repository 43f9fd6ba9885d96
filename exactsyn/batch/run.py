"""Run a planned batch: register it in the store, skip finished work, solve the rest.

Resumption is by the store alone: an item whose row is there is finished and skipped
(``done`` always; ``timeout`` and ``failed`` too unless asked to retry them; a ``done``
row without a certificate is redone when certificates are wanted).  Every completed
item is committed as it arrives, so a killed run loses at most the items in flight.
Pending items run in the order of their keys (hashes, so a well-mixed order that keeps
the rate and the ETA honest from the start).
"""

from __future__ import annotations

import json
import time
from collections.abc import Callable, Iterator
from dataclasses import dataclass, replace

from exactsyn.batch.plan import GENERATED_SOURCE, Plan
from exactsyn.batch.store import Member, StatusCounts, Store
from exactsyn.batch.task import Outcome, Task
from exactsyn.batch.workers import Engine
from exactsyn.errors import ExactsynError
from exactsyn.sat.encode import EncodingOptions
from exactsyn.sat.options import DEFAULT_OPTIONS, SearchOptions

RETRYABLE = ("timeout", "failed")


@dataclass(frozen=True)
class RunOptions:
    """How a batch runs: the search of every item (one process each; its encoding must be
    the plan's, which is part of every item key), certificates, re-checks, retries."""

    search: SearchOptions = DEFAULT_OPTIONS
    certificates: bool = True
    verify: bool = False
    retry: frozenset[str] = frozenset()

    @property
    def encoding(self) -> EncodingOptions:
        return self.search.encoding

    @property
    def time_limit(self) -> float | None:
        return self.search.time_limit

    def __post_init__(self) -> None:
        bad = sorted(self.retry - set(RETRYABLE))
        if bad:
            raise ExactsynError(f"cannot retry status {bad[0]!r}; choose from: {', '.join(RETRYABLE)}")
        if self.verify and not self.certificates:
            raise ExactsynError("re-checking certificates (verify) needs certificates")


@dataclass(frozen=True)
class Event:
    """``start`` (``total`` items to run, ``skipped`` already finished) or ``item`` (one outcome)."""

    phase: str
    total: int = 0
    skipped: int = 0
    status: str = ""
    key: str = ""
    reason: str = ""
    seconds: float = 0.0


@dataclass(frozen=True)
class RunSummary:
    batch_id: str
    label: str
    engine: str
    planned: int  # members of the batch, unreadable spec files included
    skipped: int  # solvable items already finished in the store
    unreadable: int  # spec files that could not be read (recorded as failed)
    ran: dict[str, int]
    wall_seconds: float
    item_seconds: float
    counts: StatusCounts
    failures: tuple[tuple[str, str, str], ...]  # (status, source, reason) of unfinished members
    checked: int = 0  # of the items run, how many were certificate re-checks only

    @property
    def all_done(self) -> bool:
        return set(self.counts.items) <= {"done"}


def _work(state: tuple[str | None, str | None, int | None], options: RunOptions) -> str | None:
    """``solve``, ``check`` (re-check the stored certificate only) or None (finished)."""
    status, certificate, verified = state
    if status is None or status in options.retry:
        return "solve"
    if status == "done" and options.certificates and certificate is None:
        return "solve"
    if status == "done" and options.verify and verified is None:
        return "check"
    return None


def pending_tasks(store: Store, plan: Plan, options: RunOptions) -> tuple[list[Task], int]:
    """Tasks for the items of ``plan`` that still need work, and how many were skipped.

    A check task carries no files yet (:func:`materialise` reads them just in time).
    """
    states = store.member_states(plan.batch_id)
    tasks = []
    for it in plan.items:
        state = states.get(it.key, (None, None, None))
        work = _work(state, options)
        if work is None:
            continue
        tasks.append(
            Task(
                key=it.key,
                spec=it.spec,
                library=it.library,
                search=options.search,
                source=it.source,
                certificates=options.certificates,
                verify=options.verify,
                goal=plan.goal,
                check_files=() if work == "check" else None,
            )
        )
    tasks.sort(key=lambda t: t.key)
    return tasks, len(plan.items) - len(tasks)


def materialise(store: Store, tasks: list[Task]) -> Iterator[Task]:
    """Hand tasks out one at a time, reading a check task's certificate files only then.

    A certificate that is no longer on disk means the item is solved again.
    """
    for t in tasks:
        if t.check_files is None:
            yield t
            continue
        row = store.get(t.key)
        files = store.read_certificate(row["certificate"]) if row and row.get("certificate") else None
        yield replace(t, check_files=files)


def register(store: Store, plan: Plan) -> None:
    members = [Member(i.key, i.weight, i.source) for i in plan.items]
    members += [Member(f["key"], 1, f.get("source", "")) for f in plan.failures]
    store.register_batch(plan.batch_id, plan.description, members, plan.failures, plan.forget)


def run_batch(
    store: Store,
    plan: Plan,
    options: RunOptions,
    engine: Engine,
    on_event: Callable[[Event], None] | None = None,
) -> RunSummary:
    """Register ``plan``, run what is not finished on ``engine``, return the summary."""
    start = time.perf_counter()
    register(store, plan)
    store.sweep()  # certificate directories a killed run left behind
    tasks, skipped = pending_tasks(store, plan, options)
    if on_event:
        on_event(Event("start", total=len(tasks), skipped=skipped))
    ran: dict[str, int] = {}
    item_seconds = 0.0
    checked = 0

    def on_outcome(out: Outcome) -> None:
        nonlocal item_seconds, checked
        store.record(out)
        ran[out.status] = ran.get(out.status, 0) + 1
        checked += out.work == "check"
        secs = float(out.row.get("wall_seconds") or out.row.get("verify_seconds") or 0.0)
        item_seconds += secs
        if on_event:
            on_event(Event("item", status=out.status, key=out.key, reason=out.row.get("reason") or "", seconds=secs))

    engine.run(materialise(store, tasks), on_outcome)
    summary = summarise(store, plan, engine.describe(), skipped, ran, time.perf_counter() - start, item_seconds)
    return replace(summary, checked=checked)


def _label(row: dict[str, object]) -> str:
    """How the "not done" list names an item: its spec file, or its set, index and permutation."""
    source = str(row.get("member_source") or row.get("source") or "")
    if not source:
        return str(row["key"])[:16]
    outputs = row.get("outputs")
    if GENERATED_SOURCE.fullmatch(source) and isinstance(outputs, str):
        try:
            perm = [int(v) for v in json.loads(outputs)]
        except (ValueError, TypeError):
            return source
        shown = ",".join(map(str, perm[:16])) + (",…" if len(perm) > 16 else "")
        return f"{source} ({shown})"
    return source


def summarise(
    store: Store,
    plan: Plan,
    engine: str,
    skipped: int,
    ran: dict[str, int],
    wall: float,
    item_seconds: float,
) -> RunSummary:
    unfinished = [
        (r["status"] or "missing", _label(r), r["reason"] or "")
        for r in store.batch_rows(plan.batch_id)
        if r["status"] != "done"
    ]
    return RunSummary(
        batch_id=plan.batch_id,
        label=str(plan.description.get("label", "")),
        engine=engine,
        planned=len(plan.items) + len(plan.failures),
        skipped=skipped,
        unreadable=len(plan.failures),
        ran=ran,
        wall_seconds=wall,
        item_seconds=item_seconds,
        counts=store.counts(plan.batch_id),
        failures=tuple(unfinished),
    )
