"""The HTML batch report (exactsyn report), checked against breadth-first search and in headless Chromium.

References outside the code under test: the report's distribution and optima are compared
with breadth-first search (exactsyn.tables.bfs, no SAT); each drawn circuit is read back
from its SVG geometry alone (tests/svg_readback.py) and simulated; the page is rendered by
Chromium over the DevTools protocol (tests/browser.py), which reports console messages,
exceptions, failed loads and every network request; screenshots are decoded by Pillow.
"""

from __future__ import annotations

import base64
import json
import random
import re
import shutil
import xml.etree.ElementTree as ET
from dataclasses import dataclass
from html.parser import HTMLParser
from pathlib import Path

import pytest
from browser import Browser, needs_chromium, non_blank
from click.testing import CliRunner
from helpers import png_grey
from svg_readback import SVG_NS, read_back

import exactsyn.cli.pictures  # noqa: F401  (registers the report command)
from exactsyn.cli import main


@dataclass
class Element:
    tag: str
    attrs: dict[str, str]
    start: int


class _Collect(HTMLParser):
    """Start tags with their attributes and the text offset of each <svg>."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.elements: list[Element] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.elements.append(Element(tag, {k: v or "" for k, v in attrs}, 0))


def _rows(page: str) -> list[str]:
    return re.findall(r'<tr class="entry status-[a-z]+">(.*?)</tr>', page, flags=re.S)


def _cell_text(fragment: str) -> str:
    return re.sub(r"<[^>]+>", "", fragment).strip()


@pytest.fixture(scope="module")
def two_line_store(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """Every 2-line function by classes, nct, certificates re-checked, through the batch API."""
    from exactsyn.batch.plan import plan_generated
    from exactsyn.batch.run import RunOptions, run_batch
    from exactsyn.batch.store import Store
    from exactsyn.batch.task import LibraryChoice
    from exactsyn.batch.workers import LocalPool
    from exactsyn.sat.encode import EncodingOptions

    path = tmp_path_factory.mktemp("store") / "two.sqlite"
    with Store(path) as s:
        plan = plan_generated("classes", 2, LibraryChoice("nct"), EncodingOptions())
        summary = run_batch(s, plan, RunOptions(verify=True), LocalPool(1))
        assert summary.all_done, summary.failures
    return path


def _report(store: Path, out: Path, *extra: str) -> str:
    res = CliRunner().invoke(main, ["report", "--store", str(store), "-o", str(out), *extra])
    assert res.exit_code == 0, res.output
    return out.read_text(encoding="utf-8")


def test_report_holds_the_table_the_chart_and_every_function(two_line_store: Path, tmp_path: Path) -> None:
    from exactsyn.core.library import make_library
    from exactsyn.tables.bfs import optimal_sizes

    page = _report(two_line_store, tmp_path / "r.html")
    bfs = optimal_sizes(make_library("nct", 2))  # breadth-first, no SAT
    dist = re.search(r'<table class="distribution">.*?<tbody>(.*?)</tbody>', page, flags=re.S)
    assert dist is not None
    got = [
        [int(_cell_text(c).split()[0]) for c in re.findall(r"<td.*?</td>", r)[:2]]
        for r in dist.group(1).split("</tr>")[:-1]
    ]
    assert [c for _, c in got] == bfs.distribution() and [g for g, _ in got] == list(range(len(got)))
    # the chart: an embedded SVG image that parses
    p = _Collect()
    p.feed(page)
    imgs = [e for e in p.elements if e.tag == "img"]
    assert len(imgs) == 1 and imgs[0].attrs["src"].startswith("data:image/svg+xml;base64,")
    chart = ET.fromstring(base64.b64decode(imgs[0].attrs["src"].split(",", 1)[1]))
    assert chart.tag == SVG_NS + "svg"
    # self-contained: no script, no external reference
    assert not [e for e in p.elements if e.tag in ("script", "iframe", "object", "embed")]
    for e in p.elements:
        for attr in ("src", "href"):
            if attr in e.attrs:
                assert e.attrs[attr].startswith(("data:", "#")), e
    assert "@import" not in page and not re.search(r"url\(\s*['\"]?(https?:|//)", page)
    # every function: its optimum equals breadth-first search, its drawn circuit computes it
    rows = _rows(page)
    assert len(rows) == 12  # class representatives of the 24 two-line functions
    for row in rows:
        cells = re.findall(r"<td[^>]*>(.*?)</td>", row, flags=re.S)
        perm = tuple(int(v) for v in _cell_text(cells[0]).split(","))
        optimum = int(_cell_text(cells[2]))
        assert optimum == bfs.size(perm)
        svg = re.search(r"<svg.*?</svg>", row, flags=re.S)
        if optimum == 0:
            assert svg is None and "identity" in row
            continue
        assert svg is not None
        drawn = read_back(svg.group(0))
        assert drawn.permutation() == perm and len(drawn) == optimum
        assert "✓ checked" in cells[4]


def test_report_tells_unchecked_missing_and_rejected_certificates(two_line_store: Path, tmp_path: Path) -> None:
    store = tmp_path / two_line_store.name  # certificate locations are relative to the store's folder
    shutil.copy(two_line_store, store)
    shutil.copytree(two_line_store.with_name(two_line_store.name + ".certs"), store.with_name(store.name + ".certs"))
    certs = sorted(p for p in store.with_name(store.name + ".certs").iterdir() if p.is_dir())
    with_gates = [d for d in certs if json.loads((d / "result.json").read_text())["circuit"]]
    victim, swapped, gone = with_gates[:3]
    data = json.loads((victim / "result.json").read_text())
    data["circuit"][-1]["target"] = 1 - data["circuit"][-1]["target"]  # its circuit no longer computes the spec
    (victim / "result.json").write_text(json.dumps(data))
    shutil.copy(with_gates[3] / "result.json", swapped / "result.json")  # a sound proof, of another function
    shutil.rmtree(gone)
    stored = _report(store, tmp_path / "stored.html")
    assert stored.count("✓ checked") == 11 and stored.count(">missing<") == 1  # the store's verdicts
    rechecked = _report(store, tmp_path / "now.html", "--check")
    assert rechecked.count("✗ rejected") == 2 and rechecked.count("✓ checked") == 9
    assert rechecked.count(">missing<") == 1 and "the certificate is for another function" in rechecked
    bad = CliRunner().invoke(main, ["report", "--store", str(tmp_path / "none.sqlite"), "-o", str(tmp_path / "x.html")])
    assert bad.exit_code == 2 and "no results store" in bad.output


# ------------------------------------------------------------------ in headless Chromium
def test_report_renders_in_headless_chromium_without_errors(two_line_store: Path, tmp_path: Path) -> None:
    needs_chromium()
    page = tmp_path / "report.html"
    _report(two_line_store, page)
    with Browser(1200, 900) as b:
        b.load(page.as_uri())
        problems = b.problems()
        state = b.evaluate(
            "JSON.stringify({imgs: [...document.images].map(i => i.complete && i.naturalWidth > 0),"
            " circuits: document.querySelectorAll('svg.exactsyn-circuit').length,"
            " drawn: [...document.querySelectorAll('svg.exactsyn-circuit')].every(s => s.getBBox().width > 0),"
            " rows: document.querySelectorAll('tr.entry').length,"
            " overflow: document.documentElement.scrollWidth - document.documentElement.clientWidth})"
        )
        shot = b.screenshot()
    assert problems == []
    info = json.loads(state)
    assert info["imgs"] == [True]  # the chart decoded from its data: URI
    assert info["rows"] == 12 and info["circuits"] == 11 and info["drawn"]  # the identity has no picture
    assert info["overflow"] <= 0  # nothing sticks out sideways: long circuits scroll in their cell
    (tmp_path / "report.png").write_bytes(shot)
    img = png_grey(shot)
    assert img.size == (1200, 900)
    background = max(range(256), key=img.histogram().__getitem__)
    assert non_blank(shot, background) > 0.03  # text, tables and the chart, not an empty page


def test_report_of_timeouts_failures_and_long_names_renders_without_errors(tmp_path: Path) -> None:
    """Spec files with a long name, one unreadable, one past the time limit: still a clean page."""
    needs_chromium()
    specs = tmp_path / "specs"
    specs.mkdir()
    (specs / ("a_spec_file_with_a_long_name_" + "x" * 60 + ".toml")).write_text("permutation = [1, 0, 3, 2]\n")
    (specs / "identity.toml").write_text("permutation = [0, 1, 2, 3]\n")
    (specs / "broken.toml").write_text("permutation = [1, 0, 3\n")  # not TOML: recorded as failed
    hard = random.Random(8).sample(range(16), 16)  # a random 4-line function: far beyond 0.05 s of search
    (specs / "hard.toml").write_text(f"permutation = {hard}\n")
    store = tmp_path / "mixed.sqlite"
    args = ["batch", str(specs), "--store", str(store), "--library", "mct", "--time-limit", "0.05", "-q", "-j", "1"]
    run = CliRunner().invoke(main, args)
    assert run.exit_code == 1, run.output  # not every item done
    page = _report(store, tmp_path / "mixed.html")
    assert "Failed" in page and "Not proven optimal (time limit)" in page
    with Browser(1200, 900) as b:
        b.load((tmp_path / "mixed.html").as_uri())
        problems = b.problems()
        state = b.evaluate(
            "JSON.stringify({rows: document.querySelectorAll('tr.entry').length,"
            " overflow: document.documentElement.scrollWidth - document.documentElement.clientWidth})"
        )
        shot = b.screenshot()
    assert problems == []
    info = json.loads(state)
    assert info["rows"] == 4 and info["overflow"] <= 0  # long names wrap inside their cells
    img = png_grey(shot)
    assert non_blank(shot, max(range(256), key=img.histogram().__getitem__)) > 0.03
