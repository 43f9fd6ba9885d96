"""Reference tables from a results store: the distribution of optimal circuit sizes.

For one batch (:mod:`exactsyn.batch`) every member counts with its weight, so a class
representative stands for its whole class (line relabelling and inversion, see
:mod:`exactsyn.batch.sets`) and the table is the one of the full set.  Items that are
not proven optimal (time limit) are listed by their interval ``[lower, upper]``, failed
ones by count.  The table is written as text, CSV, JSON and a bar chart (matplotlib,
Agg backend, PNG and SVG).  The classical 3-line NCT table this reproduces is Shende,
Prasad, Markov & Hayes, IEEE TCAD 22(6), 2003.
"""

from __future__ import annotations

import csv
import io
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from exactsyn.batch.store import BatchInfo, Store
from exactsyn.core.words import count
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import write_data
from exactsyn.version import __version__


@dataclass(frozen=True)
class OptimumTable:
    batch_id: str
    label: str
    library: str
    counts: tuple[tuple[int, int], ...]  # (gates, functions), gates ascending, optimal only
    total: int  # functions in the batch (weighted)
    optimal: int
    timeout: int
    failed: int
    missing: int
    certified: int  # optimal functions whose representative has a certificate on disk
    verified: int  # ... and whose certificate was re-checked by the batch
    intervals: tuple[tuple[int | None, int | None, int], ...]  # (lower, upper, functions) not proven
    items: int  # rows (representatives) behind the functions
    unit: str = "gates"  # what the optimum counts: gates, "cost (t-count)", depth

    @property
    def column(self) -> str:
        """Name of the optimum column in CSV and JSON: ``gates``, else ``value``."""
        return "gates" if self.unit == "gates" else "value"

    @property
    def average(self) -> float | None:
        if not self.optimal:
            return None
        return sum(g * c for g, c in self.counts) / self.optimal

    def distribution(self) -> list[int]:
        """``d[k]`` = functions whose optimum is ``k`` gates, for ``k = 0 .. max``."""
        top = max((g for g, _ in self.counts), default=-1)
        out = [0] * (top + 1)
        for g, c in self.counts:
            out[g] = c
        return out


def objective_unit(objective: Any) -> str:
    """What a batch's optimum counts, from the ``objective`` of its description."""
    if isinstance(objective, dict):
        return f"cost ({objective.get('cost_model')})"
    return str(objective)


def size_table(store: Store, batch: BatchInfo) -> OptimumTable:
    """The weighted distribution of optimal sizes over one batch's members."""
    counts: dict[int, int] = {}
    intervals: dict[tuple[int | None, int | None], int] = {}
    tally = {"done": 0, "timeout": 0, "failed": 0, "missing": 0}
    certified = verified = items = 0
    libraries: set[str] = set()
    for r in store.batch_rows(batch.id):
        items += 1
        w = int(r["weight"])
        status = r["status"] or "missing"
        tally[status] = tally.get(status, 0) + w
        if r["library"]:
            libraries.add(str(r["library"]))
        if status == "done":
            if r["optimum"] is None:
                raise ExactsynError(f"results store: item {r['key'][:16]} is done but has no optimum")
            counts[int(r["optimum"])] = counts.get(int(r["optimum"]), 0) + w
            if r["certificate"] and (store.certificate_path(r["certificate"]) / "result.json").is_file():
                certified += w
                if r["verified"] == 1:
                    verified += w
        elif status == "timeout":
            iv = (r["lower_bound"], r["upper_bound"])
            intervals[iv] = intervals.get(iv, 0) + w
    lib = ", ".join(sorted(libraries)) or str(batch.description.get("library", {}).get("name") or "")
    desc = batch.description
    label = str(desc.get("label", ""))
    if desc.get("set") == "classes" and desc.get("reduction"):
        label = f"every {desc.get('lines')}-line function, from {items} class representatives"
    return OptimumTable(
        unit=objective_unit(desc.get("objective", "gates")),
        batch_id=batch.id,
        label=label,
        library=lib,
        counts=tuple(sorted(counts.items())),
        total=sum(tally.values()),
        optimal=tally["done"],
        timeout=tally["timeout"],
        failed=tally["failed"],
        missing=tally["missing"],
        certified=certified,
        verified=verified,
        intervals=tuple((lo, hi, c) for (lo, hi), c in sorted(intervals.items(), key=lambda kv: str(kv[0]))),
        items=items,
    )


