"""Fuzzing every reader through the command line (hypothesis): a result, or one line and exit 2.

Property, for every generated input: the command ends with exit 0 (a result), 1 (no
circuit, or a rejected certificate) or 2 (bad input: exactly one line on stderr,
starting ``exactsyn: error:``); never a traceback, never a usage block.  Where an oracle
outside the code under test says the input is malformed, exit 2 is required (never 0):

* permutations and cycles: a small parser written here from the README's rules;
* TOML specs: :mod:`tomllib` rejecting the text, or a key the README does not list;
* expressions: Python's own :func:`ast.parse` rejecting it, or a name that is not an input;
* OpenQASM 2 / 3: the reference readers (qiskit's ``qasm2.loads``, the ``openqasm3``
  parser) rejecting the text;
* JSON circuits: a validator written here from the format in the README; valid ones
  must give the truth table of a simulation written here;
* certificates: mutations of a checked certificate in the fields a claim rests on must
  be rejected (exit 1 or 2).

Inputs are random text and mutations (deleted, inserted, replaced and duplicated
pieces) of valid files.  Counts per category are printed at the end of the module
(``pytest -s``); ``-m slow`` runs many more examples.  Everything runs in-process
(CliRunner) to keep the time low.
"""

from __future__ import annotations

import ast
import contextlib
import io
import json
import random
import re
import tomllib
import warnings
from collections import Counter
from pathlib import Path
from typing import Any

import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from optional import need_openqasm3_parser, need_qiskit

from exactsyn.cli import main
from exactsyn.core.circuit import Circuit
from exactsyn.core.gates import peres_gate, swap_gate, x_gate
from exactsyn.io.qasm import to_qasm2, to_qasm3

COUNTS: Counter[str] = Counter()
MALFORMED: Counter[str] = Counter()
FAST = dict(
    max_examples=60,
    deadline=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture, HealthCheck.filter_too_much],
)
MANY = dict(FAST, max_examples=1500, derandomize=False)


def invoke(args: list[str]) -> tuple[int, str, str]:
    with warnings.catch_warnings(record=True) as caught:  # a warning is one more line on a user's stderr
        warnings.simplefilter("always")
        r = CliRunner().invoke(main, args)
    if r.exception is not None and not isinstance(r.exception, SystemExit):
        raise AssertionError(f"exception escaped: {r.exception!r} for {args!r}") from r.exception
    shown = [w for w in caught if not issubclass(w.category, (DeprecationWarning, PendingDeprecationWarning))]
    assert not shown, [str(w.message) for w in shown]
    return r.exit_code, r.stdout, r.stderr


def check_outcome(category: str, code: int, out: str, err: str, malformed: bool | None) -> None:
    """The property of the module docstring; ``malformed`` is the oracle's verdict (None: no oracle)."""
    COUNTS[category] += 1
    MALFORMED[category] += bool(malformed)
    assert "Traceback" not in err and "Usage:" not in err, err
    assert code in (0, 1, 2), (code, err)
    if code == 2:
        lines = err.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("exactsyn: error: "), err
        assert out == ""
    if malformed:
        assert code == 2, (category, code, out[:200], err[:200])


def mutate(text: str, rng: random.Random, steps: int) -> str:
    """Delete, insert, replace or duplicate small pieces of ``text``."""
    alphabet = "0123456789,;()[]{}\"'=. -_abcxqgOPENQASMtrue\n\t#/"
    for _ in range(steps):
        if not text:
            text = rng.choice(alphabet)
            continue
        i = rng.randrange(len(text))
        j = min(len(text), i + rng.randint(1, 4))
        op = rng.randrange(4)
        if op == 0:
            text = text[:i] + text[j:]
        elif op == 1:
            text = text[:i] + "".join(rng.choice(alphabet) for _ in range(rng.randint(1, 3))) + text[i:]
        elif op == 2:
            text = text[:i] + rng.choice(alphabet) + text[i + 1 :]
        else:
            text = text[:j] + text[i:j] + text[j:]
    return text


