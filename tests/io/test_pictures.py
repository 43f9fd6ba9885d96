"""Pictures: SVG and PNG circuit diagrams, the HTML batch report, checked in headless Chromium.

References outside the code under test: the circuit is read back from the SVG's geometry
alone (wire positions and symbol classes) and simulated with exactsyn.core.circuit, so a
wrong symbol, line or order changes the permutation; packed layers are compared with
Circuit.depth(); the report's distribution and optima are compared with breadth-first
search (exactsyn.search.bfs, no SAT); the PNG is decoded by Pillow; the report and the SVG are
rendered by Chromium (Debian's ``chromium``), driven over the DevTools protocol
(``--remote-debugging-pipe``), which reports console messages, exceptions, failed loads
and every network request, and measures the rendered label text.
"""

from __future__ import annotations

import base64
import fcntl
import io
import json
import os
import random
import re
import select
import shutil
import subprocess
import tempfile
import time
import xml.etree.ElementTree as ET
from dataclasses import dataclass
from html.parser import HTMLParser
from pathlib import Path
from typing import Any

import pytest
from click.testing import CliRunner
from svg_readback import centre, read_back

import exactsyn.cli.pictures  # noqa: F401  (registers the draw and report commands)
from exactsyn.cli.main import main
from exactsyn.cli.pictures import render
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, swap_gate, x_gate
from exactsyn.errors import ExactsynError
from exactsyn.io.jsonio import circuit_to_dict
from exactsyn.io.qasm import read_qasm, to_qasm2, to_qasm3
from exactsyn.io.svg import to_svg

