"""Benchmark of ``exactsyn optimise``: speed and memory on random circuits, reduction against qiskit,
reduction of transformation-based synthesis output.  Prints numbers; it is not a test.

Sets (``--set``, several allowed):

``speed``
    Seeded random 16-line NCT circuits (each gate NOT, CNOT or Toffoli with equal
    probability, lines uniform) of ``--sizes`` gates, window 3.  Every run is a fresh
    process (tables built inside the run, peak memory its own); median of ``--repeat``
    runs of the library call (:func:`exactsyn.optimise.optimise_circuit`, which includes
    building the tables and the equivalence check) and of the whole process.
``qiskit``
    qiskit's ripple-carry adders (``CDKMRippleCarryAdder``, ``VBERippleCarryAdder``, kind
    ``full``) of 2 to 16 bits, and the other arithmetic circuits of its library that lower
    to X/CX/CCX (the adders' ``half`` and ``fixed`` kinds, ``IntegerComparator``,
    ``WeightedAdder``), lowered with ``transpile(..., basis_gates=["x", "cx", "ccx"],
    optimization_level=0)``.  Gates: lowered, qiskit's ``optimization_level=3`` with the
    same basis (same run), exactsyn with windows of 3 and of 4 lines (4-line windows from the
    cached class tables when they are there, else the distance table), and with the window
    the command takes by default (4 with cached class tables, else 3).  The input of
    exactsyn is the OpenQASM 2 that qiskit writes, read by exactsyn's reader.
``check``
    The equivalence check alone (:func:`exactsyn.optimise.equivalence.check_equivalent`) of a
    seeded random ``--lines``-line circuit of ``--sizes`` gates against itself: exhaustive up
    to 24 lines.  ``--chunk`` sets the words per line simulated at a time.
``tbs``
    Seeded random permutations of 5 and 6 lines, realised by exactsyn's
    transformation-based synthesis (:func:`exactsyn.search.heuristic.tbs`, MCT gates),
    optimised with library mct, windows 3 and 4; median reduction in gates.

Examples:
  python scripts/bench_optimise.py --set speed --sizes 1000,100000 --repeat 3
  python scripts/bench_optimise.py --set qiskit
  python scripts/bench_optimise.py --set tbs --count 30
  python scripts/bench_optimise.py --set check --lines 24 --sizes 10000 --chunk 4096
"""

from __future__ import annotations

import argparse
import json
import random
import resource
import statistics
import subprocess
import sys
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))


def random_nct(lines: int, gates: int, seed: int):  # type: ignore[no-untyped-def]
    from exactsyn.core.circuit import Circuit
    from exactsyn.core.gates import x_gate

    rng = random.Random(seed)
    out = []
    for _ in range(gates):
        picked = rng.sample(range(lines), rng.randint(1, 3))
        out.append(x_gate(picked[0], picked[1:]))
    return Circuit(lines, tuple(out))


# ---------------------------------------------------------------------------- speed
def child_speed(lines: int, gates: int, seed: int, window: int) -> None:
    """One run in this (fresh) process; prints one JSON line."""
    t0 = time.perf_counter()
    from exactsyn.optimise import optimise_circuit

    circuit = random_nct(lines, gates, seed)
    t1 = time.perf_counter()
    res = optimise_circuit(circuit, window=window)
    t2 = time.perf_counter()
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # KiB on Linux -> MiB
    print(
        json.dumps(
            {
                "gates_in": gates,
                "gates_out": res.output.gate_count,
                "optimise_s": t2 - t1,
                "process_s": t2 - t0,
                "check": res.check.method,
                "check_s": res.check.seconds,
                "rounds": res.rounds,
                "peak_mib": peak,
            }
        )
    )