# --------------------------------------------------------------------- permutations
def perm_oracle(text: str) -> bool:
    """Is ``text`` a valid --perm value (README: p[0],p[1],... commas and/or spaces, optional brackets)?"""
    body = text.strip()
    if body.startswith("[") != body.endswith("]"):
        return False
    body = body.removeprefix("[").removesuffix("]").strip()
    if not body or re.search(r",\s*,", body) or body.startswith(",") or body.endswith(","):
        return False
    items = [t for t in re.split(r"[,\s]+", body) if t]
    values = []
    for t in items:
        try:
            values.append(int(t, 0))
        except ValueError:
            return False
    n = len(values)
    return n >= 2 and n & (n - 1) == 0 and n <= 64 and sorted(values) == list(range(n))


perm_texts = st.one_of(
    st.text(alphabet="0123456789, []x-+", max_size=30),
    st.permutations(list(range(8))).map(lambda p: ",".join(map(str, p))),
    st.tuples(st.permutations(list(range(4))), st.integers(0, 10**6)).map(
        lambda a: mutate(",".join(map(str, a[0])), random.Random(a[1]), 2)
    ),
    st.tuples(st.permutations(list(range(16))), st.integers(0, 10**6)).map(
        lambda a: mutate(" ".join(map(str, a[0])), random.Random(a[1]), 1)
    ),
)


def _fuzz_perm(text: str) -> None:
    if text.startswith("-"):
        text = " " + text  # a value, not an option
    code, out, err = invoke(["synth", "--perm", text, "--max-gates", "0", "--format", "json", "-q"])
    malformed = not perm_oracle(text)
    check_outcome("permutation", code, out, err, malformed)
    if not malformed:
        assert code in (0, 1)


@settings(**FAST)
@given(perm_texts)
def test_fuzz_permutations(text: str) -> None:
    _fuzz_perm(text)


@pytest.mark.slow
@settings(**MANY)
@given(perm_texts)
def test_fuzz_permutations_many(text: str) -> None:
    _fuzz_perm(text)


# --------------------------------------------------------------------- cycles
def cycles_oracle(text: str) -> bool:
    """Is ``text`` a valid --cycles value (README: groups like (0 1)(2 3), disjoint, non-negative)?"""
    if not re.fullmatch(r"\s*(\(\s*[^()]*\)\s*)+", text):
        return False
    seen: set[int] = set()
    for group in re.findall(r"\(([^()]*)\)", text):
        items = [t for t in re.split(r"[,\s]+", group.strip()) if t]
        try:
            values = [int(t, 0) for t in items]
        except ValueError:
            return False
        if any(v < 0 for v in values) or len(set(values)) != len(values) or seen & set(values):
            return False
        seen |= set(values)
    return max(seen, default=0) < 64


cycle_texts = st.one_of(
    st.text(alphabet="0123456789() ,x-", max_size=24),
    st.tuples(st.permutations(list(range(8))), st.integers(0, 10**6)).map(
        lambda a: mutate(f"({a[0][0]} {a[0][1]} {a[0][2]})({a[0][3]} {a[0][4]})", random.Random(a[1]), 2)
    ),
)


@settings(**FAST)
@given(cycle_texts)
def test_fuzz_cycles(text: str) -> None:
    _fuzz_cycles(text)


@pytest.mark.slow
@settings(**MANY)
@given(cycle_texts)
def test_fuzz_cycles_many(text: str) -> None:
    _fuzz_cycles(text)


def _fuzz_cycles(text: str) -> None:
    if text.startswith("-"):
        text = " " + text
    code, out, err = invoke(["synth", "--cycles", text, "--max-gates", "0", "--format", "json", "-q"])
    malformed = not cycles_oracle(text)
    check_outcome("cycles", code, out, err, malformed)
    if not malformed:
        assert code in (0, 1)


