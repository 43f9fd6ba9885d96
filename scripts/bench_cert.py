"""Certificate size and check time versus solve time.

Prints numbers; not a test.

    python scripts/bench_cert.py --set hard3            # the 577 functions needing 8 NCT gates
    python scripts/bench_cert.py --set hwb4 --bounds table   # hwb4 with mct, table bound for k >= 8
    python scripts/bench_cert.py --set hard3 --limit 50
"""

from __future__ import annotations

import argparse
import resource
import shutil
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from bench import load_set  # noqa: E402  (scripts/bench.py, beside this file)

import exactsyn as ex  # noqa: E402
from exactsyn.specification.reversible import Spec, from_permutation  # noqa: E402


def specs_for(name: str, limit: int) -> tuple[str, list[Spec]]:
    """The bundled instance sets (instances/), read as scripts/bench.py reads them."""
    if name not in ("hard3", "hwb4"):
        raise SystemExit(f"unknown set {name}")
    recs = load_set(name)[: limit or None]
    return recs[0]["library"], [from_permutation(r["permutation"], r["name"]) for r in recs]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--set", default="hard3")
    ap.add_argument("--limit", type=int, default=0)
    ap.add_argument("--verbose", action="store_true")
    ap.add_argument("--bounds", default="cheap", help="cheap (default: an LRAT proof for every refuted k) or table")
    args = ap.parse_args()
    lib_name, specs = specs_for(args.set, args.limit)
    root = Path(tempfile.mkdtemp(prefix="certbench-"))
    solve_t = check_t = plain_t = 0.0
    raw_bytes = gz_bytes = 0
    failures = 0
    try:
        for spec in specs:
            t0 = time.perf_counter()
            plain = ex.synthesise(spec, library=lib_name, bounds=args.bounds)
            plain_t += time.perf_counter() - t0
            d = root / spec.name
            t0 = time.perf_counter()
            res = ex.synthesise(spec, library=lib_name, certificate=d, bounds=args.bounds)
            solve_t += time.perf_counter() - t0
            t0 = time.perf_counter()
            rep = ex.check_certificate(d)
            check_t += time.perf_counter() - t0
            failures += not rep.ok
            raw = sum(s.proof_bytes for s in res.steps)
            gz = sum(p.stat().st_size for p in d.iterdir())
            raw_bytes += raw
            gz_bytes += gz
            assert plain.circuit is not None and res.circuit is not None
            if args.verbose or len(specs) == 1:
                for s in res.steps:
                    print(f"  {spec.name} k={s.k} {s.status} {s.seconds:.2f}s proof={s.proof_bytes} B")
        print(f"set {args.set}: {len(specs)} functions, certificates rejected: {failures}")
        print(f"solve without proofs: {plain_t:.2f} s   solve with LRAT: {solve_t:.2f} s")
        print(f"check (re-derive CNF + LRAT + simulate): {check_t:.2f} s   ratio check/solve: {check_t / solve_t:.2f}")
        print(f"proof size: {raw_bytes / 2**20:.1f} MiB LRAT text, {gz_bytes / 2**20:.1f} MiB on disk (gzip)")
        peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
        print(f"peak memory: {peak:.0f} MiB")
    finally:
        shutil.rmtree(root, ignore_errors=True)


if __name__ == "__main__":
    main()
