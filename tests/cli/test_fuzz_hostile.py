"""Hostile inputs through the command line: nothing hangs, nothing eats the machine, one line and exit 2.

The readers' budgets (:mod:`exactsyn.io.limits`) are tested from outside: every input
here must end quickly with a result or with one ``exactsyn: error:`` line (exit 2), and
where a result is printed it is checked against a simulation written in this file from
the OpenQASM 3 specification (Cross et al., ACM TQC 2022: ``pow(k) @ g`` is ``g``
applied ``k`` times, a negative ``k`` the inverse; a ``gate`` body is its calls in
order).  The issue's cases — doubling definitions, ``pow(10^9) @ x``, ``ctrl(30) @ h``,
huge registers and JSON numbers, a byte-order mark — are run in a fresh process under a
memory cap (``RLIMIT_AS``), so a reader that builds what it should have refused fails
with "out of memory" instead of passing slowly.
"""

from __future__ import annotations

import math
import random
import resource
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from exactsyn.cli import main

FAST = dict(max_examples=40, deadline=None, derandomize=True, suppress_health_check=list(HealthCheck))
#: Seconds an in-process run of one hostile input may take (the issue's cases took 10-30 s and more).
QUICK = 5.0
#: The memory a fresh process may map while it reads one hostile input (the interpreter and
#: numpy take about 0.4 GiB of address space before any input is read).
MEMORY_CAP = 1 << 30
BUDGET = 1_000_000  # gates a circuit may expand to (README; exactsyn.io.limits.MAX_GATES)

HEADER3 = 'OPENQASM 3.0;\ninclude "stdgates.inc";\n'


def run(args: list[str]) -> tuple[int, str, str, float]:
    t = time.perf_counter()
    r = CliRunner().invoke(main, args)
    took = time.perf_counter() - t
    if r.exception is not None and not isinstance(r.exception, SystemExit):
        raise AssertionError(f"exception escaped: {r.exception!r}") from r.exception
    return r.exit_code, r.stdout, r.stderr, took


def one_line_refusal(code: int, out: str, err: str) -> None:
    assert code == 2, (code, out[:200], err[:300])
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("exactsyn: error: "), err
    assert "internal error" not in err and out == ""


def capped(args: list[str], cwd: Path) -> subprocess.CompletedProcess[str]:
    """The command in a fresh interpreter with at most :data:`MEMORY_CAP` of address space."""

    def limit() -> None:
        resource.setrlimit(resource.RLIMIT_AS, (MEMORY_CAP, MEMORY_CAP))

    return subprocess.run(
        [sys.executable, "-m", "exactsyn", *args], cwd=cwd, capture_output=True, text=True, timeout=60,
        preexec_fn=limit,
    )


# ------------------------------------------------------------------ a simulation written here
def apply_gate(name: str, ops: list[int], state: int) -> int:
    """x, cx, ccx, swap on a basis state (bit l = qubit l)."""
    bit = [(state >> q) & 1 for q in ops]
    if name == "swap":
        a, b = ops
        return state ^ ((bit[0] ^ bit[1]) * ((1 << a) | (1 << b)))
    controls, target = bit[:-1], ops[-1]
    return state ^ (all(controls) << target)


def sequence_perm(calls: list[tuple[str, list[int]]], n: int) -> list[int]:
    out = []
    for s in range(1 << n):
        for name, ops in calls:
            s = apply_gate(name, ops, s)
        out.append(s)
    return out


def compose_power(perm: list[int], k: int) -> list[int]:
    """perm applied k times (k >= 0), by repeated squaring."""
    result, base = list(range(len(perm))), perm
    while k:
        if k & 1:
            result = [base[r] for r in result]
        base = [base[b] for b in base]
        k >>= 1
    return result


def inverse(perm: list[int]) -> list[int]:
    inv = [0] * len(perm)
    for i, p in enumerate(perm):
        inv[p] = i
    return inv


