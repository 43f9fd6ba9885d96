"""Soundness of the encoding with all symmetry breaking on: SAT optimum equals the
breadth-first optimum on every 3-line function (40320 of them) with NCT gates.

Prints numbers (mismatches must be 0); it is a benchmark-style script, not a test.

    python scripts/soundness_all3.py --jobs 2            # all 40320 (tens of minutes)
    python scripts/soundness_all3.py --limit 2000        # a prefix, for a quick look
"""

from __future__ import annotations

import argparse
import sys
import time
from multiprocessing import Pool
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import exactsyn as ex  # noqa: E402
from exactsyn.core.library import make_library  # noqa: E402
from exactsyn.tables.bfs import optimal_sizes  # noqa: E402

LIB = make_library("nct", 3)


def sat_size(perm: tuple[int, ...]) -> int:
    res = ex.synthesise(list(perm), library=LIB, bounds="cheap")
    assert res.optimal and res.circuit is not None and res.circuit.permutation() == perm
    return len(res.circuit)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--limit", type=int, default=0, help="only the first N functions (0 = all)")
    args = ap.parse_args()
    table = optimal_sizes(LIB)
    perms = [tuple(int(v) for v in row) for row in table.permutations()]
    sizes = [int(s) for s in table.sizes]
    if args.limit:
        perms, sizes = perms[: args.limit], sizes[: args.limit]
    start = time.perf_counter()
    got: list[int] = []
    with Pool(args.jobs) as pool:
        for g in pool.imap(sat_size, perms, chunksize=64):
            got.append(g)
            if len(got) % 5000 == 0:
                done = sizes[: len(got)]
                bad_so_far = sum(1 for a, b in zip(done, got, strict=True) if a != b)
                print(f"  {len(got)} done, mismatches {bad_so_far}, {time.perf_counter() - start:.0f} s", flush=True)
    bad = [(p, s, g) for p, s, g in zip(perms, sizes, got, strict=True) if s != g]
    dist = [0] * 9
    for g in got:
        dist[g] += 1
    print(f"functions: {len(perms)}  mismatches SAT vs breadth-first: {len(bad)}")
    print(f"SAT distribution 0..8: {dist}")
    print(f"wall time: {time.perf_counter() - start:.1f} s with {args.jobs} processes")
    for p, s, g in bad[:10]:
        print(f"  MISMATCH {p}: breadth-first {s}, SAT {g}")


if __name__ == "__main__":
    main()