# --------------------------------------------------------------------- TOML specs
SPEC_KEYS = {"name", "description", "lines", "permutation", "cycles"}
FUNCTION_KEYS = {
    "name", "description", "inputs", "outputs", "expressions", "table", "lines", "constants", "output_lines"
}
SEED_SPECS = [
    'name = "x"\npermutation = [1, 0, 3, 2, 5, 7, 4, 6]\n',
    'lines = 3\ncycles = "(0 1)(2 3)"\n',
    'inputs = ["a", "b", "cin"]\noutputs = ["sum", "cout"]\n[expressions]\nsum = "a ^ b ^ cin"\n'
    'cout = "maj(a, b, cin)"\n',
    'inputs = ["a", "b"]\noutputs = ["y"]\ntable = ["00 0", "01 1", "10 1", "11 -"]\nlines = 3\n'
    "[constants]\n2 = 0\n",
    'inputs = ["s", "x", "y"]\noutputs = ["o"]\noutput_lines = "auto"\n[expressions]\no = "mux(s, x, y)"\n',
]


def toml_oracle(text: str) -> bool:
    """Malformed for sure: TOML syntax error, or a top-level key the README does not list."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError:
        return True
    return bool(set(data) - (FUNCTION_KEYS | SPEC_KEYS))


toml_texts = st.one_of(
    st.tuples(st.sampled_from(SEED_SPECS), st.integers(0, 10**6), st.integers(1, 4)).map(
        lambda a: mutate(a[0], random.Random(a[1]), a[2])
    ),
    st.tuples(st.sampled_from(SEED_SPECS), st.sampled_from(["colour", "permutaton", "input", "Lines"])).map(
        lambda a: f"{a[1]} = 1\n" + a[0]
    ),
    st.text(max_size=60),
)


def _fuzz_toml(tmp: Path, text: str) -> None:
    f = tmp / "spec.toml"
    f.write_text(text, encoding="utf-8")
    code, out, err = invoke(["synth", str(f), "--max-gates", "0", "--format", "json", "-q"])
    check_outcome("toml spec", code, out, err, toml_oracle(text))


@settings(**FAST)
@given(toml_texts)
def test_fuzz_toml_specs(tmp_path: Path, text: str) -> None:
    _fuzz_toml(tmp_path, text)


@pytest.mark.slow
@settings(**MANY)
@given(toml_texts)
def test_fuzz_toml_specs_many(tmp_path: Path, text: str) -> None:
    _fuzz_toml(tmp_path, text)


# --------------------------------------------------------------------- expressions
def expression_oracle(expr: str) -> bool:
    """Malformed for sure: Python cannot parse it, or it names something that is not an input or function."""
    try:
        tree = ast.parse(expr.strip(), mode="eval")
    except (SyntaxError, ValueError, RecursionError, MemoryError):
        return True
    names = {n.id for n in ast.walk(tree) if isinstance(n, ast.Name)}
    return bool(names - {"a", "b", "c", "maj", "mux", "parity"})


expressions = st.one_of(
    st.text(alphabet="abc01&|^~() ,", max_size=20),
    st.tuples(st.sampled_from(["a ^ b", "maj(a, b, c)", "mux(a, b, c)", "~a & (b | c)", "parity(a, b)"]),
              st.integers(0, 10**6)).map(lambda a: mutate(a[0], random.Random(a[1]), 2)),
    st.text(max_size=15),
)


@settings(**FAST)
@given(expressions)
def test_fuzz_expressions(tmp_path: Path, expr: str) -> None:
    _fuzz_expression(tmp_path, expr)


@pytest.mark.slow
@settings(**MANY)
@given(expressions)
def test_fuzz_expressions_many(tmp_path: Path, expr: str) -> None:
    _fuzz_expression(tmp_path, expr)


def _fuzz_expression(tmp_path: Path, expr: str) -> None:
    f = tmp_path / "f.toml"
    f.write_text(
        'inputs = ["a", "b", "c"]\noutputs = ["y"]\n[expressions]\ny = ' + json.dumps(expr) + "\n", encoding="utf-8"
    )
    code, out, err = invoke(["synth", str(f), "--max-gates", "0", "--format", "json", "-q"])
    check_outcome("expression", code, out, err, expression_oracle(expr))


# --------------------------------------------------------------------- OpenQASM
def random_circuit(rng: random.Random, n: int, k: int) -> Circuit:
    gates = []
    for _ in range(k):
        kind = rng.random()
        lines = rng.sample(range(n), min(n, rng.randint(1, n)))
        if kind < 0.7 or len(lines) < 2:
            neg = [c for c in lines[1:] if rng.random() < 0.3]
            gates.append(x_gate(lines[0], [c for c in lines[1:] if c not in neg], neg))
        elif kind < 0.9 or len(lines) < 3:
            gates.append(swap_gate(lines[0], lines[1], lines[2:]))
        else:
            gates.append(peres_gate(*lines[:3]))
    return Circuit(n, tuple(gates))


def qasm_seed(seed: int, version: int) -> str:
    rng = random.Random(seed)
    c = random_circuit(rng, rng.randint(1, 4), rng.randint(0, 6))
    return to_qasm2(c) if version == 2 else to_qasm3(c)


def reference_rejects(text: str, version: int) -> bool:
    """Does the reference reader reject ``text``?  Our documented leniency is allowed: the standard
    gates are known by name even when the include line is missing, so it is put back first."""
    include = 'include "qelib1.inc";' if version == 2 else 'include "stdgates.inc";'
    if not re.search(r'include\s*"(qelib1|stdgates)\.inc"', text):
        head, sep, rest = text.partition(";")
        text = head + sep + "\n" + include + rest if sep and head.strip().startswith("OPENQASM") else text
    if version == 2:
        qiskit = need_qiskit()
        try:
            qiskit.qasm2.loads(text, custom_instructions=qiskit.qasm2.LEGACY_CUSTOM_INSTRUCTIONS)
        except Exception:  # the reference's own error types
            return True
        return False
    parser = need_openqasm3_parser()
    try:
        with contextlib.redirect_stderr(io.StringIO()):  # the ANTLR runtime prints its complaints
            parser.parse(text)
    except Exception:  # the reference's own error types
        return True
    return False


qasm_inputs = st.tuples(st.integers(0, 10**6), st.sampled_from([2, 3]), st.integers(0, 10**6), st.integers(1, 3))


def _fuzz_qasm(tmp: Path, seed: int, version: int, mseed: int, steps: int) -> None:
    text = mutate(qasm_seed(seed, version), random.Random(mseed), steps)
    f = tmp / "c.qasm"
    f.write_text(text, encoding="utf-8")
    code, out, err = invoke(["apply", str(f), "--perm"])
    # Only the direction "the reference rejects the syntax" is an oracle: our reader takes a subset.
    check_outcome(f"openqasm {version}", code, out, err, reference_rejects(text, version) or None)


@settings(**FAST)
@given(qasm_inputs)
def test_fuzz_openqasm(tmp_path: Path, args: tuple[int, int, int, int]) -> None:
    _fuzz_qasm(tmp_path, *args)


@pytest.mark.slow
@settings(**MANY)
@given(qasm_inputs)
def test_fuzz_openqasm_many(tmp_path: Path, args: tuple[int, int, int, int]) -> None:
    _fuzz_qasm(tmp_path, *args)


# --------------------------------------------------------------------- JSON circuits
def json_circuit_oracle(data: Any) -> tuple[int, list[tuple[str, list[int], list[int], list[int]]]] | None:
    """The README's JSON circuit format, checked here: ``(lines, gates)`` or None when malformed."""

    def line_list(v: Any) -> list[int] | None:
        if not isinstance(v, list) or not all(type(x) is int and x >= 0 for x in v):
            return None
        return v

    if not isinstance(data, dict) or "lines" not in data or "gates" not in data:
        return None
    n = data["lines"]
    if type(n) is not int or not 1 <= n <= 1024 or not isinstance(data["gates"], list):
        return None
    gates = []
    for g in data["gates"]:
        if not isinstance(g, dict) or g.get("type") not in ("x", "swap", "peres"):
            return None
        kind = g["type"]
        allowed = {
            "x": {"type", "target", "controls", "negative_controls"},
            "swap": {"type", "targets", "controls", "negative_controls"},
            "peres": {"type", "controls", "targets"},
        }[kind]
        if set(g) - allowed:
            return None
        if kind == "x":
            t = g.get("target")
            if type(t) is not int or t < 0:
                return None
            targets = [t]
        else:
            targets = line_list(g.get("targets"))
            if targets is None or len(targets) != 2:
                return None
        pos = line_list(g.get("controls", []))
        neg = line_list(g.get("negative_controls", []))
        if pos is None or neg is None or (kind == "peres" and len(pos) != 1):
            return None
        used = targets + pos + neg
        if len(set(used)) != len(used) or any(x >= n for x in used):
            return None
        gates.append((kind, targets, pos, neg))
    return n, gates


