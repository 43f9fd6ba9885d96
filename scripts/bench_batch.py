"""Benchmark of batch jobs: every 3-line function with NCT gates, through `exactsyn batch`
and `exactsyn table`, against the published distribution (Shende, Prasad, Markov, Hayes,
IEEE TCAD 22(6), 2003).  Prints numbers; it is a benchmark-style script, not a test.

    python scripts/bench_batch.py                      # class representatives, certificates, local pool
    python scripts/bench_batch.py --set all            # all 40320 functions, no class reduction
    python scripts/bench_batch.py --engine dask        # through a Dask local cluster on loopback
    python scripts/bench_batch.py --check 200          # and re-check 200 random certificates
"""

from __future__ import annotations

import argparse
import json
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

SHENDE_2003_NCT3 = [1, 12, 102, 625, 2780, 8921, 17049, 10253, 577]


def exactsyn(*args: str) -> subprocess.CompletedProcess[str]:
    cmd = [sys.executable, "-c", "from exactsyn.cli import main; main()", *args]
    return subprocess.run(cmd, capture_output=True, text=True)


def tree_bytes(d: Path) -> tuple[int, int]:
    files = [p for p in d.rglob("*") if p.is_file()]
    return len(files), sum(p.stat().st_size for p in files)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--set", choices=["classes", "all"], default="classes")
    ap.add_argument("--jobs", type=int, default=0, help="worker processes (0 = every core)")
    ap.add_argument("--engine", choices=["local", "dask"], default="local")
    ap.add_argument("--no-certificates", action="store_true")
    ap.add_argument("--check", type=int, default=0, help="re-check this many random certificates afterwards")
    ap.add_argument("--keep", metavar="DIR", help="keep the store in DIR (default: a temporary directory)")
    args = ap.parse_args()

    work = Path(args.keep) if args.keep else Path(tempfile.mkdtemp(prefix="exactsyn-bench-"))
    work.mkdir(parents=True, exist_ok=True)
    store = work / "nct3.sqlite"
    cmd = ["batch", f"--{args.set}", "3", "--library", "nct", "--store", str(store), "-q", "--engine", args.engine]
    if args.jobs:
        cmd += ["--jobs", str(args.jobs)]
    if args.no_certificates:
        cmd.append("--no-certificates")
    print("exactsyn " + " ".join(cmd))
    t0 = time.perf_counter()
    run = exactsyn(*cmd)
    wall = time.perf_counter() - t0
    print(run.stdout.rstrip())
    if run.returncode != 0:
        print(run.stderr.rstrip())
        sys.exit(f"batch exited {run.returncode}")
    t1 = time.perf_counter()
    tab = exactsyn("table", "--store", str(store), "--json", str(work / "nct3.json"), "--chart", str(work / "nct3"))
    table_wall = time.perf_counter() - t1
    print(tab.stdout.rstrip())
    data = json.loads((work / "nct3.json").read_text())
    dist = [d["functions"] for d in data["distribution"]]
    print(f"batch wall time: {wall:.1f} s (command line, including start-up); table: {table_wall:.1f} s")
    print(f"distribution: {dist}")
    print(f"matches Shende et al. 2003: {dist == SHENDE_2003_NCT3}")
    print(f"functions with a certificate: {data['certified']} of {data['optimal']}")
    certs = work / "nct3.sqlite.certs"
    if certs.is_dir():
        n, size = tree_bytes(certs)
        print(f"certificates: {n} files, {size / 1e6:.1f} MB; store file {store.stat().st_size / 1e6:.1f} MB")
    if args.check and certs.is_dir():
        from exactsyn.proof.checker import check_certificate

        dirs = sorted(p for p in certs.iterdir() if p.is_dir() and not p.name.startswith("."))
        sample = random.Random(0).sample(dirs, min(args.check, len(dirs)))
        t2 = time.perf_counter()
        bad = [d for d in sample if not check_certificate(d).ok]
        print(f"re-checked {len(sample)} certificates in {time.perf_counter() - t2:.1f} s: {len(bad)} rejected")
    print(f"store kept in {work}" if args.keep else f"(temporary store in {work})")


if __name__ == "__main__":
    main()
