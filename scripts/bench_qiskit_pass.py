"""Benchmark of the qiskit pass (exactsyn.transpiler) against qiskit's level-3 transpiler.

Circuits, each lowered with ``transpile(..., optimization_level=0)`` to a target whose only
operations are ``x``, ``cx``, ``ccx`` and ``mcx`` (any number of controls, no coupling):

* qiskit's arithmetic: the ripple-carry adders ``CDKMRippleCarryAdder`` and
  ``VBERippleCarryAdder`` (kind ``full``) of 2, 4, 8 and 16 bits, and every other arithmetic
  circuit of ``qiskit.circuit.library`` tried below; one that does not lower to those gates
  (QFT-based adders and multipliers use Hadamards and phase rotations) is reported as
  skipped with qiskit's reason;
* exactsyn's own transformation-based synthesis (``exactsyn.search.heuristic``) of seeded
  random permutations of 5 and 6 lines.

Why this target: it is the gate set both sides may use.  qiskit's level 3 keeps every
multiple-control gate as one ``mcx`` (it is in the target), so neither side is charged a
decomposition the other avoids, and the pass's output stays in the same gates.  Gate count,
T-count and CNOT count (exactsyn's Clifford+T reading of each gate,
:mod:`exactsyn.optimise.metrics`) and depth (layers of gates on disjoint qubits) are measured
on the same exactsyn reading of each qiskit circuit.  Columns: before (lowered), after
qiskit level 3, after the pass alone, after level 3 then the pass, after the pass with the
objective ``gates-then-cost`` and the T-count as cost (``pass g,T``: as few gates, then
the least T-count among window optima), after the pass with the ancilla context
(``pass+anc``: the qubits of the circuit's ancilla registers declared |0⟩ at the start,
checked with qiskit's operators on the inputs where they are; ``-`` for circuits without
ancillas), and the seconds of level 3, of the pass, of both
and of the ``g,T`` pass.  The pass's window is the optimiser's default (4 lines
when the 4-line class tables are in the cache, else 3); the first line says which.

Usage::

    python scripts/bench_qiskit_pass.py            # everything, and a 10,000-gate circuit (window 3)
    python scripts/bench_qiskit_pass.py --quick    # 2- and 4-bit adders, two random functions, 1,000 gates

The random circuits at the end (16 lines, gates with up to 3 controls, so the mct library)
go through the pass with 3-line windows and, 1,000 gates of them, with the default window;
last, a circuit of 10,000 operations (1,000 with ``--quick``) with H and RZ among them.
"""

from __future__ import annotations

import argparse
import random
import time
import warnings
from collections.abc import Callable, Iterator
from typing import Any

BASIS = ("x", "cx", "ccx", "mcx")


def target(qubits: int) -> Any:
    from qiskit.circuit.library import CCXGate, CXGate, MCXGate, XGate
    from qiskit.transpiler import Target

    t = Target(num_qubits=qubits)
    for gate in (XGate(), CXGate(), CCXGate()):
        t.add_instruction(gate)
    t.add_instruction(MCXGate, name="mcx")  # variadic: any number of controls
    return t


def as_circuit(op: Any) -> Any:
    from qiskit import QuantumCircuit

    if isinstance(op, QuantumCircuit):
        return op
    qc = QuantumCircuit(op.num_qubits)
    qc.append(op, range(op.num_qubits))
    return qc


Maker = tuple[str, Callable[[], Any], dict[str, list[str]]]  # name, circuit, qiskit synthesis methods


def arithmetic(bits: list[int], quick: bool) -> Iterator[Maker]:
    """qiskit's arithmetic; the third item picks qiskit's synthesis method of a high-level gate."""
    import qiskit.circuit.library as lib

    for b in bits:
        yield f"CDKM full {b}", lambda b=b: lib.CDKMRippleCarryAdder(b, kind="full"), {}
        yield f"VBE full {b}", lambda b=b: lib.VBERippleCarryAdder(b, kind="full"), {}
    if quick:
        return
    for b in (2, 4):
        yield f"FullAdderGate {b}", lambda b=b: lib.FullAdderGate(b), {}
        yield f"HalfAdderGate {b} (ripple_r25)", lambda b=b: lib.HalfAdderGate(b), {"HalfAdder": ["ripple_r25"]}
        yield (
            f"ModularAdderGate {b} (ripple_c04)",
            lambda b=b: lib.ModularAdderGate(b),
            {"ModularAdder": ["ripple_c04"]},
        )
        yield f"IntegerComparator {b} >= 3", lambda b=b: lib.IntegerComparatorGate(b, 3), {}
        yield f"WeightedAdder {b}x1", lambda b=b: lib.WeightedAdder(b, [1] * b), {}
        yield f"WeightedSumGate {b}x1", lambda b=b: lib.WeightedSumGate(b, [1] * b), {}
        yield (
            f"MultiplierGate {b} (cumulative_h18)",
            lambda b=b: lib.MultiplierGate(b),
            {"Multiplier": ["cumulative_h18"]},
        )
        yield (
            f"HRS multiplier {b} (CDKM adders)",
            lambda b=b: lib.HRSCumulativeMultiplier(b, adder=lib.CDKMRippleCarryAdder(b, kind="half")),
            {},
        )
    yield "DraperQFTAdder 2", lambda: lib.DraperQFTAdder(2), {}
    yield "RGQFTMultiplier 2", lambda: lib.RGQFTMultiplier(2), {}


