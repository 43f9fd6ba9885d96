"""Skipping scans that found nothing on unchanged gates changes no result.

Reference: the optimiser with the skipping switched off (every scan repeated in every
round, as before it existed) must give the very same output circuit, gate for gate.
"""

from __future__ import annotations

import random

import pytest

from exactsyn.optimise import optimise_circuit
from exactsyn.optimise.revisit import Revisits
from exactsyn.specification.samples import random_circuit


@pytest.mark.parametrize(("lines", "gates", "seed", "window"), [(6, 300, 1, 3), (12, 400, 2, 3), (8, 250, 3, 4)])
def test_the_same_output_with_and_without_skipping(
    lines: int, gates: int, seed: int, window: int, monkeypatch: pytest.MonkeyPatch
) -> None:
    circuit = random_circuit(lines, gates, random.Random(seed), max_controls=2)  # NCT gates
    skipping = optimise_circuit(circuit, window=window)
    monkeypatch.setattr(Revisits, "unchanged", lambda self, seed, forward, width: False)
    every = optimise_circuit(circuit, window=window)
    assert skipping.output.gates == every.output.gates
    assert skipping.output.gate_count < circuit.gate_count
    assert skipping.windows_tried < every.windows_tried  # scans were skipped


def test_occurrences_follow_a_replacement_and_an_edit_invalidates_a_scan() -> None:
    r = Revisits(8)
    r.found_nothing(1, True, 3, 5)  # looked at positions 1..4
    r.found_nothing(6, False, 3, 3)  # looked at positions 6, 5, 4
    assert r.unchanged(1, True, 3) and r.unchanged(6, False, 3)
    assert not r.unchanged(1, True, 2) and not r.unchanged(1, False, 3)
    # positions 5..7 (occurrences 5, 6, 7) become: old 7, one new gate, old 5 (6 is dropped)
    r.splice(5, 8, [7], 1, [5])
    assert r.occ == [0, 1, 2, 3, 4, 7, 8, 5]
    assert r.unchanged(1, True, 3)  # positions 1..4 untouched
    assert not r.unchanged(6, False, 3)  # its seed occurrence is now elsewhere
    r.splice(2, 3, [], 1, [])  # position 2 gets a new gate
    assert not r.unchanged(1, True, 3)


def test_a_scan_that_reached_the_end_needs_the_same_end() -> None:
    r = Revisits(4)
    r.found_nothing(2, True, 3, 4)  # reached the end at 4
    assert r.unchanged(2, True, 3)
    r.splice(4, 4, [], 1, [])  # a gate appended after the end
    assert not r.unchanged(2, True, 3)
