"""Run a planned batch: register it in the store, skip finished work, solve the rest.

Resumption is by the store alone: an item whose row is there is finished and skipped
(``done`` always; ``timeout`` and ``failed`` too unless asked to retry them; a ``done``
row without a certificate is redone when certificates are wanted).  Every completed
item is committed as it arrives, so a killed run loses at most the items in flight.
Items are claimed one at a time as workers ask for them (:meth:`~exactsyn.batch.store.Store.claim`),
so several processes on one store share the work; an item another process holds is
waited for, and taken over if that process dies.
Pending items run in the order of their keys (hashes, so a well-mixed order that keeps
the rate and the ETA honest from the start).
"""

from __future__ import annotations

import json
import time
from collections.abc import Callable, Iterator
from dataclasses import dataclass, replace

from exactsyn.batch.plan import GENERATED_SOURCE, Plan
from exactsyn.batch.store import Member, State, StatusCounts, Store
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


#: How often a batch looks again at items other processes hold (their claims, exactsyn.batch.store).
HELD_POLL_SECONDS = 2.0
#: Items claimed in one transaction: a claim costs a write transaction, as much as a small item's
#: solve (``scripts/bench_batch.py``), and a few claimed ahead still leave the rest to other processes.
CLAIM_CHUNK = 8


@dataclass(frozen=True)
class Event:
    """``start`` (``total`` items to run, ``skipped`` already finished), ``item`` (one outcome),
    ``elsewhere`` (an item another process finished meanwhile) or ``held`` (``total`` items
    other processes are solving now: this one waits for them)."""

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

    A check task carries no files yet (:func:`claimed` reads them just in time).
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


def claimed(
    store: Store, tasks: list[Task], options: RunOptions, held: list[Task], elsewhere: list[str]
) -> Iterator[Task]:
    """Claim the tasks in the store, :data:`CLAIM_CHUNK` at a time, as the engine asks for more.

    A task another process holds goes to ``held`` (to be tried again later); one another
    process finished meanwhile to ``elsewhere``; what is left to do is decided again from the
    row as it is now (a solved item may need only its re-check).  A check task's certificate
    files are read only then; a certificate no longer on disk means the item is solved again.
    """
    work: dict[str, str | None] = {}

    def needs_work(key: str, state: State) -> bool:
        work[key] = _work(state, options)
        return work[key] is not None

    for at in range(0, len(tasks), CLAIM_CHUNK):
        chunk = tasks[at : at + CLAIM_CHUNK]
        answers = store.claim([t.key for t in chunk], needs_work)
        for t in chunk:
            if answers[t.key] == "held":
                held.append(t)
            elif answers[t.key] == "finished":
                elsewhere.append(t.key)
            elif work[t.key] == "solve":
                yield replace(t, check_files=None)
            else:
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

    with store.claims_kept():
        while tasks:
            held: list[Task] = []
            elsewhere: list[str] = []
            engine.run(claimed(store, tasks, options, held, elsewhere), on_outcome)
            if on_event:
                for key in elsewhere:
                    on_event(Event("elsewhere", key=key))
                if held:
                    on_event(Event("held", total=len(held)))
            if held:  # other processes are solving these: wait for them to finish or to give them up
                time.sleep(HELD_POLL_SECONDS)
            tasks = held
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
