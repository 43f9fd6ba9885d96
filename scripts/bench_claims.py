"""The figures the README states about speed and size, measured as a user meets them.

Prints the load average first (the machine may be shared), then:

* the 4-line distance table of each library, built in a fresh process with an empty
  cache: seconds and the process's peak memory (the README: "2–6 s and up to 0.6 GiB once
  per process");
* ``exactsyn synth`` of seeded random 4-line permutations as fresh commands, start-up and
  printing included, with the class tables of the cache in use (the README: "in 2–4 s as a
  command"); skipped with a note when the cache holds no 4-line tables;
* the size on disk of the cached 4-line class tables, in GB and GiB (the README and
  ``exactsyn tables --help``: about 2.7 GB).

    python scripts/bench_claims.py                 # 5 functions per library
    python scripts/bench_claims.py --n 10 --seed 3
"""

from __future__ import annotations

import argparse
import os
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from exactsyn.specification.samples import random_permutation
from exactsyn.tables.manage import info

DISTANCE = (
    "import resource, sys, time\n"
    "from exactsyn.core.library import make_library\n"
    "from exactsyn.tables.oracle import distance_oracle\n"
    "o = distance_oracle(make_library(sys.argv[1], 4))\n"
    "t = time.perf_counter()\n"
    "depth = o.reach\n"
    "print(depth, time.perf_counter() - t, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)\n"
)


def distance_table(library: str) -> str:
    with tempfile.TemporaryDirectory() as empty:
        env = dict(os.environ, EXACTSYN_CACHE=empty)
        out = subprocess.run([sys.executable, "-c", DISTANCE, library], capture_output=True, text=True, env=env)
    depth, seconds, peak_kib = out.stdout.split()
    peak = int(peak_kib) / 2**20
    return f"distance table of {library} (4 lines, depth {depth}): {float(seconds):.1f} s, peak {peak:.2f} GiB"


def synth_walls(library: str, n: int, seed: int) -> str:
    rng = random.Random(seed)
    walls = []
    for _ in range(n):
        perm = random_permutation(4, rng, even=library == "nct")
        t = time.perf_counter()
        run = subprocess.run(
            [sys.executable, "-m", "exactsyn", "synth", "--perm", ",".join(map(str, perm)), "--library", library,
             "--format", "json", "-q"],
            capture_output=True,
            text=True,
        )
        walls.append(time.perf_counter() - t)
        if run.returncode != 0:
            return f"synth {library}: exit {run.returncode}: {run.stderr.strip()[:200]}"
    walls.sort()
    return (f"synth of {n} random 4-line functions over {library} as commands: {walls[0]:.2f} s to "
            f"{walls[-1]:.2f} s, median {walls[len(walls) // 2]:.2f} s")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=5)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    print(f"load average {' '.join(f'{x:.1f}' for x in os.getloadavg())}, {os.cpu_count()} cores", flush=True)
    for library in ("nct", "mct"):
        print(distance_table(library), flush=True)
    tables = [t for t in info(lines=4) if t.present and t.library in ("nct", "mct")]
    if len(tables) < 2:
        print("no cached 4-line class tables of nct and mct: 'exactsyn tables build' first for the rest")
        return
    for library in ("nct", "mct"):
        print(synth_walls(library, args.n, args.seed), flush=True)
    size = sum(f.stat().st_size for t in tables for f in Path(t.directory).rglob("*") if f.is_file())
    print(f"cached 4-line class tables of nct and mct: {size / 1e9:.2f} GB = {size / 2**30:.2f} GiB on disk")


if __name__ == "__main__":
    main()