def simulate(n: int, gates: list[tuple[str, list[int], list[int], list[int]]]) -> list[int]:
    """Our own simulation of the JSON gates (README semantics), independent of exactsyn.core."""
    out = []
    for x in range(1 << n):
        for kind, targets, pos, neg in gates:
            bit = lambda v, line: (v >> line) & 1  # noqa: E731
            if kind == "peres":
                a, (b, c) = pos[0], targets
                if bit(x, a):
                    x ^= bit(x, b) << c
                    x ^= 1 << b
                continue
            if not all(bit(x, c) for c in pos) or any(bit(x, c) for c in neg):
                continue
            if kind == "x":
                x ^= 1 << targets[0]
            elif bit(x, targets[0]) != bit(x, targets[1]):
                x ^= (1 << targets[0]) | (1 << targets[1])
        out.append(x)
    return out


json_leaves = st.one_of(st.none(), st.booleans(), st.integers(-3, 6), st.text(max_size=4), st.floats(allow_nan=False))
json_values = st.recursive(
    json_leaves,
    lambda inner: st.one_of(st.lists(inner, max_size=4), st.dictionaries(st.text(max_size=10), inner, max_size=4)),
    max_leaves=12,
)
gate_like = st.fixed_dictionaries(
    {"type": st.sampled_from(["x", "swap", "peres", "X", 1])},
    optional={
        "target": st.integers(-1, 4),
        "targets": st.lists(st.integers(-1, 4), max_size=3),
        "controls": st.lists(st.integers(-1, 4), max_size=3),
        "negative_controls": st.lists(st.integers(-1, 4), max_size=2),
        "extra": st.integers(),
    },
)
def _valid_circuit(seed: int) -> Any:
    rng = random.Random(seed)
    return json.loads(_circuit_json(random_circuit(rng, rng.randint(1, 5), rng.randint(0, 8))))


