"""A batch as one self-contained HTML page: the distribution table, its bar chart, and
for every function its optimum, its drawn circuit and the state of its certificate.

The page needs nothing but itself: CSS inline, every circuit an inline SVG
(:func:`exactsyn.io.svg.to_svg`), the chart (:func:`exactsyn.batch.table.write_chart`, the
chart of ``exactsyn table --chart``) embedded as a ``data:`` URI, no script, no
external URL — it opens from disk with no network.  Long circuits scroll sideways in
their cell; functions are grouped by optimum in ``<details>`` sections.

Reading the store goes through the batch subsystem's public read functions
(:class:`exactsyn.batch.store.Store`, :func:`exactsyn.batch.table.size_table`); nothing is
written to it.  Certificates are described from the store (``verified``: re-checked by
``exactsyn batch --verify``); ``recheck=True`` re-checks every certificate now with
:func:`exactsyn.proof.certificate.check_certificate` and also confirms it certifies the
function of its row.
"""

from __future__ import annotations

import base64
import html
import json
import tempfile
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from exactsyn.batch.plan import GENERATED_SOURCE
from exactsyn.batch.store import BatchInfo, Store
from exactsyn.batch.table import OptimumTable, size_table, write_chart
from exactsyn.core.circuit import Circuit
from exactsyn.core.words import plural
from exactsyn.errors import ExactsynError
from exactsyn.io.jsonio import gate_from_dict
from exactsyn.io.svg import to_svg
from exactsyn.proof.checker import check_certificate
from exactsyn.version import __version__

OPEN_GROUP_LIMIT = 60  # sections with at most this many items start open

# certificate states, in the order they are summarised
CERT_STATES = ("checked", "rejected", "not re-checked", "missing", "none", "not run")


@dataclass(frozen=True)
class FunctionEntry:
    """One stored item of the batch, as the report shows it."""

    key: str
    lines: int | None
    outputs: tuple[int, ...]
    care: tuple[int, ...]
    weight: int
    source: str
    status: str  # done / timeout / failed / missing
    optimum: int | None
    lower_bound: int | None
    upper_bound: int | None
    reason: str
    circuit: Circuit | None
    simulated: bool | None  # does the stored circuit meet the function on every input?
    certificate: str  # one of CERT_STATES
    certificate_detail: str
    certificate_location: str | None


@dataclass(frozen=True)
class BatchReport:
    store_name: str
    batch: BatchInfo
    table: OptimumTable
    entries: tuple[FunctionEntry, ...]
    rechecked: bool


# ------------------------------------------------------------------ reading
def _json_list(text: Any) -> tuple[int, ...]:
    if not text:
        return ()
    value = json.loads(text)
    return tuple(int(v) for v in value)


def _stored_circuit(row: dict[str, Any]) -> tuple[Circuit | None, str]:
    if row.get("circuit") is None or row.get("lines") is None:
        return None, ""
    try:
        gates = tuple(gate_from_dict(g, f"gate {i}") for i, g in enumerate(json.loads(row["circuit"])))
        return Circuit(int(row["lines"]), gates), ""
    except (ExactsynError, ValueError, TypeError) as e:
        return None, f"stored circuit unreadable: {getattr(e, 'message', e)}"


def _meets(circuit: Circuit, outputs: Sequence[int], care: Sequence[int]) -> bool:
    perm = circuit.permutation()
    if len(perm) != len(outputs) or len(care) != len(outputs):
        return False
    return all((p ^ o) & c == 0 for p, o, c in zip(perm, outputs, care, strict=True))


def _certificate(
    store: Store, row: dict[str, Any], outputs: tuple[int, ...], care: tuple[int, ...], recheck: bool
) -> tuple[str, str]:
    status = row.get("status")
    reason = str(row.get("reason") or "")
    if status is None:
        return "not run", "the item has no result yet"
    location = row.get("certificate")
    if not location:
        if reason.startswith("certificate rejected"):
            return "rejected", reason
        return "none", "stored without a certificate"
    path = store.certificate_path(str(location))
    if not (path / "result.json").is_file():
        return "missing", f"{location} is not on disk"
    if recheck:
        try:
            rep = check_certificate(path)
            cert = json.loads((path / "result.json").read_text())
        except (ExactsynError, OSError, ValueError) as e:
            return "rejected", f"re-checked now: {getattr(e, 'message', e)}"
        if not rep.ok:
            failed = "; ".join(f"{line.what}: {line.detail}" for line in rep.lines if not line.ok)
            return "rejected", f"re-checked now: {failed}"
        spec = cert.get("spec", {})
        if tuple(spec.get("outputs", ())) != outputs or tuple(spec.get("care", ())) != care:
            return "rejected", "re-checked now: the certificate is for another function"
        return "checked", f"re-checked now in {rep.seconds:.2f} s"
    if row.get("verified") == 1:
        return "checked", "re-checked by the batch"
    if row.get("verified") == 0 or reason.startswith("certificate rejected"):
        return "rejected", reason or "the re-check failed"
    return "not re-checked", "on disk; not re-checked yet (run the batch again with --verify, or report --check)"


