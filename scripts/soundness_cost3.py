"""Check the ``cost`` and ``depth`` objectives against searches without SAT on seeded random 3-line functions.

    python scripts/soundness_cost3.py --count 200 --seed 5

Least NCV cost over any length comes from Dijkstra's algorithm over all 8! functions,
least depth from a breadth-first search whose steps are whole layers of gates on
disjoint lines.  Prints mismatches (there should be none), then totals and times.
"""

from __future__ import annotations

import argparse
import heapq
import itertools
import random
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import exactsyn as ex  # noqa: E402
from exactsyn.core.costs import library_costs  # noqa: E402


def dijkstra(perms: list[tuple[int, ...]], costs: tuple[int, ...]) -> dict[tuple[int, ...], int]:
    start = tuple(range(len(perms[0])))
    dist, heap = {start: 0}, [(0, start)]
    while heap:
        c, f = heapq.heappop(heap)
        if dist[f] < c:
            continue
        for p, w in zip(perms, costs, strict=True):
            h = tuple(p[x] for x in f)
            if c + w < dist.get(h, 1 << 30):
                dist[h] = c + w
                heapq.heappush(heap, (c + w, h))
    return dist


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--count", type=int, default=100)
    ap.add_argument("--seed", type=int, default=5)
    ap.add_argument("--library", default="nct")
    args = ap.parse_args()
    lib = ex.make_library(args.library, 3)
    model = ex.cost_model("ncv")
    costs = library_costs(lib, model)
    perms = [g.permutation(3) for g in lib.gates]
    dist = dijkstra(perms, costs)
    layers = set()
    for r in (1, 2, 3):
        for combo in itertools.combinations(range(len(lib.gates)), r):
            if all(not (lib.gates[a].lines & lib.gates[b].lines) for a, b in itertools.combinations(combo, 2)):
                f = tuple(range(8))
                for j in combo:
                    f = tuple(perms[j][x] for x in f)
                layers.add(f)
    depth = dijkstra(sorted(layers), tuple(1 for _ in layers))
    rng = random.Random(args.seed)
    sample = rng.sample(sorted(dist), args.count)
    bad, t_cost, t_depth, longer = 0, 0.0, 0.0, 0
    for i, perm in enumerate(sample, 1):
        if i % 10 == 0:
            print(f"  {i}/{args.count}: cost {t_cost:.1f} s, depth {t_depth:.1f} s so far", flush=True)
        cs = ex.synthesise(list(perm), library=lib, objective="cost", cost=model)
        ds = ex.synthesise(list(perm), library=lib, objective="depth")
        c, d = cs.objective_result, ds.objective_result
        assert c is not None and d is not None
        t_cost += c.seconds
        t_depth += d.seconds
        longer += len(c.circuit) > len(cs.gate_result.circuit or ())
        if not (c.optimal and c.value == dist[perm] and d.optimal and d.value == depth[perm]):
            bad += 1
            print("MISMATCH", perm, c.value, dist[perm], d.value, depth[perm], flush=True)
    print(
        f"{args.count} functions ({args.library}, seed {args.seed}): {bad} mismatches; "
        f"{longer} need more gates for the least cost; cost {t_cost:.1f} s, depth {t_depth:.1f} s"
    )


if __name__ == "__main__":
    main()