def run_speed(sizes: list[int], repeat: int, lines: int, window: int, seed: int) -> None:
    print(f"# speed: random {lines}-line NCT circuits, seed {seed}, window {window}, median of {repeat} processes")
    print(f"{'gates':>8} {'out':>8} {'reduced':>8} {'optimise s':>11} {'process s':>10} {'check':>11} {'peak MiB':>9}")
    for size in sizes:
        runs = []
        for _ in range(repeat):
            cmd = [sys.executable, __file__, "--child-speed", f"{lines},{size},{seed},{window}"]
            out = subprocess.run(cmd, capture_output=True, text=True, check=True, cwd=ROOT)
            runs.append(json.loads(out.stdout.strip().splitlines()[-1]))
        med = {k: statistics.median(r[k] for r in runs) for k in ("optimise_s", "process_s", "peak_mib", "gates_out")}
        red = 100.0 * (size - med["gates_out"]) / size
        print(
            f"{size:>8} {int(med['gates_out']):>8} {red:>7.1f}% {med['optimise_s']:>11.2f} "
            f"{med['process_s']:>10.2f} {runs[0]['check']:>11} {med['peak_mib']:>9.0f}",
            flush=True,
        )


# ---------------------------------------------------------------------------- qiskit
def qiskit_circuits(bits: list[int]):  # type: ignore[no-untyped-def]
    from qiskit.circuit import library as qlib

    for b in bits:
        yield f"CDKM full {b}", qlib.CDKMRippleCarryAdder(b, kind="full"), True
        yield f"VBE full {b}", qlib.VBERippleCarryAdder(b, kind="full"), True
    for b in (2, 4, 8):
        for kind in ("half", "fixed"):
            yield f"CDKM {kind} {b}", qlib.CDKMRippleCarryAdder(b, kind=kind), False
            yield f"VBE {kind} {b}", qlib.VBERippleCarryAdder(b, kind=kind), False
        yield f"IntegerComparator {b} >= 3", qlib.IntegerComparator(b, 3), False
        yield f"WeightedAdder {b}x1", qlib.WeightedAdder(b, [1] * b), False


def run_qiskit(bits: list[int]) -> None:
    warnings.simplefilter("ignore")
    import qiskit

    from exactsyn.io.qasm import read_qasm_layout
    from exactsyn.optimise import optimise_circuit

    print(f"# qiskit {qiskit.__version__}: gates after transpile(basis x, cx, ccx); exactsyn reads qiskit's OpenQASM 2")
    head = ("circuit", "qubits", "lowered", "qiskit L3", "w=3", "w=4", "s w=3", "s w=4", "default")
    widths = (6, 8, 10, 6, 6, 6, 6, 9)
    print(f"{head[0]:<26} " + " ".join(f"{h:>{w}}" for h, w in zip(head[1:], widths, strict=True)))
    tally = {"fewer": 0, "equal": 0, "more": 0}
    main_tally = dict(tally)
    for name, circuit, main_set in qiskit_circuits(bits):
        try:
            lowered = qiskit.transpile(circuit, basis_gates=["x", "cx", "ccx"], optimization_level=0)
        except qiskit.transpiler.exceptions.TranspilerError:
            print(f"{name:<26} {circuit.num_qubits:>6}  does not lower to x, cx, ccx (skipped)")
            continue
        theirs = qiskit.transpile(circuit, basis_gates=["x", "cx", "ccx"], optimization_level=3)
        ours, _ = read_qasm_layout(qiskit.qasm2.dumps(lowered))
        t = time.perf_counter()
        w3 = optimise_circuit(ours, window=3)
        t3 = time.perf_counter() - t
        t = time.perf_counter()
        w4 = optimise_circuit(ours, window=4)
        t4 = time.perf_counter() - t
        dflt = optimise_circuit(ours)  # the window the command takes by default (4 with cached class tables)
        best = min(w3.output.gate_count, w4.output.gate_count)
        key = "fewer" if best < theirs.size() else "equal" if best == theirs.size() else "more"
        tally[key] += 1
        if main_set:
            main_tally[key] += 1
        print(
            f"{name:<26} {lowered.num_qubits:>6} {lowered.size():>8} {theirs.size():>10} "
            f"{w3.output.gate_count:>6} {w4.output.gate_count:>6} {t3:>6.2f} {t4:>6.2f} "
            f"{dflt.output.gate_count:>5} w={dflt.window}",
            flush=True,
        )
    print(f"# exactsyn (best of w=3, w=4) vs qiskit L3, ripple-carry adders {bits[0]}-{bits[-1]} bits: {main_tally}")
    print(f"# all circuits: {tally}")


