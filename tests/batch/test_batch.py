"""Batch jobs and reference tables: class reduction, the results store, engines, bad input.

References outside the code under test: breadth-first tables (exactsyn.tables.bfs, no SAT),
the published 3-line NCT distribution of Shende, Prasad, Markov & Hayes (IEEE TCAD
22(6), 2003), and brute-force orbit enumeration for the class counts.
"""

from __future__ import annotations

import itertools
import json
import math
import os
import random
import signal
import sqlite3
import subprocess
import sys
import time
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from click.testing import CliRunner
from optional import need

from exactsyn.batch.lookup import member_result
from exactsyn.batch.plan import choose_classes, plan_generated
from exactsyn.batch.run import RunOptions, run_batch
from exactsyn.batch.sets import (
    all_functions,
    canonical,
    class_members,
    class_representatives,
    find_transform,
    invert,
    reduction_obstacle,
    relabel,
    transform_circuit,
    transforms,
)
from exactsyn.batch.store import Store
from exactsyn.batch.table import size_table, to_csv
from exactsyn.batch.task import LibraryChoice, Outcome, Task
from exactsyn.batch.workers import DaskEngine, LocalPool
from exactsyn.cli import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import x_gate
from exactsyn.core.library import Library, make_library
from exactsyn.io.jsonio import gate_from_dict
from exactsyn.proof.checker import check_certificate
from exactsyn.sat.encode import EncodingOptions
from exactsyn.sat.options import SearchOptions
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.bfs import optimal_sizes

NCT3 = make_library("nct", 3)
NCT2 = make_library("nct", 2)
# Shende, Prasad, Markov, Hayes, "Synthesis of reversible logic circuits", IEEE TCAD
# 22(6), 2003, Table (optimal NCT circuits for all 3-line functions), gate counts 0..8.
SHENDE_2003_NCT3 = [1, 12, 102, 625, 2780, 8921, 17049, 10253, 577]


def cli(*args: str) -> list[str]:
    return [sys.executable, "-c", "from exactsyn.cli import main; main()", *args]


def rows(store_path: Path) -> list[sqlite3.Row]:
    db = sqlite3.connect(f"file:{store_path}?mode=ro", uri=True)
    db.row_factory = sqlite3.Row
    try:
        return db.execute("SELECT * FROM results").fetchall()
    finally:
        db.close()


def count_rows(store_path: Path) -> int:
    """Rows so far, read while the batch writes (0 before the schema exists)."""
    try:
        return len(rows(store_path)) if store_path.exists() else 0
    except sqlite3.OperationalError:
        return 0


# ------------------------------------------------------------------ class reduction (no solving)
def test_class_sizes_sum_to_all_functions_and_match_brute_force_orbits() -> None:
    for lines in (1, 2, 3):
        reps = class_representatives(lines)
        assert sum(size for _, size in reps) == math.factorial(1 << lines)
    # Independent count: walk every 3-line function, build its orbit by applying the
    # 12 transforms one by one, and count distinct orbits.
    seen: set[tuple[int, ...]] = set()
    orbits: dict[tuple[int, ...], int] = {}
    for p in all_functions(3):
        if p in seen:
            continue
        orbit = set(class_members(p))
        seen |= orbit
        orbits[min(orbit)] = len(orbit)
    assert dict(class_representatives(3)) == orbits
    # Burnside's lemma, with the group written out here: the 3! relabellings of the lines
    # (conjugation by the induced permutation of the 8 states), each with or without
    # inversion; the number of classes is the average number of functions a group element fixes.
    group_fixed = 0
    for order in itertools.permutations(range(3)):
        s = [sum((x >> i & 1) << order[i] for i in range(3)) for x in range(8)]
        s_inv = [s.index(x) for x in range(8)]
        for p in itertools.permutations(range(8)):
            conj = tuple(s[p[s_inv[x]]] for x in range(8))
            inv = [0] * 8
            for x, y in enumerate(conj):
                inv[y] = x
            group_fixed += (conj == p) + (tuple(inv) == p)
    assert len(orbits) == group_fixed // 12 and group_fixed % 12 == 0


def test_expanded_class_table_equals_the_plain_one_and_the_published_one() -> None:
    table = optimal_sizes(NCT3)  # breadth-first, no SAT
    expanded = [0] * 9
    for rep, size in class_representatives(3):
        expanded[table.size(rep)] += size
    assert expanded == table.distribution() == SHENDE_2003_NCT3
    # and every member of a class has the representative's optimum
    for rep, _ in class_representatives(3)[::37]:
        assert {table.size(m) for m in class_members(rep)} == {table.size(rep)}


