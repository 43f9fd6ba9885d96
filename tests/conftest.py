"""Shared test set-up.

* tests/ is put on ``sys.path`` so that test modules in the subpackages import the shared
  helpers as ``helpers``, ``svg_readback``, ``browser`` and ``optional``.
* Optional test references (qiskit, openqasm3, Dask, Chromium) are required under CI: the
  hooks of tests/optional.py turn a skip into a failure there.
* ``pytester`` runs small inner test sessions (the test of those hooks).
* The per-user cache is never used: ``EXACTSYN_CACHE`` points at a fresh temporary
  directory for the whole session (child processes inherit it), so no test sees or
  writes the user's 4-line class tables.  Tests that need tables build small ones.
"""

import atexit
import os
import shutil
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))

_CACHE = tempfile.mkdtemp(prefix="exactsyn-test-cache-")
os.environ["EXACTSYN_CACHE"] = _CACHE
atexit.register(shutil.rmtree, _CACHE, True)

from optional import pytest_make_collect_report, pytest_runtest_makereport  # noqa: E402, F401  (hooks)

pytest_plugins = ("pytester",)
