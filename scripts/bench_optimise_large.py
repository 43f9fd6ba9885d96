"""Benchmark of :func:`exactsyn.optimise.optimise_circuit` on large circuits: gates before and
after, and seconds, for a few sizes.  Prints numbers; it is not a test.

Circuits (``--circuits``, several allowed):

``random16`` / ``random64``
    Seeded random NCT circuits on 16 or 64 lines: each gate a NOT, CNOT or Toffoli with
    equal probability, its lines uniform.
``adders``
    A chain of 16-bit ripple-carry adders (Cuccaro, Draper, Kutin, Moulton, "A new quantum
    ripple-carry addition circuit", arXiv:quant-ph/0410184, 2004: MAJ and UMA blocks of
    two CNOTs and a Toffoli) on 34 lines, alternately adding register a into b and b into
    a, cut to the size asked.  The script checks one adder adds, by simulation, before
    timing.

Each row: circuit, lines, window, gates before, gates after, seconds of the library call
(building or loading the window tables, the passes and the equivalence check), rounds,
and a short hash of the output gates (equal hashes: the same output circuit, which is how
a speed change is checked not to change results).  Each run is one process; the first run
pays for loading the tables.

Examples:
  python scripts/bench_optimise_large.py
  python scripts/bench_optimise_large.py --sizes 10000 --circuits random64,adders
  python scripts/bench_optimise_large.py --sizes 1000 --window 3
"""

from __future__ import annotations

import argparse
import hashlib
import random
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from bench_optimise import random_nct  # noqa: E402  (the same random circuits as that benchmark)

from exactsyn.core.circuit import Circuit  # noqa: E402
from exactsyn.core.gates import Gate, x_gate  # noqa: E402

ADDER_BITS = 16


def ripple_adder(a: list[int], b: list[int], carry_in: int, carry_out: int) -> list[Gate]:
    """b += a (mod 2^n), carry_out ^= the carry; a and carry_in are restored (MAJ, then UMA blocks)."""

    def maj(x: int, y: int, z: int) -> list[Gate]:
        return [x_gate(y, (z,)), x_gate(x, (z,)), x_gate(z, (x, y))]

    def uma(x: int, y: int, z: int) -> list[Gate]:
        return [x_gate(z, (x, y)), x_gate(x, (z,)), x_gate(y, (x,))]

    n = len(a)
    carries = [carry_in, *a[:-1]]
    gates = [g for i in range(n) for g in maj(carries[i], b[i], a[i])]
    gates.append(x_gate(carry_out, (a[-1],)))
    gates += [g for i in reversed(range(n)) for g in uma(carries[i], b[i], a[i])]
    return gates


def adder_chain(gates: int, bits: int = ADDER_BITS) -> Circuit:
    a = list(range(1, 1 + bits))
    b = list(range(1 + bits, 1 + 2 * bits))
    lines = 2 * bits + 2
    out: list[Gate] = []
    turn = 0
    while len(out) < gates:
        x, y = (a, b) if turn % 2 == 0 else (b, a)
        out += ripple_adder(x, y, 0, lines - 1)
        turn += 1
    return Circuit(lines, tuple(out[:gates]))


def check_adder(bits: int = 4, samples: int = 64) -> None:
    """One adder of ``bits`` bits adds: simulated on random inputs."""
    import numpy as np

    a = list(range(1, 1 + bits))
    b = list(range(1 + bits, 1 + 2 * bits))
    circuit = Circuit(2 * bits + 2, tuple(ripple_adder(a, b, 0, 2 * bits + 1)))
    rng = random.Random(0)
    for _ in range(samples):
        x, y = rng.randrange(1 << bits), rng.randrange(1 << bits)
        state = sum(((x >> i) & 1) << a[i] for i in range(bits)) | sum(((y >> i) & 1) << b[i] for i in range(bits))
        out = np.array([state], dtype=np.int64)
        for g in circuit.gates:
            out = g.apply(out)
        v = int(out[0])
        total = sum(((v >> b[i]) & 1) << i for i in range(bits)) | ((v >> (2 * bits + 1)) & 1) << bits
        if total != x + y or sum(((v >> a[i]) & 1) << i for i in range(bits)) != x or v & 1:
            raise SystemExit(f"the adder does not add: {x} + {y} gave {total}")


def build(name: str, size: int, seed: int) -> Circuit:
    if name == "random16":
        return random_nct(16, size, seed)
    if name == "random64":
        return random_nct(64, size, seed)
    if name == "adders":
        return adder_chain(size)
    raise SystemExit(f"unknown circuit set {name!r}")


def output_hash(circuit: Circuit) -> str:
    text = ";".join(str(g) for g in circuit.gates)
    return hashlib.sha256(text.encode()).hexdigest()[:12]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--sizes", default="1000,3000,10000", help="gate counts, comma-separated")
    ap.add_argument("--circuits", default="random16,random64,adders", help="random16, random64, adders")
    ap.add_argument("--window", type=int, default=None, help="window lines (default: the optimiser's default)")
    ap.add_argument("--seed", type=int, default=1, help="seed of the random circuits")
    args = ap.parse_args()
    from exactsyn.optimise import optimise_circuit

    check_adder()
    sizes = [int(s) for s in args.sizes.split(",")]
    print(f"{'circuit':<10}{'lines':>6}{'window':>7}{'before':>8}{'after':>8}{'seconds':>9}{'rounds':>7}  output")
    for name in args.circuits.split(","):
        for size in sizes:
            circuit = build(name, size, args.seed)
            t0 = time.perf_counter()
            res = optimise_circuit(circuit, window=args.window)
            seconds = time.perf_counter() - t0
            print(
                f"{name:<10}{circuit.lines:>6}{res.window:>7}{circuit.gate_count:>8}{res.output.gate_count:>8}"
                f"{seconds:>9.2f}{res.rounds:>7}  {output_hash(res.output)}",
                flush=True,
            )


if __name__ == "__main__":
    main()