_GENERATED = GENERATED_SOURCE


def collect(store: Store, batch: BatchInfo, recheck: bool = False) -> BatchReport:
    """Everything the page shows about one batch of an open store."""
    table = size_table(store, batch)
    entries = []
    for row in store.batch_rows(batch.id):
        outputs, care = _json_list(row.get("outputs")), _json_list(row.get("care"))
        circuit, problem = _stored_circuit(row)
        source = str(row.get("member_source") or row.get("source") or "")
        cert, detail = _certificate(store, row, outputs, care, recheck)
        entries.append(
            FunctionEntry(
                key=str(row["key"]),
                lines=row.get("lines"),
                outputs=outputs,
                care=care,
                weight=int(row["weight"]),
                source="" if _GENERATED.fullmatch(source) else source,
                status=str(row.get("status") or "missing"),
                optimum=row.get("optimum"),
                lower_bound=row.get("lower_bound"),
                upper_bound=row.get("upper_bound"),
                reason="; ".join(x for x in (str(row.get("reason") or ""), problem) if x),
                circuit=circuit,
                simulated=None if circuit is None or not outputs else _meets(circuit, outputs, care),
                certificate=cert,
                certificate_detail=detail,
                certificate_location=row.get("certificate"),
            )
        )
    return BatchReport(store.path.name, batch, table, tuple(entries), recheck)


def chart_data_uri(table: OptimumTable) -> str | None:
    """The batch's bar chart (SVG, as ``exactsyn table --chart`` draws it) as a ``data:`` URI."""
    if not table.counts:
        return None
    with tempfile.TemporaryDirectory(prefix="exactsyn-report-") as tmp:
        paths = write_chart(table, Path(tmp) / "chart")
        svg = next(p for p in paths if p.suffix == ".svg").read_bytes()
    return "data:image/svg+xml;base64," + base64.b64encode(svg).decode("ascii")


# ------------------------------------------------------------------ writing
_CSS = """
:root { color-scheme: light; }
body { font: 15px/1.45 system-ui, -apple-system, "Segoe UI", "DejaVu Sans", sans-serif; color: #1b1b1b;
       background: #fafafa; margin: 0; }
main { max-width: 1100px; margin: 0 auto; padding: 24px 28px 48px; }
h1 { font-size: 26px; margin: 0 0 4px; }
h2 { font-size: 19px; margin: 32px 0 10px; border-bottom: 1px solid #ddd; padding-bottom: 4px; }
.sub { color: #555; margin: 0 0 18px; }
table { border-collapse: collapse; background: #fff; }
th, td { border: 1px solid #ddd; padding: 5px 10px; text-align: left; vertical-align: middle; }
th { background: #f0f2f5; font-weight: 600; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
.meta td:first-child { color: #555; }
.cards { display: flex; flex-wrap: wrap; gap: 10px; margin: 14px 0; }
.card { background: #fff; border: 1px solid #ddd; border-radius: 6px; padding: 8px 14px; min-width: 120px; }
.card b { display: block; font-size: 22px; }
.dist-row { display: flex; flex-wrap: wrap; gap: 24px; align-items: flex-start; }
.chart img { max-width: 100%; height: auto; background: #fff; border: 1px solid #ddd; }
details { margin: 10px 0; background: #fff; border: 1px solid #ddd; border-radius: 6px; padding: 6px 12px; }
summary { cursor: pointer; font-weight: 600; padding: 4px 0; }
.functions { width: 100%; margin: 8px 0; table-layout: fixed; }
.functions td { overflow-wrap: anywhere; }
.scroll { overflow-x: auto; max-width: 100%; }
.scroll svg { display: block; }
td.gates { white-space: nowrap; }
code, .fn { font-family: "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: 13px; }
.fn, td.cert code { word-break: break-all; }
.ok { color: #1a7f37; font-weight: 600; }
.bad { color: #c62828; font-weight: 600; }
.warn { color: #9a6700; font-weight: 600; }
.muted { color: #666; }
.note { color: #555; font-size: 13px; }
"""

_BADGE = {
    "checked": ("ok", "✓ checked"),
    "rejected": ("bad", "✗ rejected"),
    "not re-checked": ("warn", "not re-checked"),
    "missing": ("bad", "missing"),
    "none": ("muted", "none"),
    "not run": ("muted", "not run"),
}


def _e(x: object) -> str:
    return html.escape(str(x), quote=True)


