"""Optional test references skip on a developer's machine and fail under CI (tests/optional.py).

Inner pytest sessions (pytester, in a subprocess) run small test files whose reference is
a module that does not exist, with and without the CI switch, and the outcomes are
counted; the Chromium check is called directly with the browser hidden.
"""

from __future__ import annotations

import re
import shlex

import optional
import pytest
from helpers import ROOT

TESTS = ROOT / "tests"
ABSENT = "exactsyn_no_such_module_for_tests"

INNER = f'''
import pytest
from optional import need, need_qiskit

def test_through_need():
    need("{ABSENT}", "nowhere to install it from")

def test_plain_importorskip():
    pytest.importorskip("{ABSENT}")

def test_plain_skip():
    pytest.skip("no reason at all")

@pytest.mark.skipif(True, reason="a skip mark")
def test_skip_mark():
    pass

@pytest.mark.xfail(reason="an expected failure is not a skip", strict=True)
def test_xfail():
    assert False

def test_present_module_runs():
    assert need("json", "standard library").dumps([1]) == "[1]"
'''

INNER_MODULE_LEVEL = f'''
from optional import need

need("{ABSENT}", "nowhere to install it from")


def test_never_collected():
    pass
'''


def _run(pytester: pytest.Pytester, monkeypatch: pytest.MonkeyPatch, env: dict[str, str | None]) -> pytest.RunResult:
    for name, value in env.items():
        if value is None:
            monkeypatch.delenv(name, raising=False)
        else:
            monkeypatch.setenv(name, value)
    monkeypatch.setenv("PYTHONPATH", str(TESTS))
    monkeypatch.setenv("PYTEST_DISABLE_PLUGIN_AUTOLOAD", "1")  # only pytest and tests/optional.py
    pytester.makepyfile(test_inner=INNER, test_inner_module=INNER_MODULE_LEVEL)
    args = ("-p", "optional", "-p", "no:cacheprovider", "-rA", "--continue-on-collection-errors")
    return pytester.runpytest_subprocess(*args)


def test_without_ci_missing_references_skip(pytester: pytest.Pytester, monkeypatch: pytest.MonkeyPatch) -> None:
    result = _run(pytester, monkeypatch, {optional.ENV: None, "CI": None})
    # 4 skipped tests + the skipped module; the present module and the xfail run as usual
    result.assert_outcomes(passed=1, skipped=5, xfailed=1)
    result.stdout.fnmatch_lines([f"*{ABSENT} is not installed (nowhere to install it from)*"])


@pytest.mark.parametrize("env", [{optional.ENV: "1", "CI": None}, {optional.ENV: None, "CI": "true"}])
def test_under_ci_every_skip_fails(
    pytester: pytest.Pytester, monkeypatch: pytest.MonkeyPatch, env: dict[str, str | None]
) -> None:
    result = _run(pytester, monkeypatch, env)
    # need() fails by itself; the plain importorskip and skip are caught by the hook, and so is
    # the skip mark (at set-up, so an error); the module that cannot import its reference is a
    # collection error
    result.assert_outcomes(passed=1, failed=3, errors=2, xfailed=1)
    assert result.ret != 0
    out = result.stdout.str()
    assert f"{ABSENT} is not installed (nowhere to install it from): No module named '{ABSENT}' [required" in out
    for name in ("test_plain_importorskip", "test_plain_skip", "test_skip_mark"):
        assert re.search(rf"test_inner.py::{name} was skipped \(.+\), but skips are not allowed here", out), name
    assert re.search(rf"ERROR collecting test_inner_module.py _+\n{ABSENT} is not installed", out)


def test_the_switch_can_be_turned_off_on_ci(pytester: pytest.Pytester, monkeypatch: pytest.MonkeyPatch) -> None:
    result = _run(pytester, monkeypatch, {optional.ENV: "0", "CI": "true"})
    result.assert_outcomes(passed=1, skipped=5, xfailed=1)


def test_missing_chromium_skips_here_and_fails_under_ci(monkeypatch: pytest.MonkeyPatch) -> None:
    import browser

    monkeypatch.setattr(browser, "CHROMIUM", None)
    monkeypatch.delenv("CI", raising=False)
    monkeypatch.setenv(optional.ENV, "0")
    with pytest.raises(pytest.skip.Exception, match="headless Chromium not found"):
        browser.needs_chromium()
    monkeypatch.setenv(optional.ENV, "1")
    with pytest.raises(pytest.fail.Exception, match="headless Chromium not found.*required"):
        browser.needs_chromium()


def test_ci_script_requires_the_optional_references() -> None:
    """.ci/run must set the switch for the pytest command it runs, and still install Chromium."""
    script = (ROOT / ".ci" / "run").read_text()
    commands = [shlex.split(line) for line in script.splitlines() if line.strip() and not line.lstrip().startswith("#")]
    words = [w for c in commands for w in c]
    assert "chromium" in words  # the install line stays
    test_runs = [c for c in commands if "pytest" in c]
    assert test_runs, "no pytest command in .ci/run"
    exported = any(c[:2] == ["export", f"{optional.ENV}=1"] for c in commands)
    for c in test_runs:
        assert exported or f"{optional.ENV}=1" in c, c
