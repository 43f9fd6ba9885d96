"""Cube and conquer on hard 5-line functions: proofs, scaling, and a projection to more cores.

Subcommands (each prints numbers; nothing here is a test):

``instances``
    seeded 5-line ``mct`` functions built from random circuits of the given lengths, each
    synthesised by ``exactsyn.synthesise`` in a fresh process with the given split mode,
    workers and time cap, optionally with a certificate that is then checked.  Per
    function: the optimum (or the interval), per k the status, wall seconds and cubes,
    and the processor time of the run and its worker processes.

``scaling``
    one k-query of one such function, split into cubes and solved on each engine of
    ``--engines`` (``local:1``, ``local:2``, ``dask:2``, ``dask:4`` …).  Prints wall time,
    the processor time summed over the cubes, the largest cube, and two efficiencies
    against the first engine: measured ``T₁ / (p·T_p)`` from wall times (meaningless on a
    loaded machine, printed anyway) and scheduled — the wall time the measured per-cube
    processor times give when the cubes are handed out in order to ``p`` idle workers.

``project``
    from the per-cube processor times of a split query in a certificate
    (``result.json``), the wall time the same cubes would take on 1, 2, 4, … idle cores
    (list scheduling in cube order), and the fewest cores that finish within ``--hours``.

Examples:
  python scripts/bench_cubes.py instances --lengths 11,12,13,14 --per-length 1 --jobs 2 --cap 1800 --certificate
  python scripts/bench_cubes.py scaling --length 12 --seed 2 --k 9 --engines local:1,local:2,dask:2,dask:4
  python scripts/bench_cubes.py project CERT_DIR --k 11 --hours 12
"""

from __future__ import annotations

import argparse
import heapq
import json
import multiprocessing as mp
import os
import random
import resource
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))


def built(length: int, seed: int) -> list[int]:
    from exactsyn.core.library import make_library
    from exactsyn.specification.samples import random_library_function

    return list(random_library_function(make_library("mct", 5), length, random.Random(seed)))


def cpu_now() -> float:
    me = resource.getrusage(resource.RUSAGE_SELF)
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return me.ru_utime + me.ru_stime + kids.ru_utime + kids.ru_stime


def schedule(times: list[float], workers: int) -> float:
    """Makespan of handing ``times`` out in order to ``workers`` idle workers."""
    free = [0.0] * workers
    heapq.heapify(free)
    end = 0.0
    for t in times:
        start = heapq.heappop(free)
        heapq.heappush(free, start + t)
        end = max(end, start + t)
    return end


# ------------------------------------------------------------------ instances
def _one_instance(perm: list[int], cfg: dict[str, Any], out: Any) -> None:
    import exactsyn as ex

    c0, t0 = cpu_now(), time.perf_counter()
    with tempfile.TemporaryDirectory() as d:
        cert = Path(d) / "cert" if cfg["certificate"] else None
        syn = ex.synthesise(
            perm,
            library="mct",
            jobs=cfg["jobs"],
            split=cfg["split"],
            scheduler=cfg["scheduler"],
            cube_depth=cfg["depth"],
            time_limit=cfg["cap"],
            certificate=cert,
        )
        wall = time.perf_counter() - t0
        check = None
        if cert is not None:
            t1 = time.perf_counter()
            rep = ex.check_certificate(cert)
            check = (rep.ok, time.perf_counter() - t1)
            if cfg["keep"]:
                keep = Path(cfg["keep"]) / f"cert-{cfg['name']}"
                import shutil

                shutil.copytree(cert, keep, dirs_exist_ok=True)
    steps = []
    for q in syn.gate_result.steps:
        row: dict[str, Any] = {"k": q.k, "status": str(q.status), "seconds": round(q.seconds, 1)}
        if q.split is not None:
            cpus = [c.cpu_seconds for c in q.split.cubes]
            row |= {"cubes": q.split.counts(), "cube_cpu_sum": round(sum(cpus), 1), "cube_cpu_max": round(max(cpus), 1)}
        steps.append(row)
    out.put(
        {
            "gate_count": syn.gate_count,
            "optimal": syn.optimal,
            "lower": syn.lower_bound,
            "source": syn.gate_result.source,
            "table": None if syn.gate_result.table_bound is None else syn.gate_result.table_bound.value,
            "wall": round(wall, 1),
            "cpu": round(cpu_now() - c0, 1),
            "check": check,
            "steps": steps,
        }
    )


def instances(args: argparse.Namespace) -> None:
    cfg = {
        "jobs": args.jobs,
        "split": args.split,
        "scheduler": args.scheduler,
        "depth": args.depth,
        "cap": args.cap,
        "certificate": args.certificate,
        "keep": args.keep,
    }
    print(f"config {cfg}; load average {os.getloadavg()}", flush=True)
    ctx = mp.get_context("spawn")
    for length in (int(x) for x in args.lengths.split(",")):
        for i in range(args.per_length):
            seed = args.seed0 + 100 * length + i
            perm = built(length, seed)
            q: Any = ctx.Queue()
            p = ctx.Process(target=_one_instance, args=(perm, cfg | {"name": f"{length}-{seed}"}, q))
            load0 = os.getloadavg()[0]
            p.start()
            res = q.get()
            p.join()
            res |= {"length": length, "seed": seed, "load": (round(load0, 1), round(os.getloadavg()[0], 1))}
            print(json.dumps(res), flush=True)