circuit_like = st.one_of(
    st.integers(0, 10**6).map(_valid_circuit),
    st.fixed_dictionaries({"lines": st.integers(-1, 4), "gates": st.lists(gate_like, max_size=5)}),
    st.fixed_dictionaries(
        {"lines": st.one_of(st.integers(1, 4), json_values), "gates": st.one_of(st.lists(gate_like), json_values)}
    ),
    json_values,
)


@settings(**FAST)
@given(circuit_like)
def test_fuzz_json_circuits(tmp_path: Path, data: Any) -> None:
    _fuzz_json(tmp_path, data)


@pytest.mark.slow
@settings(**MANY)
@given(circuit_like)
def test_fuzz_json_circuits_many(tmp_path: Path, data: Any) -> None:
    _fuzz_json(tmp_path, data)


def _fuzz_json(tmp_path: Path, data: Any) -> None:
    f = tmp_path / "c.json"
    f.write_text(json.dumps(data), encoding="utf-8")
    code, out, err = invoke(["apply", str(f), "--perm"])
    parsed = json_circuit_oracle(data)
    check_outcome("json circuit", code, out, err, parsed is None)
    if parsed is not None:
        n, gates = parsed
        assert code == 0, err
        assert [int(v) for v in out.strip().split(",")] == simulate(n, gates)


