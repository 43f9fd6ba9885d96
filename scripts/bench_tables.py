#!/usr/bin/env python3
"""Benchmark of the 4-line class tables: build, random functions, hardest instances.

Prints, per library: table depth, build time and peak memory (measured now in a fresh
process with --rebuild, else as recorded in the manifest), size on disk; then for a seeded
uniform sample of random 4-line permutations (even ones for nct), each synthesised through
the public API (``exactsyn.synthesise``, the path of ``synth`` and ``batch``):
proven/total, median and max seconds per function, the distribution of optima, peak RSS;
then, in the same run, the search without class tables (distance tables and SAT, in a
child process whose cache directory is empty) under ``--baseline-limit`` seconds per
function: how many it proves, and the time ratio on those; then each hard instance.
Every circuit is simulated by the search before it is returned.

    .venv/bin/python scripts/bench_tables.py                       # mct and nct, 50 functions each
    .venv/bin/python scripts/bench_tables.py --libraries mct,nct,mixed --n 50 --seed 1
    .venv/bin/python scripts/bench_tables.py --rebuild --cache /tmp/fresh-cache   # time a fresh build
    .venv/bin/python scripts/bench_tables.py --baseline-limit 0    # no baseline
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import statistics
import subprocess
import sys
import tempfile
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
    ("instances/nct15-c4.toml", "nct"),
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


_BASELINE_CHILD = """
import json, sys, time
from exactsyn.core.library import make_library
from exactsyn.sat.options import SearchOptions
from exactsyn.search.loop import minimise_gates
from exactsyn.specification.reversible import from_permutation
from exactsyn.tables.sample import sample_function
lib_name, n, seed, limit = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), float(sys.argv[4])
lib = make_library(lib_name, 4)
def hwm():  # this process's own peak (ru_maxrss would include the parent's: Linux keeps it across exec)
    for line in open("/proc/self/status"):
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) * 1024
    return 0
for i in range(n):
    p = sample_function(seed, i, lib.all_even)
    t0 = time.perf_counter()
    res = minimise_gates(from_permutation(list(p)), lib, SearchOptions(time_limit=limit))
    print(json.dumps({"i": i, "seconds": time.perf_counter() - t0, "optimal": res.optimal,
                      "gates": None if res.circuit is None else len(res.circuit), "lower": res.lower_bound,
                      "class_table": res.class_table is not None,
                      "rss": hwm()}), flush=True)