# ------------------------------------------------------------------ scaling
def scaling(args: argparse.Namespace) -> None:
    from exactsyn.core.library import make_library
    from exactsyn.sat.conquer import CubeOptions, conquer
    from exactsyn.sat.cube_engines import DaskCubes, LocalCubes
    from exactsyn.sat.cube_split import split_query
    from exactsyn.sat.encode import encode
    from exactsyn.specification.reversible import from_permutation

    lib = make_library("mct", 5)
    perm = built(args.length, args.seed)
    enc = encode(from_permutation(perm), lib, args.k)
    plan = split_query(enc, "targets", args.depth)
    print(f"function len={args.length} seed={args.seed} k={args.k}: {len(plan.cubes)} cubes; "
          f"load average {os.getloadavg()}", flush=True)  # fmt: skip
    base: tuple[float, float, int] | None = None
    for spec in args.engines.split(","):
        kind, n = spec.split(":")
        p = int(n)
        engine = LocalCubes(p) if kind == "local" else DaskCubes("local", p)
        c0, t0, load0 = cpu_now(), time.perf_counter(), os.getloadavg()[0]
        won = conquer(enc, CubeOptions(p), engine=engine, certify=args.certify, plan=plan,
                      proof_sink=(lambda stem, proof: stem) if args.certify else None, stem="k")  # fmt: skip
        wall = time.perf_counter() - t0
        cpus = [c.cpu_seconds for c in won.split.cubes]
        ideal = schedule(cpus, p)
        line = (f"{spec:8} status={won.status} wall={wall:7.1f}s cube_cpu_sum={sum(cpus):7.1f}s "
                f"cube_cpu_max={max(cpus):6.1f}s process_cpu={cpu_now() - c0:7.1f}s scheduled_wall={ideal:7.1f}s "
                f"load={load0:.1f}->{os.getloadavg()[0]:.1f}")  # fmt: skip
        if base is None:
            base = (wall, sum(cpus), p)
        else:
            b_wall, b_cpu, b_p = base
            measured = (b_wall * b_p) / (wall * p)
            sched = (schedule([b_cpu], 1) * b_p) / (ideal * p) if ideal > 0 else 0.0
            line += f" efficiency measured={measured:.2f} scheduled={sched:.2f} cpu_ratio={sum(cpus) / b_cpu:.2f}"
        print(line, flush=True)


# ------------------------------------------------------------------ projection
def project(args: argparse.Namespace) -> None:
    data = json.loads((Path(args.cert) / "result.json").read_text())
    for q in data["queries"]:
        if q.get("split") is None or (args.k is not None and q["k"] != args.k):
            continue
        cubes = q["split"]["cubes"]
        cpus = [c.get("cpu_seconds") or c["seconds"] for c in cubes]
        total = sum(cpus)
        print(f"k={q['k']} {q['status']}: {len(cubes)} cubes, cpu sum {total:.0f}s, max {max(cpus):.0f}s, "
              f"median {sorted(cpus)[len(cpus) // 2]:.0f}s")  # fmt: skip
        for p in (1, 2, 4, 8, 16, 32, 64):
            span = schedule(cpus, p)
            print(f"   {p:3d} cores: {span / 3600:6.2f} h  efficiency {total / (p * span):.2f}")
        budget = args.hours * 3600
        need = next((p for p in range(1, 4097) if schedule(cpus, p) <= budget), None)
        print(f"   fewest cores within {args.hours} h: {need} (bounded below by the largest cube, {max(cpus):.0f}s)")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = ap.add_subparsers(dest="cmd", required=True)
    a = sub.add_parser("instances")
    a.add_argument("--lengths", default="11,12,13,14")
    a.add_argument("--per-length", type=int, default=1)
    a.add_argument("--seed0", type=int, default=2000)
    a.add_argument("--jobs", type=int, default=2)
    a.add_argument("--split", default="cubes")
    a.add_argument("--scheduler", default=None)
    a.add_argument("--depth", type=int, default=2)
    a.add_argument("--cap", type=float, default=600.0)
    a.add_argument("--certificate", action="store_true")
    a.add_argument("--keep", default=None, help="copy each certificate into this directory")
    b = sub.add_parser("scaling")
    b.add_argument("--length", type=int, default=12)
    b.add_argument("--seed", type=int, default=2)
    b.add_argument("--k", type=int, default=9)
    b.add_argument("--depth", type=int, default=2)
    b.add_argument("--engines", default="local:1,local:2,dask:2,dask:4")
    b.add_argument("--certify", action="store_true")
    c = sub.add_parser("project")
    c.add_argument("cert")
    c.add_argument("--k", type=int, default=None)
    c.add_argument("--hours", type=float, default=12.0)
    args = ap.parse_args()
    {"instances": instances, "scaling": scaling, "project": project}[args.cmd](args)


if __name__ == "__main__":
    main()
