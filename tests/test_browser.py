"""The browser harness (tests/browser.py) is not blind: a page with each kind of fault is caught."""

from __future__ import annotations

from pathlib import Path

from browser import Browser, needs_chromium


def test_the_browser_harness_sees_console_errors_exceptions_and_network(tmp_path: Path) -> None:
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
