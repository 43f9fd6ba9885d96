"""How closely `exactsyn synth --time-limit L` keeps its limit, and what the fallback gives.

Each run is a fresh process (start-up and printing included in the wall time, as a user
sees it).  Prints, per run: the limit, the wall time, the overshoot against the promise
"within 10 % + 1 s", the peak memory of the process, the circuit's size, whether it is
proven, and the proven lower bound.

    python scripts/bench_time_limit.py                       # 4-line nct/mct/mixed, 5 and 6 lines
    python scripts/bench_time_limit.py --set random --limits 10 --seeds 1,2,3   # 3, 5, 6 lines
    python scripts/bench_time_limit.py --limits 5,20 --set four --seeds 1,2,3
    python scripts/bench_time_limit.py --set four --limits 20 --objective cost --cost ncv   # objectives too
"""

from __future__ import annotations

import argparse
import json
import random
import subprocess
import sys
import time

from exactsyn.specification.samples import random_circuit, random_permutation


def random_even(n: int, seed: int) -> list[int]:
    return list(random_permutation(n, random.Random(seed), even=True))


def from_circuit(n: int, gates: int, seed: int) -> list[int]:
    """A function made by a seeded random MCT circuit of ``gates`` gates (at most that many are needed)."""
    return list(random_circuit(n, gates, random.Random(seed), max_controls=min(3, n - 2)).permutation())


def cases(which: str, seeds: list[int]) -> list[tuple[str, str, list[int]]]:
    out: list[tuple[str, str, list[int]]] = []
    if which in ("all", "four"):
        for s in seeds:
            p = random_even(4, s)
            out += [(f"random4-{s}", lib, p) for lib in ("nct", "mct", "mixed")]
    if which in ("all", "random"):  # random permutations: most need more gates than any search reaches
        for s in seeds:
            out += [(f"random{n}-{s}", lib, random_even(n, s)) for n in (3, 5, 6) for lib in ("nct", "mct")]
    if which in ("all", "wide"):
        for s in seeds[:2]:
            out.append((f"circuit5x22-{s}", "mct", from_circuit(5, 22, s)))
            out.append((f"circuit6x24-{s}", "mct", from_circuit(6, 24, s)))
            out.append((f"circuit6x24-{s}", "nct", from_circuit(6, 24, s)))
    return out


# Runs the command line in a fresh interpreter and reports its peak resident memory (and its
# largest child's: the racers) on stderr at exit.
PEAK = (
    "import atexit, resource, sys\n"
    "def peak():\n"
    "    own = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss\n"
    "    kids = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss\n"
    "    print('PEAK_KIB', own + kids, file=sys.stderr)\n"
    "atexit.register(peak)\n"
    "from exactsyn.cli import main\n"
    "main(args=sys.argv[1:], prog_name='exactsyn')\n"
)


def run(perm: list[int], library: str, limit: float, extra: list[str]) -> dict[str, object]:
    cmd = [sys.executable, "-c", PEAK, "synth", "--perm", ",".join(map(str, perm)), "--library", library,
           "--time-limit", str(limit), "--format", "json", "-q", *extra]
    t0 = time.perf_counter()
    r = subprocess.run(cmd, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    peak = int(r.stderr.split("PEAK_KIB")[1].split()[0]) / 1024 if "PEAK_KIB" in r.stderr else float("nan")
    data = json.loads(r.stdout) if r.stdout.strip().startswith("{") else {}
    return {"code": r.returncode, "wall": wall, "peak": peak, "gates": data.get("gate_count"),
            "optimal": data.get("optimal"), "lower": data.get("lower_bound"), "err": r.stderr.strip()[-200:]}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--limits", default="5,20")
    ap.add_argument("--set", default="all", choices=["all", "four", "random", "wide"])
    ap.add_argument("--seeds", default="1,2")
    ap.add_argument("--objective", default="gates", help="passed to synth --objective")
    ap.add_argument("--cost", default="ncv", help="passed to synth --cost with an objective other than gates")
    args = ap.parse_args()
    extra = [] if args.objective == "gates" else ["--objective", args.objective, "--cost", args.cost]
    limits = [float(x) for x in args.limits.split(",")]
    seeds = [int(x) for x in args.seeds.split(",")]
    print(f"{'instance':<16} {'lib':<6} {'limit':>6} {'wall':>7} {'allowed':>8} {'over':>6}  {'peak MiB':>8}  result")
    worst = 0.0
    for name, lib, perm in cases(args.set, seeds):
        for limit in limits:
            res = run(perm, lib, limit, extra)
            allowed = 1.1 * limit + 1.0
            over = float(res["wall"]) - allowed  # type: ignore[arg-type]
            worst = max(worst, float(res["wall"]) / limit)  # type: ignore[arg-type]
            what = (f"{res['gates']} gates, {'proven' if res['optimal'] else 'not proven'}, lower bound {res['lower']}"
                    if res["gates"] is not None else f"exit {res['code']}: {res['err']}")
            flag = "  OVER" if over > 0 else ""
            print(f"{name:<16} {lib:<6} {limit:>6.0f} {res['wall']:>7.2f} {allowed:>8.1f} {over:>+6.2f}  "
                  f"{res['peak']:>8.0f}  {what}{flag}", flush=True)
    print(f"largest wall / limit: {worst:.3f}")


if __name__ == "__main__":
    main()
