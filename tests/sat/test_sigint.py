"""Ctrl-C during a solve: answered within a slice, from any thread, and SIGINT is left unblocked.

The failure this guards against (exactsyn.sat.sigint): python-sat's own SIGINT handler
leaves SIGINT blocked in the main thread after it fires, and loses a SIGINT sent from
another thread of the process while a solve runs (the SIGTERM watcher of the command line
sends exactly that).  The hard formula is the pigeonhole principle with 11 pigeons in 10
holes, which CaDiCaL cannot refute in minutes (common practice: resolution proofs of PHP
are exponential, Haken, "The intractability of resolution", TCS 39, 1985).
"""

from __future__ import annotations

import subprocess
import sys
import textwrap

import pysat._utils
import pytest

from exactsyn.sat import solver as _solver  # noqa: F401  (importing it switches python-sat's handler off)

CHILD = textwrap.dedent(
    """
    import os, signal, sys, threading, time
    from pysat.examples.genhard import PHP
    from exactsyn.sat.solver import solve, SatSession

    signal.signal(signal.SIGINT, signal.default_int_handler)  # even if this test run ignores SIGINT

    def blocked():
        with open(f"/proc/self/task/{threading.get_native_id()}/status") as fh:
            mask = next(int(line.split()[1], 16) for line in fh if line.startswith("SigBlk"))
        return bool(mask & (1 << (signal.SIGINT - 1)))

    def hard_solve():
        if sys.argv[1] == "session":
            with SatSession(PHP(11).clauses) as s:
                s.solve()
        else:
            solve(PHP(11).clauses, proof=sys.argv[1] == "proof")

    for round in range(2):  # twice: the second Ctrl-C must be answered as the first
        threading.Timer(0.5, lambda: os.kill(os.getpid(), signal.SIGINT)).start()
        start = time.monotonic()
        try:
            hard_solve()
            print("solve ended without an interrupt")
            sys.exit(3)
        except KeyboardInterrupt:
            print(f"round {round}: {time.monotonic() - start:.2f} s, blocked={blocked()}", flush=True)
    """
)


def test_python_sat_is_told_never_to_install_its_own_handler() -> None:
    # The switch is an attribute of python-sat (pinned exactly in pyproject.toml); if a new
    # version renames it this fails here rather than by a lost Ctrl-C.
    assert pysat._utils.MainThread.check() is False


@pytest.mark.parametrize("how", ["plain", "proof", "session"])
def test_a_sigint_from_another_thread_stops_a_solve_without_a_limit(how: str) -> None:
    done = subprocess.run([sys.executable, "-c", CHILD, how], capture_output=True, text=True, timeout=60)
    assert done.returncode == 0, done.stdout + done.stderr
    rounds = done.stdout.splitlines()
    assert len(rounds) == 2, done.stdout
    for line in rounds:
        seconds = float(line.split(":")[1].split()[0])
        assert seconds < 10, line  # a slice is about 0.25 s; 10 s leaves room for a loaded machine
        assert line.endswith("blocked=False"), line