def _function_text(e: FunctionEntry) -> str:
    if not e.outputs:
        return "?"
    full = (1 << (e.lines or 0)) - 1
    if all(c == full for c in e.care):
        return ",".join(map(str, e.outputs))
    n = e.lines or 0
    cells = []
    for o, c in zip(e.outputs, e.care, strict=True):
        cells.append("".join(("1" if o >> b & 1 else "0") if c >> b & 1 else "-" for b in reversed(range(n))))
    return ",".join(cells)


def _optimum_text(e: FunctionEntry) -> str:
    if e.status == "done":
        return f"<b>{_e(e.optimum)}</b>"
    if e.status == "timeout":
        hi = "?" if e.upper_bound is None else e.upper_bound
        return f'<span class="warn">in [{_e(e.lower_bound)}, {_e(hi)}]</span>'
    return '<span class="muted">—</span>'


def _circuit_cell(e: FunctionEntry) -> str:
    if e.circuit is None:
        return '<span class="muted">no circuit</span>' + (f'<div class="note">{_e(e.reason)}</div>' if e.reason else "")
    if not e.circuit.gates:
        pic = '<span class="muted">no gates (the identity)</span>'
    else:
        pic = f'<div class="scroll">{to_svg(e.circuit)}</div>'
    if e.simulated is False:
        pic += '<div class="bad">the stored circuit does NOT compute this function</div>'
    elif e.simulated:
        pic += '<div class="note">simulated on every input: computes the function</div>'
    if e.status == "timeout":
        pic += '<div class="note">best circuit found; not proven optimal</div>'
    return pic


def _certificate_cell(e: FunctionEntry) -> str:
    cls, text = _BADGE[e.certificate]
    out = f'<span class="{cls}">{_e(text)}</span><div class="note">{_e(e.certificate_detail)}</div>'
    if e.certificate_location:
        out += f'<div class="note"><code>{_e(e.certificate_location)}</code></div>'
    return out


def _entry_row(e: FunctionEntry, show_weight: bool, show_source: bool) -> str:
    cells = [f'<td class="fn">{_e(_function_text(e))}</td>']
    if show_source:
        cells.append(f'<td class="src"><code>{_e(e.source)}</code></td>')
    if show_weight:
        cells.append(f'<td class="num">{e.weight}</td>')
    cells.append(f'<td class="num gates">{_optimum_text(e)}</td>')
    cells.append(f'<td class="circuit">{_circuit_cell(e)}</td>')
    cells.append(f'<td class="cert">{_certificate_cell(e)}</td>')
    return f'<tr class="entry status-{_e(e.status)}">' + "".join(cells) + "</tr>"


def _group_table(entries: list[FunctionEntry], show_weight: bool, show_source: bool) -> str:
    # fixed layout: the same column widths in every group; long circuits scroll in their cell
    cols = [("function p(0), p(1), …", "", "17%")]
    if show_source:
        cols.append(("spec file", "", "17%"))
    if show_weight:
        cols.append(("class size", "num", "7%"))
    cols += [("gates", "num", "8%"), ("circuit", "", ""), ("certificate", "", "21%")]
    colgroup = "".join(f'<col style="width: {w}">' if w else "<col>" for _, _, w in cols)
    head = "".join(f'<th class="{c}">{_e(name)}</th>' if c else f"<th>{_e(name)}</th>" for name, c, _ in cols)
    rows = "\n".join(_entry_row(e, show_weight, show_source) for e in entries)
    return (
        f'<table class="functions"><colgroup>{colgroup}</colgroup><thead><tr>{head}</tr></thead>'
        f"<tbody>\n{rows}\n</tbody></table>"
    )


def _groups(entries: tuple[FunctionEntry, ...]) -> list[tuple[str, list[FunctionEntry]]]:
    def key(e: FunctionEntry) -> tuple[int, int, tuple[int, ...]]:
        rank = {"done": 0, "timeout": 1, "failed": 2, "missing": 3}.get(e.status, 4)
        return rank, e.optimum or 0, e.outputs

    groups: dict[str, list[FunctionEntry]] = {}
    for e in sorted(entries, key=key):
        if e.status == "done":
            name = f"Optimum {e.optimum} gate{'' if e.optimum == 1 else 's'}"
        else:
            name = {"timeout": "Not proven optimal (time limit)", "failed": "Failed", "missing": "Not yet run"}.get(
                e.status, e.status
            )
        groups.setdefault(name, []).append(e)
    return list(groups.items())


