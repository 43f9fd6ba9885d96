"""Benchmark the search engine: both encodings on the same instances, in one run.

Prints numbers; it is not a test.  Examples:

    python scripts/bench_core.py                       # hard3 sample + rand3 + small4
    python scripts/bench_core.py --set hard3 --limit 0 # all 577 hardest 3-line functions
    python scripts/bench_core.py --set hwb4 --encodings onehot
"""

from __future__ import annotations

import argparse
import random
import resource
import statistics
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from bench import load_set  # noqa: E402  (scripts/bench.py, beside this file)

import exactsyn as ex  # noqa: E402
from exactsyn.core.library import make_library  # noqa: E402
from exactsyn.sat.encode import ENCODINGS  # noqa: E402
from exactsyn.specification.reversible import Spec, from_permutation  # noqa: E402


def instance_set(name: str, limit: int, seed: int) -> tuple[str, list[Spec]]:
    rng = random.Random(seed)
    if name in ("hard3", "hwb4"):  # bundled in instances/, read as scripts/bench.py reads them
        recs = load_set(name)[: limit or None]
        return recs[0]["library"], [from_permutation(r["permutation"], r["name"]) for r in recs]
    if name == "rand3":
        out = []
        for i in range(limit or 200):
            p = list(range(8))
            rng.shuffle(p)
            out.append(from_permutation(p, f"rand3-{i}"))
        return "nct", out
    if name == "small4":
        lib = make_library("mct", 4)
        out = []
        for i in range(limit or 10):
            s = np.arange(16)
            for _ in range(6):
                s = lib.gates[rng.randrange(len(lib))].apply(s)
            out.append(from_permutation([int(v) for v in s], f"small4-{i}"))
        return "mct", out
    raise SystemExit(f"unknown set {name}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--set", action="append", dest="sets", help="hard3, rand3, small4, hwb4 (repeatable)")
    ap.add_argument("--limit", type=int, default=None, help="instances per set (0 = all)")
    ap.add_argument("--encodings", default=",".join(ENCODINGS), help="comma-separated")
    ap.add_argument("--cap", type=float, default=600.0, help="time cap per instance (s)")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--verbose", action="store_true", help="one line per instance")
    args = ap.parse_args()
    sets = args.sets or ["hard3", "rand3", "small4"]
    encs = args.encodings.split(",")
    for name in sets:
        limit = args.limit if args.limit is not None else (60 if name == "hard3" else 0)
        lib_name, specs = instance_set(name, limit, args.seed)
        totals: dict[str, float] = {}
        for enc in encs:
            times, sizes, capped = [], [], 0
            for spec in specs:
                res = ex.synthesise(spec, library=lib_name, encoding=enc, time_limit=args.cap)
                times.append(res.seconds)
                sizes.append(len(res.circuit) if res.circuit else -1)
                capped += not res.optimal
                if args.verbose:
                    per_k = " ".join(f"{s.k}:{s.status[0]}{s.seconds:.2f}" for s in res.steps)
                    print(f"  {enc:9} {spec.name:12} opt={sizes[-1]:3} {res.seconds:8.2f}s  {per_k}")
            totals[enc] = sum(times)
            print(
                f"{name:7} {enc:9} n={len(specs):4} total={sum(times):9.2f}s "
                f"median={statistics.median(times):7.3f}s "
                f"max={max(times):8.2f}s mean_opt={statistics.mean(sizes):5.2f} not_proven={capped}",
                flush=True,
            )
        if "textbook" in totals and "onehot" in totals and totals["onehot"] > 0:
            print(f"{name:7} speed-up onehot vs textbook: {totals['textbook'] / totals['onehot']:.2f}x")
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak memory: {peak:.0f} MiB")


if __name__ == "__main__":
    main()
