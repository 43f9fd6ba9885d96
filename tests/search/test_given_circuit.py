"""A saved circuit given as the spec is the search's first upper bound.

When the lower bound reaches its size, it is the optimum: here a 5-line function of 8 MCT
gates whose bound 8 comes from a depth-3 class table (every split and every one-gate peel
fails), which neither the table nor a quick SAT search settles alone.  The reference for
"8 is the optimum" is the bound plus the circuit itself, re-simulated here; the reference
for the circuit's function is a plain Python simulation of its gates.
"""

from __future__ import annotations

import json
import random
from pathlib import Path

import pytest
from click.testing import CliRunner

from exactsyn import synthesise, tables
from exactsyn.cli.main import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.io.formats import write_circuit
from exactsyn.specification.samples import random_library_circuit


def _circuit(gates: int, seed: int) -> Circuit:
    """The circuit behind ``random_library_function(mct on 5 lines, gates, Random(seed))``."""
    return random_library_circuit(make_library("mct", 5), gates, random.Random(seed))


def _simulate(c: Circuit) -> tuple[int, ...]:
    out = []
    for x in range(32):
        for g in c.gates:
            if all((x >> q) & 1 for q in g.controls):
                x ^= 1 << g.target
        out.append(x)
    return tuple(out)


@pytest.fixture(scope="module")
def five_cache(tmp_path_factory: pytest.TempPathFactory) -> Path:
    cache = tmp_path_factory.mktemp("tables-5-given")
    tables.build("mct", depth=3, cache=cache, lines=5)
    return cache


def test_a_given_circuit_that_meets_the_bound_is_returned_optimal(
    five_cache: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(five_cache))
    c = _circuit(8, 105)  # seed picked once: bound 8 at depth 3, fallback longer than 8
    assert all(not g.negative_controls and g.family == "x" for g in c.gates)
    perm = _simulate(c)
    assert c.permutation() == perm
    path = write_circuit(c, tmp_path / "eight.qasm")
    syn = synthesise(str(path), library="mct", time_limit=120)
    assert syn.optimal and syn.gate_count == 8
    assert syn.circuit is not None and syn.circuit.permutation() == perm
    claim = syn.gate_result.class_table
    assert claim is not None and claim.value == 8 and not claim.exact  # the table's bound, not its circuit
    assert "given" in syn.gate_result.how
    # the same function as a permutation: no given circuit, so the bound alone does not settle it
    quick = synthesise(list(perm), library="mct", time_limit=3)
    assert quick.gate_result.lower_bound == 8 and "given" not in quick.gate_result.how
    # the command line: the same answer, as JSON
    res = CliRunner().invoke(main, ["synth", str(path), "--library", "mct", "--format", "json", "-q"])
    assert res.exit_code == 0, res.output
    data = json.loads(res.output)
    assert data["optimal"] is True and data["gate_count"] == 8


def test_a_given_circuit_outside_the_library_is_not_used(
    five_cache: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setenv("EXACTSYN_CACHE", str(five_cache))
    c = _circuit(3, 7)
    fours = [g for g in make_library("mct", 5).gates if len(g.controls) == 4]  # two: an even permutation
    wide = Circuit(5, c.gates + (fours[0], fours[1]))
    path = write_circuit(wide, tmp_path / "wide.qasm")
    syn = synthesise(str(path), library="nct", time_limit=8)  # nct has no 4-control gate
    assert syn.circuit is not None and syn.circuit.permutation() == wide.permutation()
    assert all(len(g.controls) <= 2 for g in syn.circuit.gates)
    assert "given" not in syn.gate_result.how


def test_the_table_stops_scanning_when_its_bound_meets_a_known_circuit(five_cache: Path, tmp_path: Path) -> None:
    t = tables.load("mct", cache=five_cache, lines=5)
    p = _circuit(8, 107).permutation()  # seed as in tests/tables/test_tables_five.py: optimum 7, by the peel
    full = t.synthesise(p)
    assert full.optimal and full.gate_count == 7 and "peel" in full.detail and full.gates is not None
    stopped = t.synthesise(p, known=7)  # every split of up to 6 gates failed: at least 7, no peel
    assert not stopped.optimal and stopped.lower_bound == 7 and "peel" not in stopped.detail
    assert stopped.detail["known"] == 7
    assert t.synthesise(p, known=9).gate_count == 7  # a longer known circuit: the table goes on
    # through synth: the table's circuit of 7, saved and given back, is proven by the bound alone
    path = write_circuit(Circuit(5, tuple(full.gates)), tmp_path / "seven.json")
    syn = synthesise(str(path), library="mct", time_limit=120)
    assert syn.optimal and syn.gate_count == 7 and "given" in syn.gate_result.how
    assert syn.circuit is not None and syn.circuit.permutation() == p
