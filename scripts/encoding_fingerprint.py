"""Fingerprint the encoder: one SHA-256 per configuration, over the CNF and its decoding data.

Certificates store the SHA-256 of each query's DIMACS text and the checker re-derives the
CNF from the spec, so any change to variable numbering or clause order breaks every old
certificate.  Run this before and after touching the encoder and compare the outputs::

    python scripts/encoding_fingerprint.py > before.txt
    ...edit...
    python scripts/encoding_fingerprint.py --compare before.txt

Each line is ``<configuration> <hash>``; the hash covers the DIMACS text (the certificate's
``cnf_sha256`` input), the gate variables, and the ``trivially_unsat`` / ``optional``
flags.  The last line is a digest of all lines.  The configurations cover full
permutations, don't-care specs, embeddings with open constants and solver-placed outputs,
the preset libraries with and without coupling, every symmetry rule alone, the defaults,
all rules together, the textbook encoding, guarded queries sharing one variable pool,
cost limits in both window orders, explicit slots and the depth encoding, for k = 0..6.
Prints numbers; it is not a test.
"""

from __future__ import annotations

import argparse
import hashlib
import random
import sys
import time
from collections.abc import Iterator
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from pysat.formula import IDPool  # noqa: E402

from exactsyn.core.costs import cost_model  # noqa: E402
from exactsyn.core.library import Library, make_library  # noqa: E402
from exactsyn.sat.dimacs import cnf_sha256, dimacs_text  # noqa: E402
from exactsyn.sat.encode import SYMMETRY_RULES, CostLimit, Encoding, EncodingOptions, encode  # noqa: E402
from exactsyn.sat.encode_depth import depth_slots, encode_depth  # noqa: E402
from exactsyn.specification.boolean import function_from_mapping  # noqa: E402
from exactsyn.specification.embed import embed  # noqa: E402
from exactsyn.specification.loader import load_any  # noqa: E402
from exactsyn.specification.reversible import Spec, from_permutation  # noqa: E402

KS = range(7)
LIBRARIES = ("nct", "mct", "mixed", "nct-swap", "mct-swap", "nct-peres")


def fingerprint(enc: Encoding) -> str:
    h = hashlib.sha256()
    h.update(dimacs_text(enc.num_vars, enc.clauses).encode())
    h.update(cnf_sha256(enc.num_vars, enc.clauses).encode())
    h.update(repr((enc.gate_vars, enc.trivially_unsat, enc.optional, enc.k)).encode())
    return h.hexdigest()


def _perm(n: int, seed: int) -> Spec:
    p = list(range(1 << n))
    random.Random(seed).shuffle(p)
    return from_permutation(p, f"rand{n}-{seed}")


def specs() -> list[Spec]:
    out = [from_permutation(list(range(8)), "id3"), _perm(3, 1), _perm(3, 2), _perm(4, 3), _perm(4, 4)]
    for name in sorted(p.name for p in (ROOT / "instances").glob("*.toml")):
        out.append(load_any(ROOT / "instances" / name)[0])
    # Embeddings with open constants ("?"), with solver-placed and with fixed outputs.
    open_auto = {
        "name": "and-or-open",
        "inputs": ["a", "b"],
        "outputs": ["f", "g"],
        "lines": 3,
        "constants": {"2": "?"},
        "output_lines": "auto",
        "expressions": {"f": "a & b", "g": "a | b"},
    }
    open_fixed = {
        "name": "xor3-open",
        "inputs": ["a", "b"],
        "outputs": ["s", "c"],
        "lines": 4,
        "constants": {"2": "?", "3": "?"},
        "output_lines": [3, 2],
        "expressions": {"s": "a ^ b", "c": "a & b"},
    }
    out += [embed(function_from_mapping(m))[0] for m in (open_auto, open_fixed)]
    return out


def libraries(n: int) -> list[Library]:
    libs = [make_library(name, n) for name in LIBRARIES]
    chain = ",".join(f"{i}-{i + 1}" for i in range(n - 1))
    libs += [make_library("nct", n, coupling=chain), make_library("mct", n, max_controls=1)]
    return libs


def option_sets() -> list[EncodingOptions]:
    return [
        EncodingOptions("textbook", ()),
        EncodingOptions("onehot", ()),
        EncodingOptions(),
        *(EncodingOptions("onehot", (rule,)) for rule in SYMMETRY_RULES),
        EncodingOptions("onehot", SYMMETRY_RULES),
    ]


