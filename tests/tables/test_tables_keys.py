"""Packed keys and the canonical form: kernels, plain definition and checker agree."""

from __future__ import annotations

import random

import numpy as np
from helpers import random_perm

from exactsyn.tables import kernels as K
from exactsyn.tables import keys as perm4
from exactsyn.tables import verify
from exactsyn.tables.gate_keys import gate_set


def _random_keys(n: int, seed: int) -> list[int]:
    rng = random.Random(seed)
    return [perm4.pack(random_perm(rng, 4)) for _ in range(n)]


def test_pack_compose_inverse_follow_the_conventions() -> None:
    p = [3, 0, 1, 2, 7, 4, 5, 6, 11, 8, 9, 10, 15, 12, 13, 14]
    a = list(range(16))
    a[1], a[2] = a[2], a[1]
    k, ka = perm4.pack(p), perm4.pack(a)
    assert perm4.unpack(k) == tuple(p)
    assert perm4.unpack(perm4.compose(k, ka)) == tuple(p[a[i]] for i in range(16))  # a first, then p
    assert perm4.compose(k, perm4.inverse(k)) == perm4.IDENTITY
    arr = np.array([k, ka], dtype=np.uint64)
    assert perm4.pack_rows(perm4.unpack_keys(arr)).tolist() == arr.tolist()


def test_relabelling_moves_gates_like_renaming_their_lines() -> None:
    # Conjugating a gate's permutation by π_σ must give the permutation of the renamed gate.
    gs = gate_set("mixed")
    from exactsyn.tables.gate_keys import relabel_gate

    for g, k in zip(gs.gates, gs.keys, strict=True):
        for sigma in perm4.RELABELLINGS[::5]:
            renamed = relabel_gate(g, sigma)
            assert perm4.pack(renamed.permutation(4)) == perm4.conjugate(k, sigma)


def test_canonical_form_is_invariant_under_all_48_transforms() -> None:
    for k in _random_keys(40, 1):
        members = perm4.class_members(k)
        assert len(members) in (48, 24, 16, 12, 8, 6, 4, 3, 2, 1)
        keys = np.array(list(members), dtype=np.uint64)
        kern = K.canon_many(keys)
        numpy_check = verify.canonical(keys)
        assert set(kern.tolist()) == {perm4.canonical(k)}
        assert np.array_equal(kern, numpy_check)
        # every member is reached by its recorded transform
        for member, (sigma, inverted) in members.items():
            base = perm4.inverse(k) if inverted else k
            assert perm4.conjugate(base, sigma) == member


def test_canonical_form_of_structured_functions() -> None:
    # Products of few gates have large stabilisers: the cases where ties matter.
    gs = gate_set("mct")
    keys = [perm4.IDENTITY, *gs.keys]
    keys += [perm4.compose(a, b) for a in gs.keys[:12] for b in gs.keys]
    arr = np.array(keys, dtype=np.uint64)
    ref = [perm4.canonical(k) for k in keys]
    assert K.canon_many(arr).tolist() == ref
    assert verify.canonical(arr).tolist() == ref
    sizes = K.class_size_counts(K.mix_many(np.unique(np.array(ref, dtype=np.uint64)))).sum(axis=0)
    expected = np.bincount([perm4.class_size(k) for k in sorted(set(ref))], minlength=49)
    assert sizes.tolist() == expected.tolist()


def test_mix_is_a_bijection_and_both_implementations_agree() -> None:
    arr = np.array(_random_keys(500, 2) + [0, 1, 2**64 - 1], dtype=np.uint64)
    mixed = K.mix_many(arr)
    assert np.array_equal(mixed, verify.mix(arr))
    assert np.array_equal(K.unmix_many(mixed), arr)
    assert np.array_equal(verify.unmix(mixed), arr)
    assert int(K.mix_many(np.zeros(1, dtype=np.uint64))[0]) == 0  # 0 marks an empty slot; no permutation is 0


def test_lookup_finds_exactly_the_stored_keys() -> None:
    stored = np.sort(K.mix_many(np.array(_random_keys(3000, 3), dtype=np.uint64)))
    index, shift = K.make_index(stored)
    others = K.mix_many(np.array(_random_keys(3000, 4), dtype=np.uint64))
    assert K.contains_many(stored, index, shift, stored).all()
    assert not K.contains_many(stored, index, shift, others).any()
