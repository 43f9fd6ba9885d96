"""Split k-queries: cubes agree with the unsplit query, each refutation checks, the cubes cover."""

from __future__ import annotations

import random

import pytest
from helpers import random_perm

from exactsyn.core.library import make_library
from exactsyn.errors import ExactsynError
from exactsyn.proof.cover import check_coverage
from exactsyn.proof.lrat import check_lrat_extended, prepare
from exactsyn.sat.conquer import CubeJob, CubeOptions, conquer, solve_cube, split_options
from exactsyn.sat.cube_engines import LocalCubes
from exactsyn.sat.cube_split import split_positions, split_query
from exactsyn.sat.encode import encode
from exactsyn.sat.solver import solve
from exactsyn.sat.status import Status
from exactsyn.specification.reversible import from_permutation
from exactsyn.specification.samples import random_library_function
from exactsyn.tables.bfs import optimal_sizes

NCT3 = make_library("nct", 3)
MCT4 = make_library("mct", 4)


def built(library, length: int, seed: int) -> list[int]:  # type: ignore[no-untyped-def]
    return list(random_library_function(library, length, random.Random(seed)))


def test_positions_come_from_both_ends_inwards() -> None:
    assert split_positions(7, 3) == (0, 6, 1)
    assert split_positions(1, 2) == (0,)
    assert split_positions(4, 9) == (0, 3, 1, 2)


def test_cube_counts_of_both_schemes() -> None:
    enc = encode(from_permutation(built(MCT4, 5, 1)), MCT4, 5)
    assert len(split_query(enc, "targets", 2).cubes) == 4 * 4
    assert len(split_query(enc, "gates", 1).cubes) == len(MCT4.gates)
    with pytest.raises(ExactsynError):
        split_query(enc, "lookahead", 2)


def _queries() -> list[tuple[object, int]]:
    """Seeded 3-line (NCT) and 4-line (MCT) queries just below and at the optimum."""
    out: list[tuple[object, int]] = []
    sizes = optimal_sizes(NCT3)  # breadth-first search, independent of SAT
    rng = random.Random(16)
    for _ in range(4):
        perm = random_perm(rng, 3)
        d = sizes.size(perm)
        if d >= 2:
            out += [((perm, NCT3), d - 1), ((perm, NCT3), d)]
    perm = built(MCT4, 6, 3)
    out += [((perm, MCT4), k) for k in (5, 6)]
    return out


@pytest.mark.parametrize("scheme", ["targets", "gates"])
def test_cubes_agree_with_the_unsplit_query_and_their_refutations_check(scheme: str) -> None:
    seen = {Status.SAT: 0, Status.UNSAT: 0}
    proofs: dict[str, bytes] = {}

    def sink(stem: str, proof: bytes) -> str:
        proofs[stem] = proof
        return stem

    for (perm, library), k in _queries():
        if scheme == "gates" and library is MCT4:
            continue  # 32 cubes per 4-line query: the 3-line ones show the scheme
        enc = encode(from_permutation(perm), library, k)  # type: ignore[arg-type]
        whole = solve(enc.clauses).status
        proofs.clear()
        depth = 2 if scheme == "targets" else 1
        options = CubeOptions(1, scheme=scheme, depth=depth)
        won = conquer(enc, options, engine=LocalCubes(1), certify=True, proof_sink=sink, stem=f"k{k:02d}")
        assert won.status == whole, (perm, k)
        seen[whole] += 1
        if whole == Status.SAT:
            assert won.model is not None
            circuit = enc.decode(won.model)
            assert len(circuit) == k and circuit.permutation() == tuple(perm)
            continue
        base = prepare(enc.num_vars, enc.clauses)
        cubes = won.split.cubes
        assert [c.status for c in cubes] == [Status.UNSAT] * len(cubes)
        for cube in cubes:  # each cube's own refutation, of the CNF followed by the cube's clauses
            assert cube.proof is not None
            assert check_lrat_extended(base, cube.clauses, proofs[cube.proof]).ok
        assert check_coverage(enc.clauses, [c.clauses for c in cubes]).ok
        # A proof of one cube is not a proof of another (they refute different formulas).
        a, b = cubes[0], cubes[-1]
        assert a.proof is not None and not check_lrat_extended(base, b.clauses, proofs[a.proof]).ok
    assert seen[Status.SAT] >= 3 and seen[Status.UNSAT] >= 3


def test_a_worker_with_another_encoding_fails_loudly() -> None:
    enc = encode(from_permutation(built(MCT4, 4, 2)), MCT4, 3)
    job = CubeJob(enc.spec, enc.library, 3, enc.options, "0" * 64, 0, ((enc.gate_vars[0][0],),), False, "cadical195",
                  None)  # fmt: skip
    out = solve_cube(job)
    assert out.status == "error" and "differs" in out.error


def test_local_worker_processes_give_the_same_answers() -> None:
    perm = built(MCT4, 6, 3)
    for k in (5, 6):
        enc = encode(from_permutation(perm), MCT4, k)
        one = conquer(enc, CubeOptions(1), engine=LocalCubes(1), certify=False)
        two = conquer(enc, CubeOptions(2), engine=LocalCubes(2), certify=False)
        assert one.status == two.status == solve(enc.clauses).status


def test_split_modes() -> None:
    assert split_options("auto", 2) is None  # two jobs: the race, as before
    assert split_options("auto", 4) == CubeOptions(4)
    assert split_options("auto", 1, "tcp://127.0.0.1:1") is not None
    assert split_options("cubes", 1) == CubeOptions(1)
    assert split_options("off", 8) is None
    with pytest.raises(ExactsynError):
        split_options("race", 2, "tcp://127.0.0.1:1")
    with pytest.raises(ExactsynError):
        split_options("sometimes", 2)