def heuristic(quick: bool) -> Iterator[Maker]:
    from exactsyn.search.heuristic import transformation_based

    for lines in (5, 6):
        for seed in (1,) if quick else (1, 2, 3):
            perm = list(range(1 << lines))
            random.Random(seed).shuffle(perm)
            yield f"TBS random {lines} lines s{seed}", lambda p=perm, n=lines: to_qiskit(transformation_based(p, n)), {}


def to_qiskit(circuit: Any) -> Any:
    from qiskit import QuantumCircuit

    from exactsyn.transpiler.convert import to_qiskit as gate

    qc = QuantumCircuit(circuit.lines)
    for g in circuit.gates:
        op, args = gate(g)
        qc.append(op, list(args))
    return qc


def figures(qc: Any) -> tuple[int, int, int, int]:
    """Gates, T-count, CNOT count and depth of a circuit of reversible gates (exactsyn's reading)."""
    from exactsyn.core.circuit import Circuit
    from exactsyn.optimise import measure
    from exactsyn.transpiler.convert import placed, reversible

    gates = []
    for item in qc.data:
        found = reversible(item.operation)
        if found is None:
            raise SystemExit(f"internal error: {item.operation.name} is not reversible")
        gates += [placed(g, [qc.find_bit(q).index for q in item.qubits]) for g in found.gates]
    m = measure(Circuit(qc.num_qubits, tuple(gates)))
    return m.gates, m.t_count, m.cnot_count, m.depth


def run_pass(
    qc: Any, window: int | None = None, objective: str = "gates", zero: tuple[int, ...] = ()
) -> tuple[Any, float]:
    from qiskit.transpiler import PassManager

    from exactsyn.transpiler import ReversibleBlockOptimiser

    start = time.perf_counter()
    pass_ = ReversibleBlockOptimiser(window=window, objective=objective, cost="t-count", zero_qubits=zero)
    out = PassManager([pass_]).run(qc)
    return out, time.perf_counter() - start


def ancillas(circuit: Any, lowered: Any) -> tuple[int, ...]:
    """The lowered circuit's qubits that were the original's ancilla registers (clean ancillas
    by qiskit's convention), through the layout the lowering chose."""
    found = [circuit.find_bit(q).index for q in circuit.ancillas]
    if found and lowered.layout is not None:
        placed = lowered.layout.initial_index_layout(filter_ancillas=False)
        found = [placed[i] for i in found]
    return tuple(sorted(found))


def equal_where_zero(a: Any, b: Any, zero: tuple[int, ...]) -> bool:
    """qiskit's unitaries agree on every basis input with the ``zero`` qubits at |0> (qubit i = bit i)."""
    import numpy as np
    from qiskit.quantum_info import Operator

    ua, ub = Operator(a).data, Operator(b).data
    mask = sum(1 << q for q in zero)
    columns = [x for x in range(ua.shape[1]) if not x & mask]
    return bool(np.allclose(ua[:, columns], ub[:, columns]))


def row(name: str, make: Callable[[], Any], methods: dict[str, list[str]]) -> list[str] | None:
    import qiskit
    from qiskit.quantum_info import Operator
    from qiskit.transpiler.passes import HLSConfig

    circuit = as_circuit(make())
    t = target(circuit.num_qubits)
    hls = HLSConfig(**methods)
    try:
        lowered = qiskit.transpile(circuit, target=t, optimization_level=0, hls_config=hls)
    except qiskit.transpiler.exceptions.TranspilerError as exc:
        print(f"{name:<34} skipped: does not lower to {', '.join(BASIS)} ({str(exc).splitlines()[0][:90]})")
        return None
    start = time.perf_counter()
    theirs = qiskit.transpile(circuit, target=t, optimization_level=3, seed_transpiler=1, hls_config=hls)
    t3 = time.perf_counter() - start
    ours, tp = run_pass(lowered)
    both, tb = run_pass(theirs)
    least_t, tt = run_pass(lowered, objective="gates-then-cost")
    zero = ancillas(circuit, lowered)
    context = run_pass(lowered, zero=zero)[0] if zero else None
    if circuit.num_qubits <= 10:  # qiskit's Operator as the outside check
        for out in (ours, both, least_t):
            if not Operator(out).equiv(Operator(lowered)):
                raise SystemExit(f"internal error: {name}: the pass changed the unitary")
        if context is not None and not equal_where_zero(context, lowered, zero):
            raise SystemExit(f"internal error: {name}: the pass with ancillas changed the unitary where they are 0")
    cells = ["/".join(str(v) for v in figures(c)) for c in (lowered, theirs, ours, both, least_t)]
    cells.append("-" if context is None else "/".join(str(v) for v in figures(context)))
    return [name, str(circuit.num_qubits), *cells, f"{t3:.2f}", f"{tp:.2f}", f"{t3 + tb:.2f}", f"{tt:.2f}"]


