"""Generate the benchmark instance sets in instances/sets/ (run once; output is committed).

* hard3.jsonl — the 577 3-line functions that need 8 NCT gates, found by breadth-first
  enumeration (exactsyn.tables.bfs); Shende et al., IEEE TCAD 2003, count 577 of them.
* five-line.jsonl — 5-line functions built from seeded random circuits of 5..8 gates
  (so the optimum is at most the circuit length); the optimum of each is then proven
  with exactsyn itself (every smaller k refuted, with a checked certificate) and stored
  with the building circuit.

    python scripts/make_instances.py
"""

from __future__ import annotations

import json
import random
import sys
import tempfile
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

import exactsyn as ex  # noqa: E402
from exactsyn.core.library import make_library  # noqa: E402
from exactsyn.io.jsonio import gate_to_dict  # noqa: E402
from exactsyn.specification.reversible import from_permutation  # noqa: E402
from exactsyn.tables.bfs import optimal_sizes  # noqa: E402

OUT = ROOT / "instances" / "sets"


def hard3() -> None:
    table = optimal_sizes(make_library("nct", 3))
    rows = table.permutations()[table.sizes == 8]
    with open(OUT / "hard3.jsonl", "w") as fh:
        for i, r in enumerate(rows):
            rec = {"name": f"hard3-{i:03d}", "library": "nct", "permutation": [int(v) for v in r], "optimum": 8}
            fh.write(json.dumps(rec) + "\n")


def five_line() -> None:
    recs = []
    plan = [("mct", 5), ("mct", 6), ("mct", 7), ("mct", 8), ("mct", 8), ("nct", 6), ("nct", 7), ("nct", 8)]
    for i, (lib_name, length) in enumerate(plan):
        lib = make_library(lib_name, 5)
        rng = random.Random(1000 + i)
        gates = [lib.gates[rng.randrange(len(lib))] for _ in range(length)]
        s = np.arange(32)
        for g in gates:
            s = g.apply(s)
        perm = [int(v) for v in s]
        spec = from_permutation(perm, f"five-{lib_name}-{i}")
        with tempfile.TemporaryDirectory() as d:
            res = ex.synthesise(spec, library=lib, certificate=d, jobs=2)
            rep = ex.check_certificate(d)
        assert res.optimal and res.circuit is not None and rep.ok
        recs.append(
            {
                "name": spec.name,
                "library": lib_name,
                "permutation": perm,
                "optimum": len(res.circuit),
                "built_from": [gate_to_dict(g) for g in gates],
                "proof": "every smaller k refuted by CaDiCaL with an LRAT certificate checked by exactsyn check",
            }
        )
        print(spec.name, "built from", length, "gates, optimum", len(res.circuit), f"{res.seconds:.1f}s", flush=True)
    with open(OUT / "five-line.jsonl", "w") as fh:
        for rec in recs:
            fh.write(json.dumps(rec) + "\n")


if __name__ == "__main__":
    OUT.mkdir(parents=True, exist_ok=True)
    hard3()
    five_line()
