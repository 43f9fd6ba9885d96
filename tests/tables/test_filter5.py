"""The profile filter of long 5-line scans (exactsyn.tables.filter5): a class invariant, and a
filtered scan that answers exactly as the plain one.

References: the 240 transforms of a function written out in plain Python (relabellings by
``KeyLayout.conjugate`` and inversion, no kernels), and the plain scan kernel on a depth-3
table, whose hits the test also re-derives by composing and looking up in Python.
"""

from __future__ import annotations

import random
from pathlib import Path

import numpy as np
import pytest
from helpers import random_perm

from exactsyn import tables
from exactsyn.core.library import make_library
from exactsyn.specification.samples import random_library_function
from exactsyn.tables import deep, filter5
from exactsyn.tables.keys import layout

L5 = layout(5)


def _hashes(keys: list[int]) -> list[int]:
    K = L5.kernels()
    mixed = K.mix_many(L5.array(keys))
    out = np.empty(len(keys), dtype=np.uint64)
    filter5._hashes(mixed, 0, len(keys), out)
    return [int(v) for v in out]


def _transforms(f: int) -> list[int]:
    return [L5.conjugate(g, s) for g in (f, L5.inverse(f)) for s in L5.relabellings]


@pytest.fixture(scope="module")
def five_cache(tmp_path_factory: pytest.TempPathFactory) -> Path:
    cache = tmp_path_factory.mktemp("tables-5-filter")
    tables.build("mct", depth=3, cache=cache, lines=5)
    return cache


def test_the_invariant_is_the_same_for_all_240_transforms() -> None:
    rng = random.Random(5)
    lib = make_library("mct", 5)
    funcs = [L5.pack(random_perm(rng, 5)) for _ in range(6)]
    funcs += [L5.pack(random_library_function(lib, k, rng)) for k in (1, 2, 3, 6)]
    seen = set()
    for f in funcs:
        members = _transforms(f)
        assert len(members) == 240
        hashes = set(_hashes(members))
        assert len(hashes) == 1, "a transform changed the invariant"
        seen |= hashes
    assert len(seen) == len(funcs)  # and it tells these ten functions apart


def test_every_member_of_every_class_of_a_level_passes_its_filter(five_cache: Path) -> None:
    t = tables.load("mct", cache=five_cache, lines=5)
    level = t.levels[3]
    bits, shift = filter5.build(level.vals)
    assert filter5.filter_bits(len(level.vals)) == 64 - shift
    reps = L5.ints(L5.kernels().unmix_many(level.vals))
    rng = random.Random(9)
    members = []
    for a in rng.sample(reps, 300):
        g = L5.inverse(a) if rng.random() < 0.5 else a
        members.append(L5.conjugate(g, rng.choice(L5.relabellings)))
    for h in _hashes(members):
        j = h >> shift
        assert (int(bits[j >> 6]) >> (j & 63)) & 1, "a member of the level is filtered out"
    # and the filter is selective: random functions mostly miss it
    far = _hashes([L5.pack(random_perm(rng, 5)) for _ in range(300)])
    assert sum((int(bits[h >> shift >> 6]) >> ((h >> shift) & 63)) & 1 for h in far) < 60


def _hits_in_python(t: tables.Tables, reps: list[int], f: int, top: int) -> list[bool]:
    """Does some member ``m`` of each class have ``f∘m⁻¹`` in level ``top``?  Written out."""
    rests, owner = [], []
    for i, a in enumerate(reps):
        for m in {L5.conjugate(g, s) for g in (a, L5.inverse(a)) for s in L5.relabellings}:
            rests.append(L5.compose(f, L5.inverse(m)))
            owner.append(i)
    levels = t.levels_of(L5.array(rests), [top])
    found = [False] * len(reps)
    for i, lv in zip(owner, levels, strict=True):
        found[i] |= bool(lv == top)
    return found


def test_the_filtered_scan_answers_as_the_plain_scan(five_cache: Path) -> None:
    t = tables.load("mct", cache=five_cache, lines=5)
    K = L5.kernels()
    top = t.levels[3]
    rng = random.Random(11)
    lib = make_library("mct", 5)
    targets = [L5.pack(random_library_function(lib, k, rng)) for k in (4, 5, 5, 6, 6, 8)]
    targets.append(L5.pack(random_perm(rng, 5)))
    total_hits = 0
    for f in targets:
        fkeys, _ = t._conjugates([f])
        for level in (1, 2, 3):
            reps = t.levels[level].vals
            plain = np.empty(len(reps), dtype=np.int64)
            filtered = np.empty(len(reps), dtype=np.int64)
            K.scan(reps, 0, len(reps), fkeys, top.vals, top.index, top.shift, plain)
            K.scan(reps, 0, len(reps), fkeys, top.vals, top.index, top.shift, filtered, filtered=True)
            assert np.array_equal(plain, filtered)
            total_hits += int((plain >= 0).sum())
            if level == 2:  # the plain scan itself against the definition
                want = _hits_in_python(t, L5.ints(K.unmix_many(reps)), f, 3)
                assert [bool(v >= 0) for v in plain] == want
    assert total_hits > 0  # the comparison saw hits, not only misses


def test_synthesis_with_the_filter_forced_gives_the_same_answers(
    five_cache: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    t = tables.load("mct", cache=five_cache, lines=5)
    lib = make_library("mct", 5)
    perms = [random_library_function(lib, k, random.Random(300 + k)) for k in (5, 6, 7, 8)]
    plain = [t.synthesise(p) for p in perms]
    assert not deep.worth_filter(len(t.levels[3].vals), 120)  # a depth-3 table: never by default
    monkeypatch.setattr(deep, "FILTER_LANES", 0)
    assert deep.worth_filter(1, 1)
    forced = [t.synthesise(p) for p in perms]
    for a, b in zip(plain, forced, strict=True):
        assert (a.optimal, a.lower_bound, a.gate_count, a.method) == (b.optimal, b.lower_bound, b.gate_count, b.method)
    assert any(a.optimal and a.method.startswith("meet in the middle") for a in plain)
