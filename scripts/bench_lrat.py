"""Benchmark LRAT capture and checking on pigeonhole formulas (prints numbers; not a test).

For each PHP(n) (n+1 pigeons, n holes; unsatisfiable) it reports the solve
time with proof capture, the proof size, and the checker's time and
throughput, each the median of ``--repeat`` runs.
Usage:  python scripts/bench_lrat.py [--holes 6 7 8 9] [--repeat 3]
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time

from pysat.examples.genhard import PHP

from exactsyn.proof.lrat import check_lrat
from exactsyn.sat.solver import solve


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--holes", type=int, nargs="+", default=[6, 7, 8, 9])
    parser.add_argument("--repeat", type=int, default=3, help="runs per size; medians are printed")
    args = parser.parse_args(argv)

    header = (
        f"{'holes':>5} {'vars':>5} {'clauses':>7} {'solve s':>8} {'conflicts':>9} {'proof MB':>9} "
        f"{'steps':>8} {'check s':>8} {'steps/s':>9} {'MB/s':>6} {'check/solve':>11}"
    )
    print(header)
    status = 0
    for n in args.holes:
        clauses = [list(c) for c in PHP(n).clauses]
        solve_times, check_times = [], []
        for _ in range(max(1, args.repeat)):
            run = solve(clauses, proof=True)
            if run.status != "unsat":
                break
            started = time.perf_counter()
            report = check_lrat(n * (n + 1), clauses, run.proof)
            check_times.append(time.perf_counter() - started)
            solve_times.append(run.seconds)
        if run.status != "unsat":
            print(f"{n:>5} unexpected status {run.status}")
            status = 1
            continue
        solve_s = statistics.median(solve_times)
        check_s = statistics.median(check_times)
        mb = len(run.proof) / 1e6
        print(
            f"{n:>5} {n * (n + 1):>5} {len(clauses):>7} {solve_s:>8.3f} {run.conflicts or 0:>9} "
            f"{mb:>9.2f} {report.steps:>8} {check_s:>8.3f} {report.steps / check_s:>9.0f} "
            f"{mb / check_s:>6.1f} {check_s / solve_s:>11.2f}"
            + ("" if report.ok else f"  CHECK FAILED: {report.reason}")
        )
        status |= 0 if report.ok else 1
    return status


if __name__ == "__main__":
    sys.exit(main())
