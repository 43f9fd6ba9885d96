#!/usr/bin/env python3
"""Benchmark of the 5-line class tables: seeded functions of 9 to 12 MCT gates.

For every length in ``--lengths`` it draws ``--n`` functions from seeded random circuits of
that many gates (:func:`exactsyn.specification.samples.random_library_function`, one
``random.Random(seed·100 + length)`` per length), proves each through the public API
(``exactsyn.synthesise``, the path of ``synth``: the cached 5-line class table, then SAT
from its bound if the table does not settle the function in time) under ``--time-limit``
seconds per function, and prints per function: the optimum or the proven interval, wall
and processor seconds (the machine may be shared), how the table answered, the load
average; then per length: proven/total, median and max seconds, the distribution of
optima and the peak RSS of this process so far (the table is memory-mapped: pages it
touches count).  ``--budget`` stops drawing new
functions of a length once that many seconds went into it, so a long length can be run
"as far as time allows" (the summary then says how many were tried).  Every circuit is
simulated by the search before it is returned.

``--given`` asks another question: each function's generating circuit is saved and given
as the spec (``synth circuit.qasm``), so it is the first upper bound and the table only has
to show that nothing shorter exists (an optimum equal to the length then needs no search
for a circuit).  Not the same task as synthesis from the function; report it apart.

The table must be cached (``exactsyn tables build --lines 5 --library mct``; set
``EXACTSYN_CACHE`` or ``--cache``); its depth, classes, size and recorded build time are
printed first.

    .venv/bin/python scripts/bench_tables5.py                                  # 9..12 gates, 10 each
    .venv/bin/python scripts/bench_tables5.py --lengths 9,10,11 --time-limit 300
    .venv/bin/python scripts/bench_tables5.py --lengths 12 --time-limit 1800 --budget 3600
    .venv/bin/python scripts/bench_tables5.py --lengths 12 --given           # is the generating circuit optimal?
"""

from __future__ import annotations

import argparse
import os
import random
import resource
import statistics
import sys
import tempfile
import time
from collections import Counter
from dataclasses import dataclass
from pathlib import Path

from exactsyn import synthesise, tables
from exactsyn.core.circuit import Circuit
from exactsyn.core.library import make_library
from exactsyn.io.formats import write_circuit
from exactsyn.specification.samples import random_library_circuit

LINES = 5


@dataclass(frozen=True)
class Row:
    """One function's outcome."""

    length: int
    index: int
    optimal: bool
    gates: int | None
    lower: int
    seconds: float
    cpu: float  # processor seconds of this process (all its threads): less dependent on the load
    method: str


def peak_rss_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def load() -> str:
    return "load {:.2f} {:.2f} {:.2f}".format(*os.getloadavg())


def table_line(library: str, cache: Path | None) -> str | None:
    """The cached table's depth, classes, size, hash and build time; None when it is not cached."""
    found = tables.info(library, cache=cache, lines=LINES)
    if not found or not found[0].present:
        return None
    t = found[0]
    build = (t.manifest or {}).get("built", {})
    built = f", built in {float(build['seconds']):.0f} s" if "seconds" in build else ""
    return (f"{library}: {LINES} lines, depth {t.depth}, {sum(t.classes):,} classes, "
            f"{t.bytes / 2**30:.2f} GiB, content hash {(t.content_hash or '')[:16]}{built}")  # fmt: skip


def prove(circuit: Circuit, library: str, time_limit: float | None, length: int, index: int, given: bool) -> Row:
    perm = circuit.permutation()
    with tempfile.TemporaryDirectory() as tmp:
        spec: list[int] | str = list(perm)
        if given:
            spec = str(write_circuit(circuit, Path(tmp) / "given.json"))
        t0, c0 = time.perf_counter(), time.process_time()
        syn = synthesise(spec, library=library, time_limit=time_limit)
        seconds, cpu = time.perf_counter() - t0, time.process_time() - c0
    res = syn.gate_result
    claim = res.class_table
    method = claim.method if claim is not None else res.source
    if syn.optimal and "given" in res.how:
        method += ", then the given circuit met the bound"
    if syn.circuit is not None:
        assert syn.circuit.permutation() == perm  # the search simulated it; say so again here
    return Row(length, index, syn.optimal, syn.gate_count if syn.circuit is not None else None,
               res.lower_bound, seconds, cpu, method)  # fmt: skip


