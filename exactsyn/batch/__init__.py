"""Batch jobs: many functions solved in parallel into a crash-safe results store.

Pipeline: :mod:`~exactsyn.batch.plan` (which items: spec files or a generated set of
:mod:`~exactsyn.batch.sets`, with class reduction under line relabelling and
inversion) → :mod:`~exactsyn.batch.run` (skip finished items, hand the rest to an
engine) → :mod:`~exactsyn.batch.workers` (local processes or Dask distributed run
:func:`~exactsyn.batch.task.run_task`) → :mod:`~exactsyn.batch.store` (SQLite in WAL
mode, one transaction per completed item, certificates beside it).  The tables are
:mod:`exactsyn.batch.table`, the HTML page :mod:`exactsyn.batch.html_report`.  Nothing here
prints: progress goes to a callback (the command line's display is
:mod:`exactsyn.cli.batch_display`).

Imports: :mod:`exactsyn.api` and every layer below it; only :mod:`exactsyn.cli` imports it.
"""

from exactsyn.batch.plan import Plan, PlanItem, choose_classes, plan_files, plan_generated
from exactsyn.batch.run import Event, RunOptions, RunSummary, run_batch
from exactsyn.batch.sets import (
    Transform,
    canonical,
    class_members,
    class_representatives,
    find_transform,
    reduction_obstacle,
    transform_circuit,
)
from exactsyn.batch.store import Store
from exactsyn.batch.task import LibraryChoice, Outcome, Task, item_key, run_task
from exactsyn.batch.workers import DaskEngine, LocalPool

__all__ = [
    "DaskEngine",
    "Event",
    "LibraryChoice",
    "LocalPool",
    "Outcome",
    "Plan",
    "PlanItem",
    "RunOptions",
    "RunSummary",
    "Store",
    "Task",
    "Transform",
    "canonical",
    "choose_classes",
    "class_members",
    "class_representatives",
    "find_transform",
    "item_key",
    "plan_files",
    "plan_generated",
    "reduction_obstacle",
    "run_batch",
    "run_task",
    "transform_circuit",
]
