"""Certificates of split queries: they check, and a missing or altered cube is rejected."""

from __future__ import annotations

import json
import random
import shutil
from pathlib import Path

import pytest
from helpers import edit, rejected
from optional import need

import exactsyn as ex
from exactsyn.core.library import make_library
from exactsyn.proof.certificate import proof_writer, write_result
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.conquer import CubeOptions
from exactsyn.sat.options import Hooks, SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.specification.samples import random_library_function

MCT4 = make_library("mct", 4)


def built(library, length: int, seed: int) -> list[int]:  # type: ignore[no-untyped-def]
    return list(random_library_function(library, length, random.Random(seed)))


PERM = built(MCT4, 6, 3)


@pytest.fixture(scope="module")
def split_cert(tmp_path_factory: pytest.TempPathFactory) -> Path:
    d = tmp_path_factory.mktemp("cubes") / "cert"
    # after=0: every k-query is split at once, so the certificate holds several split queries.
    options = SearchOptions(bounds="cheap", split=CubeOptions(1, after=0.0))
    res = minimise_gates(from_permutation(PERM), MCT4, options, Hooks(proof=proof_writer(d)))
    assert res.optimal and res.circuit is not None
    write_result(d, res)
    return d


@pytest.fixture
def cert(split_cert: Path, tmp_path: Path) -> Path:
    d = tmp_path / "cert"
    shutil.copytree(split_cert, d)
    return d


def split_queries(data: dict) -> list[dict]:  # type: ignore[type-arg]
    return [q for q in data["queries"] if q.get("split") and q["status"] == "unsat"]


def test_split_certificate_checks_and_says_how_coverage_was_shown(cert: Path) -> None:
    rep = check_certificate(cert)
    assert rep.ok, [line for line in rep.lines if not line.ok]
    data = json.loads((cert / "result.json").read_text())
    assert len(split_queries(data)) >= 2
    assert all(q["proof"] is None for q in split_queries(data))
    details = [line.detail for line in rep.lines if line.what.startswith("k=")]
    assert any("cubes cover the query" in d and "by construction" in d for d in details)
    # The unsplit search agrees on the optimum.
    plain = minimise_gates(from_permutation(PERM), MCT4, SearchOptions(bounds="cheap"))
    assert plain.circuit is not None and rep.gate_count == len(plain.circuit)


def test_a_dropped_cube_fails_the_coverage_check(cert: Path) -> None:
    edit(cert, lambda data: split_queries(data)[-1]["split"]["cubes"].pop(3))
    rep = check_certificate(cert)
    assert not rep.ok
    assert any("coverage" in line.detail for line in rep.lines if not line.ok)


def test_an_altered_cube_clause_is_rejected(cert: Path) -> None:
    def drop_a_literal(data: dict) -> None:  # type: ignore[type-arg]
        cube = split_queries(data)[-1]["split"]["cubes"][0]
        cube["clauses"][0] = cube["clauses"][0][:1]  # a stronger cube: its proof may still pass, coverage not

    edit(cert, drop_a_literal)
    assert rejected(cert)


def test_a_cube_refuted_by_another_cubes_proof_is_rejected(cert: Path) -> None:
    def swap_proofs(data: dict) -> None:  # type: ignore[type-arg]
        cubes = split_queries(data)[-1]["split"]["cubes"]
        cubes[0]["proof"], cubes[5]["proof"] = cubes[5]["proof"], cubes[0]["proof"]

    edit(cert, swap_proofs)
    assert rejected(cert)


def test_a_cube_not_marked_refuted_is_rejected(cert: Path) -> None:
    def unknown(data: dict) -> None:  # type: ignore[type-arg]
        split_queries(data)[0]["split"]["cubes"][1]["status"] = "unknown"

    edit(cert, unknown)
    assert rejected(cert)


def test_a_literal_outside_the_formula_is_a_clean_rejection(cert: Path) -> None:
    edit(cert, lambda data: split_queries(data)[0]["split"]["cubes"][0]["clauses"].append([10**6]))
    assert rejected(cert)


def test_dask_local_cluster_gives_the_same_optimum_and_a_checkable_certificate(tmp_path: Path) -> None:
    distributed = need("distributed", "pip install 'dask[distributed]'")
    import logging

    with distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1", dashboard_address=None,
        silence_logs=logging.ERROR,
    ) as cluster:  # fmt: skip
        d = tmp_path / "c"
        split = CubeOptions(2, scheduler=cluster.scheduler_address, after=0.0)  # every query split
        options = SearchOptions(bounds="cheap", split=split)
        res = minimise_gates(from_permutation(PERM), MCT4, options, Hooks(proof=proof_writer(d)))
    write_result(d, res)
    plain = ex.synthesise(PERM, library="mct", bounds="cheap", split="off")
    assert res.optimal and res.circuit is not None and len(res.circuit) == plain.gate_count
    rep = check_certificate(d)
    assert rep.ok, [line for line in rep.lines if not line.ok]
    engines = {q["split"]["engine"] for q in json.loads((d / "result.json").read_text())["queries"] if q.get("split")}
    assert engines and all(e.startswith("Dask scheduler at tcp://127.0.0.1") for e in engines)
