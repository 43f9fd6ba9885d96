"""Batches under stress: two processes on one store, kill -9 again and again, full or read-only disks.

The optimum of every stored 3-line function is compared with breadth-first search (no
SAT), every certificate is re-checked, and the store's own integrity check must pass.
"""

from __future__ import annotations

import errno
import json
import os
import random
import re
import signal
import sqlite3
import subprocess
import sys
import time
from collections import Counter
from pathlib import Path

import pytest
from click.testing import CliRunner

from exactsyn.batch.store import Store
from exactsyn.batch.table import size_table
from exactsyn.cli import main
from exactsyn.core.library import make_library
from exactsyn.proof.checker import check_certificate
from exactsyn.tables.bfs import optimal_sizes

NCT3 = make_library("nct", 3)


def cli(*args: str) -> list[str]:
    return [sys.executable, "-m", "exactsyn", *args]


def rows(store: Path) -> list[dict[str, object]]:
    if not store.exists():
        return []
    con = sqlite3.connect(store, timeout=60)
    con.row_factory = sqlite3.Row
    try:
        return [dict(r) for r in con.execute("SELECT * FROM results")]
    except sqlite3.OperationalError:  # no table yet
        return []
    finally:
        con.close()


def members(store: Path) -> Counter[str]:
    con = sqlite3.connect(store, timeout=60)
    try:
        return Counter(b for (b,) in con.execute("SELECT batch FROM members"))
    finally:
        con.close()


def assert_store_exact(store: Path, expected: int) -> None:
    """Every row done, optimum = breadth-first search, each certificate checks, no stray directory."""
    got = rows(store)
    keys = [r["key"] for r in got]
    assert len(keys) == len(set(keys)) == expected
    bfs = optimal_sizes(NCT3)
    used = set()
    for r in got:
        assert r["status"] == "done", r["reason"]
        assert r["optimum"] == bfs.size(json.loads(str(r["outputs"])))
        cert = store.parent / str(r["certificate"])
        assert check_certificate(cert).ok, cert
        used.add(cert.resolve())
    certs = store.with_name(store.name + ".certs")
    leftovers = [p for p in certs.iterdir() if p.resolve() not in used]
    assert not leftovers, leftovers
    with Store(store) as s:
        assert s.integrity() == "ok"


def test_two_processes_run_the_same_batch_on_one_store(tmp_path: Path) -> None:
    store = tmp_path / "same.sqlite"
    args = cli("batch", "--random", "3", "--sample", "80", "--seed", "21", "--store", str(store), "-q", "-j", "1")
    procs = [subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for _ in range(2)]
    outs = [p.communicate(timeout=300) for p in procs]
    for p, (_, err) in zip(procs, outs, strict=True):
        assert p.returncode == 0, err
    assert_store_exact(store, 80)
    assert list(members(store).values()) == [80]  # one batch, each member once
    # the two processes claimed items from the store: together they solved each item once
    ran = [int(re.search(r"this run: (\d+) item", out).group(1)) for out, _ in outs]  # type: ignore[union-attr]
    assert sum(ran) == 80, [out for out, _ in outs]
    assert_no_claims(store)


def assert_no_claims(store: Path) -> None:
    con = sqlite3.connect(store, timeout=60)
    try:
        assert con.execute("SELECT count(*) FROM claims").fetchone()[0] == 0  # every claim given back
    finally:
        con.close()


