"""What a batch consists of: its items (key, spec, weight), its id and description.

A batch is a set of functions (spec files, or a generated set of
:mod:`exactsyn.batch.sets`), one library choice (preset and control cap; the library
itself is built per line count), one objective and one encoding.  Its id is a stable
hash of exactly that, so the same command plans the same batch and a re-run resumes.
Spec files that cannot be read become ``failed`` rows with their reason at planning
time; the rest of the batch goes on.
"""

from __future__ import annotations

import hashlib
import json
import re
from collections.abc import Sequence
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from exactsyn.batch import sets
from exactsyn.batch.task import GATES, Goal, LibraryChoice, item_key, library_identity, unreadable_key
from exactsyn.core.library import Library
from exactsyn.errors import ExactsynError
from exactsyn.sat.encode import EncodingOptions
from exactsyn.specification.loader import load_any
from exactsyn.specification.reversible import Spec, from_permutation
from exactsyn.version import __version__

REDUCTION = "line relabelling and inversion"
SET_KINDS = ("all", "classes", "random")
#: The source label of a generated item: its set, its line count and its index in the set.
GENERATED_SOURCE = re.compile(r"(all|classes|random):\d+( #\d+)?")


@dataclass(frozen=True)
class PlanItem:
    key: str
    spec: Spec
    library: Library
    weight: int = 1
    source: str = ""


@dataclass(frozen=True)
class Plan:
    batch_id: str
    description: dict[str, Any]
    items: tuple[PlanItem, ...]
    failures: tuple[dict[str, Any], ...] = ()
    forget: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    goal: Goal = GATES

    @property
    def weight(self) -> int:
        return sum(i.weight for i in self.items) + len(self.failures)


def _batch_id(description: dict[str, Any]) -> str:
    """Stable hash of what defines the batch (the human-readable label left out)."""
    core = {k: v for k, v in description.items() if k != "label"}
    text = json.dumps(core, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode()).hexdigest()[:16]


def _base_description(
    choice: LibraryChoice, lines: int | None, encoding: EncodingOptions, goal: Goal
) -> dict[str, Any]:
    lib = choice.build(lines) if lines else None
    return {
        "library": {
            "preset": choice.preset,
            "max_controls": choice.max_controls,
            "coupling": choice.coupling,
            "name": lib.name if lib else None,
        },
        "objective": goal.identity(None),
        "encoding": encoding.describe(),
    }


def _merge(items: list[PlanItem]) -> tuple[PlanItem, ...]:
    """One item per key; duplicates add their weights."""
    out: dict[str, PlanItem] = {}
    for it in items:
        if it.key in out:
            old = out[it.key]
            out[it.key] = PlanItem(old.key, old.spec, old.library, old.weight + it.weight, old.source)
        else:
            out[it.key] = it
    return tuple(out.values())


def choose_classes(lines: int, library: Library) -> tuple[list[tuple[tuple[int, ...], int]], str | None]:
    """``(function, weight)`` pairs for the class set, and the reason if it fell back.

    With a library that is closed under line relabelling and inversion (checked by
    :func:`exactsyn.batch.sets.reduction_obstacle`) these are the class representatives
    weighted by class size; otherwise every function with weight 1.
    """
    obstacle = sets.reduction_obstacle(library)
    if obstacle is None:
        return sets.class_representatives(lines), None
    return [(p, 1) for p in sets.all_functions(lines)], obstacle