GATES = [("x", 1), ("cx", 2), ("ccx", 3), ("swap", 2)]


@st.composite
def doubling_files(draw: st.DrawFn) -> tuple[str, list[int] | None, int]:
    """A body of 1-4 random gates on 3 qubits, doubled ``levels`` times, called with ``pow(k)``.

    Returns the text, the expected permutation (None when the expansion is beyond the budget
    for sure) and the number of gates the expansion has before the power is reduced.
    """
    rng = random.Random(draw(st.integers(0, 10**9)))
    body = []
    for _ in range(rng.randint(1, 4)):
        name, arity = rng.choice(GATES)
        body.append((name, rng.sample(range(3), arity)))
    levels = draw(st.integers(0, 40))
    k = draw(st.one_of(st.integers(-5, 5), st.integers(-(10**18), 10**18)))
    calls = " ".join(f"{name} {', '.join('abc'[q] for q in ops)};" for name, ops in body)
    lines = [HEADER3, "gate g0 a, b, c { " + calls + " }"]
    for i in range(1, levels + 1):
        lines.append(f"gate g{i} a, b, c {{ g{i - 1} a, b, c; g{i - 1} a, b, c; }}")
    lines.append("qubit[3] q;")
    lines.append(f"pow({k}) @ g{levels} q[0], q[1], q[2];")
    size = len(body) << levels
    one = sequence_perm(body, 3)
    times = compose_power(one, 1 << levels)
    expected = compose_power(times if k >= 0 else inverse(times), abs(k))
    return "\n".join(lines) + "\n", expected if size <= BUDGET else None, size


@settings(**FAST)
@given(doubling_files())
def test_doubled_definitions_and_huge_powers_end_quickly_and_right(tmp_path: Path, case: tuple) -> None:
    text, expected, size = case
    f = tmp_path / "c.qasm"
    f.write_text(text)
    code, out, err, took = run(["apply", str(f), "--perm"])
    assert took < QUICK, (took, size)
    if expected is None:  # the definitions alone expand past the budget
        one_line_refusal(code, out, err)
        assert "1,000,000 gates" in err
        return
    if code == 2:  # the power, reduced by the order of its permutation, may still be too long
        one_line_refusal(code, out, err)
        assert "1,000,000 gates" in err and size > 1000, err
        return
    assert code == 0, err
    assert [int(v) for v in out.split(",")] == expected


@settings(**FAST)
@given(st.integers(1, 5000), st.sampled_from(["h", "x", "rx(pi)", "swap"]), st.integers(1, 3))
def test_control_modifiers_are_counted_before_any_matrix_is_built(
    tmp_path: Path, m: int, gate: str, given_ops: int
) -> None:
    arity = 2 if gate == "swap" else 1
    ops = ", ".join(f"q[{i}]" for i in range(given_ops))
    f = tmp_path / "c.qasm"
    f.write_text(HEADER3 + f"qubit[3] q;\nctrl({m}) @ {gate} {ops};\n")
    code, out, err, took = run(["apply", str(f), "--inputs", "1"])
    assert took < QUICK
    if m + arity == given_ops:
        assert code in (0, 2), err  # h under a control is no reversible gate: refused, in one line
        if code == 2:
            one_line_refusal(code, out, err)
    else:
        one_line_refusal(code, out, err)
        if m <= 1024:
            assert f"needs {m + arity} qubits, not {given_ops}" in err
        else:  # more controls than a circuit may have lines
            assert f"{m} controls" in err and "1024 lines" in err


