"""--time-limit is kept (within 10 % + 1 s) and a time-out still returns a circuit, marked not optimal.

The reference is the wall clock; the memory bound is the kernel's peak resident size of
the process and its children.
"""

from __future__ import annotations

import json
import random
import subprocess
import sys
import time

import pytest

import exactsyn as ex
from exactsyn.specification.samples import random_circuit, random_permutation


def _even(n: int, seed: int) -> list[int]:
    return list(random_permutation(n, random.Random(seed), even=True))


@pytest.mark.parametrize(("library", "limit"), [("nct", 3.0), ("mixed", 4.0)])
def test_the_time_limit_holds_in_process(library: str, limit: float) -> None:
    p = _even(4, 17)  # a random 4-line function: most need 12 gates or more (Golubitsky & Maslov 2012)
    t0 = time.perf_counter()
    res = ex.synthesise(p, library=library, time_limit=limit, jobs=2)
    wall = time.perf_counter() - t0
    assert wall <= 1.1 * limit + 1.0, wall
    assert res.circuit is not None and res.circuit.permutation() == tuple(p)
    assert res.optimal or res.lower_bound < len(res.circuit)


def _random_circuit_function(n: int, gates: int, seed: int) -> list[int]:
    return list(random_circuit(n, gates, random.Random(seed), min_controls=1).permutation())


PEAK = (
    "import atexit, resource, sys\n"
    "def peak():\n"
    "    own = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss\n"
    "    kids = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss\n"
    "    print('PEAK_KIB', own + kids, file=sys.stderr)\n"
    "atexit.register(peak)\n"
    "from exactsyn.cli import main\n"
    "main(args=sys.argv[1:], prog_name='exactsyn')\n"
)


@pytest.mark.slow
def test_six_lines_twenty_four_gates_stop_in_time_with_little_memory() -> None:
    perm = _random_circuit_function(6, 24, seed=4)
    limit = 30.0
    cmd = [sys.executable, "-c", PEAK, "synth", "--perm", ",".join(map(str, perm)), "--library", "mct",
           "--time-limit", str(limit), "--format", "json", "-q"]
    t0 = time.perf_counter()
    r = subprocess.run(cmd, capture_output=True, text=True, timeout=300)
    wall = time.perf_counter() - t0
    assert r.returncode == 0, r.stderr
    assert wall <= 1.1 * limit + 1.0 + 1.5, wall  # + 1.5 s: interpreter start-up and imports
    peak_kib = int(r.stderr.split("PEAK_KIB")[1].split()[0])
    assert peak_kib < 2 * 1024 * 1024, peak_kib
    data = json.loads(r.stdout)
    assert data["gate_count"] is not None and data["optimal"] is False
    assert data["lower_bound"] < data["gate_count"]
    assert ex.circuit_from_dict(data).permutation() == tuple(perm)  # JSON results read back as circuits
