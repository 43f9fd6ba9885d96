"""Small class tables built once per test session in a temporary cache directory."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from exactsyn import tables

# Depths kept small so the CI suite stays fast (each builds in seconds once numba has
# compiled the kernels); the full tables are exercised under @pytest.mark.slow.
SMALL_DEPTH = {"mct": 6, "nct": 5, "mixed": 4, "mct-layers": 3}


@pytest.fixture(scope="session")
def table_cache(tmp_path_factory: pytest.TempPathFactory) -> Path:
    cache = tmp_path_factory.mktemp("tables-cache")
    for library, depth in SMALL_DEPTH.items():
        tables.build(library, depth=depth, cache=cache)
    return cache


@pytest.fixture(scope="session")
def mct6(table_cache: Path) -> tables.Tables:
    return tables.load("mct", cache=table_cache)


@pytest.fixture(scope="session")
def full_cache(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """Where the slow tests find full tables: $EXACTSYN_TEST_TABLES (a cache directory holding
    tables built before, used read-only) or a session directory they are built into."""
    given = os.environ.get("EXACTSYN_TEST_TABLES")
    return Path(given) if given else tmp_path_factory.mktemp("full-tables")
