"""Speed benchmark: exactsyn's default pipeline against the textbook baseline, in one run.

Every (instance, configuration) runs in a fresh process, so the peak memory is its own
and no table or cache carries over.  Prints, per instance and configuration: optimum,
time per k, total time, conflicts, peak memory; then per set the totals and the
baseline / default ratio.  A run past ``--cap`` seconds is reported as "> cap" and the
ratio as a lower bound.  Medians over ``--repeat`` runs.

Configurations:
  default     onehot encoding, distance-table bounds, 2-process race, no certificate
  default+cert  the same, writing and (separately timed) checking a certificate
  sat-only    onehot encoding, cheap bounds only, 1 process (the SAT engine alone)
  baseline    textbook encoding (no symmetry breaking), cheap bounds, 1 process

Examples:
  python scripts/bench.py --set hwb4 --repeat 3 --cap 600
  python scripts/bench.py --set hard3 --configs default,sat-only
  python scripts/bench.py --set five-line --configs default+cert,baseline --cap 300
"""

from __future__ import annotations

import argparse
import json
import multiprocessing as mp
import resource
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

CONFIGS = {
    "default": {"encoding": "onehot", "bounds": "table", "jobs": 2, "cert": False},
    "default+cert": {"encoding": "onehot", "bounds": "table", "jobs": 2, "cert": True},
    "sat-only": {"encoding": "onehot", "bounds": "cheap", "jobs": 1, "cert": False},
    "baseline": {"encoding": "textbook", "bounds": "cheap", "jobs": 1, "cert": False},
}


def load_set(name: str) -> list[dict]:  # type: ignore[type-arg]
    if name == "hwb4":
        import tomllib

        data = tomllib.loads((ROOT / "instances" / "hwb4.toml").read_text())
        return [{"name": "hwb4", "library": "mct", "permutation": data["permutation"], "optimum": 11}]
    path = ROOT / "instances" / "sets" / f"{name}.jsonl"
    return [json.loads(line) for line in path.read_text().splitlines() if line.strip()]


def _run_one(inst: dict, config: str, cap: float, out: mp.Queue) -> None:  # type: ignore[type-arg]
    import exactsyn as ex

    cfg = CONFIGS[config]
    spec = ex.from_permutation(inst["permutation"], inst["name"])
    check_s = None
    with tempfile.TemporaryDirectory() as d:
        t0 = time.perf_counter()
        syn = ex.synthesise(
            spec,
            library=inst["library"],
            encoding=str(cfg["encoding"]),
            bounds=str(cfg["bounds"]),
            jobs=int(cfg["jobs"]),  # type: ignore[call-overload]
            time_limit=cap,
            certificate=d if cfg["cert"] else None,
        )
        res = syn.gate_result
        total = time.perf_counter() - t0
        if cfg["cert"]:
            t1 = time.perf_counter()
            rep = ex.check_certificate(d)
            check_s = time.perf_counter() - t1
            assert rep.ok, "certificate rejected"
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    out.put(
        {
            "optimum": len(res.circuit) if res.circuit and res.optimal else None,
            "lower": res.lower_bound,
            "total": total,
            "check": check_s,
            "steps": [(s.k, s.status, round(s.seconds, 2), s.conflicts) for s in res.steps],
            "table": None if res.table_bound is None else res.table_bound.value,
            "conflicts": sum(s.conflicts or 0 for s in res.steps),  # a Kissat racer reports none
            "peak_mib": peak,
            "proven": res.optimal,
        }
    )


IN_PROCESS = False


def run(inst: dict, config: str, cap: float) -> dict:  # type: ignore[type-arg]
    if IN_PROCESS:
        q0: mp.Queue = mp.get_context("fork").Queue()  # type: ignore[type-arg]
        _run_one(inst, config, cap, q0)
        return q0.get()  # type: ignore[no-any-return]
    ctx = mp.get_context("spawn")
    q: mp.Queue = ctx.Queue()  # type: ignore[type-arg]
    p = ctx.Process(target=_run_one, args=(inst, config, cap, q))
    p.start()
    res = q.get()
    p.join()
    return res  # type: ignore[no-any-return]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--set", action="append", dest="sets", help="hwb4, hard3, five-line (repeatable)")
    ap.add_argument("--configs", default="default,default+cert,baseline")
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--cap", type=float, default=600.0, help="seconds per run")
    ap.add_argument("--limit", type=int, default=0, help="first N instances of each set")
    ap.add_argument("--quiet", action="store_true", help="no per-instance lines")
    ap.add_argument(
        "--in-process",
        action="store_true",
        help="run everything in this process (tables built once, as in a batch; peak memory is cumulative)",
    )
    args = ap.parse_args()
    global IN_PROCESS
    IN_PROCESS = args.in_process
    configs = args.configs.split(",")
    for set_name in args.sets or ["hwb4"]:
        insts = load_set(set_name)
        if args.limit:
            insts = insts[: args.limit]
        totals: dict[str, list[float]] = {c: [] for c in configs}
        capped: dict[str, int] = {c: 0 for c in configs}
        peaks: dict[str, float] = {c: 0.0 for c in configs}
        wrong = 0
        for inst in insts:
            for config in configs:
                runs = [run(inst, config, args.cap) for _ in range(args.repeat)]
                med = statistics.median(r["total"] for r in runs)
                r0 = runs[0]
                totals[config].append(med)
                peaks[config] = max(peaks[config], max(r["peak_mib"] for r in runs))
                if not r0["proven"]:
                    capped[config] += 1
                elif r0["optimum"] != inst["optimum"]:
                    wrong += 1
                if not args.quiet:
                    mark = {"sat": "S", "unsat": "U"}
                    per_k = " ".join(f"{k}:{mark.get(st, '?')}{sec}" for k, st, sec, _ in r0["steps"])
                    shown = f"{med:8.2f}s" if r0["proven"] else f"> {args.cap:.0f}s"
                    chk = (
                        f" check={statistics.median(r['check'] for r in runs):.2f}s" if r0["check"] is not None else ""
                    )
                    print(
                        f"{inst['name']:14} {config:13} opt={r0['optimum']} total={shown}{chk} "
                        f"conflicts={r0['conflicts']} peak={r0['peak_mib']:.0f}MiB table={r0['table']} k: {per_k}",
                        flush=True,
                    )
        print(f"== set {set_name}: {len(insts)} instances, runs per instance {args.repeat} (median)")
        for config in configs:
            t = totals[config]
            print(
                f"   {config:13} total={sum(t):9.2f}s median={statistics.median(t):8.3f}s max={max(t):8.2f}s "
                f"not proven within cap={capped[config]} peak={peaks[config]:.0f}MiB"
            )
        print(f"   optimum differs from the stored proven value: {wrong}")
        if "baseline" in configs:
            base = sum(totals["baseline"])
            for config in configs:
                if config == "baseline" or sum(totals[config]) == 0:
                    continue
                sign = ">" if capped["baseline"] else ""
                print(f"   speed-up of {config} over baseline: {sign}{base / sum(totals[config]):.1f}x")


if __name__ == "__main__":
    main()