@settings(**FAST)
@given(st.integers(0, 10**6), st.integers(1, 3))
def test_fuzz_json_text(tmp_path: Path, seed: int, steps: int) -> None:
    _fuzz_json_text(tmp_path, seed, steps)


@pytest.mark.slow
@settings(**MANY)
@given(st.integers(0, 10**6), st.integers(1, 3))
def test_fuzz_json_text_many(tmp_path: Path, seed: int, steps: int) -> None:
    _fuzz_json_text(tmp_path, seed, steps)


def _fuzz_json_text(tmp_path: Path, seed: int, steps: int) -> None:
    rng = random.Random(seed)
    c = random_circuit(rng, rng.randint(1, 4), rng.randint(0, 5))
    text = mutate(json.dumps({"lines": c.lines, "gates": []}) if not c.gates else _circuit_json(c), rng, steps)
    f = tmp_path / "c.json"
    f.write_text(text, encoding="utf-8")
    code, out, err = invoke(["apply", str(f), "--perm"])
    try:
        parsed = json_circuit_oracle(json.loads(text))
    except (json.JSONDecodeError, RecursionError):
        parsed = None
    check_outcome("json text", code, out, err, parsed is None)


def _circuit_json(c: Circuit) -> str:
    from exactsyn.io.jsonio import circuit_to_dict

    return json.dumps(circuit_to_dict(c))


# --------------------------------------------------------------------- certificates
@pytest.fixture(scope="module")
def certificate(tmp_path_factory: pytest.TempPathFactory) -> Path:
    d = tmp_path_factory.mktemp("cert") / "c"
    # an objective section too, so its reader is fuzzed as well
    r = CliRunner().invoke(
        main,
        ["synth", "--perm", "1,0,3,2,5,7,4,6", "--certificate", str(d), "--bounds", "cheap",
         "--objective", "gates-then-cost", "--cost", "t-count"],
    )
    assert r.exit_code == 0, r.stderr
    assert "objective" in json.loads((d / "result.json").read_text())
    return d


