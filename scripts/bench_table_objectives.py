"""Benchmark: objectives of 4-line functions from the class tables, against the SAT path.

For seeded random 4-line permutations (``mct``) and even ones (``nct``), each asked through
the public API (``exactsyn.synthesise``, the path of ``synth`` and ``batch``) with the class
tables of the per-user cache:

* ``gates-then-cost`` with the cost models ncv, t-count, cnot-count and a user cost table
  (NOT 1, CNOT 2, Toffoli 6, C3X 14): proven/total, median and max seconds per function;
* ``--optima count``: the number of optimal circuits up to commuting gates, proven complete;
* ``depth``: the minimum depth, from the layer table (``exactsyn tables build --library
  mct-layers``; without it the SAT path);

then, in the same run, the SAT path without class tables (a child process whose cache
directory is empty, the distance tables and SAT as before) on the first ``--baseline-n``
functions under ``--baseline-limit`` seconds each: how many it proves and the time ratio
on those.  Peak RSS is read from ``/proc`` (the process's own high-water mark).

    .venv/bin/python scripts/bench_table_objectives.py --n 50 --seed 2024
    .venv/bin/python scripts/bench_table_objectives.py --n 10 --baseline-n 5 --baseline-limit 60
    .venv/bin/python scripts/bench_table_objectives.py --gates 7 --n 10 --baseline-n 10   # a ratio

Random permutations need 11–15 gates, beyond the SAT path's reach; ``--gates K`` asks the
functions of seeded random K-gate circuits instead, short enough for the SAT path to finish,
so the ratio is measured on the same functions in one run.

Prints numbers; it is not a test.  Build the tables first: ``exactsyn tables build``.
"""

from __future__ import annotations

import argparse
import json
import os
import random
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from exactsyn import synthesise, tables
from exactsyn.core.library import make_library
from exactsyn.specification.samples import random_library_function, random_permutation

COST_TABLE = "NOT = 1\nCNOT = 2\nToffoli = 6\nC3X = 14\n"
ASKS = ("ncv", "t-count", "cnot-count", "table", "count", "depth")
#: Gate counts in restricted libraries (not in the default set): the mct gates on a chain of
#: lines (0-1-2-3), whose optimum the mct table bounds and SAT settles from there, and mct
#: capped at 2 controls (the nct gates: its own table answers).
REACH = ("chain", "cap2", "cost")
#: ``cost``: the ncv cost over circuits of any length (the SAT cost loop, started from the
#: tables' gate count; no table answers it).


def hwm() -> int:
    """This process's peak resident memory in bytes (VmHWM)."""
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) * 1024
    return 0


def functions(library: str, n: int, seed: int, gates: int | None = None) -> list[tuple[int, ...]]:
    """Uniform random permutations (even ones for nct), or with ``gates`` the functions of
    seeded random circuits of that many library gates (short ones the SAT path can finish)."""
    rng = random.Random(seed)
    if gates is not None:
        return [random_library_function(make_library(library, 4), gates, rng) for _ in range(n)]
    return [random_permutation(4, rng, even=library == "nct") for _ in range(n)]


def ask(perm: tuple[int, ...], library: str, what: str, cost_file: str, time_limit: float | None) -> dict[str, object]:
    """One question through the API: the answer, whether it is proven, and the time."""
    t0 = time.perf_counter()
    if what in ("chain", "cap2"):
        extra = {"coupling": "chain"} if what == "chain" else {"max_controls": 2}
        syn = synthesise(list(perm), library=library, time_limit=time_limit, **extra)  # type: ignore[arg-type]
        return {"value": syn.gate_count, "proven": syn.optimal, "seconds": time.perf_counter() - t0,
                "gates": syn.gate_count, "lower": syn.lower_bound}  # fmt: skip
    if what == "depth":
        syn = synthesise(list(perm), library=library, objective="depth", time_limit=time_limit)
        obj = syn.objective_result
        value = None if obj is None else obj.value
        return {"value": value, "proven": obj is not None and obj.optimal, "seconds": time.perf_counter() - t0,
                "gates": syn.gate_count}  # fmt: skip
    if what == "cost":
        syn = synthesise(list(perm), library=library, objective="cost", cost="ncv", time_limit=time_limit)
        obj = syn.objective_result
        return {"value": None if obj is None else obj.value, "proven": obj is not None and obj.optimal,
                "seconds": time.perf_counter() - t0, "gates": syn.gate_count}  # fmt: skip
    if what == "count":
        syn = synthesise(list(perm), library=library, optima="count", time_limit=time_limit)
        value = None if syn.optima is None else syn.optima.count
        proven = syn.optima is not None and syn.optima.complete
    else:
        cost = cost_file if what == "table" else what
        syn = synthesise(list(perm), library=library, objective="gates-then-cost", cost=cost, time_limit=time_limit)
        obj = syn.objective_result
        value = None if obj is None else obj.value
        proven = obj is not None and obj.optimal
    return {"value": value, "proven": proven, "seconds": time.perf_counter() - t0, "gates": syn.gate_count}


