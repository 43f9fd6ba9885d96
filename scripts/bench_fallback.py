"""Sizes of the fallback circuit (what a time-out returns) against the optimum where it is known.

* 4 lines: seeded random even permutations; the optimum of NCT and MCT from the
  distance tables (meet in the middle, exact up to 11 gates; "≥ 12" beyond).
* 5 lines: the functions of ``instances/sets/five-line.jsonl`` (MCT optimum proven by
  exactsyn with a checked certificate); their NCT fallback is printed beside it.

    python scripts/bench_fallback.py --count 8
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import time
from pathlib import Path

from exactsyn.core.gates import permutation_is_odd
from exactsyn.core.library import make_library
from exactsyn.search.fallback import fallback_circuit
from exactsyn.specification.reversible import from_permutation
from exactsyn.specification.samples import random_permutation
from exactsyn.tables.distance import extended_meet

ROOT = Path(__file__).resolve().parent.parent


def even_perm(n: int, seed: int) -> list[int]:
    return list(random_permutation(n, random.Random(seed), even=True))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--count", type=int, default=8, help="seeded 4-line functions")
    args = ap.parse_args()
    libs = {name: make_library(name, 4) for name in ("nct", "mct", "mixed")}
    print("4 lines, seeded random even permutations (optimum from the distance tables: exact up to 11)")
    print(f"{'seed':>4}  {'nct fb':>6} {'nct opt':>7}  {'mct fb':>6} {'mct opt':>7}  {'mixed fb':>8}  {'s/fb':>5}")
    ratios: dict[str, list[float]] = {"nct": [], "mct": []}
    for seed in range(1, args.count + 1):
        p = even_perm(4, seed)
        spec = from_permutation(p)
        row = []
        t0 = time.perf_counter()
        sizes = {name: len(fallback_circuit(spec, lib).circuit or ()) for name, lib in libs.items()}
        per = (time.perf_counter() - t0) / len(libs)
        for name in ("nct", "mct"):
            mr = extended_meet(tuple(p), libs[name])
            opt = mr.exact
            row.append(f"{sizes[name]:>6} {opt if opt is not None else '>=' + str(mr.lower):>7}")
            if opt is not None:
                ratios[name].append(sizes[name] / opt)
        print(f"{seed:>4}  {row[0]}  {row[1]}  {sizes['mixed']:>8}  {per:>5.2f}", flush=True)
    for name, r in ratios.items():
        if r:
            print(f"{name}: fallback / optimum over {len(r)} functions with a known optimum: "
                  f"median {statistics.median(r):.2f}, max {max(r):.2f}")
    print("\n5 lines, instances/sets/five-line.jsonl (MCT optimum proven)")
    print(f"{'name':<14} {'mct opt':>7} {'mct fb':>6} {'nct fb':>6}")
    for line in (ROOT / "instances/sets/five-line.jsonl").read_text().splitlines():
        item = json.loads(line)
        spec = from_permutation(item["permutation"])
        mct = fallback_circuit(spec, make_library("mct", 5)).circuit
        nct_c = None
        if not permutation_is_odd(tuple(item["permutation"])):
            nct_c = fallback_circuit(spec, make_library("nct", 5)).circuit
        print(f"{item['name']:<14} {item['optimum']:>7} {len(mct or ()):>6} "
              f"{len(nct_c) if nct_c is not None else 'odd':>6}", flush=True)


if __name__ == "__main__":
    main()