def test_two_processes_run_overlapping_batches_on_one_store(tmp_path: Path) -> None:
    store = tmp_path / "two.sqlite"
    # the same seed draws the same functions first: the 40 are among the 70 (checked below)
    a = cli("batch", "--random", "3", "--sample", "70", "--seed", "5", "--store", str(store), "-q", "-j", "1")
    b = cli("batch", "--random", "3", "--sample", "40", "--seed", "5", "--store", str(store), "-q", "-j", "1")
    procs = [subprocess.Popen(x, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for x in (a, b)]
    for p in procs:
        out, err = p.communicate(timeout=300)
        assert p.returncode == 0, err
    assert_store_exact(store, 70)
    assert sorted(members(store).values()) == [40, 70]


def test_kill_9_at_random_moments_then_resume_gives_the_exact_table(tmp_path: Path) -> None:
    store = tmp_path / "k.sqlite"
    n = 120
    args = cli("batch", "--random", "3", "--sample", str(n), "--seed", "33", "--store", str(store), "-q", "-j", "2")
    rng = random.Random(2)
    kills = 0
    for _ in range(4):
        proc = subprocess.Popen(args, start_new_session=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
        before = len(rows(store))
        deadline = time.monotonic() + 60
        wait_for = rng.randint(2, 12)  # kill after a few more items, at a random moment
        while time.monotonic() < deadline and proc.poll() is None and len(rows(store)) < before + wait_for:
            time.sleep(rng.uniform(0.0, 0.01))
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
            kills += 1
        proc.wait()
        # after every kill: each stored row points to a complete certificate that checks
        for r in rows(store):
            assert check_certificate(store.parent / str(r["certificate"])).ok
    assert kills >= 2, "the batch finished before it could be killed"
    resumed = subprocess.run([*args, "--verify"], capture_output=True, text=True, timeout=300)
    assert resumed.returncode == 0, resumed.stderr + resumed.stdout
    assert_store_exact(store, n)
    assert_no_claims(store)  # the claims of the killed processes were taken over and given back
    # A kill between placing a certificate and committing its row leaves a directory no row
    # points to (the rename is inside the row's transaction, so never the other way round);
    # the next run sweeps such strays when it starts: none may be left now.
    certs = store.with_name(store.name + ".certs")
    used = {(store.parent / str(r["certificate"])).resolve() for r in rows(store)}
    strays = [d.name for d in certs.iterdir() if d.resolve() not in used]
    assert not strays, strays
    table = CliRunner().invoke(main, ["table", "--store", str(store)])
    assert table.exit_code == 0
    bfs = optimal_sizes(NCT3)
    want = Counter(bfs.size(json.loads(str(r["outputs"]))) for r in rows(store))
    for size, count in want.items():
        assert f"{size:>5}  {count:>10}" in table.stdout, table.stdout


def test_a_claim_is_held_while_its_lease_runs_and_its_process_lives(tmp_path: Path) -> None:
    store = tmp_path / "c.sqlite"
    needs = lambda key, state: state[0] != "done"  # noqa: E731
    with Store(store) as a, Store(store) as b:
        assert a.claim(["k1", "k2"], needs) == {"k1": "claimed", "k2": "claimed"}
        assert b.claim(["k1", "k3"], needs) == {"k1": "held", "k3": "claimed"}
        assert a.claim(["k1"], needs) == {"k1": "claimed"}  # its own claim: renewed
        with a.transaction():  # a process on another host whose lease ran out
            a._db.execute("UPDATE claims SET owner = 'elsewhere:1:x', expires = ? WHERE key = 'k2'", (time.time() - 1,))
        assert b.claim(["k2"], needs) == {"k2": "claimed"}
        with a.transaction():  # a process on this host that is gone (no such process id)
            a._db.execute(
                "UPDATE claims SET owner = ?, expires = ? WHERE key = 'k1'",
                (f"{a.owner.split(':')[0]}:{2**22 + 12345}:x", time.time() + 60),
            )
        assert b.claim(["k1"], needs) == {"k1": "claimed"}
        with a.transaction():  # a live process on another host: held until its lease ends
            a._db.execute(
                "UPDATE claims SET owner = 'elsewhere:1:x', expires = ? WHERE key = 'k3'", (time.time() + 60,)
            )
        assert a.claim(["k3"], needs) == {"k3": "held"}
        b.release_claims()
        assert a.claim(["k1", "k2"], lambda key, state: False) == {"k1": "finished", "k2": "finished"}


def test_a_full_disk_while_writing_certificates_loses_no_stored_result(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    store = tmp_path / "full.sqlite"
    args = ["batch", "--random", "3", "--sample", "12", "--seed", "8", "--store", str(store), "-q", "-j", "1"]
    real = Path.write_bytes
    calls = {"n": 0}

    def full_after_a_few(self: Path, data: bytes) -> int:  # type: ignore[override]
        if ".certs" in str(self):
            calls["n"] += 1
            if calls["n"] > 9:
                raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), str(self))
        return real(self, data)

    monkeypatch.setattr(Path, "write_bytes", full_after_a_few)
    res = CliRunner().invoke(main, args)
    assert res.exit_code == 2, res.output
    line = res.stderr.strip()
    assert line.count("\n") == 0 and "No space left on device" in line and "re-run" in line
    kept = rows(store)
    assert 1 <= len(kept) < 12
    for r in kept:
        assert check_certificate(store.parent / str(r["certificate"])).ok
    monkeypatch.setattr(Path, "write_bytes", real)  # space again: resume
    again = CliRunner().invoke(main, args)
    assert again.exit_code == 0, again.output
    assert_store_exact(store, 12)
    assert {r["finished"] for r in kept} <= {r["finished"] for r in rows(store)}  # kept, not redone


def test_read_only_places_give_one_clear_line_and_write_nothing(tmp_path: Path) -> None:
    # /sys is read-only in containers and for users alike; elsewhere a file stands in for a folder
    blocked = "/sys/exactsyn-test" if not os.access("/sys", os.W_OK) or os.geteuid() == 0 else None
    parent = Path(blocked) if blocked and Path("/sys").is_dir() else tmp_path / "file-not-folder" / "x"
    if parent.parent.name == "file-not-folder":
        parent.parent.write_text("x")
    runner = CliRunner()
    for args in (
        ["synth", "--perm", "1,0,3,2", "-o", str(parent / "c.qasm")],
        ["synth", "--perm", "1,0,3,2", "--certificate", str(parent / "cert")],
        ["batch", "--every", "1", "--store", str(parent / "s.sqlite"), "-q"],
        ["draw", str(tmp_path / "none.json"), "-o", str(parent / "d.svg")],
    ):
        res = runner.invoke(main, args)
        assert res.exit_code == 2, (args, res.output)
        assert res.stderr.count("\n") == 1 and res.stderr.startswith("exactsyn: error: "), res.stderr
    good = tmp_path / "good.sqlite"
    assert runner.invoke(main, ["batch", "--every", "1", "--store", str(good), "-q"]).exit_code == 0
    before = rows(good)
    os.chmod(good, 0o444)
    try:
        if os.access(good, os.W_OK):  # root writes anyway: make the store read-only for SQLite instead
            con = sqlite3.connect(good)
            con.execute("PRAGMA query_only = ON")
            con.close()
        res = runner.invoke(main, ["table", "--store", str(good)])
        assert res.exit_code == 0 and "proven optimal" in res.stdout
    finally:
        os.chmod(good, 0o644)
    assert rows(good) == before


#: Optimal NCT circuit sizes of all 8! reversible 3-line functions, 0..8 gates (Shende, Prasad,
#: Markov & Hayes, "Synthesis of reversible logic circuits", IEEE TCAD 22(6), 2003, Table I).
SHENDE_2003_NCT3 = [1, 12, 102, 625, 2780, 8921, 17049, 10253, 577]


@pytest.mark.slow
def test_soak_three_processes_killed_and_restarted_on_all_3_line_classes(tmp_path: Path) -> None:
    # Three batch processes share one store; five times all three are killed (SIGKILL, at a
    # random number of stored items) and restarted; the last start runs them to the end.
    store = tmp_path / "soak.sqlite"
    args = cli("batch", "--classes", "3", "--library", "nct", "--store", str(store), "-q", "-j", "1")
    rng = random.Random(2003)
    kills = 0
    for _ in range(5):
        procs = [subprocess.Popen(args, start_new_session=True, stdout=subprocess.DEVNULL,
                                  stderr=subprocess.PIPE) for _ in range(3)]
        before, more = len(rows(store)), rng.randint(20, 400)
        deadline = time.monotonic() + 120
        while time.monotonic() < deadline and all(p.poll() is None for p in procs) and len(rows(store)) < before + more:
            time.sleep(rng.uniform(0.05, 0.3))
        for p in procs:
            if p.poll() is None:
                os.killpg(p.pid, signal.SIGKILL)
                kills += 1
            p.wait()
    assert kills >= 12, kills  # the processes were killed mid-batch, not after it
    procs = [subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for _ in range(3)]
    outs = [p.communicate(timeout=1800) for p in procs]
    for p, (out, err) in zip(procs, outs, strict=True):
        assert p.returncode == 0, err + out
    got = rows(store)
    keys = [r["key"] for r in got]
    assert len(keys) == len(set(keys))  # every item stored once
    assert {r["status"] for r in got} == {"done"} and all(r["certificate"] for r in got)
    assert_no_claims(store)
    verified = subprocess.run([*args, "--verify"], capture_output=True, text=True, timeout=1800)
    assert verified.returncode == 0, verified.stderr  # every stored certificate re-checked
    with Store(store) as s:
        assert s.integrity() == "ok"
        assert size_table(s, s.batch(None)).distribution() == SHENDE_2003_NCT3
    for r in rng.sample(got, 20):  # and a sample by the checker directly
        assert check_certificate(store.parent / str(r["certificate"])).ok
