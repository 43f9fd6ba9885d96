"""Benchmark of the optimiser's ancilla context (``zero_lines``): what knowing clean ancillas adds.

For compute/uncompute circuits whose ancillas start at 0 and are returned to 0, prints the
gate count before, after ``optimise_circuit`` without the context, and after it with the
ancillas as ``zero_lines``, for windows of 3 and of 4 lines (4-line windows from the cached
class tables when they are there, else the distance table; partial 4-line windows by SAT
with don't-cares), and the seconds of each run.  Prints numbers; it is not a test.

Circuits:

``vbe N``
    Our own transcription of the plain ripple-carry adder of Vedral, Barenco, Ekert,
    "Quantum networks for elementary arithmetic operations", Phys. Rev. A 54(1), 1996
    (CARRY and SUM blocks, carries uncomputed): lines ``c0..c(N-1)`` (the carries, clean
    ancillas), ``a0..a(N-1)``, ``b0..bN`` (``bN`` starts at 0 but keeps the carry out, so it
    is not declared).
``and-tree N``
    The AND of ``N`` inputs into one output line through a ladder of Toffoli gates on
    ``N - 2`` clean ancillas, then uncomputed (Bennett, "Logical reversibility of
    computation", IBM J. Res. Dev. 17(6), 1973): NCT gates only.
``qiskit VBE N``
    qiskit's ``VBERippleCarryAdder(N, kind="full")`` lowered to x/cx/ccx
    (``transpile(..., basis_gates=["x", "cx", "ccx"], optimization_level=0)``), its
    ``helper`` ancilla register as the zero lines (needs qiskit).

Examples:
  python scripts/bench_zero_lines.py
  python scripts/bench_zero_lines.py --bits 2,4,8 --windows 3
"""

from __future__ import annotations

import argparse
import time
import warnings
from collections.abc import Iterator

from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import Gate, x_gate
from exactsyn.optimise import optimise_circuit


def vbe_adder(n: int) -> tuple[Circuit, tuple[int, ...]]:
    """The adder of the module docstring and its clean ancillas (the carries)."""
    c = list(range(n))
    a = list(range(n, 2 * n))
    b = list(range(2 * n, 3 * n + 1))

    def carry(ci: int, ai: int, bi: int, co: int) -> list[Gate]:
        return [x_gate(co, [ai, bi]), x_gate(bi, [ai]), x_gate(co, [ci, bi])]

    def total(ci: int, ai: int, bi: int) -> list[Gate]:
        return [x_gate(bi, [ai]), x_gate(bi, [ci])]

    gates: list[Gate] = []
    for i in range(n - 1):
        gates += carry(c[i], a[i], b[i], c[i + 1])
    gates += carry(c[n - 1], a[n - 1], b[n - 1], b[n])
    gates += [x_gate(b[n - 1], [a[n - 1]])]
    gates += total(c[n - 1], a[n - 1], b[n - 1])
    for i in reversed(range(n - 1)):
        gates += carry(c[i], a[i], b[i], c[i + 1])[::-1]
        gates += total(c[i], a[i], b[i])
    return Circuit(3 * n + 1, tuple(gates)), tuple(c)


def and_tree(n: int) -> tuple[Circuit, tuple[int, ...]]:
    """AND of lines ``0..n-1`` into line ``n`` through ancillas ``n+1 ..`` (module docstring)."""
    anc = list(range(n + 1, n + 1 + n - 2))
    ladder = [x_gate(anc[0], [0, 1])] + [x_gate(anc[i], [anc[i - 1], i + 1]) for i in range(1, n - 2)]
    gates = ladder + [x_gate(n, [anc[-1], n - 1])] + ladder[::-1]
    return Circuit(2 * n - 1, tuple(gates)), tuple(anc)


def qiskit_vbe(n: int) -> tuple[Circuit, tuple[int, ...]] | None:
    try:
        import qiskit
        from qiskit.circuit.library import VBERippleCarryAdder
    except ImportError:
        return None
    from exactsyn.io.qasm import read_qasm_layout

    warnings.simplefilter("ignore")
    qc = VBERippleCarryAdder(n, kind="full")
    anc = tuple(qc.find_bit(q).index for q in qc.ancillas)
    low = qiskit.transpile(qc, basis_gates=["x", "cx", "ccx"], optimization_level=0)
    circuit, _ = read_qasm_layout(qiskit.qasm2.dumps(low))
    return circuit, anc


def circuits(bits: list[int]) -> Iterator[tuple[str, Circuit, tuple[int, ...]]]:
    for n in bits:
        yield (f"vbe {n}", *vbe_adder(n))
    for n in (4, 6, 8):
        yield (f"and-tree {n}", *and_tree(n))
    for n in bits:
        found = qiskit_vbe(n)
        if found is not None:
            yield (f"qiskit VBE {n}", *found)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--bits", default="2,3,4,8", help="adder widths (comma-separated)")
    parser.add_argument("--windows", default="3,4", help="window sizes (comma-separated)")
    args = parser.parse_args()
    bits = [int(b) for b in args.bits.split(",")]
    windows = [int(w) for w in args.windows.split(",")]
    head = f"{'circuit':<16} {'lines':>5} {'zero':>4} {'window':>6} {'before':>6} {'no ctx':>6} {'ctx':>6}"
    print(head + f" {'s no ctx':>9} {'s ctx':>7}  check with context")
    for name, circuit, zero in circuits(bits):
        for w in windows:
            t0 = time.perf_counter()
            plain = optimise_circuit(circuit, window=w, library="nct")
            t1 = time.perf_counter()
            ctx = optimise_circuit(circuit, window=w, library="nct", zero_lines=zero)
            t2 = time.perf_counter()
            print(
                f"{name:<16} {circuit.lines:>5} {len(zero):>4} {w:>6} {circuit.gate_count:>6} "
                f"{plain.output.gate_count:>6} {ctx.output.gate_count:>6} {t1 - t0:>9.2f} {t2 - t1:>7.2f}  "
                f"{ctx.check.describe()}",
                flush=True,
            )


if __name__ == "__main__":
    main()