SVG_NS = "{http://www.w3.org/2000/svg}"
CHROMIUM = shutil.which("chromium") or ("/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None)


# ------------------------------------------------------------------ circuits
def random_circuit(rng: random.Random, lines: int, gates: int) -> Circuit:
    out: list[Gate] = []
    for _ in range(gates):
        order = rng.sample(range(lines), lines)
        if rng.random() < 0.25 and lines >= 2:
            a, b, rest = order[0], order[1], order[2:]
            ctl = rest[: rng.randint(0, len(rest))]
            split = rng.randint(0, len(ctl))
            out.append(swap_gate(a, b, ctl[:split], ctl[split:]))
        else:
            t, rest = order[0], order[1:]
            ctl = rest[: rng.randint(0, len(rest))]
            split = rng.randint(0, len(ctl))
            out.append(x_gate(t, ctl[:split], ctl[split:]))
    return Circuit(lines, tuple(out))


MIXED = Circuit(
    4,
    (
        x_gate(2, [0, 1]),  # Toffoli
        x_gate(0, [], [3]),  # CNOT on a negative control
        swap_gate(1, 3, [0]),  # Fredkin
        x_gate(3),
        x_gate(1, [0], [2]),
        swap_gate(0, 2),
        x_gate(0, [1]),
    ),
)


def cls(el: ET.Element) -> str:
    return el.get("class", "")


def by_class(root: ET.Element, name: str) -> list[ET.Element]:
    return [el for el in root.iter() if name in cls(el).split()]


def expected_counts(c: Circuit) -> dict[str, int]:
    return {
        "ctrl-pos": sum(len(g.controls) for g in c.gates),
        "ctrl-neg": sum(len(g.negative_controls) for g in c.gates),
        "target": sum(1 for g in c.gates if g.kind == "x"),
        "swap": sum(2 for g in c.gates if g.kind == "swap"),
    }


# ------------------------------------------------------------------ SVG
def test_svg_parses_and_counts_every_symbol_of_random_circuits() -> None:
    rng = random.Random(11)
    for trial in range(120):
        lines = rng.randint(1, 6)
        c = random_circuit(rng, lines, rng.randint(0, 14))
        packed, wrap = trial % 2 == 1, rng.choice([None, 1, 3, 8])
        svg = to_svg(c, packed=packed, wrap=wrap)
        root = ET.fromstring(svg)  # well-formed XML
        assert root.tag == SVG_NS + "svg"
        for kind, count in expected_counts(c).items():
            assert len(by_class(root, kind)) == count, (kind, c)
        assert len(by_class(root, "gate")) == len(c)
        # read back from geometry alone: the same function (packed: gates of a layer commute)
        back = read_back(svg, packed)
        assert back.permutation() == c.permutation()
        if not packed:
            assert back.gates == c.gates  # unpacked: exactly the gates, in application order


def test_negative_controls_are_drawn_differently_from_positive_ones() -> None:
    root = ET.fromstring(to_svg(MIXED))
    pos, neg = by_class(root, "ctrl-pos"), by_class(root, "ctrl-neg")
    assert pos and neg
    pos_fill = {el.get("fill") for el in pos}
    neg_fill = {el.get("fill") for el in neg}
    paper = {r.get("fill") for r in by_class(root, "background")}
    assert len(pos_fill) == len(neg_fill) == 1 and pos_fill != neg_fill
    assert neg_fill == paper and pos_fill != paper  # hollow: filled with the background colour
    # a hollow dot needs an outline: its group strokes it in the ink colour
    gate_of = {id(el): g for g in by_class(root, "gate") for el in g.iter()}
    assert all(gate_of[id(el)].get("stroke") not in (None, "none") and el.get("stroke") is None for el in neg)


def test_packed_layers_are_the_circuit_depth_and_narrower() -> None:
    rng = random.Random(3)
    for _ in range(40):
        c = random_circuit(rng, 5, 12)
        flat, packed = ET.fromstring(to_svg(c)), ET.fromstring(to_svg(c, packed=True))
        layers = len(by_class(packed, "layer-sep")) + 1 if c.gates else 0
        assert layers == c.depth()  # Circuit.depth: greedy as-soon-as-possible layers
        assert float(packed.get("width", "0")) <= float(flat.get("width", "0"))
    wide = Circuit(4, (x_gate(0), x_gate(1), x_gate(2), x_gate(3)))  # one layer of four NOT gates
    assert float(ET.fromstring(to_svg(wide, packed=True)).get("width", "0")) < float(
        ET.fromstring(to_svg(wide)).get("width", "0")
    )


def test_long_circuits_wrap_into_blocks_of_bounded_width() -> None:
    c = random_circuit(random.Random(7), 3, 100)
    svg = to_svg(c, labels=["a", "b", "c"], wrap=30)
    root = ET.fromstring(svg)
    first30 = ET.fromstring(to_svg(Circuit(3, c.gates[:30]), labels=["a", "b", "c"]))
    assert root.get("width") == first30.get("width")  # width stops growing at the wrap width
    assert len(by_class(root, "label")) == 3 * 4  # 4 blocks, labels repeated in each
    assert read_back(svg).gates == c.gates


def test_labels_of_any_length_end_before_the_wires() -> None:
    names = ["a", "carry_in_with_a_rather_long_name_" + "x" * 40, "数据线", "WWWWWWWW"]
    root = ET.fromstring(to_svg(MIXED, labels=names))
    texts = by_class(root, "label")
    assert [t.text for t in texts] == names
    wire_start = min(float(w.get("x1", "nan")) for w in by_class(root, "wire"))
    for t in texts:  # right-aligned at the wire start, with a gap (the browser test measures real text)
        assert t.get("text-anchor") in (None, "end") and float(t.get("x", "nan")) < wire_start
    with pytest.raises(ExactsynError, match="3 labels given for a circuit on 4 lines"):
        to_svg(MIXED, labels=["a", "b", "c"])
    with pytest.raises(ExactsynError, match="line break"):
        to_svg(MIXED, labels=["a", "b\nc", "d", "e"])
    with pytest.raises(ExactsynError, match="control character"):
        to_svg(MIXED, labels=["a", "b\x00", "d", "e"])
    escaped = ET.fromstring(to_svg(Circuit(2, (x_gate(0, [1]),)), labels=["<a&b>", '"q"']))
    assert [t.text for t in by_class(escaped, "label")] == ["<a&b>", '"q"']


# ------------------------------------------------------------------ PNG
def _png_image(data: bytes) -> Any:
    """Decode a PNG with Pillow (installed with matplotlib), as grey levels."""
    from PIL import Image

    return Image.open(io.BytesIO(data)).convert("L")


def test_png_shows_the_same_symbols_as_the_svg() -> None:
    from exactsyn.io.png import to_png

    scale = 2.0
    data = to_png(MIXED, scale=scale)
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    img = _png_image(data)
    root = ET.fromstring(to_svg(MIXED))
    w, h = float(root.get("width", "0")) * scale, float(root.get("height", "0")) * scale
    assert abs(img.size[0] - w) <= 1 and abs(img.size[1] - h) <= 1  # the SVG's size, at the scale

    def px(x: float, y: float) -> int:
        return int(img.getpixel((int(x * scale), int(y * scale))))

    hist = img.histogram()
    assert sum(hist[:100]) > 0.01 * img.size[0] * img.size[1]  # ink on at least 1 % of the picture
    for el in by_class(root, "ctrl-pos"):  # filled: dark at the centre
        assert px(*centre(el)) < 80
    for el in by_class(root, "ctrl-neg"):  # hollow: light inside, dark ring
        x, y = centre(el)
        assert px(x + 2, y - 2) > 200 and px(x, y - 5.5) < 120
    for el in by_class(root, "target"):  # circle with a cross: dark centre, light quadrants, dark rim
        x, y = centre(el)
        assert px(x, y) < 120 and px(x + 5, y - 5) > 200 and px(x + 11, y) < 120


# ------------------------------------------------------------------ draw command
def test_draw_reads_json_and_openqasm_and_writes_svg_png_text(tmp_path: Path) -> None:
    runner = CliRunner()
    saved = {
        "c.json": json.dumps(circuit_to_dict(MIXED)),
        "c2.qasm": to_qasm2(MIXED),
        "c3.qasm": to_qasm3(MIXED),
    }
    for name, text in saved.items():
        (tmp_path / name).write_text(text)
        out = tmp_path / f"{name}.svg"
        res = runner.invoke(main, ["draw", str(tmp_path / name), "-o", str(out), "--labels", "a,b,c,d"])
        assert res.exit_code == 0, res.output
        svg = out.read_text(encoding="utf-8")
        root = ET.fromstring(svg)
        # OpenQASM 2 has no negative controls: they come back as x gates around the gate
        saved_circuit = read_qasm(text) if name.endswith(".qasm") else MIXED
        for kind, count in expected_counts(saved_circuit).items():
            assert len(by_class(root, kind)) == count
        assert read_back(svg).gates == saved_circuit.gates
        assert saved_circuit.permutation() == MIXED.permutation()
        assert [t.text for t in by_class(root, "label")] == ["a", "b", "c", "d"]
    src = str(tmp_path / "c.json")
    drawn = runner.invoke(main, ["draw", src])
    assert drawn.exit_code == 0 and "⊕" in drawn.output and "○" in drawn.output
    packed = runner.invoke(main, ["draw", src, "--format", "svg", "--packed"])
    assert packed.exit_code == 0 and len(by_class(ET.fromstring(packed.output), "layer-sep")) == MIXED.depth() - 1
    png = runner.invoke(main, ["draw", src, "-o", str(tmp_path / "c.png")])
    assert png.exit_code == 0 and (tmp_path / "c.png").read_bytes()[:4] == b"\x89PNG"
    piped = runner.invoke(main, ["draw", src, "--format", "png"])  # stdout is not a terminal here
    assert piped.exit_code == 0 and piped.stdout_bytes == (tmp_path / "c.png").read_bytes()
    for args, message in (
        (["draw", src, "--labels", "a,b"], "2 labels given for a circuit on 4 lines"),
        (["draw", src, "--labels", "a,,c,d"], "non-empty name"),
        (["draw", src, "--wrap", "-1"], "--wrap"),
        (["draw", src, "--packed"], "--packed is for svg and png"),
        (["draw", str(tmp_path / "missing.json"), "--format", "svg"], "cannot read circuit file"),
    ):
        res = runner.invoke(main, args)
        assert res.exit_code == 2 and message in res.output and len(res.output.strip().splitlines()) == 1, res.output
    (tmp_path / "bad.json").write_text('{"lines": 2, "gates": [{"type": "y"}]}')
    res = runner.invoke(main, ["draw", str(tmp_path / "bad.json"), "--format", "svg"])
    assert res.exit_code == 2 and "'type'" in res.output


def test_synth_result_json_draws_and_render_gives_text_or_bytes(tmp_path: Path) -> None:
    runner = CliRunner()
    out = tmp_path / "toffoli.json"
    res = runner.invoke(main, ["synth", "--perm", "0,1,2,3,4,5,7,6", "--format", "json", "-o", str(out), "-q"])
    assert res.exit_code == 0, res.output
    drawn = runner.invoke(main, ["draw", str(out), "--format", "svg"])
    root = ET.fromstring(drawn.output)
    assert (len(by_class(root, "ctrl-pos")), len(by_class(root, "target"))) == (2, 1)  # one Toffoli gate
    assert isinstance(render(MIXED, "svg"), str) and isinstance(render(MIXED, "text"), str)
    assert isinstance(render(MIXED, "png"), bytes)
    with pytest.raises(ExactsynError, match="unknown picture format"):
        render(MIXED, "gif")


# ------------------------------------------------------------------ the report
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
    res = CliRunner().invoke(main, ["report", str(store), "-o", str(out), *extra])
    assert res.exit_code == 0, res.output
    return out.read_text(encoding="utf-8")


def test_report_holds_the_table_the_chart_and_every_function(two_line_store: Path, tmp_path: Path) -> None:
    from exactsyn.core.library import make_library
    from exactsyn.search.bfs import optimal_sizes

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
    bad = CliRunner().invoke(main, ["report", str(tmp_path / "none.sqlite"), "-o", str(tmp_path / "x.html")])
    assert bad.exit_code == 2 and "no results store" in bad.output


# ------------------------------------------------------------------ headless Chromium
class Browser:
    """One headless Chromium session over the DevTools protocol on a pipe (fds 3 and 4).

    The protocol is Chromium's own (Chrome DevTools Protocol): JSON messages ended by a
    NUL byte.  We enable the Runtime, Log and Network domains, load the page, wait for
    its load event and a short settling time, and keep every event.
    """

    FLAGS = (
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--remote-debugging-pipe",
    )

    def __init__(self, width: int = 1200, height: int = 900, timeout: float = 30.0) -> None:
        assert CHROMIUM is not None
        self.timeout, self.width, self.height = timeout, width, height
        self.profile = tempfile.mkdtemp(prefix="exactsyn-chromium-")
        to_browser_r, self._w = os.pipe()
        self._r, from_browser_w = os.pipe()

        def wire() -> None:  # in the child: the pipes become fds 3 (commands) and 4 (replies)
            a = fcntl.fcntl(to_browser_r, fcntl.F_DUPFD, 10)
            b = fcntl.fcntl(from_browser_w, fcntl.F_DUPFD, 10)
            os.dup2(a, 3)
            os.dup2(b, 4)

        self.proc = subprocess.Popen(
            [
                CHROMIUM,
                *self.FLAGS,
                f"--user-data-dir={self.profile}",
                f"--window-size={width},{height}",
                "about:blank",
            ],
            stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL,
            pass_fds=(3, 4),
            preexec_fn=wire,
            start_new_session=True,
        )
        os.close(to_browser_r)
        os.close(from_browser_w)
        self._buf = b""
        self._id = 0
        self.events: list[dict[str, Any]] = []
        self.session = ""

    def _send(self, method: str, params: dict[str, Any] | None = None, session: bool = True) -> int:
        self._id += 1
        msg: dict[str, Any] = {"id": self._id, "method": method, "params": params or {}}
        if session and self.session:
            msg["sessionId"] = self.session
        os.write(self._w, json.dumps(msg).encode() + b"\0")
        return self._id

    def _recv(self, deadline: float) -> dict[str, Any]:
        while b"\0" not in self._buf:
            left = deadline - time.monotonic()
            if left <= 0:
                raise TimeoutError
            ready, _, _ = select.select([self._r], [], [], left)
            if ready:
                chunk = os.read(self._r, 1 << 20)
                if not chunk:
                    raise EOFError("chromium closed the DevTools pipe")
                self._buf += chunk
        raw, self._buf = self._buf.split(b"\0", 1)
        return dict(json.loads(raw))

    def call(self, method: str, params: dict[str, Any] | None = None, session: bool = True) -> dict[str, Any]:
        i = self._send(method, params, session)
        deadline = time.monotonic() + self.timeout
        while True:
            m = self._recv(deadline)
            if m.get("id") == i:
                if "error" in m:
                    raise RuntimeError(f"{method}: {m['error']}")
                return dict(m.get("result", {}))
            self.events.append(m)

    def load(self, url: str, settle: float = 0.5) -> None:
        page = next(t for t in self.call("Target.getTargets", session=False)["targetInfos"] if t["type"] == "page")
        self.session = self.call("Target.attachToTarget", {"targetId": page["targetId"], "flatten": True}, False)[
            "sessionId"
        ]
        for domain in ("Page", "Runtime", "Log", "Network"):
            self.call(f"{domain}.enable")
        metrics = {"width": self.width, "height": self.height, "deviceScaleFactor": 1, "mobile": False}
        self.call("Emulation.setDeviceMetricsOverride", metrics)
        self.call("Page.navigate", {"url": url})
        deadline = time.monotonic() + self.timeout
        while not any(e.get("method") == "Page.loadEventFired" for e in self.events):
            self.events.append(self._recv(deadline))
        end = time.monotonic() + settle
        try:
            while True:
                self.events.append(self._recv(end))
        except TimeoutError:
            pass

    def evaluate(self, expression: str) -> Any:
        res = self.call("Runtime.evaluate", {"expression": expression, "returnByValue": True})
        assert "exceptionDetails" not in res, res
        return res["result"].get("value")

    def screenshot(self) -> bytes:
        return base64.b64decode(self.call("Page.captureScreenshot", {"format": "png"})["data"])

    def problems(self) -> list[str]:
        """Console errors and warnings, uncaught exceptions, error log entries, failed or network loads."""
        out = []
        for e in self.events:
            method, p = e.get("method"), e.get("params", {})
            if method == "Runtime.consoleAPICalled" and p.get("type") in ("error", "warning", "assert"):
                out.append(f"console.{p['type']}: {[a.get('value', a.get('description')) for a in p.get('args', [])]}")
            elif method == "Runtime.exceptionThrown":
                out.append(f"exception: {p['exceptionDetails'].get('text')}")
            elif method == "Log.entryAdded" and p["entry"].get("level") in ("error", "warning"):
                out.append(f"log {p['entry']['level']}: {p['entry'].get('text')}")
            elif method == "Network.loadingFailed":
                out.append(f"load failed: {p.get('errorText')}")
            elif method == "Network.requestWillBeSent":
                url = p["request"]["url"]
                if not url.startswith(("file:", "data:", "about:")):
                    out.append(f"network request: {url}")
        return out

    def close(self) -> None:
        try:
            self.call("Browser.close", session=False)
        except (EOFError, TimeoutError, OSError, RuntimeError):
            pass
        try:
            self.proc.wait(10)
        except subprocess.TimeoutExpired:
            os.killpg(self.proc.pid, 9)  # the process group this test started
            self.proc.wait()
        os.close(self._w)
        os.close(self._r)
        shutil.rmtree(self.profile, ignore_errors=True)

    def __enter__(self) -> Browser:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def needs_chromium() -> None:
    if CHROMIUM is None:
        reason = "headless Chromium not found (Debian: apt-get install chromium)"
        if os.environ.get("CI"):
            pytest.fail(reason + "; CI must install it (.ci/run)")
        pytest.skip(reason)


def test_the_browser_harness_sees_console_errors_exceptions_and_network(tmp_path: Path) -> None:
    """The problem detector is not blind: a page with each kind of fault is caught."""
    needs_chromium()
    bad = tmp_path / "bad.html"
    bad.write_text(
        '<!DOCTYPE html><html><head><link rel="icon" href="data:,"></head><body>'
        '<img src="http://127.0.0.1:9/x.png"><img src="missing.png">'
        "<script>console.error('boom'); undefinedFunction();</script></body></html>"
    )
    with Browser() as b:
        b.load(bad.as_uri(), settle=1.0)
        found = "\n".join(b.problems())
    assert "console.error" in found and "boom" in found
    assert "exception" in found
    assert "network request: http://127.0.0.1:9/x.png" in found
    assert "load failed" in found  # missing.png


def _non_blank(png: bytes, background: int) -> float:
    img = _png_image(png)
    hist = img.histogram()
    return 1 - sum(hist[max(0, background - 6) : background + 7]) / (img.size[0] * img.size[1])


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
    img = _png_image(shot)
    assert img.size == (1200, 900)
    background = max(range(256), key=img.histogram().__getitem__)
    assert _non_blank(shot, background) > 0.03  # text, tables and the chart, not an empty page


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
    img = _png_image(shot)
    assert _non_blank(shot, max(range(256), key=img.histogram().__getitem__)) > 0.03


def test_svg_labels_measured_in_chromium_end_before_their_wires(tmp_path: Path) -> None:
    needs_chromium()
    names = ["a", "carry_in_with_a_rather_long_name_" + "x" * 40, "数据线", "WWWWWWWWWWWW"]
    c = random_circuit(random.Random(5), 4, 60)
    svg = tmp_path / "c.svg"
    svg.write_text(to_svg(c, labels=names, wrap=25), encoding="utf-8")
    with Browser(1600, 900) as b:
        b.load(svg.as_uri())
        problems = b.problems()
        measured = b.evaluate(
            "JSON.stringify({labels: [...document.querySelectorAll('text.label')].map(t => {"
            " const r = t.getBBox(); return [t.textContent, r.x, r.x + r.width]; }),"
            " wire: Math.min(...[...document.querySelectorAll('line.wire')].map(l => l.x1.baseVal.value))})"
        )
    assert problems == []
    data = json.loads(measured)
    assert len(data["labels"]) == 4 * 3  # 60 gates at 25 per row: 3 blocks
    for text, left, right in data["labels"]:
        assert text in names
        assert right < data["wire"] - 2, f"label {text!r} runs into its wire ({right} >= {data['wire']})"
        assert left >= 0, f"label {text!r} is cut off on the left ({left})"
