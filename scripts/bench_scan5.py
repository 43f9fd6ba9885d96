#!/usr/bin/env python3
"""Benchmark of the 5-line meet-in-the-middle scan: plain kernel against the profile filter.

Scans ``--classes`` classes of the top level of the cached 5-line table (from a few
positions) for seeded functions of ``--gates`` MCT gates and for the Keccak chi row map,
once with the plain kernel and once with the filter (:mod:`exactsyn.tables.filter5`), and
prints the filter's build time and fill, classes per second of both, their ratio, and
whether both found the same lanes (they must).  Both run in this process with the same
kernel threads (``NUMBA_NUM_THREADS``; default: every core), after one warm-up call each.

    .venv/bin/python scripts/bench_scan5.py
    NUMBA_NUM_THREADS=1 .venv/bin/python scripts/bench_scan5.py --classes 20000
"""

from __future__ import annotations

import argparse
import os
import random
import sys
import time
from pathlib import Path

import numpy as np

from exactsyn import tables
from exactsyn.core.library import make_library
from exactsyn.specification.loader import load_any
from exactsyn.specification.samples import random_library_function
from exactsyn.tables import filter5

ROOT = Path(__file__).resolve().parent.parent


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--classes", type=int, default=40000, help="classes per measured slice (default 40000)")
    ap.add_argument("--gates", type=int, default=12, help="gates of the seeded random functions (default 12)")
    ap.add_argument("--n", type=int, default=2, help="seeded random functions (default 2)")
    ap.add_argument("--cache", type=Path, default=None, help="table cache (default: EXACTSYN_CACHE or per-user)")
    args = ap.parse_args()
    if args.cache is not None:
        os.environ["EXACTSYN_CACHE"] = str(args.cache)
    try:
        t = tables.load("mct", lines=5)
    except Exception as e:  # noqa: BLE001 - a missing table: say how to build it
        print(f"no cached 5-line mct table ({e}): run `exactsyn tables build --lines 5 --library mct`", file=sys.stderr)
        return 2
    import numba

    top = t.levels[t.depth]
    print(f"table depth {t.depth}, top level {len(top.vals):,} classes, {numba.get_num_threads()} kernel threads")
    t0 = time.perf_counter()
    bits, _ = filter5.filter_for(top.vals)
    fill = sum(int(np.unpackbits(bits[i : i + (1 << 22)].view(np.uint8)).sum()) for i in range(0, len(bits), 1 << 22))
    print(f"filter: {len(bits) * 8 / 2**20:.0f} MiB, built in {time.perf_counter() - t0:.1f} s, "
          f"{fill / (len(bits) * 64):.2%} of its bits set")  # fmt: skip
    lib = make_library("mct", 5)
    rng = random.Random(2026)
    targets = [(f"random {args.gates}-gate #{i}", random_library_function(lib, args.gates, rng)) for i in range(args.n)]
    chi, _ = load_any(ROOT / "instances" / "keccak-chi5.toml")
    targets.append(("keccak chi", chi.permutation))
    K = t.layout.kernels()
    n = min(args.classes, len(top.vals))
    starts = [len(top.vals) // 10, len(top.vals) // 2, len(top.vals) - n]
    for name, perm in targets:
        fkeys, _ = t._conjugates([t.layout.pack(perm)])
        secs = {}
        outs = {}
        for filtered in (False, True):
            out = np.empty(n, dtype=np.int64)
            K.scan(top.vals, 0, 64, fkeys, top.vals, top.index, top.shift, out[:64], filtered=filtered)
            t0 = time.perf_counter()
            got = []
            for s in starts:
                K.scan(top.vals, s, s + n, fkeys, top.vals, top.index, top.shift, out, filtered=filtered)
                got.append(out.copy())
            secs[filtered] = time.perf_counter() - t0
            outs[filtered] = np.concatenate(got)
        same = np.array_equal(outs[False], outs[True])
        rate = {k: len(starts) * n / v for k, v in secs.items()}
        print(f"{name}: {len(fkeys)} conjugates; plain {rate[False]:,.0f} classes/s, filtered {rate[True]:,.0f} "
              f"classes/s, ratio {rate[True] / rate[False]:.2f}; hits {int((outs[True] >= 0).sum())}, "
              f"same lanes: {same}", flush=True)  # fmt: skip
        if not same:
            return 1
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
