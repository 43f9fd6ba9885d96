"""Optional test references: qiskit, openqasm3, dask.distributed and headless Chromium.

They are test-only outside references (qiskit reads our OpenQASM back, the openqasm3
parser is the standard's grammar, Dask runs batches on a cluster, Chromium renders our
pictures).  On a developer's machine a test whose reference is missing is skipped, with
the install line as the reason.  Under CI a skip would hide that the check never ran, so
there the same call fails instead.  "Under CI" means:

* ``EXACTSYN_REQUIRE_OPTIONAL=1`` (``.ci/run`` sets it), or
* ``EXACTSYN_REQUIRE_OPTIONAL`` unset and ``CI`` set (as most CI services do);
* ``EXACTSYN_REQUIRE_OPTIONAL=0`` turns the requirement off.

As a net under these calls, :func:`pytest_runtest_makereport` and
:func:`pytest_make_collect_report` (imported into tests/conftest.py) turn every other skip
into a failure when the requirement is on, so a plain ``pytest.importorskip`` or
``pytest.skip`` cannot slip through either.  Their own test: tests/test_optional.py.
"""

from __future__ import annotations

import importlib
import os
from collections.abc import Generator
from types import ModuleType
from typing import Any, NoReturn

import pytest

ENV = "EXACTSYN_REQUIRE_OPTIONAL"


def required() -> bool:
    """Must every optional reference be present (see the module docstring)?"""
    value = os.environ.get(ENV)
    if value is not None:
        return value.strip() not in ("", "0")
    return os.environ.get("CI", "").strip().lower() not in ("", "0", "false")


def missing(reason: str) -> NoReturn:
    """Skip the calling test (or module) for ``reason``; fail instead when references are required."""
    if required():
        pytest.fail(f"{reason} [required: {ENV}=1 or CI is set]", pytrace=False)
    pytest.skip(reason, allow_module_level=True)


def need(module: str, install: str) -> ModuleType:
    """Import ``module`` or skip / fail (:func:`missing`); ``install`` says how to get it."""
    try:
        return importlib.import_module(module)
    except ImportError as e:
        error = e
    missing(f"{module} is not installed ({install}): {error}")


def need_qiskit() -> ModuleType:
    return need("qiskit", "pip install qiskit")


def need_openqasm3_parser() -> ModuleType:
    """The openqasm3 package with its parser (the ``[parser]`` extra pulls in ANTLR)."""
    openqasm3 = need("openqasm3", "pip install 'openqasm3[parser]'")
    try:
        openqasm3.parse("OPENQASM 3.0;\nqubit[1] q;\nx q[0];\n")
        return openqasm3
    except ImportError as e:
        error = e
    missing(f"the openqasm3 parser is not installed (pip install 'openqasm3[parser]'): {error}")


# ------------------------------------------------------------------ the net: no skip under CI
def _forbidden(where: str, longrepr: Any) -> str:
    reason = longrepr[2] if isinstance(longrepr, tuple) and len(longrepr) == 3 else str(longrepr)
    return f"{where} was skipped ({reason}), but skips are not allowed here: {ENV}=1 or CI is set"


@pytest.hookimpl(hookwrapper=True)
def pytest_runtest_makereport(item: pytest.Item, call: pytest.CallInfo[None]) -> Generator[None, Any, None]:
    outcome = yield
    report = outcome.get_result()
    if report.skipped and not hasattr(report, "wasxfail") and required():
        report.outcome = "failed"
        report.longrepr = _forbidden(item.nodeid, report.longrepr)


@pytest.hookimpl(hookwrapper=True)
def pytest_make_collect_report(collector: pytest.Collector) -> Generator[None, Any, None]:
    outcome = yield
    report = outcome.get_result()
    if report.skipped and required():
        report.outcome = "failed"
        report.longrepr = _forbidden(collector.nodeid, report.longrepr)
