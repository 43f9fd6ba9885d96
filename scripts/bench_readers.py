"""What the readers' budgets cost at their edge (exactsyn.io.limits): time and memory per size.

Each measurement runs in a fresh process (start-up included, as a user sees it) and
prints the wall time, the peak resident memory and the exit status:

* reading a circuit of N explicit gates (OpenQASM 2 and JSON, ``exactsyn apply --inputs 1``),
  up to the gate budget (1,000,000);
* the same number of gates made by doubling gate definitions (``gate g<i> { g<i-1>; g<i-1>; }``);
* with ``--pictures``: drawing SVG and PNG pictures near the picture budget
  (``exactsyn.io.diagram.MAX_ELEMENTS``), and the size of the SVG file.

    python scripts/bench_readers.py                       # 10^4, 10^5, 10^6 gates
    python scripts/bench_readers.py --sizes 100000 --pictures
"""

from __future__ import annotations

import argparse
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

PEAK = (
    "import atexit, resource, sys\n"
    "atexit.register(lambda: print('PEAK_KIB', resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, file=sys.stderr))\n"
    "from exactsyn.cli import main\n"
    "main(args=sys.argv[1:], prog_name='exactsyn')\n"
)


def run(args: list[str]) -> tuple[float, float, int, str]:
    t = time.perf_counter()
    r = subprocess.run([sys.executable, "-c", PEAK, *args], capture_output=True, text=True)
    wall = time.perf_counter() - t
    peak = int(r.stderr.split("PEAK_KIB")[1].split()[0]) / 1024 if "PEAK_KIB" in r.stderr else float("nan")
    first = r.stderr.split("PEAK_KIB")[0].strip().splitlines()
    return wall, peak, r.returncode, first[0][:100] if first else ""


def explicit_qasm(n: int, lines: int, seed: int) -> str:
    rng = random.Random(seed)
    body = "".join(f"ccx q[{a}],q[{b}],q[{c}];\n" for a, b, c in (rng.sample(range(lines), 3) for _ in range(n)))
    return f'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[{lines}];\n' + body


def explicit_json(n: int, lines: int, seed: int) -> str:
    rng = random.Random(seed)
    triples = (rng.sample(range(lines), 3) for _ in range(n))
    gates = ",".join(f'{{"type":"x","target":{c},"controls":[{a},{b}]}}' for a, b, c in triples)
    return f'{{"lines":{lines},"gates":[{gates}]}}'


def doubled(n: int) -> str:
    levels = max(0, (n // 2).bit_length() - 1)
    out = ['OPENQASM 2.0;', 'include "qelib1.inc";', "gate g0 a,b,c { ccx a,b,c; cx a,c; }"]
    out += [f"gate g{i} a,b,c {{ g{i - 1} a,b,c; g{i - 1} a,b,c; }}" for i in range(1, levels + 1)]
    out += ["qreg q[3];", f"g{levels} q[2],q[0],q[1];"]
    return "\n".join(out) + "\n"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="10000,100000,1000000")
    ap.add_argument("--lines", type=int, default=64)
    ap.add_argument("--pictures", action="store_true")
    args = ap.parse_args()
    sizes = [int(x) for x in args.sizes.split(",")]
    with tempfile.TemporaryDirectory() as tmp:
        d = Path(tmp)
        print(f"{'input':<34} {'gates':>9} {'wall s':>7} {'peak MiB':>9} {'exit':>5}  stderr")
        for n in sizes:
            for name, text in (
                ("OpenQASM 2, explicit ccx", explicit_qasm(n, args.lines, n)),
                ("JSON, explicit x", explicit_json(n, args.lines, n)),
                ("OpenQASM 2, doubled definitions", doubled(n)),
            ):
                f = d / ("c.json" if name.startswith("JSON") else "c.qasm")
                f.write_text(text)
                wall, peak, code, err = run(["apply", str(f), "--inputs", "1"])
                print(f"{name:<34} {n:>9,} {wall:>7.2f} {peak:>9.0f} {code:>5}  {err}", flush=True)
        if args.pictures:
            from exactsyn.io.diagram import MAX_ELEMENTS

            print(f"\npictures (budget {MAX_ELEMENTS:,} wires and gate symbols)")
            for lines, gates, wrap in ((8, 80_000, 40), (64, 20_000, 200), (200, 20_000, 1000)):
                f = d / "p.qasm"
                f.write_text(explicit_qasm(gates, lines, gates))
                for suffix in ("svg", "png"):
                    out = d / f"p.{suffix}"
                    wall, peak, code, err = run(["draw", str(f), "-o", str(out), "--wrap", str(wrap)])
                    size = f"{out.stat().st_size / 1e6:.1f} MB" if out.exists() and code == 0 else "-"
                    print(f"{lines:>4} lines {gates:>7,} gates wrap {wrap:>5} {suffix}: {wall:6.2f} s, "
                          f"{peak:6.0f} MiB peak, exit {code}, file {size}  {err}", flush=True)
                    out.unlink(missing_ok=True)


if __name__ == "__main__":
    main()