def configurations(quick: bool) -> Iterator[tuple[str, Encoding]]:
    """Every configuration on 3 lines; fewer k, rule sets and cost limits as specs and libraries grow."""
    for spec in specs():
        n = spec.lines
        libs = libraries(n) if n <= 4 else [make_library("nct", n), make_library("mct", n)]
        for lib in libs:
            heavy = n >= 5 or len(lib.gates) > 40
            few = range(0, 7, 3)
            ks = few if quick or heavy else KS
            cost_ks = few if quick or n >= 4 else KS
            tag = f"{spec.name}|{lib.name}"
            opt_list = option_sets() if not heavy else [
                EncodingOptions("textbook", ()), EncodingOptions(), EncodingOptions("onehot", SYMMETRY_RULES)
            ]
            for opts in opt_list:
                for k in ks:
                    yield f"{tag}|{_name(opts)}|k={k}", encode(spec, lib, k, opts)
            # Guarded queries for k = 0..6 in one shared pool, and one without a pool (onehot only:
            # a guarded textbook query is refused).
            for opts in (EncodingOptions(), EncodingOptions("onehot", SYMMETRY_RULES)):
                pool = IDPool()
                for k in ks:
                    name = f"{tag}|guard-shared{_seq(ks)}|{_name(opts)}|k={k}"
                    yield name, encode(spec, lib, k, opts, guard=True, pool=pool)
                yield f"{tag}|guard|{_name(opts)}|k=3", encode(spec, lib, 3, opts, guard=True)
            # Cost limits, both window orders, limits below, inside and above the reachable range.
            for model in ("ncv",) if heavy else ("ncv", "t-count"):
                costs = tuple(cost_model(model).cost(g, lib.lines) for g in lib.gates)
                rule_sets = [EncodingOptions("textbook", ()), EncodingOptions()]
                if not heavy:
                    rule_sets.append(EncodingOptions("onehot", ("window2", "window3", "trace")))
                for order in ("cost", "gates"):
                    for opts in rule_sets:
                        for k in few if heavy else cost_ks:
                            for limit in (k * min(costs) - 1, k * min(costs) + 3, k * max(costs) + 1):
                                yield (
                                    f"{tag}|cost:{model}:{order}:{limit}|{_name(opts)}|k={k}",
                                    encode(spec, lib, k, opts, cost_limit=CostLimit(costs, limit, order)),
                                )
                pool = IDPool()
                shared = few if heavy else cost_ks
                for k in shared:
                    limit = CostLimit(costs, 2 * k + 2, "cost")
                    yield (
                        f"{tag}|cost:{model}:guard-shared{_seq(shared)}|k={k}",
                        encode(spec, lib, k, EncodingOptions(), guard=True, pool=pool, cost_limit=limit),
                    )
            # Depth encoding, and explicit slots with each allowed rule set.
            for depth in range({3: 5, 4: 4}.get(n, 2)):
                yield f"{tag}|depth={depth}", encode_depth(spec, lib, depth)
                slots = depth_slots(lib, depth)
                for opts in (EncodingOptions("textbook", ()), EncodingOptions("onehot", ()),
                             EncodingOptions("onehot", ("touch",))):
                    yield f"{tag}|slots={depth}|{_name(opts)}", encode(spec, lib, len(slots), opts, slots=slots)


def _seq(ks: range) -> str:
    """The k sequence of one shared pool: its variable numbering depends on all of it."""
    return "(" + ",".join(map(str, ks)) + ")"


def _name(opts: EncodingOptions) -> str:
    return f"{opts.name}:{','.join(opts.symmetry)}"


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--compare", type=Path, help="an earlier output of this script: report every difference")
    ap.add_argument("--quick", action="store_true", help="k = 0, 3, 6 only (with --compare: a subset of a full run)")
    args = ap.parse_args()
    t0 = time.perf_counter()
    total = hashlib.sha256()
    lines: list[str] = []
    for i, (name, enc) in enumerate(configurations(args.quick), 1):
        line = f"{name} {fingerprint(enc)}"
        total.update((line + "\n").encode())
        lines.append(line)
        print(line)
        if i % 500 == 0:
            print(f"[{i} configurations, {time.perf_counter() - t0:.0f} s]", file=sys.stderr)
    print(f"ALL {len(lines)} {total.hexdigest()}")
    print(f"[{len(lines)} configurations in {time.perf_counter() - t0:.1f} s]", file=sys.stderr)
    if args.compare is None:
        return 0
    old = [x for x in args.compare.read_text().splitlines() if x and not x.startswith("ALL ")]
    old_map = dict(x.rsplit(" ", 1) for x in old)
    new_map = dict(x.rsplit(" ", 1) for x in lines)
    changed = [k for k in new_map if k in old_map and old_map[k] != new_map[k]]
    missing = [k for k in old_map if k not in new_map]
    added = [k for k in new_map if k not in old_map]
    for k in changed:
        print(f"CHANGED {k}", file=sys.stderr)
    print(
        f"compare: {len(new_map) - len(changed) - len(added)} equal, {len(changed)} changed, "
        f"{len(missing)} missing, {len(added)} new",
        file=sys.stderr,
    )
    return 1 if changed or (missing and not args.quick) else 0


if __name__ == "__main__":
    sys.exit(main())
