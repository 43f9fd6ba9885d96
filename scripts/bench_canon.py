#!/usr/bin/env python3
"""Speed of the canonical-form kernel of the class tables, in nanoseconds per key.

Two inputs per line count: uniform random permutations, and products of a few random
gates of the library (``--gates``, default 4), whose classes have larger stabilisers.
Keys are packed here by the literal formula ``Σ p[i] << (n·i)``.  Each timing is the best
of ``--repeats`` calls of the array kernel after one warm-up call (JIT compilation and
cache loading excluded), as wall-clock time and as CPU time of all threads (steadier on
a shared machine); the kernel runs on every numba thread unless ``--threads``.

    .venv/bin/python scripts/bench_canon.py                     # 4 lines, 2 M keys
    .venv/bin/python scripts/bench_canon.py --lines 3 --threads 1
    .venv/bin/python scripts/bench_canon.py --lines 5 --n 1000000   # 160-bit keys, 240 symmetries

On a checkout from before the n-line engine (``exactsyn.tables.kernels.canon_many`` on
4 lines only) the same script measures the old kernel, for before/after comparisons.
"""

from __future__ import annotations

import argparse
import sys
import time
from collections.abc import Callable

import numpy as np


def canon_kernel(lines: int) -> Callable[[np.ndarray], np.ndarray]:
    try:
        from exactsyn.tables.keys import layout
    except ImportError:  # a checkout from before the n-line engine: 4 lines only
        if lines != 4:
            raise SystemExit("this checkout has the 4-line kernels only") from None
        from exactsyn.tables import kernels

        return kernels.canon_many  # type: ignore[no-any-return]
    return layout(lines).kernels().canon_many


def pack(rows: np.ndarray, lines: int) -> np.ndarray:
    """Key array: ``(N,)`` for one 64-bit word, ``(N, words)`` least significant word first."""
    words = (lines * (1 << lines) + 63) // 64
    out = np.zeros((len(rows), words), dtype=np.uint64)
    for i in range(rows.shape[1]):
        v = rows[:, i].astype(np.uint64)
        word, shift = divmod(lines * i, 64)
        out[:, word] |= v << np.uint64(shift)
        if shift + lines > 64:  # the entry runs into the next word
            out[:, word + 1] |= v >> np.uint64(64 - shift)
    return out[:, 0].copy() if words == 1 else out


def gate_products(lines: int, count: int, gates: int, rng: np.random.Generator) -> np.ndarray:
    from exactsyn.core.library import make_library

    lib = make_library("mct", lines)
    table = np.array([g.permutation(lines) for g in lib.gates], dtype=np.int64)
    rows = np.tile(np.arange(1 << lines, dtype=np.int64), (count, 1))
    for _ in range(gates):
        pick = table[rng.integers(len(table), size=count)]
        rows = np.take_along_axis(pick, rows, axis=1)  # the next gate after the ones so far
    return rows


def best_ns(fn: Callable[[np.ndarray], np.ndarray], keys: np.ndarray, repeats: int) -> tuple[float, float]:
    """Least wall-clock and least CPU time (all threads) per key, in nanoseconds."""
    fn(keys[:1024])
    wall = cpu = float("inf")
    for _ in range(repeats):
        t0, c0 = time.perf_counter(), time.process_time()
        fn(keys)
        wall, cpu = min(wall, time.perf_counter() - t0), min(cpu, time.process_time() - c0)
    return wall / len(keys) * 1e9, cpu / len(keys) * 1e9


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--lines", type=int, default=4)
    ap.add_argument("--n", type=int, default=2_000_000, help="keys per input (default 2 M)")
    ap.add_argument("--gates", type=int, default=4, help="gates per product (default 4)")
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--threads", type=int, default=None, help="numba threads (default: all)")
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    import numba

    if args.threads:
        numba.set_num_threads(args.threads)
    canon = canon_kernel(args.lines)
    rng = np.random.default_rng(args.seed)
    size = 1 << args.lines
    random_rows = rng.permuted(np.tile(np.arange(size), (args.n, 1)), axis=1)
    inputs = {
        "random permutations": pack(random_rows, args.lines),
        f"{args.gates}-gate mct products": pack(gate_products(args.lines, args.n, args.gates, rng), args.lines),
    }
    print(f"canonical form, {args.lines} lines, {args.n} keys per input, {numba.get_num_threads()} numba threads")
    for name, keys in inputs.items():
        wall, cpu = best_ns(canon, keys, args.repeats)
        print(f"  {name:<24} {wall:7.1f} ns per key wall, {cpu:7.1f} ns CPU (best of {args.repeats})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