@settings(**FAST)
@given(st.integers(1, 6000), st.booleans())
def test_register_sizes_and_json_line_counts_are_bounded_before_conversion(
    tmp_path: Path, digits: int, qasm: bool
) -> None:
    number = "9" * digits if digits > 4 else str(random.Random(digits).randint(1, 2000))
    f = tmp_path / ("c.qasm" if qasm else "c.json")
    if qasm:
        f.write_text(f'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[{number}];\nx q[0];\n')
    else:
        f.write_text('{"lines": ' + number + ', "gates": [{"type": "x", "target": 0}]}')
    code, out, err, took = run(["apply", str(f), "--inputs", "1"])
    assert took < QUICK
    if len(number) <= 4 and int(number) <= 1024:
        assert code == 0, err
        assert out.splitlines()[1].split()[-1] == "0"  # x on line 0 maps input 1 to 0
    else:
        one_line_refusal(code, out, err)
        assert "1,024 lines" in err or "18 digits" in err


def test_the_issue_cases_refuse_in_one_line_under_a_memory_cap(tmp_path: Path) -> None:
    doubling = [HEADER3, "gate g0 a,b { cx a,b; cx a,b; }"]
    doubling += [f"gate g{i} a,b {{ g{i - 1} a,b; g{i - 1} a,b; }}" for i in range(1, 24)]
    doubling += ["qubit[2] q;", "g23 q[0],q[1];"]
    cases = {
        "double.qasm": "\n".join(doubling) + "\n",
        "ctrl30.qasm": HEADER3 + "qubit[3] q;\nctrl(30) @ h q[0];\n",
        "defctrl.qasm": HEADER3 + "gate g a { ctrl(25) @ h a; }\nqubit[3] q;\ng q[0];\n",
        "qreg.qasm": 'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[100000000];\nx q[0];\n',
        "qreg21.qasm": 'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[999999999999999999999];\nx q[0];\n',
        "lines.json": '{"lines": 1000000, "gates": []}',
        "digits.json": '{"lines": ' + "7" * 5000 + ', "gates": []}',
    }
    for name, text in cases.items():
        (tmp_path / name).write_text(text)
        t = time.perf_counter()
        r = capped(["apply", name, "--inputs", "1"], tmp_path)
        took = time.perf_counter() - t
        one_line_refusal(r.returncode, r.stdout, r.stderr)
        assert took < 10, (name, took)


def test_huge_powers_of_a_reversible_gate_are_reduced_not_repeated(tmp_path: Path) -> None:
    for k, flips in ((1_000_000, False), (10_000_000, False), (1_000_000_001, True), (-(10**18) + 1, True)):
        f = tmp_path / "p.qasm"
        f.write_text(HEADER3 + f"qubit[3] q;\npow({k}) @ x q[0];\n")
        r = capped(["apply", "p.qasm", "--perm"], tmp_path)
        assert r.returncode == 0, r.stderr
        # x applied k times: x when k is odd, the identity when even (the specification's pow)
        assert r.stdout.strip() == ("1,0,3,2,5,4,7,6" if flips else "0,1,2,3,4,5,6,7")


def test_a_byte_order_mark_is_read_past(tmp_path: Path) -> None:
    plain = 'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[2];\ncx q[0],q[1];\n'
    outs = []
    for name, data in (("plain.qasm", plain.encode()), ("bom.qasm", b"\xef\xbb\xbf" + plain.encode())):
        (tmp_path / name).write_bytes(data)
        code, out, err, _ = run(["apply", str(tmp_path / name), "--perm"])
        assert code == 0, err
        outs.append(out)
    assert outs[0] == outs[1] == "0,3,2,1\n"
    j = tmp_path / "bom.json"
    j.write_bytes(b"\xef\xbb\xbf" + b'{"lines": 2, "gates": [{"type": "x", "target": 1, "controls": [0]}]}')
    code, out, err, _ = run(["apply", str(j), "--perm"])
    assert (code, out) == (0, "0,3,2,1\n"), err


def test_apply_speaks_of_apply_when_a_table_would_be_too_long(tmp_path: Path) -> None:
    f = tmp_path / "wide.qasm"
    f.write_text(HEADER3 + "".join(f"qubit a{i};\n" for i in range(30)) + "x a0;\n")
    code, out, err, took = run(["apply", str(f)])
    one_line_refusal(code, out, err)
    assert "apply" in err and "--inputs" in err and "--library" not in err
    assert took < QUICK
    code, out, err, _ = run(["apply", str(f), "--inputs", "1,2"])
    assert code == 0 and out.splitlines()[1].split()[-1] == "0" and out.splitlines()[2].split()[-1] == "3"