"""


def run_baseline(library: str, n: int, seed: int, limit: float) -> list[dict[str, object]]:
    """The search without class tables, in a child process with an empty cache directory."""
    with tempfile.TemporaryDirectory() as empty:
        env = dict(os.environ, EXACTSYN_CACHE=empty)
        run = subprocess.run(
            [sys.executable, "-c", _BASELINE_CHILD, library, str(n), str(seed), str(limit)],
            capture_output=True, text=True, check=True, env=env,
        )
    rows = [json.loads(line) for line in run.stdout.splitlines() if line.startswith("{")]
    assert not any(r["class_table"] for r in rows), "the baseline must not see class tables"
    return rows


def run_sample(library: str, n: int, seed: int, time_limit: float | None, baseline: float) -> None:
    from exactsyn import synthesise

    t = tables.load(library)
    times: list[float] = []
    optima: dict[str, int] = {}
    proven = 0
    gates: list[int | None] = []
    t_first = None
    for i in range(n):
        p = sample_function(seed, i, t.gates.all_even)
        t0 = time.perf_counter()
        syn = synthesise(list(p), library=library, time_limit=time_limit)
        dt = time.perf_counter() - t0
        t_first = dt if t_first is None else t_first
        if syn.circuit is None or syn.circuit.permutation() != tuple(p):
            raise SystemExit(f"function {i}: no circuit or a wrong one")
        times.append(dt)
        gates.append(syn.gate_count if syn.optimal else None)
        key = str(syn.gate_count) if syn.optimal else f">={syn.lower_bound}"
        optima[key] = optima.get(key, 0) + 1
        proven += syn.optimal and syn.gate_result.source == "class-table"
    dist = ", ".join(f"{k}: {v}" for k, v in sorted(optima.items(), key=lambda kv: (len(kv[0]), kv[0])))
    kind = "even permutations" if t.gates.all_even else "permutations"
    print(
        f"[{library}] {n} random {kind} (seed {seed}), exactsyn.synthesise with class tables: proven {proven}/{n}, "
        f"median {statistics.median(times):.3f} s, max {max(times):.3f} s, mean {statistics.mean(times):.3f} s "
        f"(first call, with loading and JIT cache: {t_first:.2f} s); peak RSS so far {peak_rss_mib():.0f} MiB\n"
        f"[{library}] optima: {dist}; largest {max((g for g in gates if g is not None), default=None)}"
    )
    if baseline <= 0:
        return
    t0 = time.perf_counter()
    rows = run_baseline(library, n, seed, baseline)
    done = [r for r in rows if r["optimal"]]
    agree = all(r["gates"] == gates[int(r["i"])] for r in done)  # type: ignore[call-overload]
    ratios = [float(r["seconds"]) / times[int(r["i"])] for r in done]  # type: ignore[arg-type, call-overload]
    b_times = [float(r["seconds"]) for r in done]  # type: ignore[arg-type]
    peak = max((int(r["rss"]) for r in rows), default=0)  # type: ignore[call-overload]
    print(
        f"[{library}] without class tables (distance tables + SAT, {baseline:.0f} s per function, same run): "
        f"proven {len(done)}/{n} in {time.perf_counter() - t0:.0f} s, same optima: {agree}; "
        + (
            f"on those: median {statistics.median(b_times):.2f} s, max {max(b_times):.2f} s; "
            f"time ratio without/with tables: median {statistics.median(ratios):.1f}x, "
            f"min {min(ratios):.1f}x, max {max(ratios):.1f}x; "
            if done
            else ""
        )
        + f"peak RSS {peak / 2**20:.0f} MiB"
    )


def run_hard(files: list[tuple[str, str]], libraries: set[str]) -> None:
    from exactsyn import synthesise
    from exactsyn.proof.checker import check_certificate

    for rel, library in files:
        path = ROOT / rel
        if library not in libraries or not path.is_file():
            continue
        data = tomllib.loads(path.read_text())
        with tempfile.TemporaryDirectory() as cert:
            t0 = time.perf_counter()
            syn = synthesise(data["permutation"], library=library, certificate=cert)
            took = time.perf_counter() - t0
            result = f"{syn.gate_count} gates, proven" if syn.optimal else f"not settled, bound {syn.lower_bound}"
            t0 = time.perf_counter()
            rep = check_certificate(cert)
            checked = time.perf_counter() - t0
        print(
            f"[{library}] {data.get('name', rel)}: {result} in {took:.2f} s ({syn.gate_result.source}); "
            f"certificate check {'OK' if rep.ok else 'FAILED'} in {checked:.1f} s; peak RSS {peak_rss_mib():.0f} MiB"
        )


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--libraries", default="mct,nct", help="comma-separated: mct, nct, mixed (default mct,nct)")
    ap.add_argument("--n", type=int, default=50, help="random functions per library (default 50)")
    ap.add_argument("--seed", type=int, default=2024, help="sample seed (default 2024)")
    ap.add_argument("--cache", type=Path, default=None, help="cache directory (default: EXACTSYN_CACHE or per-user)")
    ap.add_argument("--rebuild", action="store_true", help="build the tables now even if cached (measures the build)")
    ap.add_argument("--time-limit", type=float, default=None, help="seconds per function (default none)")
    ap.add_argument("--no-hard", action="store_true", help="skip the hard instances")
    ap.add_argument("--baseline-limit", type=float, default=10.0,
                    help="seconds per function for the search without class tables (0: skip; default 10)")
    args = ap.parse_args()
    libraries = [x.strip() for x in args.libraries.split(",") if x.strip()]
    print(f"exactsyn 4-line class tables benchmark; cache {args.cache or tables.resolve_cache_dir()}")
    for lib in libraries:
        build_or_use(lib, args.cache, args.rebuild)
        print(f"peak RSS of this process so far: {peak_rss_mib():.0f} MiB")
    if args.cache is not None:
        os.environ["EXACTSYN_CACHE"] = str(args.cache)  # the search reads the cache from the environment
    for lib in libraries if args.n > 0 else []:
        run_sample(lib, args.n, args.seed, args.time_limit, args.baseline_limit)
    if not args.no_hard:
        run_hard(HARD, set(libraries))
    os.system("uptime")
    print(f"peak RSS of this process: {peak_rss_mib():.0f} MiB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