def _paths(obj: Any, prefix: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
    out = [prefix]
    if isinstance(obj, dict):
        for k, v in obj.items():
            out += _paths(v, prefix + (k,))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            out += _paths(v, prefix + (i,))
    return out


def _set(obj: Any, path: tuple[Any, ...], value: Any) -> Any:
    if not path:
        return value
    obj[path[0]] = _set(obj[path[0]], path[1:], value)
    return obj


# Fields a claim rests on: changing one of them must be caught (names, timings, counts need not).
CRITICAL = (
    ("spec", "outputs"), ("spec", "care"), ("spec", "lines"), ("circuit",), ("gate_count",),
    ("library", "gates"), ("library", "preset"), ("library", "lines"), ("queries", "*", "k"),
    ("queries", "*", "cnf_sha256"), ("queries", "*", "proof"), ("objective", "value"), ("objective", "circuit"),
    ("objective", "costs"), ("objective", "queries", "*", "cnf_sha256"), ("objective", "queries", "*", "proof"),
)


def _critical(path: tuple[Any, ...], before: Any) -> bool:
    # a query's fields matter when it is a refutation the claim uses (a satisfiable one is not checked)
    for prefix in (("queries",), ("objective", "queries")):
        if path[: len(prefix)] == prefix and len(path) > len(prefix) + 1:
            entry = _get(before, path[: len(prefix) + 1])
            if not isinstance(entry, dict) or entry.get("status") != "unsat":
                return False
    for c in CRITICAL:
        if len(path) >= len(c) and all(a == "*" or a == b for a, b in zip(c, path, strict=False)):
            return True
        if len(path) < len(c) and all(a == "*" or a == b for a, b in zip(c[: len(path)], path, strict=False)):
            return True  # the whole container of a critical field
    return False


HOW = st.sampled_from(["replace", "drop", "swap-outputs", "truncate-proof"])


@settings(**dict(FAST, max_examples=40))
@given(st.integers(0, 10**6), HOW)
def test_fuzz_certificate_result_json(certificate: Path, tmp_path: Path, seed: int, how: str) -> None:
    _fuzz_certificate(certificate, tmp_path, seed, how)


@pytest.mark.slow
@settings(**dict(MANY, max_examples=400))
@given(st.integers(0, 10**6), HOW)
def test_fuzz_certificate_result_json_many(certificate: Path, tmp_path: Path, seed: int, how: str) -> None:
    _fuzz_certificate(certificate, tmp_path, seed, how)


def _fuzz_certificate(certificate: Path, tmp_path: Path, seed: int, how: str) -> None:
    import shutil

    d = tmp_path / f"c{seed}-{how}"
    shutil.rmtree(d, ignore_errors=True)
    shutil.copytree(certificate, d)
    rng = random.Random(seed)
    data = json.loads((d / "result.json").read_text())
    must_fail = False
    if how == "swap-outputs":
        outs = data["spec"]["outputs"]
        i, j = rng.sample(range(len(outs)), 2)
        outs[i], outs[j] = outs[j], outs[i]  # a different function: the circuit no longer meets it
        must_fail = True
    elif how == "truncate-proof":
        proofs = [q["proof"] for q in data["queries"] if q.get("proof")]
        p = d / proofs[rng.randrange(len(proofs))]
        p.write_bytes(p.read_bytes()[: rng.randrange(max(1, p.stat().st_size))])
        must_fail = True
    else:
        paths = [p for p in _paths(data) if p]
        path = rng.choice(paths)
        value = rng.choice([None, -1, 0, 7, "x", [], {}, True, 1.5])
        if how == "drop" and len(path) >= 1 and isinstance(_get(data, path[:-1]), dict):
            del _get(data, path[:-1])[path[-1]]
        else:
            data = _set(data, path, value)
        before = json.loads((certificate / "result.json").read_text())
        must_fail = _critical(path, before) and _changed(certificate, data)
    (d / "result.json").write_text(json.dumps(data))
    code, out, err = invoke(["check", str(d), "-q"])
    check_outcome("certificate", code, out, err, None)
    MALFORMED["certificate"] += must_fail  # changed where the claim rests: must be rejected
    if must_fail:
        assert code in (1, 2), (how, out, err)
    if code == 1:
        assert "REJECTED" in out


def _get(obj: Any, path: tuple[Any, ...]) -> Any:
    for p in path:
        obj = obj[p]
    return obj


def _changed(original: Path, data: Any) -> bool:
    """Does ``data`` mean something else than the original? (A key holding its default, [] or
    null, means the same when it is left out.)"""

    def norm(obj: Any) -> Any:
        if isinstance(obj, dict):
            return {k: norm(v) for k, v in obj.items() if v not in ([], None)}
        if isinstance(obj, list):
            return [norm(v) for v in obj]
        return obj

    return norm(json.loads((original / "result.json").read_text())) != norm(data)


def test_zz_fuzz_counts() -> None:
    """Report how many inputs each category tried (``pytest -s`` shows it)."""
    if not COUNTS:
        pytest.skip("run with the fuzz tests above to count their inputs")
    width = max(len(k) for k in COUNTS)
    print("\nfuzzed inputs per category (of them malformed by the oracle):")
    for k in sorted(COUNTS):
        print(f"  {k:<{width}}  {COUNTS[k]:>6}  ({MALFORMED[k]})")
    assert all(v >= 20 for v in COUNTS.values()), COUNTS