def run_length(length: int, args: argparse.Namespace) -> list[Row]:
    lib = make_library(args.library, LINES)
    rng = random.Random(args.seed * 100 + length)
    circuits = [random_library_circuit(lib, length, rng) for _ in range(args.n)]  # random_library_function's draws
    rows: list[Row] = []
    t_length = time.perf_counter()
    for i, c in enumerate(circuits):
        if args.budget is not None and time.perf_counter() - t_length > args.budget:
            print(f"  {length} gates: budget of {args.budget:.0f} s spent, {args.n - i} not tried", flush=True)
            break
        row = prove(c, args.library, args.time_limit, length, i, args.given)
        rows.append(row)
        got = f"optimum {row.gates}" if row.optimal else f"in [{row.lower}, {row.gates}]"
        print(f"  {length} gates #{i}: {got}, {row.seconds:.1f} s ({row.cpu:.1f} s CPU), {row.method}, {load()}",
              flush=True)  # fmt: skip
    return rows


def summary(length: int, rows: list[Row], n: int) -> str:
    proven = [r for r in rows if r.optimal]
    secs = [r.seconds for r in proven]
    cpus = [r.cpu for r in proven]
    med = f"{statistics.median(secs):.1f} s ({statistics.median(cpus):.1f} s CPU)" if secs else "-"
    mx = f"{max(secs):.1f} s ({max(cpus):.1f} s CPU)" if secs else "-"
    optima = Counter(r.gates for r in proven)
    dist = ", ".join(f"{k}: {optima[k]}" for k in sorted(optima)) or "-"
    open_ = [f"[{r.lower}, {r.gates}]" for r in rows if not r.optimal]
    tried = f" ({len(rows)} of {n} tried)" if len(rows) < n else ""
    return (f"{length:>3} gates: proven {len(proven)}/{len(rows)}{tried}, median {med}, max {mx}, "
            f"optima {{{dist}}}" + (f", open {' '.join(open_)}" if open_ else "")
            + f", peak RSS {peak_rss_mib():.0f} MiB")  # fmt: skip


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--lengths", default="9,10,11,12", help="circuit lengths, comma-separated (default 9,10,11,12)")
    ap.add_argument("--n", type=int, default=10, help="functions per length (default 10)")
    ap.add_argument("--seed", type=int, default=21, help="sample seed (default 21)")
    ap.add_argument("--library", default="mct", choices=["mct", "nct", "mixed"], help="gate library (default mct)")
    ap.add_argument("--cache", type=Path, default=None, help="table cache (default: EXACTSYN_CACHE or per-user)")
    ap.add_argument("--time-limit", type=float, default=None, help="seconds per function (default none)")
    ap.add_argument("--budget", type=float, default=None, help="seconds per length; no new function after it")
    ap.add_argument("--given", action="store_true", help="give each generating circuit as the spec (an upper bound)")
    args = ap.parse_args()
    try:
        lengths = [int(v) for v in args.lengths.split(",") if v]
    except ValueError:
        ap.error(f"--lengths: not a list of integers: {args.lengths}")
    if args.n < 1 or any(m < 0 for m in lengths):
        ap.error("--n must be positive and lengths not negative")
    if args.cache is not None:
        os.environ["EXACTSYN_CACHE"] = str(args.cache)
    line = table_line(args.library, args.cache)
    if line is None:
        print(f"no cached 5-line {args.library} table: run `exactsyn tables build --lines 5 --library {args.library}`",
              file=sys.stderr)  # fmt: skip
        return 2
    print(line, f"({load()})", flush=True)
    summaries = []
    for length in lengths:
        rows = run_length(length, args)
        summaries.append(summary(length, rows, args.n))
        print(summaries[-1], flush=True)
    limit = "none" if args.time_limit is None else f"{args.time_limit:.0f} s"
    given = ", generating circuits given" if args.given else ""
    print(f"\n{args.library}, seed {args.seed}, time limit per function {limit}{given}, {load()}")
    for line in summaries:
        print(line)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