# ---------------------------------------------------------------------------- check
def run_check(sizes: list[int], repeat: int, lines: int, seed: int, chunk: int | None) -> None:
    import exactsyn.optimise.equivalence as eq

    if chunk is not None:
        eq.CHUNK_WORDS = chunk
    print(f"# equivalence check of a random {lines}-line NCT circuit with itself, chunk {eq.CHUNK_WORDS} words")
    for size in sizes:
        c = random_nct(lines, size, seed)
        times = []
        for _ in range(repeat):
            res = eq.check_equivalent(c, c)
            times.append(res.seconds)
        print(f"{size:>8} gates  {res.method} ({res.inputs} inputs)  median {statistics.median(times):.2f} s")


# ---------------------------------------------------------------------------- tbs
def run_tbs(count: int, seed: int) -> None:
    from exactsyn.optimise import optimise_circuit
    from exactsyn.search.heuristic import tbs

    rng = random.Random(seed)
    print(f"# transformation-based synthesis of {count} seeded random functions per size (seed {seed}), library mct")
    head = ("lines", "median in", "median w=3", "median w=4", "red. w=3", "red. w=4", "s")
    print(" ".join(f"{h:>{w}}" for h, w in zip(head, (5, 10, 11, 11, 9, 9, 6), strict=True)))
    for lines in (5, 6):
        ins, r3, r4, o3, o4 = [], [], [], [], []
        t = time.perf_counter()
        for _ in range(count):
            perm = list(range(1 << lines))
            rng.shuffle(perm)
            c = tbs(perm, lines)
            a = optimise_circuit(c, library="mct", window=3).output.gate_count
            b = optimise_circuit(c, library="mct", window=4).output.gate_count
            ins.append(c.gate_count)
            o3.append(a)
            o4.append(b)
            r3.append(100.0 * (c.gate_count - a) / c.gate_count)
            r4.append(100.0 * (c.gate_count - b) / c.gate_count)
        print(
            f"{lines:>5} {statistics.median(ins):>10} {statistics.median(o3):>11} {statistics.median(o4):>11} "
            f"{statistics.median(r3):>8.1f}% {statistics.median(r4):>8.1f}% {time.perf_counter() - t:>6.1f}",
            flush=True,
        )


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    sets = ("speed", "qiskit", "tbs", "check")
    ap.add_argument("--set", action="append", choices=sets, help="what to run (repeatable)")
    ap.add_argument("--sizes", default="1000,100000", help="gate counts of the speed set")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--lines", type=int, default=16)
    ap.add_argument("--window", type=int, default=3, help="window of the speed set")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--bits", default="2-16", help="adder sizes of the qiskit set, e.g. 2-16 or 2,4,8")
    ap.add_argument("--count", type=int, default=30, help="functions per size of the tbs set")
    ap.add_argument("--chunk", type=int, help="words per line and chunk of the check set")
    ap.add_argument("--child-speed", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child_speed:
        lines, size, seed, window = (int(x) for x in args.child_speed.split(","))
        child_speed(lines, size, seed, window)
        return
    for name in args.set or ["speed", "qiskit", "tbs"]:
        if name == "speed":
            run_speed([int(x) for x in args.sizes.split(",")], args.repeat, args.lines, args.window, args.seed)
        elif name == "qiskit":
            if "-" in args.bits:
                lo, hi = (int(x) for x in args.bits.split("-"))
                bits = list(range(lo, hi + 1))
            else:
                bits = [int(x) for x in args.bits.split(",")]
            run_qiskit(bits)
        elif name == "check":
            run_check([int(x) for x in args.sizes.split(",")], args.repeat, args.lines, args.seed, args.chunk)
        else:
            run_tbs(args.count, args.seed)


if __name__ == "__main__":
    main()
