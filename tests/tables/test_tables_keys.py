"""Packed keys and the canonical form: kernels, plain definition and checker agree, for 2, 3 and 4 lines
(5 lines: tests/tables/test_tables_five.py)."""

from __future__ import annotations

import itertools
import random

import numpy as np
import pytest
from helpers import random_perm

from exactsyn.tables import kernels
from exactsyn.tables.gate_keys import gate_set, relabel_gate
from exactsyn.tables.keys import KeyLayout, engine_lines, layout
from exactsyn.tables.verify_keys import check_keys
from exactsyn.tables.verify_keys import mix as check_mix
from exactsyn.tables.verify_keys import unmix as check_unmix

L4 = layout(4)


def _plain_canonical(p: list[int], lines: int) -> int:
    """The definition written out: the least key Σ g[i]·2^(n·i) over g = π_σ∘f∘π_σ⁻¹ for every
    relabelling σ of the lines and f ∈ {p, p⁻¹}, π_σ moving bit l of a state to bit σ[l]."""
    size = 1 << lines
    inverse = [0] * size
    for i, v in enumerate(p):
        inverse[v] = i
    keys = []
    for f in (p, inverse):
        for sigma in itertools.permutations(range(lines)):
            pi = [sum(((x >> line) & 1) << sigma[line] for line in range(lines)) for x in range(size)]
            g = [0] * size
            for x in range(size):
                g[pi[x]] = pi[f[x]]
            keys.append(sum(v << (lines * i) for i, v in enumerate(g)))
    return min(keys)


def _random_keys(lay: KeyLayout, n: int, seed: int) -> list[int]:
    rng = random.Random(seed)
    return [lay.pack(random_perm(rng, lay.lines)) for _ in range(n)]


def test_the_4_line_layout_packs_nibbles_as_before() -> None:
    # The 4-line key is Σ p[i]·16^i (nibble i holds p[i]): the format of the existing
    # tables, caches and certificates.  Literal formula here, not the layout's code.
    rng = random.Random(7)
    for _ in range(50):
        p = random_perm(rng, 4)
        literal = sum(v * 16**i for i, v in enumerate(p))
        assert L4.pack(p) == literal and L4.unpack(literal) == tuple(p)
        assert L4.array([literal]).tolist() == [literal] and L4.array([literal]).dtype == np.uint64
    assert L4.identity == 0xFEDCBA9876543210
    assert L4.hex(L4.identity) == "fedcba9876543210"  # the manifests' gate_keys spelling
    assert (L4.words, L4.symmetries, L4.format) == (1, 48, "exactsyn-tables4")


@pytest.mark.parametrize("lines", [2, 3, 4, 5])
def test_pack_compose_inverse_follow_the_conventions(lines: int) -> None:
    lay = layout(lines)
    rng = random.Random(lines)
    p, a = random_perm(rng, lines), random_perm(rng, lines)
    k, ka = lay.pack(p), lay.pack(a)
    assert k == sum(v << (lines * i) for i, v in enumerate(p))  # entry i at bits n·i
    assert lay.unpack(k) == tuple(p)
    assert lay.unpack(lay.compose(k, ka)) == tuple(p[a[i]] for i in range(lay.size))  # a first, then p
    assert lay.compose(k, lay.inverse(k)) == lay.identity
    arr = lay.array([k, ka])
    assert arr.shape == ((2,) if lines <= 4 else (2, lay.words))
    assert lay.ints(arr) == [k, ka]
    assert lay.unpack_keys(arr).tolist() == [list(p), list(a)]
    assert lay.ints(lay.pack_rows(lay.unpack_keys(arr))) == [k, ka]