def test_representative_circuit_turns_into_a_minimal_circuit_for_every_member() -> None:
    table = optimal_sizes(NCT3)
    rng = random.Random(5)
    for _ in range(60):
        member = tuple(rng.sample(range(8), 8))
        rep, t = canonical(member)
        assert rep == min(class_members(member))
        circuit = transform_circuit(table.circuit(rep), t)  # rep's circuit, transformed
        assert circuit.permutation() == member  # simulated against the member
        assert len(circuit) == table.size(member)
        assert all(NCT3.contains(g) for g in circuit.gates)
        assert find_transform(rep, member).apply(rep) == member


def test_transforms_are_conjugation_and_inversion() -> None:
    # Relabelling lines 0 <-> 1 of a CNOT with control 0 and target 1 gives the CNOT
    # with control 1 and target 0 (common practice: a wire swap).
    cnot01 = x_gate(1, [0]).permutation(2)
    assert relabel(cnot01, (1, 0)) == x_gate(0, [1]).permutation(2)
    p = (1, 2, 3, 0)
    assert invert(p) == (3, 0, 1, 2)
    assert len(transforms(3)) == 12 and transforms(3)[0].apply(p + (4, 5, 6, 7)) == p + (4, 5, 6, 7)


def test_reduction_is_refused_where_lines_are_not_alike() -> None:
    assert reduction_obstacle(NCT3) is None
    assert reduction_obstacle(make_library("mct", 4)) is None
    assert reduction_obstacle(make_library("mct", 4, 2)) is None
    # A coupling restriction: CNOTs only between neighbouring lines 0-1 and 1-2.
    gates = [x_gate(t) for t in range(3)] + [x_gate(0, [1]), x_gate(1, [0]), x_gate(1, [2]), x_gate(2, [1])]
    chain = Library("chain", 3, tuple(gates))
    reason = reduction_obstacle(chain)
    assert reason is not None and "does not treat every line alike" in reason
    pairs, why = choose_classes(3, chain)
    assert why == reason and len(pairs) == 40320 and {w for _, w in pairs} == {1}
    plan = plan_generated(
        "classes",
        2,
        LibraryChoice(),
        EncodingOptions(),
        library=Library("chain2", 2, (x_gate(0), x_gate(1), x_gate(1, [0]))),
    )
    assert len(plan.items) == 24 and plan.notes and plan.description["reduction"] is None


# ------------------------------------------------------------------ batches through the engines
def _distribution(store_path: Path) -> list[int]:
    with Store(store_path, create=False) as s:
        return size_table(s, s.batch()).distribution()


def test_class_batch_expands_to_the_plain_batch_and_certificates_check(tmp_path: Path) -> None:
    store = tmp_path / "r.sqlite"
    choice = LibraryChoice("nct")
    with Store(store) as s:
        plain = run_batch(s, plan_generated("all", 2, choice, EncodingOptions()), RunOptions(verify=True), LocalPool(2))
        classes = run_batch(s, plan_generated("classes", 2, choice, EncodingOptions()), RunOptions(), LocalPool(2))
        assert plain.all_done and classes.all_done
        assert classes.planned == len(class_representatives(2)) < plain.planned == 24
        assert classes.skipped == classes.planned  # representatives were solved by the plain batch already
        t_plain = size_table(s, s.batch(plain.batch_id))
        t_classes = size_table(s, s.batch(classes.batch_id))
        assert t_plain.distribution() == t_classes.distribution() == optimal_sizes(NCT2).distribution()
        assert t_plain.certified == t_plain.verified == 24
        for r in list(s.batch_rows(plain.batch_id))[:6]:
            assert check_certificate(s.certificate_path(r["certificate"])).ok
        # every member's circuit, derived from its representative's stored circuit
        bfs = optimal_sizes(NCT2)
        derived = 0
        for member in all_functions(2):
            m = member_result(s, s.batch(classes.batch_id), member)
            assert m.circuit is not None and m.circuit.permutation() == member
            assert m.optimum == len(m.circuit) == bfs.size(member)
            assert m.transform.apply(m.representative) == member and m.certificate is not None
            derived += m.representative != member
        assert derived == 24 - len(class_representatives(2))


