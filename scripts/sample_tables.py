#!/usr/bin/env python3
"""Sampled distribution of optimal gate counts over all 4-line functions (needs the cached tables).

A seeded uniform sample settled exactly by the class tables; prints counts, 95 % intervals
(Wilson for each share, normal for the mean) scaled to all functions, and the exact counts
the table gives up to its depth.  Item i of a seed is a fixed function, so runs with
--start/--n can be split and merged.

    .venv/bin/python scripts/sample_tables.py --library mct --n 2000 --seed 1
"""

from __future__ import annotations

import argparse
import sys
import time

from exactsyn.tables import sample_distribution


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--library", default="mct", help="mct, nct or mixed (default mct)")
    ap.add_argument("--n", type=int, default=1000, help="sample size (default 1000)")
    ap.add_argument("--seed", type=int, default=1, help="sample seed (default 1)")
    ap.add_argument("--start", type=int, default=0, help="first item index (default 0)")
    args = ap.parse_args()
    last = [0.0]

    def progress(description: str, done: int, total: int) -> None:
        if time.monotonic() - last[0] > 30 or done == total:
            last[0] = time.monotonic()
            print(f"  {description}: {done}/{total}", file=sys.stderr, flush=True)

    d = sample_distribution(args.library, args.n, args.seed, progress=progress, start=args.start)
    print(f"library {d.library}: {d.n} functions sampled (seed {d.seed}, items {args.start}..{args.start + args.n - 1})"
          f" of {d.population}; {d.unsettled} not settled; {d.seconds:.0f} s")  # fmt: skip
    print(f"{'gates':>5} {'sampled':>8} {'share':>8} {'95% interval of the count':>40} {'exact (table)':>16}")
    for g, c in d.counts:
        est, lo, hi = d.estimated(g)
        exact = str(d.exact[g]) if g < len(d.exact) else ""
        print(f"{g:>5} {c:>8} {c / d.n:>8.4f} {lo:>19.4g} .. {hi:<18.4g} {exact:>16}")
    print(f"average {d.mean:.4f} gates, 95% interval [{d.mean_interval[0]:.4f}, {d.mean_interval[1]:.4f}]")
    return 0


if __name__ == "__main__":
    sys.exit(main())