def plan_generated(
    kind: str,
    lines: int,
    choice: LibraryChoice,
    encoding: EncodingOptions,
    *,
    count: int | None = None,
    seed: int = 0,
    library: Library | None = None,
    goal: Goal = GATES,
) -> Plan:
    """Plan a generated set: ``all`` functions, ``classes`` (representatives), or ``random``.

    ``library`` overrides the preset (for libraries that are not presets, e.g. with a
    coupling restriction); the description then records its gate list.
    """
    if kind not in SET_KINDS:
        raise ExactsynError(f"unknown set {kind!r}; choose one of: {', '.join(SET_KINDS)}")
    lib = library or choice.build(lines)
    desc = _base_description(choice, lines, encoding, goal)
    if library is not None:
        desc["library"] = library_identity(library) | {"name": library.name}
    desc |= {"set": kind, "lines": lines}
    notes: list[str] = []
    if kind == "all":
        pairs = [(p, 1) for p in sets.all_functions(lines)]
        label = f"every {lines}-line function"
    elif kind == "random":
        if count is None:
            raise ExactsynError("a random sample needs a count")
        desc |= {"count": count, "seed": seed}
        pairs = [(p, 1) for p in sets.random_functions(lines, count, seed)]
        label = f"{count} random {lines}-line functions (seed {seed})"
    else:
        pairs, obstacle = choose_classes(lines, lib)
        desc["reduction"] = REDUCTION if obstacle is None else None
        if obstacle is None:
            label = f"one representative per class of {lines}-line functions under {REDUCTION}"
        else:
            label = f"every {lines}-line function (class reduction off)"
            notes.append(f"class reduction is off: {obstacle}; solving every function instead")
    desc["label"] = label
    items = [
        PlanItem(item_key(spec, lib, encoding, goal), spec, lib, w, f"{kind}:{lines} #{index}")
        for index, (p, w) in enumerate(pairs)
        for spec in (from_permutation(list(p)),)
    ]
    return Plan(_batch_id(desc), desc, _merge(items), notes=tuple(notes), goal=goal)


def spec_files(paths: Sequence[str | Path]) -> list[Path]:
    """The spec files named: files as given, directories searched for ``*.toml`` (sorted)."""
    out: list[Path] = []
    for raw in paths:
        p = Path(raw)
        if p.is_dir():
            found = sorted(q for q in p.rglob("*.toml") if q.is_file())
            if not found:
                raise ExactsynError(f"directory {p} holds no *.toml spec file")
            out.extend(found)
        elif p.exists():
            out.append(p)
        else:
            raise ExactsynError(f"no such spec file or directory: {p}")
    if not out:
        raise ExactsynError("no spec files given")
    return out


def plan_files(
    paths: Sequence[str | Path], choice: LibraryChoice, encoding: EncodingOptions, goal: Goal = GATES
) -> Plan:
    """Plan a batch over spec files and directories of them (see :func:`spec_files`)."""
    files = spec_files(paths)
    desc = _base_description(choice, None, encoding, goal)
    desc |= {"set": "files", "paths": sorted(str(Path(p).resolve()) for p in paths)}
    desc["label"] = f"{len(files)} spec files"
    batch_id = _batch_id(desc)
    items: list[PlanItem] = []
    failures: list[dict[str, Any]] = []
    forget: list[str] = []
    for f in files:
        bad_key = unreadable_key(f)
        try:
            spec = load_any(f)[0]
            lib = choice.build(spec.lines)
        except ExactsynError as e:
            failures.append(_unreadable_row(bad_key, f, e.message, choice, encoding, goal))
            continue
        forget.append(bad_key)
        if not spec.name:
            spec = replace(spec, name=f.stem)  # keeps the embedding choices
        items.append(PlanItem(item_key(spec, lib, encoding, goal), spec, lib, 1, str(f)))
    merged = _merge(items)
    notes = []
    if len(merged) < len(items):
        notes.append(f"{len(items) - len(merged)} spec files repeat a function of another file and share its result")
    if failures:
        notes.append(f"{len(failures)} spec files could not be read; they are recorded as failed")
    return Plan(batch_id, desc, merged, tuple(failures), tuple(forget), tuple(notes), goal)


def _unreadable_row(
    key: str, path: Path, reason: str, choice: LibraryChoice, encoding: EncodingOptions, goal: Goal
) -> dict[str, Any]:
    return {
        "key": key,
        "status": "failed",
        "reason": reason,
        "source": str(path),
        "preset": choice.preset,
        "max_controls": choice.max_controls,
        "objective": goal.label(),
        "encoding": json.dumps(encoding.describe(), sort_keys=True),
        "tool_version": __version__,
    }