_CHILD = """
import json, sys
sys.path.insert(0, sys.argv[1])
import bench_table_objectives as b
perms = json.loads(sys.argv[2])
for p in perms:
    row = b.ask(tuple(p), sys.argv[3], sys.argv[4], sys.argv[5], float(sys.argv[6]))
    print(json.dumps(row), flush=True)
"""


def baseline(perms: list[tuple[int, ...]], library: str, what: str, cost_file: str, limit: float) -> list[dict]:
    """The same questions without class tables, in a child process with an empty cache."""
    with tempfile.TemporaryDirectory() as empty:
        env = dict(os.environ, EXACTSYN_CACHE=empty)
        args = [sys.executable, "-c", _CHILD, str(Path(__file__).parent), json.dumps(perms), library, what,
                cost_file, str(limit)]  # fmt: skip
        run = subprocess.run(args, capture_output=True, text=True, check=True, env=env)
    return [json.loads(line) for line in run.stdout.splitlines() if line.startswith("{")]


def report(library: str, what: str, rows: list[dict], base: list[dict]) -> None:
    times = [float(r["seconds"]) for r in rows]
    proven = sum(bool(r["proven"]) for r in rows)
    line = (f"[{library:>3}] {what:<10} proven {proven}/{len(rows)}, median {statistics.median(times):.3f} s, "
            f"max {max(times):.3f} s, peak RSS {hwm() / 2**20:.0f} MiB")  # fmt: skip
    if base:
        done = [(r, b) for r, b in zip(rows, base, strict=False) if b["proven"]]
        agree = all(r["value"] == b["value"] for r, b in done)
        ratios = [float(b["seconds"]) / float(r["seconds"]) for r, b in done]
        ratio = f"ratio median {statistics.median(ratios):.1f}x" if ratios else "no ratio"
        line += (f"; SAT path proves {len(done)}/{len(base)} within its limit, "
                 f"{ratio}, same values: {agree}")  # fmt: skip
    print(line, flush=True)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--libraries", default="mct,nct")
    ap.add_argument("--n", type=int, default=50, help="functions per library (default 50)")
    ap.add_argument("--seed", type=int, default=2024)
    ap.add_argument("--asks", default=",".join(ASKS), help=f"comma-separated of {', '.join(ASKS + REACH)}")
    ap.add_argument("--time-limit", type=float, default=None, help="seconds per question with tables")
    ap.add_argument("--baseline-n", type=int, default=5, help="functions the SAT path is asked too (0: none)")
    ap.add_argument("--baseline-limit", type=float, default=30.0, help="seconds per question on the SAT path")
    ap.add_argument(
        "--gates",
        type=int,
        default=None,
        help="functions of seeded random circuits of this many gates instead of random permutations",
    )
    a = ap.parse_args()
    print(" ".join(sys.argv), "|", time.strftime("%Y-%m-%d %H:%M"), "| load", os.getloadavg()[0])
    with tempfile.TemporaryDirectory() as tmp:
        cost_file = str(Path(tmp) / "costs.toml")
        Path(cost_file).write_text(COST_TABLE)
        for library in a.libraries.split(","):
            tables.load(library)  # fails with the build command when the table is missing
            perms = functions(library, a.n, a.seed, a.gates)
            for what in a.asks.split(","):
                # mct capped at 2 controls has only even gates: ask it of even functions
                asked = functions("nct", a.n, a.seed, a.gates) if what == "cap2" else perms
                rows = [ask(p, library, what, cost_file, a.time_limit) for p in asked]
                base = []
                if a.baseline_n:
                    base = baseline(asked[: a.baseline_n], library, what, cost_file, a.baseline_limit)
                report(library, what, rows, base)


if __name__ == "__main__":
    main()