HEAD = ["circuit", "qubits", "before", "qiskit L3", "pass", "L3+pass", "pass g,T", "pass+anc",
        "s L3", "s pass", "s L3+p", "s g,T"]  # fmt: skip
WIDTHS = [34, 6, 17, 17, 17, 17, 17, 17, 6, 6, 6, 6]


def show(cells: list[str]) -> None:
    print(" ".join(f"{c:<{w}}" if i == 0 else f"{c:>{w}}" for i, (c, w) in enumerate(zip(cells, WIDTHS, strict=True))))


def big(gates: int, window: int | None, lines: int = 16, seed: int = 7) -> None:
    """A seeded random circuit of x/cx/ccx/mcx gates (up to 3 controls) through the pass."""
    from qiskit import QuantumCircuit
    from qiskit.circuit.library import XGate

    rng = random.Random(seed)
    qc = QuantumCircuit(lines)
    for _ in range(gates):
        k = rng.choice((0, 1, 1, 2, 2, 3))
        where = rng.sample(range(lines), k + 1)
        qc.append(XGate().control(k) if k else XGate(), where)
    before = figures(qc)
    out, seconds = run_pass(qc, window)
    after = figures(out)
    label = "default" if window is None else str(window)
    print(f"# random circuit, {lines} lines, {gates} gates (seed {seed}), window {label}: {seconds:.1f} s")
    print(f"#   gates/T-count/CNOT count/depth {'/'.join(map(str, before))} -> {'/'.join(map(str, after))}")


def big_mixed(operations: int, lines: int = 16, seed: int = 11) -> None:
    """A seeded random circuit with H (10 %) and RZ (5 %) among x/cx/ccx gates, window 3."""
    from qiskit import QuantumCircuit
    from qiskit.circuit.library import XGate
    from qiskit.transpiler import PassManager

    from exactsyn.transpiler import PROPERTY_KEY, ReversibleBlockOptimiser

    rng = random.Random(seed)
    qc = QuantumCircuit(lines)
    for _ in range(operations):
        r = rng.random()
        if r < 0.1:
            qc.h(rng.randrange(lines))
        elif r < 0.15:
            qc.rz(0.1, rng.randrange(lines))
        else:
            k = rng.choice((0, 1, 1, 2))
            qc.append(XGate().control(k) if k else XGate(), rng.sample(range(lines), k + 1))
    pm = PassManager([ReversibleBlockOptimiser(window=3)])
    start = time.perf_counter()
    pm.run(qc)
    seconds = time.perf_counter() - start
    f = pm.property_set[PROPERTY_KEY]
    b, a = f.before, f.after
    print(f"# mixed circuit, {lines} lines, {operations} operations (seed {seed}), window 3: {seconds:.1f} s")
    print(
        f"#   {f.blocks} blocks, {f.improved} replaced; reversible gates/T-count/CNOT count/depth (sum over blocks) "
        f"{b.gates}/{b.t_count}/{b.cnot_count}/{b.depth} -> {a.gates}/{a.t_count}/{a.cnot_count}/{a.depth}"
    )


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="a small subset (2- and 4-bit adders, 1,000-gate circuit)")
    args = ap.parse_args()
    warnings.simplefilter("ignore")  # qiskit deprecation notices of the library circuits
    import qiskit

    from exactsyn.optimise.allowed_gates import gate_set
    from exactsyn.optimise.driver import default_window

    window = default_window(gate_set("nct", 8), 8)
    print(f"# qiskit {qiskit.__version__}; target x, cx, ccx, mcx (no coupling); pass window {window} (NCT blocks)")
    print("# cells: gates/T-count/CNOT count/depth; seconds of qiskit level 3, of the pass, of both, of the g,T pass")
    show(HEAD)
    bits = [2, 4] if args.quick else [2, 4, 8, 16]
    tally = {"fewer": 0, "equal": 0, "more": 0}
    t_tally = {"pass": {"lower": 0, "equal": 0, "higher": 0}, "pass g,T": {"lower": 0, "equal": 0, "higher": 0}}
    for name, make, methods in [*arithmetic(bits, args.quick), *heuristic(args.quick)]:
        cells = row(name, make, methods)
        if cells is None:
            continue
        show(cells)
        best = min(int(cells[4].split("/")[0]), int(cells[5].split("/")[0]))
        theirs = int(cells[3].split("/")[0])
        tally["fewer" if best < theirs else "equal" if best == theirs else "more"] += 1
        their_t = int(cells[3].split("/")[1])
        for column, cell in (("pass", cells[4]), ("pass g,T", cells[6])):
            t = int(cell.split("/")[1])
            t_tally[column]["lower" if t < their_t else "equal" if t == their_t else "higher"] += 1
    print(f"# best of (pass, L3+pass) against qiskit L3, gates: {tally}")
    print(f"# T-count against qiskit L3: {t_tally}")
    big(1000 if args.quick else 10000, 3)
    big(1000, None)  # 4-line windows of the mct class table, when cached
    big_mixed(1000 if args.quick else 10000)


if __name__ == "__main__":
    main()