def test_apply_runs_circuits_wider_than_a_machine_word(tmp_path: Path) -> None:
    n = 100
    f = tmp_path / "w.qasm"
    f.write_text(f'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[{n}];\nx q[99];\ncx q[99],q[70];\n')
    state = (1 << 99) | 5
    code, out, err, _ = run(["apply", str(f), "--inputs", f"{state}"])
    assert code == 0, err
    assert int(out.splitlines()[1].split()[-1]) == state ^ (1 << 99)  # x clears line 99, so the cx does nothing
    code, out, err, _ = run(["apply", str(f), "--inputs", "0"])
    assert int(out.splitlines()[1].split()[-1]) == (1 << 99) | (1 << 70)


@pytest.mark.parametrize("lines", [7, 60])
def test_synth_of_a_wide_circuit_says_what_handles_it(tmp_path: Path, lines: int) -> None:
    rng = random.Random(lines)
    body = "".join(f"cx q[{a}],q[{b}];\n" for a, b in (rng.sample(range(lines), 2) for _ in range(2000)))
    f = tmp_path / "wide.qasm"
    f.write_text(f'OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[{lines}];\n' + body)
    code, out, err, took = run(["synth", str(f)])
    one_line_refusal(code, out, err)
    assert f"{lines} lines" in err and "1 to 6" in err and "optimise" in err
    assert took < QUICK


def test_pictures_are_sized_before_they_are_drawn(tmp_path: Path) -> None:
    f = tmp_path / "tall.qasm"
    f.write_text('OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[1000];\n' + "".join(f"x q[{i}];\n" for i in range(1000)))
    code, out, err, took = run(["draw", str(f), "-o", str(tmp_path / "t.png")])
    one_line_refusal(code, out, err)
    assert "pixels" in err and "SVG" in err and not (tmp_path / "t.png").exists()
    assert took < QUICK
    long = tmp_path / "long.qasm"
    long.write_text('OPENQASM 2.0;\ninclude "qelib1.inc";\nqreg q[200];\n' + "x q[0];\n" * 20000)
    code, out, err, took = run(["draw", str(long), "-o", str(tmp_path / "l.svg")])
    one_line_refusal(code, out, err)  # 500 rows of 200 wires, and 20,000 gates
    assert "100,000" in err and took < QUICK
    code, out, err, _ = run(["draw", str(long), "-o", str(tmp_path / "l.svg"), "--wrap", "1000"])
    assert code == 0 and (tmp_path / "l.svg").stat().st_size > 0  # 20 rows of 200 wires: fits


def test_reduced_powers_keep_inverse_and_order(tmp_path: Path) -> None:
    # a 3-cycle of basis states (order 3) as a gate sequence, to the power -(3m + 1): its inverse
    body = [("cx", [0, 1]), ("cx", [1, 0])]
    perm = sequence_perm(body, 2)
    order = math.lcm(*(len(c) for c in _cycles(perm)))
    assert order == 3
    f = tmp_path / "c.qasm"
    f.write_text(HEADER3 + "gate r a, b { cx a, b; cx b, a; }\nqubit[2] q;\npow(-3000000000001) @ r q[0], q[1];\n")
    code, out, err, took = run(["apply", str(f), "--perm"])
    assert code == 0, err
    assert [int(v) for v in out.split(",")] == inverse(perm)
    assert took < QUICK


def _cycles(perm: list[int]) -> list[list[int]]:
    seen, out = set(), []
    for s in range(len(perm)):
        if s in seen:
            continue
        cyc = [s]
        seen.add(s)
        while perm[cyc[-1]] != s:
            cyc.append(perm[cyc[-1]])
            seen.add(cyc[-1])
        out.append(cyc)
    return out