def test_relabelling_moves_gates_like_renaming_their_lines() -> None:
    # Conjugating a gate's permutation by π_σ must give the permutation of the renamed gate.
    for lines in (3, 4):
        gs = gate_set("mixed", lines)
        for g, k in zip(gs.gates, gs.keys, strict=True):
            for sigma in gs.layout.relabellings[::5]:
                renamed = relabel_gate(g, sigma)
                assert gs.layout.pack(renamed.permutation(lines)) == gs.layout.conjugate(k, sigma)


@pytest.mark.parametrize("lines", [2, 3, 4])
def test_canonical_form_is_invariant_under_all_transforms(lines: int) -> None:
    lay = layout(lines)
    K = lay.kernels()
    for k in _random_keys(lay, 40, lines):
        members = lay.class_members(k)
        assert lay.symmetries % len(members) == 0
        plain = _plain_canonical(list(lay.unpack(k)), lines)
        assert lay.canonical(k) == plain
        keys = lay.array(members)
        kern = K.canon_many(keys)
        assert set(lay.ints(kern)) == {plain}
        assert np.array_equal(kern, check_keys(lines).canonical(keys))
        # every member is reached by its recorded transform
        for member, (sigma, inverted) in members.items():
            base = lay.inverse(k) if inverted else k
            assert lay.conjugate(base, sigma) == member


@pytest.mark.parametrize("lines", [2, 3, 4])
def test_canonical_form_of_structured_functions(lines: int) -> None:
    # Products of few gates have large stabilisers: the cases where ties matter.
    gs = gate_set("mct", lines)
    lay, K = gs.layout, gs.layout.kernels()
    keys = [lay.identity, *gs.keys]
    keys += [lay.compose(a, b) for a in gs.keys[:12] for b in gs.keys]
    arr = lay.array(keys)
    ref = [lay.canonical(k) for k in keys]
    assert lay.ints(K.canon_many(arr)) == ref
    assert check_keys(lines).canonical(arr).tolist() == ref
    classes = sorted(set(ref))
    sizes = K.class_size_histogram(K.mix_many(lay.array(classes)))
    expected = np.bincount([lay.class_size(k) for k in classes], minlength=lay.symmetries + 1)
    assert sizes.tolist() == expected.tolist()
    _, check_sizes = check_keys(lines).canonical_and_size(lay.array(classes))
    assert check_sizes.tolist() == [lay.class_size(k) for k in classes]


def test_the_kernels_are_specialised_per_line_count() -> None:
    assert engine_lines() == (2, 3, 4, 5)
    assert layout(3).kernels() is layout(3).kernels() and layout(3).kernels() is not L4.kernels()
    # the walk of adjacent transpositions reaches every relabelling (Steinhaus–Johnson–Trotter)
    for lines in (2, 3, 4):
        seq = kernels.constants(lines)[1]
        order, seen = list(range(lines)), {tuple(range(lines))}
        for a in seq:
            order[a], order[a + 1] = order[a + 1], order[a]
            seen.add(tuple(order))
        assert len(seq) + 1 == len(seen) == len(layout(lines).relabellings)


def test_mix_is_a_bijection_and_both_implementations_agree() -> None:
    K = L4.kernels()
    arr = np.array(_random_keys(L4, 500, 2) + [0, 1, 2**64 - 1], dtype=np.uint64)
    mixed = K.mix_many(arr)
    assert np.array_equal(mixed, check_mix(arr))
    assert np.array_equal(K.unmix_many(mixed), arr)
    assert np.array_equal(check_unmix(mixed), arr)
    assert int(K.mix_many(np.zeros(1, dtype=np.uint64))[0]) == 0  # 0 marks an empty slot; no permutation is 0


def test_lookup_finds_exactly_the_stored_keys() -> None:
    K = L4.kernels()
    stored = np.sort(K.mix_many(L4.array(_random_keys(L4, 3000, 3))))
    index, shift = K.make_index(stored)
    others = K.mix_many(L4.array(_random_keys(L4, 3000, 4)))
    assert K.contains_many(stored, index, shift, stored).all()
    assert not K.contains_many(stored, index, shift, others).any()
