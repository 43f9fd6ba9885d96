"""Which 5-line table depth pays: hashed distance tables (exactsyn.tables.hashed) against SAT.

For seeded 5-line functions built from random circuits of the given lengths, prints

* the build time and peak memory of the depth-3 and depth-4 tables (once per process);
* per function and depth: the meet-in-the-middle time and what it settles (the optimum
  when at most 2D gates, else the bound 2D + 1);
* the SAT time of the queries the table replaces: every k from the cheap lower bound up
  to the table's bound − 1 (or the optimum), one process, CaDiCaL, without and with LRAT
  capture (what a certificate costs).

Times are processor seconds of this process (time.process_time), so they do not depend
on the machine's load; the load average is printed beside them.

    python scripts/bench_five.py --lengths 5,6,7,8,9,10 --per-length 2
"""

from __future__ import annotations

import argparse
import os
import random
import resource
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from exactsyn.core.library import make_library  # noqa: E402
from exactsyn.sat.encode import encode  # noqa: E402
from exactsyn.sat.solver import solve  # noqa: E402
from exactsyn.search.bounds import lower_bound  # noqa: E402
from exactsyn.specification.reversible import from_permutation  # noqa: E402
from exactsyn.specification.samples import random_library_function  # noqa: E402
from exactsyn.tables.hashed import five_meet, hashed_table  # noqa: E402


def built(lib, length: int, seed: int) -> list[int]:  # type: ignore[no-untyped-def]
    return list(random_library_function(lib, length, random.Random(seed)))


def peak_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--lengths", default="5,6,7,8,9,10")
    ap.add_argument("--per-length", type=int, default=2)
    ap.add_argument("--depths", default="3,4")
    ap.add_argument("--library", default="mct")
    ap.add_argument("--no-sat", action="store_true", help="only the tables")
    args = ap.parse_args()
    lib = make_library(args.library, 5)
    depths = [int(d) for d in args.depths.split(",")]
    print(f"load average at start: {os.getloadavg()}")
    for d in depths:
        t = time.process_time()
        table = hashed_table(lib, d)
        print(f"table depth {d}: {len(table.keys)} functions, build {time.process_time() - t:.1f} s cpu, "
              f"peak so far {peak_mib():.0f} MiB", flush=True)  # fmt: skip
    totals = {f"D{d}": 0.0 for d in depths} | {"sat": 0.0, "sat+lrat": 0.0}
    for length in (int(x) for x in args.lengths.split(",")):
        for i in range(args.per_length):
            perm = built(lib, length, 1000 * length + i)
            spec = from_permutation(perm)
            parts = [f"len={length:2d} seed={1000 * length + i}"]
            settle = 0
            for d in depths:
                t = time.process_time()
                mr = five_meet(tuple(perm), lib, d)
                dt = time.process_time() - t
                totals[f"D{d}"] += dt
                parts.append(f"D{d}: {'opt=' + str(mr.exact) if mr.exact else 'lb=' + str(mr.lower)} {dt:.2f}s")
                settle = max(settle, mr.exact if mr.exact is not None else mr.lower - 1)
            if not args.no_sat:
                sat = lrat = 0.0
                for k in range(lower_bound(spec, lib).value, settle + 1):
                    enc = encode(spec, lib, k)
                    t = time.process_time()
                    res = solve(enc.clauses)
                    sat += time.process_time() - t
                    t = time.process_time()
                    solve(enc.clauses, proof=True)
                    lrat += time.process_time() - t
                    if str(res.status) == "sat":
                        break
                totals["sat"] += sat
                totals["sat+lrat"] += lrat
                parts.append(f"SAT k<={settle}: {sat:.2f}s, with LRAT {lrat:.2f}s")
            print("  ".join(parts), flush=True)
    print("totals (cpu s): " + ", ".join(f"{k} {v:.1f}" for k, v in totals.items()))
    print(f"load average at end: {os.getloadavg()}; peak {peak_mib():.0f} MiB")


if __name__ == "__main__":
    main()
