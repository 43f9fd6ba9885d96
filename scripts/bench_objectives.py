"""Time the objectives beyond gate count on seeded random functions; prints a table.

    python scripts/bench_objectives.py                     # 3 lines, nct, 6 functions
    python scripts/bench_objectives.py --count 10 --seed 2 --library mixed
    python scripts/bench_objectives.py --compare-windows   # cost queries with and without window rules
    python scripts/bench_objectives.py --rules no-repeat,commute,trace,touch,window2,window3,window4

Per function: the gate optimum, then each objective's value, queries and seconds.  With
``--compare-windows`` the ``cost`` objective runs twice in one process, with the
cost-aware window rules and with only no-repeat/commute/touch (the baseline), and the
ratio of the two times is printed.
"""

from __future__ import annotations

import argparse
import random
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import exactsyn as ex  # noqa: E402
from exactsyn.sat.encode import EncodingOptions  # noqa: E402
from exactsyn.search.objectives import COST_OPTIONS, optimise  # noqa: E402

BASELINE = EncodingOptions("onehot", ("no-repeat", "commute", "touch"))


def _objective(syn: ex.Synthesis):  # type: ignore[no-untyped-def]
    assert syn.objective_result is not None, "the gate count was not proven"
    return syn.objective_result


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--lines", type=int, default=3)
    ap.add_argument("--library", default="nct")
    ap.add_argument("--cost", default="ncv")
    ap.add_argument("--count", type=int, default=6)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--compare-windows", action="store_true")
    ap.add_argument(
        "--compare-baseline",
        action="store_true",
        help="also run cost with neither window rules nor the non-affine bound (the first version)",
    )
    ap.add_argument("--rules", help="symmetry rules of the cost queries (comma-separated; default: the tool's)")
    args = ap.parse_args()
    lib = ex.make_library(args.library, args.lines)
    model = ex.cost_model(args.cost)
    rng = random.Random(args.seed)
    options = EncodingOptions("onehot", tuple(args.rules.split(","))) if args.rules else COST_OPTIONS
    print(f"cost-query rules: {','.join(options.symmetry)}")
    print(f"library {lib.name}, {args.lines} lines, cost model {model.name}, seed {args.seed}")
    print(f"{'function':<28} {'gates':>5} {'g-then-c':>9} {'s':>7} {'cost':>5} {'s':>7} {'depth':>5} {'s':>7}")
    totals = {"gtc": 0.0, "cost": 0.0, "depth": 0.0, "base": 0.0, "first": 0.0}
    for _ in range(args.count):
        perm = list(range(1 << args.lines))
        rng.shuffle(perm)
        # Through the public API; the objective's own time excludes the gate search.
        gtc = _objective(ex.synthesise(perm, library=lib, objective="gates-then-cost", cost=model))
        res = gtc.gate_result
        t_gtc = gtc.seconds
        # The cost objective with a chosen rule set is an internal knob (--rules): called directly.
        t = time.perf_counter()
        cost = optimise("cost", res, model, cost_encoding=options)
        t_cost = time.perf_counter() - t
        depth = _objective(ex.synthesise(perm, library=lib, objective="depth"))
        t_depth = depth.seconds
        totals["gtc"] += t_gtc
        totals["cost"] += t_cost
        totals["depth"] += t_depth
        name = ",".join(map(str, perm))
        print(
            f"{name[:28]:<28} {len(res.circuit or ()):>5} {gtc.value:>9} {t_gtc:>7.2f} "
            f"{cost.value:>5} {t_cost:>7.2f} {depth.value:>5} {t_depth:>7.2f}",
            flush=True,
        )
        if args.compare_windows:
            t = time.perf_counter()
            base = optimise("cost", res, model, cost_encoding=BASELINE)
            t_base = time.perf_counter() - t
            totals["base"] += t_base
            assert base.value == cost.value
            print(f"{'':<28}   cost without window rules: {t_base:.2f} s ({t_base / max(t_cost, 1e-9):.1f}x)")
        if args.compare_baseline:
            t = time.perf_counter()
            first = optimise("cost", res, model, cost_encoding=BASELINE, nonaffine_bound=False)
            t_first = time.perf_counter() - t
            totals["first"] += t_first
            assert first.value == cost.value
            print(
                f"{'':<28}   cost without windows and non-affine bound: {t_first:.2f} s "
                f"({t_first / max(t_cost, 1e-9):.1f}x)"
            )
    print(
        f"total seconds: gates-then-cost {totals['gtc']:.2f}, cost {totals['cost']:.2f}, depth {totals['depth']:.2f}"
        + (
            f"; cost without windows {totals['base']:.2f} (ratio {totals['base'] / max(totals['cost'], 1e-9):.2f}x)"
            if args.compare_windows
            else ""
        )
        + (
            f"; cost baseline {totals['first']:.2f} (ratio {totals['first'] / max(totals['cost'], 1e-9):.2f}x)"
            if args.compare_baseline
            else ""
        )
    )


if __name__ == "__main__":
    main()
