"""Experiment: one incremental solver across k (activation literals) versus a fresh solver per k.

Prints numbers; not a test.  Both use the default onehot encoding and cheap bounds
(no distance tables), CaDiCaL 1.9.5, no certificates (LRAT under assumptions ends in a
clause over the assumptions, not the empty clause, so certificates use fresh solvers).

    python scripts/exp_incremental.py --set hard3 --limit 100
    python scripts/exp_incremental.py --set hwb4 --kmax 9
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from pysat.formula import IDPool  # noqa: E402
from pysat.solvers import Solver  # noqa: E402

from exactsyn.core.library import make_library  # noqa: E402
from exactsyn.sat.encode import encode  # noqa: E402
from exactsyn.sat.solver import solve  # noqa: E402
from exactsyn.search.bounds import lower_bound  # noqa: E402
from exactsyn.specification.reversible import Spec, from_permutation  # noqa: E402


def fresh(spec: Spec, lib, kmax: int) -> tuple[int | None, float]:  # type: ignore[no-untyped-def]
    t0 = time.perf_counter()
    for k in range(lower_bound(spec, lib).value, kmax + 1):
        enc = encode(spec, lib, k)
        out = solve(enc.clauses)
        if out.status == "sat":
            circ = enc.decode(out.model or ())
            assert spec.accepts(circ.permutation())
            return k, time.perf_counter() - t0
    return None, time.perf_counter() - t0


def incremental(spec: Spec, lib, kmax: int) -> tuple[int | None, float]:  # type: ignore[no-untyped-def]
    t0 = time.perf_counter()
    pool = IDPool()
    added: set[tuple[int, ...]] = set()
    with Solver(name="cadical195") as s:
        for k in range(lower_bound(spec, lib).value, kmax + 1):
            enc = encode(spec, lib, k, guard=True, pool=pool)
            for cl in enc.clauses:
                key = tuple(cl)
                if key not in added:
                    added.add(key)
                    s.add_clause(cl)
            act = pool.id(("act", k))
            if s.solve(assumptions=[act]):
                circ = enc.decode(s.get_model() or ())
                assert spec.accepts(circ.permutation())
                return k, time.perf_counter() - t0
            s.add_clause([-act])
    return None, time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--set", default="hard3")
    ap.add_argument("--limit", type=int, default=100)
    ap.add_argument("--kmax", type=int, default=12)
    args = ap.parse_args()
    if args.set == "hwb4":
        import tomllib

        perm = tomllib.loads((ROOT / "instances" / "hwb4.toml").read_text())["permutation"]
        items = [("mct", perm)]
    else:
        path = ROOT / "instances" / "sets" / f"{args.set}.jsonl"
        recs = [json.loads(x) for x in path.read_text().splitlines() if x.strip()][: args.limit]
        items = [(r["library"], r["permutation"]) for r in recs]
    tf = ti = 0.0
    for lib_name, perm in items:
        spec = from_permutation(perm)
        lib = make_library(lib_name, spec.lines)
        kf, a = fresh(spec, lib, args.kmax)
        ki, b = incremental(spec, lib, args.kmax)
        assert kf == ki, (kf, ki)
        tf, ti = tf + a, ti + b
    print(f"set {args.set}: {len(items)} functions, k up to {args.kmax}")
    print(f"fresh solver per k: {tf:.2f} s   incremental (activation literals): {ti:.2f} s   ratio {tf / ti:.2f}")


if __name__ == "__main__":
    main()
