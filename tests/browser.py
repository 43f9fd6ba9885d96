"""Headless Chromium for the tests, driven over the DevTools protocol on a pipe.

Used by the picture and report tests to render our SVG and HTML in a real browser and to
see what a user's browser would complain about.  Chromium is Debian's ``chromium``; it is
started with ``--remote-debugging-pipe``, and the harness reports console messages,
exceptions, failed loads and every network request (its own test is
tests/test_browser.py).  The protocol is Chromium's own (Chrome DevTools Protocol).
"""

from __future__ import annotations

import base64
import fcntl
import json
import os
import select
import shutil
import subprocess
import tempfile
import time
from pathlib import Path
from typing import Any

from helpers import png_grey
from optional import missing

CHROMIUM = shutil.which("chromium") or ("/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None)


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
    """Skip the calling test when Chromium is missing; fail under CI (tests/optional.py)."""
    if CHROMIUM is None:
        missing("headless Chromium not found (Debian: apt-get install chromium; .ci/run installs it)")


def non_blank(png: bytes, background: int) -> float:
    """Share of a screenshot's pixels that are not the background grey level (within ±6)."""
    img = png_grey(png)
    hist = img.histogram()
    return 1 - sum(hist[max(0, background - 6) : background + 7]) / (img.size[0] * img.size[1])