def render_html(report: BatchReport, chart_uri: str | None) -> str:
    """The page for a collected batch (pure: no file or store access)."""
    t, b = report.table, report.batch
    entries = report.entries
    show_weight = any(e.weight != 1 for e in entries)
    show_source = any(e.source for e in entries)
    avg = t.average
    cert_counts = {s: sum(1 for e in entries if e.certificate == s) for s in CERT_STATES}
    checked = cert_counts["checked"]
    out = [
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        '<link rel="icon" href="data:,">',
        f"<title>exactsyn batch report: {_e(t.label or b.id)}</title>",
        f"<style>{_CSS}</style>",
        "</head>",
        "<body><main>",
        "<h1>exactsyn batch report</h1>",
        f'<p class="sub">{_e(t.label)}</p>',
        '<table class="meta"><tbody>',
        f"<tr><td>batch</td><td><code>{_e(b.id)}</code></td></tr>",
        f"<tr><td>library</td><td>{_e(t.library)}</td></tr>",
        f"<tr><td>store</td><td><code>{_e(report.store_name)}</code>, batch last run {_e(b.updated)}</td></tr>",
        f"<tr><td>report</td><td>exactsyn {_e(__version__)}"
        + ("; every certificate re-checked while writing this page" if report.rechecked else "")
        + "</td></tr>",
        "</tbody></table>",
        '<div class="cards">',
        f'<div class="card"><b>{t.total}</b>{plural("function", t.total)}</div>',
        f'<div class="card"><b>{t.optimal}</b>proven optimal</div>',
        f'<div class="card"><b>{t.timeout}</b>not proven (time limit)</div>',
        f'<div class="card"><b>{t.failed}</b>failed</div>',
        f'<div class="card"><b>{t.missing}</b>not yet run</div>',
        f'<div class="card"><b>{len(entries)}</b>stored {plural("item", len(entries))}</div>',
        f'<div class="card"><b>{checked}</b>{plural("certificate", checked)} checked</div>',
        "</div>",
        "<h2>Distribution of optimal circuit sizes</h2>",
        '<div class="dist-row">',
        '<table class="distribution"><thead><tr><th class="num">gates</th><th class="num">functions</th>'
        '<th class="num">share</th></tr></thead><tbody>',
    ]
    for g, c in t.counts:
        share = 100.0 * c / t.optimal if t.optimal else 0.0
        out.append(f'<tr><td class="num">{g}</td><td class="num">{c}</td><td class="num">{share:.2f} %</td></tr>')
    out.append(
        f'</tbody><tfoot><tr><th class="num">total</th><th class="num">{t.optimal}</th><th class="num">'
        + (f"average {avg:.4f}" if avg is not None else "")
        + "</th></tr></tfoot></table>"
    )
    if chart_uri:
        out.append(
            f'<div class="chart"><img src="{chart_uri}" width="700" height="420" '
            'alt="bar chart: functions per number of gates in a minimal circuit"></div>'
        )
    else:
        out.append('<p class="muted">No proven optimum yet, so no chart.</p>')
    out.append("</div>")
    if t.intervals:
        out.append(
            "<h3>Not proven optimal</h3><table><thead><tr><th>optimum in</th><th>functions</th></tr></thead><tbody>"
        )
        for lo, hi, c in t.intervals:
            out.append(f'<tr><td>[{_e(lo)}, {_e("?" if hi is None else hi)}]</td><td class="num">{c}</td></tr>')
        out.append("</tbody></table>")
    summary = ", ".join(f"{_e(s)}: {n}" for s, n in cert_counts.items() if n) or "no stored items"
    out.append(f"<h2>Certificates</h2><p>Stored items by certificate: {summary}.</p>")
    out.append(
        '<p class="note">A certificate is a proof log that <code>exactsyn check DIR</code> re-checks '
        "independently of the solver: it re-derives each CNF, checks each LRAT refutation and simulates the "
        "circuit. Paths are relative to the store's folder.</p>"
    )
    out.append("<h2>Functions</h2>")
    if show_weight:
        out.append(
            '<p class="note">Each row is a class representative standing for its class (line relabelling and '
            "inversion); the class size is how many functions it counts for in the table.</p>"
        )
    for name, group in _groups(entries):
        weight = sum(e.weight for e in group)
        opened = " open" if len(group) <= OPEN_GROUP_LIMIT else ""
        count = f"{len(group)} item{'s' * (len(group) != 1)}"
        if show_weight:
            count += f", {weight} function{'s' * (weight != 1)}"
        out.append(f"<details{opened}><summary>{_e(name)} — {count}</summary>")
        out.append(_group_table(group, show_weight, show_source))
        out.append("</details>")
    out.append("</main></body></html>")
    return "\n".join(out) + "\n"


def build_report(store_path: str | Path, batch_id: str | None = None, recheck: bool = False) -> str:
    """The HTML page for one batch of a store (the last one run unless ``batch_id``, a prefix, is given)."""
    with Store(store_path, readonly=True) as store:
        report = collect(store, store.batch(batch_id), recheck)
    return render_html(report, chart_data_uri(report.table))