def test_dask_local_cluster_gives_the_same_table_as_the_process_pool(tmp_path: Path) -> None:
    need("distributed", "dask.distributed: pip install 'exactsyn[cluster]'")
    plan = plan_generated("random", 3, LibraryChoice("nct"), EncodingOptions(), count=16, seed=2)
    tables = []
    for name, engine in (("pool", LocalPool(2)), ("dask", DaskEngine(None, 2))):
        with Store(tmp_path / f"{name}.sqlite") as s:
            summary = run_batch(s, plan, RunOptions(), engine)
            assert summary.all_done, summary.failures
            tables.append(
                (size_table(s, s.batch()).distribution(), {r["key"]: r["optimum"] for r in s.batch_rows(plan.batch_id)})
            )
    assert tables[0] == tables[1]
    bfs = optimal_sizes(NCT3)
    assert sorted(tables[1][1].values()) == sorted(bfs.size(it.spec.outputs) for it in plan.items)


def test_sigkill_then_resume_keeps_every_item_exactly_once(tmp_path: Path) -> None:
    store = tmp_path / "k.sqlite"
    # 300 items: long enough to be caught mid-run at a few milliseconds an item
    args = cli("batch", "--random", "3", "--sample", "300", "--seed", "9", "--store", str(store), "-q", "--jobs", "2")
    proc = subprocess.Popen(args, start_new_session=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 60
    try:
        while time.monotonic() < deadline:
            if count_rows(store) >= 8:
                break
            assert proc.poll() is None, proc.stderr.read() if proc.stderr else ""
            time.sleep(0.002)
    finally:
        os.killpg(proc.pid, signal.SIGKILL)  # the batch and its workers, at once
        proc.wait()
    before = rows(store)
    assert 8 <= len(before) < 300, "the batch was not killed mid-run"
    with Store(store) as s:
        assert s.integrity() == "ok"
    resumed = subprocess.run(args, capture_output=True, text=True, timeout=120)
    assert resumed.returncode == 0, resumed.stderr
    assert f"{len(before)} already finished (skipped)" in resumed.stdout
    after = rows(store)
    keys = [r["key"] for r in after]
    assert len(keys) == len(set(keys)) == 300
    bfs = optimal_sizes(NCT3)
    for r in after:
        assert r["status"] == "done" and r["optimum"] == bfs.size(json.loads(r["outputs"]))
        assert (store.parent / r["certificate"] / "result.json").is_file()
    old = {r["key"]: r["finished"] for r in before}
    assert all(r["finished"] == old[r["key"]] for r in after if r["key"] in old)  # not redone
    assert not [p for p in (tmp_path / "k.sqlite.certs").iterdir() if p.name.startswith(".")]
    for r in after[:4]:
        assert check_certificate(store.parent / r["certificate"]).ok


def _worker_pids(parent: int) -> list[int]:
    """The batch's worker processes (spawned children), from /proc."""
    try:
        children = Path(f"/proc/{parent}/task/{parent}/children").read_text().split()
    except OSError:
        return []
    out = []
    for c in children:
        try:
            if b"spawn_main" in Path(f"/proc/{c}/cmdline").read_bytes():
                out.append(int(c))
        except OSError:
            continue
    return out


@pytest.mark.skipif(not Path("/proc/self/task").is_dir(), reason="needs /proc to find the worker processes")
def test_a_worker_killed_mid_batch_costs_only_its_item(tmp_path: Path) -> None:
    store = tmp_path / "w.sqlite"
    args = cli("batch", "--random", "3", "--sample", "300", "--seed", "4", "--store", str(store), "-q", "--jobs", "2")
    proc = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 60
    victim = None
    while victim is None and time.monotonic() < deadline and proc.poll() is None:
        workers = _worker_pids(proc.pid)
        if len(workers) == 2 and count_rows(store) >= 5:
            victim = workers[0]
            os.kill(victim, signal.SIGKILL)  # a worker we started, by its id
        time.sleep(0.002)
    out, err = proc.communicate(timeout=120)
    assert victim is not None, "the batch ended before a worker could be killed"
    assert proc.returncode == 1, err
    after = rows(store)
    assert len(after) == 300
    died = [r for r in after if r["status"] == "failed"]
    assert len(died) == 1 and "worker process died (exit code -9)" in died[0]["reason"]
    assert sum(r["status"] == "done" for r in after) == 300 - len(died)
    again = subprocess.run([*args, "--retry", "failed"], capture_output=True, text=True, timeout=120)
    assert again.returncode == 0 and {r["status"] for r in rows(store)} == {"done"}


def test_local_pool_stops_a_worker_that_holds_an_item_past_the_hard_limit() -> None:
    # A random 6-line function with MCT gates and no time limit of its own: SAT would
    # search for minutes; the pool's hard limit (2 x 1.0 + 0.5 s) stops the worker.
    spec = from_permutation(random.Random(3).sample(range(64), 64))
    task = Task("0" * 64, spec, make_library("mct", 6), SearchOptions(), certificates=False)
    outs: list[Outcome] = []
    started = time.monotonic()
    LocalPool(1, time_limit=1.0, grace=0.5).run([task], outs.append)
    assert len(outs) == 1 and outs[0].status == "timeout", outs
    assert "hard time limit: the worker was stopped" in outs[0].row["reason"]
    assert 2.5 <= time.monotonic() - started < 30


# ------------------------------------------------------------------ bad input, time limits, the CLI
def _write_specs(d: Path) -> None:
    d.mkdir()
    rng = random.Random(4)
    for i in range(6):
        perm = rng.sample(range(8), 8)
        (d / f"f{i}.toml").write_text(f'name = "f{i}"\npermutation = {perm}\n')
    (d / "broken.toml").write_text("permutation = [1, 0, 3\n")  # malformed TOML
    (d / "notperm.toml").write_text("permutation = [0, 0, 1, 2]\n")  # not a permutation
    # an odd permutation on 4 lines: no NCT circuit exists (Shende et al. 2003)
    (d / "odd4.toml").write_text(f"permutation = {[1, 0] + list(range(2, 16))}\n")


def test_bad_specs_among_many_are_recorded_as_failed_and_the_rest_completes(tmp_path: Path) -> None:
    specs, store = tmp_path / "specs", tmp_path / "b.sqlite"
    _write_specs(specs)
    runner = CliRunner()
    args = ["batch", str(specs), "--store", str(store), "-q", "--jobs", "2"]
    first = runner.invoke(main, args)
    assert first.exit_code == 1, first.output
    by_source = {Path(r["source"]).name: r for r in rows(store)}
    assert len(by_source) == 9
    assert all(by_source[f"f{i}.toml"]["status"] == "done" for i in range(6))
    assert "malformed spec file" in by_source["broken.toml"]["reason"]
    assert "not a permutation" in by_source["notperm.toml"]["reason"]
    assert by_source["odd4.toml"]["status"] == "failed" and "no circuit" in by_source["odd4.toml"]["reason"]
    assert "broken.toml" in first.output and "not done (3)" in first.output
    again = runner.invoke(main, args)
    assert again.exit_code == 1 and "7 already finished" in again.output and len(rows(store)) == 9
    (specs / "broken.toml").write_text("permutation = [1, 0, 3, 2, 4, 5, 6, 7]\n")
    (specs / "notperm.toml").unlink()
    (specs / "odd4.toml").unlink()
    fixed = runner.invoke(main, args)
    assert fixed.exit_code == 0, fixed.output
    with Store(store) as s:
        t = size_table(s, s.batch())
    assert t.total == t.optimal == 7 and t.failed == 0


def test_time_limit_records_the_interval_and_the_table_shows_it(tmp_path: Path) -> None:
    store = tmp_path / "t.sqlite"
    hard = random.Random(8).sample(range(16), 16)  # a random 4-line function: far more than 1 ms of search
    specs = tmp_path / "s"
    specs.mkdir()
    (specs / "hard.toml").write_text(f"permutation = {hard}\n")
    (specs / "easy.toml").write_text(f"permutation = {list(range(16))}\n")  # the identity: 0 gates
    runner = CliRunner()
    args = ["batch", str(specs), "--store", str(store), "--library", "mct", "--time-limit", "0.001", "-q"]
    res = runner.invoke(main, args)
    assert res.exit_code == 1 and "timeout" in res.output, res.output
    by = {Path(r["source"]).name: r for r in rows(store)}
    assert by["easy.toml"]["status"] == "done" and by["easy.toml"]["optimum"] == 0
    h = by["hard.toml"]
    assert h["status"] == "timeout" and h["optimum"] is None and 1 <= h["lower_bound"] < h["upper_bound"]
    assert "optimum lies in" in h["reason"]
    # the heuristic circuit is kept: it computes the function, with upper_bound gates
    kept = Circuit(4, tuple(gate_from_dict(g) for g in json.loads(h["circuit"])))
    assert list(kept.permutation()) == hard and len(kept) == h["upper_bound"]
    tab = runner.invoke(main, ["table", "--store", str(store)])
    assert tab.exit_code == 0 and f"optimum in [{h['lower_bound']}, {h['upper_bound']}]: 1" in tab.output


def test_table_writes_csv_json_and_charts(tmp_path: Path) -> None:
    store = tmp_path / "c.sqlite"
    runner = CliRunner()
    run = runner.invoke(main, ["batch", "--classes", "2", "--store", str(store), "-q", "--no-certificates"])
    assert run.exit_code == 0, run.output
    out = tmp_path / "out"
    res = runner.invoke(
        main, ["table", "--store", str(store), "--csv", f"{out}.csv", "--json", f"{out}.json", "--chart", str(out)]
    )
    assert res.exit_code == 0, res.output
    expected = optimal_sizes(NCT2).distribution()
    csv_rows = [line.split(",") for line in Path(f"{out}.csv").read_text().split()[1:]]
    assert [int(c) for _, c in csv_rows] == expected
    data = json.loads(Path(f"{out}.json").read_text())
    assert [d["functions"] for d in data["distribution"]] == expected and data["certified"] == 0
    assert data["average"] == pytest.approx(sum(k * c for k, c in enumerate(expected)) / 24)
    assert Path(f"{out}.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert ET.parse(f"{out}.svg").getroot().tag.endswith("svg")
    with Store(store) as s:
        assert to_csv(size_table(s, s.batch())).startswith("gates,functions\n")


def test_bad_command_lines_exit_2_with_one_line(tmp_path: Path) -> None:
    runner = CliRunner()
    not_store = tmp_path / "x.sqlite"
    not_store.write_text("hello")
    for args in (
        ["batch", str(tmp_path / "missing.toml"), "--store", str(tmp_path / "a.sqlite")],
        ["batch", "--every", "2", "--classes", "2", "--store", str(tmp_path / "a.sqlite")],
        ["batch", "--every", "4", "--store", str(tmp_path / "a.sqlite")],
        ["batch", "--every", "2", "--library", "nope", "--store", str(tmp_path / "a.sqlite")],
        ["batch", "--every", "2", "--store", str(not_store)],
        ["table", "--store", str(tmp_path / "none.sqlite")],
    ):
        res = runner.invoke(main, args)
        assert res.exit_code == 2, (args, res.output)
        assert res.output.count("\n") == 1 and res.output.startswith("exactsyn: error: "), res.output


def test_verify_pass_rechecks_stored_certificates_and_rejects_a_tampered_one(tmp_path: Path) -> None:
    store = tmp_path / "v.sqlite"
    runner = CliRunner()
    base = ["batch", "--random", "3", "--sample", "6", "--seed", "1", "--store", str(store), "-q"]
    assert runner.invoke(main, base).exit_code == 0
    assert {r["verified"] for r in rows(store)} == {None}
    victim = max(rows(store), key=lambda r: r["optimum"])
    cert = store.parent / victim["certificate"] / "result.json"
    data = json.loads(cert.read_text())
    data["circuit"], data["gate_count"] = data["circuit"][:-1], data["gate_count"] - 1  # a false, shorter claim
    cert.write_text(json.dumps(data))
    res = runner.invoke(main, [*base, "--verify"])
    assert res.exit_code == 1 and "6 of them certificate re-checks only" in res.output, res.output
    by_key = {r["key"]: r for r in rows(store)}
    assert by_key[victim["key"]]["status"] == "failed" and "certificate rejected" in by_key[victim["key"]]["reason"]
    assert by_key[victim["key"]]["optimum"] == victim["optimum"]  # the row is kept, only marked
    assert sum(r["verified"] == 1 for r in by_key.values()) == 5
    again = runner.invoke(main, [*base, "--verify", "--retry", "failed"])
    assert again.exit_code == 0, again.output
    assert {r["verified"] for r in rows(store)} == {1}
    # a re-solved item's certificate may get a new directory; its row names the one that is there
    again_row = {r["key"]: r for r in rows(store)}[victim["key"]]
    assert check_certificate(store.parent / again_row["certificate"]).ok
    assert not cert.parent.exists() or cert.parent == store.parent / again_row["certificate"]


def test_cheap_bounds_give_lrat_certificates_for_every_refuted_k(tmp_path: Path) -> None:
    store = tmp_path / "l.sqlite"
    args = ["batch", "--random", "3", "--sample", "5", "--seed", "2", "--store", str(store), "-q", "--bounds", "cheap"]
    assert CliRunner().invoke(main, args).exit_code == 0
    bfs = optimal_sizes(NCT3)
    for r in rows(store):
        cert = store.parent / r["certificate"]
        data = json.loads((cert / "result.json").read_text())
        refuted = sorted(q["k"] for q in data["queries"] if q["status"] == "unsat")
        assert refuted == list(range(data["initial_bound"]["value"], r["optimum"]))
        assert all((cert / q["proof"]).is_file() for q in data["queries"] if q["status"] == "unsat")
        assert r["optimum"] == bfs.size(json.loads(r["outputs"])) and check_certificate(cert).ok
