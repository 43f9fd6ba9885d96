"""5-line functions: hashed distance tables against exact breadth-first tables and SAT, split
queries against unsplit ones, and certificates with a 5-line table bound."""

from __future__ import annotations

import json
import random
from pathlib import Path

import numpy as np
import pytest

from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.proof.certificate import proof_writer, write_result
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.conquer import CubeOptions
from exactsyn.sat.options import Hooks, SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.specification.samples import random_library_function
from exactsyn.tables.distance import distance_table
from exactsyn.tables.hashed import hashed_table, row_hash

MCT5 = make_library("mct", 5)


def built(length: int, seed: int) -> list[int]:
    return list(random_library_function(MCT5, length, random.Random(seed)))


def test_hashed_table_holds_exactly_the_breadth_first_ball() -> None:
    # Independent reference: the row-exact breadth-first table of the same depth.
    exact = distance_table(MCT5, 3)
    hashed = hashed_table(MCT5, 3)
    assert len(hashed.keys) == len(exact.rows) == 295_601
    assert np.array_equal(np.sort(row_hash(exact.rows)), hashed.keys)
    by_key = dict(zip(row_hash(exact.rows).tolist(), exact.dist.tolist(), strict=True))
    assert [by_key[k] for k in hashed.keys[:2000].tolist()] == hashed.dist[:2000].tolist()
    assert len(distance_table(MCT5, 1).rows) == 1 + 80  # the identity and the 80 mct gates


def test_equal_rows_equal_keys_and_the_identity_is_found() -> None:
    rows = np.tile(np.arange(32, dtype=np.uint8), (3, 1))
    keys = row_hash(rows)
    assert keys[0] == keys[1] == keys[2]
    with pytest.raises(ExactsynError):
        row_hash(np.zeros((1, 16), dtype=np.uint8))


@pytest.mark.parametrize("seed", [0, 2, 5])
def test_optima_of_5line_functions_built_from_circuits(seed: int) -> None:
    # Built from 4 gates, so the optimum is at most 4.  The split search (cubes on every
    # query, bounds without tables), the unsplit SAT search and the table must agree.
    # (Seeds whose optimum the changed-lines bound settles without a query are skipped.)
    perm = built(4, seed)
    spec = from_permutation(perm)
    split = minimise_gates(spec, MCT5, SearchOptions(bounds="cheap", split=CubeOptions(1, depth=1, after=0.0)))
    plain = minimise_gates(spec, MCT5, SearchOptions(bounds="cheap"))
    table = minimise_gates(spec, MCT5, SearchOptions(bounds="table"))
    assert split.optimal and plain.optimal and table.optimal
    assert split.circuit is not None and plain.circuit is not None and table.circuit is not None
    assert len(split.circuit) == len(plain.circuit) == len(table.circuit) <= 4
    assert any(q.split is not None for q in split.steps)
    assert table.source in ("table", "bound")


def test_certificate_with_a_5line_table_bound_is_rederived(tmp_path: Path) -> None:
    perm = built(6, 7)
    d = tmp_path / "c"
    res = minimise_gates(from_permutation(perm), MCT5, SearchOptions(), Hooks(proof=proof_writer(d)))
    assert res.optimal and res.table_bound is not None and res.table_bound.exact
    write_result(d, res)
    rep = check_certificate(d)
    assert rep.ok and any(line.what == "table" for line in rep.lines)
    data = json.loads((d / "result.json").read_text())
    data["table_bound"]["value"] += 1  # claims more than the table gives
    (d / "result.json").write_text(json.dumps(data))
    assert not check_certificate(d).ok


@pytest.mark.slow  # builds the 4-line window tables of the optimiser (about 10 s)
def test_fallback_is_never_longer_and_still_computes_the_function() -> None:
    from exactsyn.search.fallback import improve_upper, initial_upper

    spec = from_permutation(built(14, 3))
    quick = initial_upper(spec, MCT5, None, None)
    assert quick.circuit is not None
    better = improve_upper(quick, spec, MCT5, None, None)
    assert better.circuit is not None and len(better.circuit) <= len(quick.circuit)
    assert better.circuit.permutation() == spec.permutation
    assert all(MCT5.contains(g) for g in better.circuit.gates)


@pytest.mark.slow  # about a minute: every k from the cheap bound split into 25 cubes on 2 processes
@pytest.mark.parametrize("seed", [1, 4])
def test_split_optima_of_7gate_5line_functions_on_two_workers_equal_the_unsplit_ones(
    seed: int, tmp_path: Path
) -> None:
    # Built from 7 gates, so the optimum is at most 7; the unsplit SAT search decides it
    # independently of the cubes, and the certificate of the split run must check.
    perm = built(7, seed)
    spec = from_permutation(perm)
    plain = minimise_gates(spec, MCT5, SearchOptions(bounds="cheap", jobs=1))
    assert plain.optimal and plain.circuit is not None and len(plain.circuit) <= 7
    cert = tmp_path / "c"
    options = SearchOptions(bounds="cheap", split=CubeOptions(2, depth=2, after=0.0))
    split = minimise_gates(spec, MCT5, options, Hooks(proof=proof_writer(cert)))
    assert split.optimal and split.circuit is not None
    assert len(split.circuit) == len(plain.circuit)
    assert split.circuit.permutation() == tuple(perm)
    assert any(q.split is not None and q.status == "unsat" for q in split.steps)
    write_result(cert, split)
    rep = check_certificate(cert)
    assert rep.ok, [line for line in rep.lines if not line.ok]
