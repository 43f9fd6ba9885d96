"""The faster paths of the class tables give what the plain ones give.

References: a walk down the levels written out here with one key composed at a time (plain
permutation composition, the first library step that goes one level down), the parallel
kernels on whole arrays against the same kernels on short pieces (which run on one thread),
and packing one permutation at a time (``KeyLayout.pack``) against ``pack_rows``.
"""

from __future__ import annotations

import random
from pathlib import Path

import numpy as np
import pytest

from exactsyn import tables
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.tables.kernels import ONE_THREAD_BELOW
from exactsyn.tables.keys import layout


@pytest.fixture(scope="module")
def small_tables(tmp_path_factory: pytest.TempPathFactory) -> Path:
    cache = tmp_path_factory.mktemp("walk-tables")
    tables.build("mct", depth=4, cache=cache, lines=3)
    tables.build("mct", depth=2, cache=cache, lines=5)
    return cache


def _plain_walk(table: tables.Tables, perm: tuple[int, ...]) -> list[int]:
    steps = [table.layout.unpack(k) for k in table.gates.keys]
    out: list[int] = []
    x = perm
    level = table.level_of(x)
    assert level is not None
    for j in range(level, 0, -1):
        for g, step in enumerate(steps):
            y = tuple(step[v] for v in x)
            if table.level_of(y) == j - 1:
                out.append(g)
                x = y
                break
    assert x == tuple(range(len(perm)))
    return out[::-1]


@pytest.mark.parametrize(("lines", "gates"), [(3, 4), (5, 2)])
def test_the_walk_takes_the_steps_a_plain_walk_takes(small_tables: Path, lines: int, gates: int) -> None:
    table = tables.load("mct", cache=small_tables, lines=lines)
    lib = make_library("mct", lines)
    lay = table.layout
    rng = random.Random(lines)
    for _ in range(12):
        perm = Circuit(lines, tuple(lib.gates[rng.randrange(len(lib))] for _ in range(gates))).permutation()
        level = table.level_of(perm)
        assert level is not None
        assert table._walk(lay.pack(perm), level) == _plain_walk(table, perm)


@pytest.mark.parametrize("lines", [3, 4, 5])
def test_short_arrays_on_one_thread_equal_the_parallel_kernels(lines: int) -> None:
    lay = layout(lines)
    rng = np.random.default_rng(lines)
    count = ONE_THREAD_BELOW + 100 if lines < 5 else ONE_THREAD_BELOW + 10
    rows = np.array([rng.permutation(1 << lines) for _ in range(count)])
    keys = lay.pack_rows(rows)
    assert lay.ints(keys[:50]) == [lay.pack([int(v) for v in r]) for r in rows[:50]]
    K = lay.kernels()
    whole = K.mix_many(K.canon_many(keys))  # at least ONE_THREAD_BELOW items: all threads
    pieces = np.concatenate([K.mix_many(K.canon_many(keys[i : i + 97])) for i in range(0, count, 97)])
    assert np.array_equal(whole, pieces)
    assert np.array_equal(
        K.unmix_many(whole), np.concatenate([K.unmix_many(whole[i : i + 97]) for i in range(0, count, 97)])
    )
