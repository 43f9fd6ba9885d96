"""Boolean-function spec files: the instance files against textbook definitions written
here independently (arithmetic on integers, not the files' expressions), every kind of bad
input, and the safety of the expression evaluator.
"""

from __future__ import annotations

import ast
import builtins
import copy
import random
import tomllib
from typing import Any

import pytest
from helpers import INSTANCES

from exactsyn.errors import ExactsynError
from exactsyn.specification.boolean import (
    BooleanFunction,
    evaluate_expression,
    function_from_mapping,
    is_function_mapping,
)
from exactsyn.specification.reversible import spec_from_mapping


def load(name: str) -> BooleanFunction:
    data = tomllib.loads((INSTANCES / name).read_text())
    assert is_function_mapping(data)
    return function_from_mapping(data, name)


def bits(row: int, n: int) -> list[int]:
    return [(row >> i) & 1 for i in range(n)]


def table_of(f: BooleanFunction) -> dict[int, tuple[int | None, ...]]:
    return dict(f.rows)


# ------------------------------------------------------------ instance files vs definitions


def test_full_adder_matches_binary_addition() -> None:
    # common practice: sum and carry are the two bits of a + b + cin
    f = load("full-adder.toml")
    assert f.inputs == ("a", "b", "cin") and f.outputs == ("sum", "cout")
    expected = {}
    for r in range(8):
        a, b, c = bits(r, 3)
        total = a + b + c
        expected[r] = (total % 2, total // 2)
    assert table_of(f) == expected
    assert f.lines == 4 and f.constants == ((3, 0),) and f.output_lines == "auto"


def test_half_adder_table_matches_binary_addition() -> None:
    # common practice: sum and carry are the two bits of a + b
    f = load("half-adder.toml")
    expected = {r: ((bits(r, 2)[0] + bits(r, 2)[1]) % 2, (bits(r, 2)[0] + bits(r, 2)[1]) // 2) for r in range(4)}
    assert table_of(f) == expected
    assert f.output_lines == "auto" and f.constants == ((2, 0),)


def test_comparator_matches_integer_comparison() -> None:
    # common practice: lt/eq/gt of the 2-bit numbers a = a0 + 2 a1, b = b0 + 2 b1
    f = load("comparator2.toml")
    assert f.inputs == ("a0", "a1", "b0", "b1") and f.outputs == ("lt", "eq", "gt")
    expected = {}
    for r in range(16):
        a0, a1, b0, b1 = bits(r, 4)
        a, b = a0 + 2 * a1, b0 + 2 * b1
        expected[r] = (int(a < b), int(a == b), int(a > b))
    assert table_of(f) == expected


def test_decoder_is_one_hot_on_the_select_value() -> None:
    # common practice: y_i = 1 iff s = i
    f = load("decoder2to4.toml")
    expected = {s: tuple(int(i == s) for i in range(4)) for s in range(4)}
    assert table_of(f) == expected
    assert f.lines == 4 and f.constants == ((2, 0), (3, 0))


def test_majority_cell_matches_its_definition_and_is_reversible() -> None:
    # Cuccaro, Draper, Kutin, Moulton 2004 (from memory): (a, b, c) -> (a^c, b^c, maj(a,b,c))
    f = load("majority-inplace.toml")
    expected = {}
    for r in range(8):
        a, b, c = bits(r, 3)
        expected[r] = (a ^ c, b ^ c, int(a + b + c >= 2))
    assert table_of(f) == expected
    images = {sum(v << i for i, v in enumerate(vals)) for vals in expected.values()}
    assert images == set(range(8))  # a bijection, as the paper needs for an in-place cell


def test_greenhouse_demo_has_dont_cares() -> None:
    f = load("greenhouse-vent.toml")
    t = table_of(f)
    # rows "rain but not humid" are left out; input bit 0 = hot, bit 1 = humid, bit 2 = rain
    assert 0b100 not in t and 0b101 not in t
    assert t[0b110] == (0, None)  # humid in rain: alarm does not matter
    assert t[0b111] == (None, 1)
    for r, (vent, _alarm) in t.items():
        hot, humid, rain = bits(r, 3)
        if vent is not None:
            assert vent == int((hot or humid) and not rain)


def test_permutation_files_are_not_function_files() -> None:
    data = tomllib.loads((INSTANCES / "lift-gray-step.toml").read_text())
    assert not is_function_mapping(data)
    spec = spec_from_mapping(data, "lift")  # still read by the permutation reader
    # the file's own definition: Gray code g(f) = f ^ (f >> 1) of floor f moves to g(f + 1 mod 8)
    gray = [f ^ (f >> 1) for f in range(8)]
    step = [0] * 8
    for f in range(8):
        step[gray[f]] = gray[(f + 1) % 8]
    assert spec.is_permutation and spec.lines == 3 and list(spec.outputs) == step


# ------------------------------------------------------------ the table form


def base_table() -> dict[str, Any]:
    return {"name": "t", "inputs": ["p", "q"], "outputs": ["u", "v"], "table": ["00 01", "11 1-"]}


def test_table_rows_index_and_merging() -> None:
    d = base_table()
    d["table"] = ["10 1-", "10 -0", "10 10", "01 --", "11 01"]
    f = function_from_mapping(d, "t")
    # "10": first character is the first input p = bit 0 -> row 1; "01" is all don't-care, dropped
    assert f.rows == ((1, (1, 0)), (3, (0, 1)))
    assert f.lines is None and f.constants == () and f.output_lines is None


def test_constants_default_and_choose() -> None:
    d = base_table()
    d["lines"] = 5
    d["constants"] = {"3": "?", "4": 1}
    f = function_from_mapping(d, "t")
    assert f.constants == ((2, 0), (3, None), (4, 1))


# ------------------------------------------------------------ expressions


@pytest.mark.parametrize(
    ("text", "truth"),
    [
        ("x", lambda x, y, z, w, v: x),
        ("~x", lambda x, y, z, w, v: 1 - x),
        ("~~x", lambda x, y, z, w, v: x),
        ("x & y | z", lambda x, y, z, w, v: (x and y) or z),
        ("x ^ (y & 1) ^ 0", lambda x, y, z, w, v: x ^ y),
        ("maj(x, y, z)", lambda x, y, z, w, v: int(x + y + z >= 2)),
        ("maj(x, y, z, w, v)", lambda x, y, z, w, v: int(x + y + z + w + v >= 3)),
        ("mux(x, y, z)", lambda x, y, z, w, v: y if x else z),
        ("parity(x, y, z, w)", lambda x, y, z, w, v: (x + y + z + w) % 2),
        ("parity(v)", lambda x, y, z, w, v: v),
        ("~(x | y) & maj(z, ~w, 1)", lambda x, y, z, w, v: int(not (x or y)) * int(z + (1 - w) + 1 >= 2)),
    ],
)
def test_expression_values(text: str, truth: Any) -> None:
    names = ("x", "y", "z", "w", "v")
    f = evaluate_expression(text, names)
    for r in range(32):
        assert f(r) == int(truth(*bits(r, 5))), (text, r)


def _random_tree(rng: random.Random, depth: int) -> tuple[str, Any]:
    """A random expression as (text, value function), built side by side from the same tree."""
    if depth == 0 or rng.random() < 0.25:
        k = rng.randrange(5)
        if k == 4:
            c = rng.randrange(2)
            return str(c), lambda v, c=c: c
        return "abcd"[k], lambda v, k=k: v[k]
    kind = rng.choice(["&", "|", "^", "~", "maj", "mux", "parity"])
    if kind == "~":
        t, f = _random_tree(rng, depth - 1)
        return f"~({t})", lambda v: 1 - f(v)
    if kind in "&|^":
        (t1, f1), (t2, f2) = _random_tree(rng, depth - 1), _random_tree(rng, depth - 1)
        ops = {"&": lambda x, y: x and y, "|": lambda x, y: x or y, "^": lambda x, y: int(x != y)}
        op = ops[kind]
        return f"({t1}) {kind} ({t2})", lambda v: int(op(f1(v), f2(v)))
    n = {"maj": rng.choice([3, 5]), "mux": 3, "parity": rng.randint(1, 4)}[kind]
    subs = [_random_tree(rng, depth - 1) for _ in range(n)]
    text = f"{kind}({', '.join(t for t, _ in subs)})"
    fs = [f for _, f in subs]
    if kind == "maj":
        return text, lambda v: int(sum(f(v) for f in fs) * 2 > len(fs))
    if kind == "mux":
        return text, lambda v: fs[1](v) if fs[0](v) else fs[2](v)
    return text, lambda v: sum(f(v) for f in fs) % 2


def test_random_expressions_match_direct_evaluation() -> None:
    rng = random.Random(20261201)
    for _ in range(150):
        text, ref = _random_tree(rng, 4)
        f = evaluate_expression(text, ("a", "b", "c", "d"))
        for r in range(16):
            assert f(r) == ref(bits(r, 4)), text


@pytest.mark.parametrize(
    ("text", "needle"),
    [
        ("__import__('os').system('x')", "syntax 'Attribute'"),
        ("__import__('os')", "unknown function '__import__'"),
        ("a.__class__", "syntax 'Attribute'"),
        ("(lambda: 1)()", "syntax 'Lambda'"),
        ("open('f')", "unknown function 'open'"),
        ("a if b else c", "syntax 'IfExp'"),
        ("a and b", "syntax 'BoolOp'"),
        ("not a", "operator 'Not'"),
        ("a + b", "operator 'Add'"),
        ("a * b", "operator 'Mult'"),
        ("a << b", "operator 'LShift'"),
        ("-a", "operator 'USub'"),
        ("a < b", "syntax 'Compare'"),
        ("a[0]", "syntax 'Subscript'"),
        ("[a, b]", "syntax 'List'"),
        ("d", "unknown name 'd'"),
        ("True", "constant True"),
        ("2", "constant 2"),
        ("'a'", "constant 'a'"),
        ("1.0", "constant 1.0"),
        ("maj(a, b)", "odd number"),
        ("maj(a, b, c, a)", "odd number"),
        ("mux(a, b)", "3 arguments"),
        ("parity()", "at least 1"),
        ("maj(a, b, c=c)", "keyword"),
        ("maj(*a)", "syntax 'Starred'"),
        ("a.maj(b, c, a)", "syntax 'Attribute'"),
        ("(a := b)", "syntax 'NamedExpr'"),
        ("a ^", "syntax error"),
        ("a; b", "syntax error"),
        ("", "syntax error"),
        ("a\x00", "expression for out"),
        ("(" * 300 + "a" + ")" * 300, ""),
        ("~" * 5000 + "a", ""),
    ],
)
def test_disallowed_expressions(text: str, needle: str) -> None:
    with pytest.raises(ExactsynError) as err:
        evaluate_expression(text, ("a", "b", "c"), what="expression for out")
    msg = str(err.value)
    assert needle in msg and "\n" not in msg


def test_expressions_are_never_evaluated_as_code(monkeypatch: pytest.MonkeyPatch) -> None:
    def forbidden(*args: object, **kwargs: object) -> None:
        raise AssertionError("eval/exec must not be called")

    real_compile = builtins.compile
    compile_flags: list[int] = []

    def watched_compile(source: Any, filename: Any, mode: Any, flags: int = 0, *a: Any, **k: Any) -> Any:
        compile_flags.append(flags)
        return real_compile(source, filename, mode, flags, *a, **k)

    monkeypatch.setattr(builtins, "eval", forbidden)
    monkeypatch.setattr(builtins, "exec", forbidden)
    monkeypatch.setattr(builtins, "compile", watched_compile)
    f = load("full-adder.toml")
    assert dict(f.rows)[7] == (1, 1)
    with pytest.raises(ExactsynError):
        evaluate_expression("__import__('os').system('x')", ("a",))
    # the only compilation allowed is ast.parse, which asks for a syntax tree, never code
    assert compile_flags and all(fl & ast.PyCF_ONLY_AST for fl in compile_flags)


# ------------------------------------------------------------ bad spec files


def base_expr() -> dict[str, Any]:
    return {
        "name": "fa",
        "inputs": ["a", "b", "c"],
        "outputs": ["s", "k"],
        "expressions": {"s": "a ^ b ^ c", "k": "maj(a, b, c)"},
        "lines": 5,
        "constants": {"3": 0, "4": "?"},
        "output_lines": [0, 1],
    }


def edit(base: dict[str, Any], **changes: Any) -> dict[str, Any]:
    d = copy.deepcopy(base)
    for k, v in changes.items():
        if v is DROP:
            d.pop(k)
        else:
            d[k] = v
    return d


DROP = object()

BAD: list[tuple[str, dict[str, Any], str]] = [
    ("unknown key", edit(base_expr(), permutation=[1, 0]), "unknown key 'permutation'"),
    ("name not str", edit(base_expr(), name=3), "'name'"),
    ("description not str", edit(base_expr(), description=["x"]), "'description'"),
    ("missing inputs", edit(base_expr(), inputs=DROP), "missing 'inputs'"),
    ("missing outputs", edit(base_expr(), outputs=DROP), "missing 'outputs'"),
    ("empty inputs", edit(base_expr(), inputs=[]), "non-empty list"),
    ("inputs not list", edit(base_expr(), inputs="a b c"), "non-empty list"),
    ("duplicate input", edit(base_expr(), inputs=["a", "b", "a"]), "'a' twice"),
    ("duplicate output", edit(base_expr(), outputs=["s", "s"]), "'s' twice"),
    ("input is output", edit(base_expr(), outputs=["s", "a"]), "both an input and an output"),
    ("invalid name", edit(base_expr(), inputs=["a", "b", "c-d"]), "invalid name 'c-d'"),
    ("keyword name", edit(base_expr(), inputs=["a", "b", "lambda"]), "invalid name 'lambda'"),
    ("newline name", edit(base_expr(), inputs=["a", "b", "c\nd"]), "invalid name"),
    ("non-str name", edit(base_expr(), inputs=["a", "b", 3]), "invalid name 3"),
    ("function name", edit(base_expr(), inputs=["a", "b", "maj"]), "reserved"),
    ("both forms", edit(base_expr(), table=["000 00"]), "exactly one of"),
    ("neither form", edit(base_expr(), expressions=DROP), "exactly one of"),
    ("expressions not table", edit(base_expr(), expressions=["a"]), "'expressions' must be"),
    ("unknown output expr", edit(base_expr(), expressions={"s": "a", "k": "b", "z": "c"}), "unknown output 'z'"),
    ("missing output expr", edit(base_expr(), expressions={"s": "a"}), "no expression for output 'k'"),
    ("expr not str", edit(base_expr(), expressions={"s": "a", "k": 1}), "must be a string"),
    ("bad attr", edit(base_expr(), expressions={"s": "a", "k": "a.b"}), "disallowed syntax 'Attribute'"),
    ("bad name", edit(base_expr(), expressions={"s": "d", "k": "a"}), "unknown name 'd' in expression for s"),
    ("too many lines", edit(base_expr(), lines=7), "at most 6"),
    ("too few lines", edit(base_expr(), lines=2, constants=DROP), "fewer than"),
    ("lines not int", edit(base_expr(), lines="5"), "'lines' must be an integer"),
    ("lines bool", edit(base_expr(), lines=True), "'lines' must be an integer"),
    ("too many inputs", edit(base_expr(), inputs=list("abcdefg"), lines=DROP, constants=DROP), "more than 6"),
    ("constant on input", edit(base_expr(), constants={"2": 0}), "line 2"),
    ("constant past lines", edit(base_expr(), constants={"5": 0}), "line 5"),
    ("constant twice", edit(base_expr(), constants={"3": 0, "03": 1}), "line 3 is given twice"),
    ("constant key", edit(base_expr(), constants={"x": 0}), "not a line number"),
    ("constant key sign", edit(base_expr(), constants={"-3": 0}), "not a line number"),
    ("constant value 2", edit(base_expr(), constants={"3": 2}), "use 0, 1"),
    ("constant value bool", edit(base_expr(), constants={"3": True}), "use 0, 1"),
    ("constant value str", edit(base_expr(), constants={"3": "0"}), "use 0, 1"),
    ("constants not table", edit(base_expr(), constants=[0]), "'constants' must be"),
    ("constants without lines", edit(base_expr(), lines=DROP), "needs 'lines'"),
    ("output_lines length", edit(base_expr(), output_lines=[0]), "1 entries"),
    ("output_lines repeat", edit(base_expr(), output_lines=[1, 1]), "line 1 twice"),
    ("output_lines range", edit(base_expr(), output_lines=[0, 5]), "outside 0..4"),
    ("output_lines range no lines", edit(base_expr(), lines=DROP, constants=DROP, output_lines=[0, 6]), "0..5"),
    ("output_lines negative", edit(base_expr(), output_lines=[-1, 0]), "outside"),
    ("output_lines not int", edit(base_expr(), output_lines=[0, "1"]), "not an integer"),
    ("output_lines bool", edit(base_expr(), output_lines=[0, True]), "not an integer"),
    ("output_lines word", edit(base_expr(), output_lines="Auto"), '"auto"'),
    ("table not list", edit(base_table(), table="00 01"), "'table' must be"),
    ("table empty", edit(base_table(), table=[]), "'table' must be"),
    ("row not str", edit(base_table(), table=["00 01", 5]), "row 2 is not a string"),
    ("row no space", edit(base_table(), table=["0001"]), "row 1"),
    ("row three parts", edit(base_table(), table=["00 01 1"]), "row 1"),
    ("row input width", edit(base_table(), table=["000 01"]), "3 input bits; 2 inputs"),
    ("row output width", edit(base_table(), table=["00 0"]), "1 output bits; 2 outputs"),
    ("row input dash", edit(base_table(), table=["0- 01"]), "input bits must be 0 or 1"),
    ("row input other", edit(base_table(), table=["02 01"]), "input bits must be 0 or 1"),
    ("row output other", edit(base_table(), table=["00 0x"]), "output bits must be 0, 1 or -"),
    ("row contradiction", edit(base_table(), table=["00 01", "10 11", "00 -0"]), "row 3"),
]


@pytest.mark.parametrize(("label", "data", "needle"), BAD, ids=[b[0] for b in BAD])
def test_bad_spec_mappings(label: str, data: dict[str, Any], needle: str) -> None:
    with pytest.raises(ExactsynError) as err:
        function_from_mapping(data, "specs/bad.toml")
    msg = str(err.value)
    assert "specs/bad.toml" in msg and needle in msg, msg
    assert "\n" not in msg


def test_good_bases_are_accepted() -> None:
    # the bad cases above are single edits of these, so the error comes from that edit
    f = function_from_mapping(base_expr(), "x")
    # common practice: s and k are the two bits of a + b + c (the full adder)
    adder = {r: (sum(bits(r, 3)) % 2, sum(bits(r, 3)) // 2) for r in range(8)}
    assert f.inputs == ("a", "b", "c") and f.outputs == ("s", "k") and table_of(f) == adder
    assert f.lines == 5 and f.constants == ((3, 0), (4, None)) and f.output_lines == (0, 1)
    g = function_from_mapping(base_table(), "x")
    # read by hand: "00 01" is p = q = 0 (row 0) -> u = 0, v = 1; "11 1-" is row 3 -> u = 1, v free
    assert g.inputs == ("p", "q") and g.outputs == ("u", "v")
    assert table_of(g) == {0: (0, 1), 3: (1, None)}
    assert g.lines is None and g.constants == () and g.output_lines is None


def test_toml_integer_keys_reach_constants() -> None:
    text = """
inputs = ["a"]
outputs = ["y", "z"]
table = ["0 01", "1 10"]
lines = 3
[constants]
1 = "?"
2 = 1
"""
    f = function_from_mapping(tomllib.loads(text), "inline")
    assert f.constants == ((1, None), (2, 1))
