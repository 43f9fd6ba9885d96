#!/usr/bin/env python3
"""Benchmark of the 4-line class tables: build, random functions, hardest instances.

Prints, per library: table depth, build time and peak memory (measured now in a fresh
process with --rebuild, else as recorded in the manifest), size on disk; then for a seeded
uniform sample of random 4-line permutations (even ones for nct): proven/total, median and
max seconds per function, the distribution of optima; then the time for each hard instance.
Every circuit is simulated by the engine before it is counted.

    .venv/bin/python scripts/bench_tables.py                       # mct and nct, 50 functions each
    .venv/bin/python scripts/bench_tables.py --libraries mct,nct,mixed --n 50 --seed 1
    .venv/bin/python scripts/bench_tables.py --rebuild --cache /tmp/fresh-cache   # time a fresh build
"""

from __future__ import annotations

import argparse
import json
import resource
import statistics
import subprocess
import sys
import time
import tomllib
from pathlib import Path

from exactsyn import tables
from exactsyn.tables.sample import sample_function

ROOT = Path(__file__).resolve().parent.parent
# (instance file, library): the hardest functions found by exactsyn.tables.hardest
HARD = [
    ("instances/hwb4.toml", "mct"),
    ("instances/mct14-c4.toml", "mct"),
    ("instances/mct15-a.toml", "mct"),
    ("instances/nct15-c4.toml", "nct"),
    ("instances/mixed-hardest.toml", "mixed"),
]


def peak_rss_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


_BUILD_CHILD = """
import json, resource, sys, time
from pathlib import Path
from exactsyn import tables
lib, cache = sys.argv[1], (Path(sys.argv[2]) if sys.argv[2] else None)
t0 = time.perf_counter()
tables.build(lib, cache=cache, force=True)
print(json.dumps({"seconds": time.perf_counter() - t0,
                  "peak_rss_bytes": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024}))
"""


def build_or_use(library: str, cache: Path | None, rebuild: bool) -> tables.TableInfo:
    """Report the cached table; with ``rebuild``, first build it in a fresh process (clean peak RSS)."""
    if rebuild:
        run = subprocess.run(
            [sys.executable, "-c", _BUILD_CHILD, library, str(cache or "")], capture_output=True, text=True, check=True
        )
        child = json.loads(run.stdout.strip().splitlines()[-1])
        print(
            f"[{library}] built now in a fresh process: {child['seconds']:.0f} s wall, "
            f"peak RSS {child['peak_rss_bytes'] / 2**30:.2f} GiB"
        )
    t0 = time.perf_counter()
    info = tables.build(library, cache=cache)
    took = time.perf_counter() - t0
    built = (info.manifest or {}).get("built", {})
    peak = built.get("process_peak_rss_bytes", built.get("peak_rss_bytes", 0))
    print(
        f"[{library}] table depth {info.depth}, {info.bytes / 2**30:.2f} GiB on disk in {info.directory}\n"
        f"[{library}] recorded build: {built.get('seconds', float('nan')):.0f} s, "
        f"process peak RSS {peak / 2**30:.2f} GiB; build() on the cached table (hash check) {took:.1f} s"
    )
    print(f"[{library}] functions per level 0..{info.depth}: {list(info.functions)}")
    return info


def run_sample(library: str, n: int, seed: int, cache: Path | None, time_limit: float | None) -> None:
    t = tables.load(library, cache=cache)
    times: list[float] = []
    optima: dict[str, int] = {}
    proven = 0
    for i in range(n):
        p = sample_function(seed, i, t.gates.all_even)
        ans = t.synthesise(p, time_limit=time_limit)
        times.append(ans.seconds)
        key = str(ans.gate_count) if ans.optimal else f">={ans.lower_bound}"
        optima[key] = optima.get(key, 0) + 1
        proven += ans.optimal
    dist = ", ".join(f"{k}: {v}" for k, v in sorted(optima.items(), key=lambda kv: (len(kv[0]), kv[0])))
    kind = "even permutations" if t.gates.all_even else "permutations"
    print(
        f"[{library}] {n} random {kind} (seed {seed}): proven {proven}/{n}, "
        f"median {statistics.median(times):.3f} s, max {max(times):.3f} s, mean {statistics.mean(times):.3f} s\n"
        f"[{library}] optima: {dist}"
    )


def run_hard(files: list[tuple[str, str]], libraries: set[str], cache: Path | None) -> None:
    for rel, library in files:
        path = ROOT / rel
        if library not in libraries or not path.is_file():
            continue
        data = tomllib.loads(path.read_text())
        t = tables.load(library, cache=cache)
        ans = t.synthesise(data["permutation"])
        result = f"{ans.gate_count} gates, proven" if ans.optimal else f"not settled, lower bound {ans.lower_bound}"
        print(f"[{library}] {data.get('name', rel)}: {result} in {ans.seconds:.2f} s ({ans.method})")


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--libraries", default="mct,nct", help="comma-separated: mct, nct, mixed (default mct,nct)")
    ap.add_argument("--n", type=int, default=50, help="random functions per library (default 50)")
    ap.add_argument("--seed", type=int, default=2024, help="sample seed (default 2024)")
    ap.add_argument("--cache", type=Path, default=None, help="cache directory (default: EXACTSYN_CACHE or per-user)")
    ap.add_argument("--rebuild", action="store_true", help="build the tables now even if cached (measures the build)")
    ap.add_argument("--time-limit", type=float, default=None, help="seconds per function (default none)")
    ap.add_argument("--no-hard", action="store_true", help="skip the hard instances")
    args = ap.parse_args()
    libraries = [x.strip() for x in args.libraries.split(",") if x.strip()]
    print(f"exactsyn 4-line class tables benchmark; cache {args.cache or tables.resolve_cache_dir()}")
    for lib in libraries:
        build_or_use(lib, args.cache, args.rebuild)
        print(f"peak RSS of this process so far: {peak_rss_mib():.0f} MiB")
    for lib in libraries:
        run_sample(lib, args.n, args.seed, args.cache, args.time_limit)
        print(f"peak RSS of this process so far: {peak_rss_mib():.0f} MiB")
    if not args.no_hard:
        run_hard(HARD, set(libraries), args.cache)
    print(f"peak RSS of this process: {peak_rss_mib():.0f} MiB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
