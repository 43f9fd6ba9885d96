"""Benchmark the encoder alone: seconds to build the CNF of a few sizable queries.

Prints the best of ``--repeat`` runs per configuration (after one warm-up run that fills
the window and commuting-pair caches), and the sum.  The clock is the process's CPU time
by default, which other jobs on a shared machine disturb less than wall time.  Prints
numbers; it is not a test::

    python scripts/bench_encode.py
    python scripts/bench_encode.py --repeat 9 --clock wall
"""

from __future__ import annotations

import argparse
import random
import sys
import time
from collections.abc import Callable
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from pysat.formula import IDPool  # noqa: E402

from exactsyn.core.costs import cost_model  # noqa: E402
from exactsyn.core.library import make_library  # noqa: E402
from exactsyn.sat.encode import CostLimit, Encoding, EncodingOptions, encode  # noqa: E402
from exactsyn.sat.encode_depth import encode_depth  # noqa: E402
from exactsyn.specification.reversible import Spec, from_permutation  # noqa: E402


def _perm(n: int, seed: int) -> Spec:
    p = list(range(1 << n))
    random.Random(seed).shuffle(p)
    return from_permutation(p, f"rand{n}")


def _guarded(spec: Spec, lib_name: str, ks: range) -> Callable[[], Encoding]:
    lib = make_library(lib_name, spec.lines)

    def run() -> Encoding:
        pool = IDPool()
        enc = None
        for k in ks:
            enc = encode(spec, lib, k, guard=True, pool=pool)
        assert enc is not None
        return enc

    return run


def cases() -> list[tuple[str, Callable[[], Encoding]]]:
    s5, s4 = _perm(5, 1), _perm(4, 2)
    mct5, nct5, mct4, mixed4 = (make_library(x, n) for x, n in (("mct", 5), ("nct", 5), ("mct", 4), ("mixed", 4)))
    trace_w2 = EncodingOptions("onehot", ("trace", "window2"))
    ncv4 = tuple(cost_model("ncv").cost(g, 4) for g in mct4.gates)
    return [
        ("5 lines, mct, k=10, defaults", lambda: encode(s5, mct5, 10)),
        ("5 lines, mct, k=10, textbook", lambda: encode(s5, mct5, 10, EncodingOptions("textbook", ()))),
        ("5 lines, nct, k=12, defaults", lambda: encode(s5, nct5, 12)),
        ("5 lines, mct, k=10, trace+window2", lambda: encode(s5, mct5, 10, trace_w2)),
        ("4 lines, mixed, k=10, defaults", lambda: encode(s4, mixed4, 10)),
        ("4 lines, mct, k=10, window3", lambda: encode(s4, mct4, 10, EncodingOptions("onehot", ("window3", "touch")))),
        ("4 lines, mct, k=10, ncv <= 40", lambda: encode(s4, mct4, 10, cost_limit=CostLimit(ncv4, 40, "cost"))),
        ("4 lines, mct, guarded k=0..10", _guarded(s4, "mct", range(11))),
        ("5 lines, mct, depth 3", lambda: encode_depth(s5, mct5, 3)),
    ]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--clock", choices=("cpu", "wall"), default="cpu")
    args = ap.parse_args()
    clock = time.process_time if args.clock == "cpu" else time.perf_counter
    total = 0.0
    for name, run in cases():
        enc = run()  # warm-up: window tables and commuting pairs are cached
        best = float("inf")
        for _ in range(args.repeat):
            t0 = clock()
            run()
            best = min(best, clock() - t0)
        total += best
        print(f"{name:40s} {best * 1000:9.1f} ms   {len(enc.clauses):8d} clauses {enc.num_vars:7d} vars")
    print(f"{'total':40s} {total * 1000:9.1f} ms")


if __name__ == "__main__":
    main()