def to_text(t: OptimumTable) -> str:
    out = [
        f"batch {t.batch_id}: {t.label}",
        f"library {t.library}; {count(t.total, 'function')} from {count(t.items, 'stored item')}",
    ]
    if t.unit != "gates":
        out.append(f"objective: {t.unit}, proven optimal for each function")
    out.append(f"{t.column:>5}  {'functions':>10}")
    for g, c in t.counts:
        out.append(f"{g:>5}  {c:>10}")
    avg = t.average
    what = "gates" if t.unit == "gates" else t.unit
    out.append(f"total  {t.optimal:>10} proven optimal" + (f"; average {avg:.4f} {what}" if avg is not None else ""))
    cert = "every entry" if t.certified == t.optimal else f"{t.certified} of {count(t.optimal, 'entry')}"
    out.append(f"certificates: {cert}" + (f" (re-checked: {t.verified})" if t.verified else ""))
    if t.timeout:
        out.append(f"not proven optimal (time limit): {count(t.timeout, 'function')}")
        for lo, hi, c in t.intervals:
            out.append(f"  optimum in [{lo}, {'?' if hi is None else hi}]: {c}")
    if t.failed:
        out.append(f"failed: {count(t.failed, 'function')} (exactsyn batch prints the reasons)")
    if t.missing:
        out.append(f"not yet run: {count(t.missing, 'function')} (re-run the batch command to resume)")
    return "\n".join(out) + "\n"


def to_dict(t: OptimumTable) -> dict[str, Any]:
    return {
        "batch": t.batch_id,
        "label": t.label,
        "library": t.library,
        "unit": t.unit,
        "distribution": [{t.column: g, "functions": c} for g, c in t.counts],
        "average": t.average,
        "total": t.total,
        "optimal": t.optimal,
        "timeout": t.timeout,
        "failed": t.failed,
        "missing": t.missing,
        "certified": t.certified,
        "verified": t.verified,
        "not_proven": [{"lower": lo, "upper": hi, "functions": c} for lo, hi, c in t.intervals],
        "items": t.items,
        "version": __version__,
    }


def to_csv(t: OptimumTable) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow([t.column, "functions"])
    for g, c in t.counts:
        w.writerow([g, c])
    return buf.getvalue()


def write_chart(t: OptimumTable, prefix: str | Path) -> list[Path]:
    """Bar chart of the distribution as ``<prefix>.png`` and ``<prefix>.svg``."""
    import matplotlib  # slow to import (about half a second): only when a chart is drawn

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    base = Path(prefix)
    paths = [base.with_name(base.name + ".png"), base.with_name(base.name + ".svg")]
    with matplotlib.rc_context({"svg.hashsalt": "exactsyn", "font.size": 10}):
        fig, ax = plt.subplots(figsize=(7, 4.2))
        try:
            xs = [g for g, _ in t.counts]
            ys = [c for _, c in t.counts]
            bars = ax.bar(xs, ys, color="#3a6ea5")
            ax.bar_label(bars, labels=[str(c) for c in ys], fontsize=8, padding=2)
            ax.set_xticks(xs)
            ax.set_xlabel("gates in a minimal circuit" if t.unit == "gates" else f"optimal {t.unit}")
            ax.set_ylabel("functions")
            avg = t.average
            ax.set_title(
                f"{t.label}\nlibrary {t.library}: {t.optimal} functions"
                + (f", average {avg:.3f} {'gates' if t.unit == 'gates' else t.unit}" if avg is not None else ""),
                fontsize=10,
            )
            ax.margins(y=0.12)
            ax.spines[["top", "right"]].set_visible(False)
            fig.tight_layout()
            png, svg = io.BytesIO(), io.BytesIO()
            fig.savefig(png, format="png", dpi=120)
            fig.savefig(svg, format="svg", metadata={"Date": None})
            for path, buf in zip(paths, (png, svg), strict=True):
                write_data(buf.getvalue(), path)  # the one rule of outputs (exactsyn.io.formats.output_path)
        finally:
            plt.close(fig)
    return paths


def write_text_file(path: str | Path, text: str) -> None:
    write_data(text, path)


def to_json(t: OptimumTable) -> str:
    return json.dumps(to_dict(t), indent=2) + "\n"
