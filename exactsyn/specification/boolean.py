"""Spec files for irreversible or partially specified multi-output Boolean functions.

A reversible circuit can only compute a function that is a permutation.  An irreversible
function (a full adder, a comparator, a decoder) is embedded in one by the usual means
(common practice): extra input lines held at constants, and output lines that carry
garbage, i.e. are don't-cares.  This module only *reads* such a description; turning it
into a :class:`exactsyn.specification.reversible.Spec` on a chosen number of lines is the caller's job.

TOML format (a file is in this format when it has ``inputs`` or ``outputs``; otherwise
it is a permutation spec, see :mod:`exactsyn.specification.reversible`)::

    name = "full-adder"                 # optional string, shown in outputs
    description = "..."                 # optional string, ignored
    inputs = ["a", "b", "cin"]          # required: input names; input i is line i and
                                        #   bit i of a row index
    outputs = ["sum", "cout"]           # required: output names
    # exactly one of [expressions] and table:
    [expressions]                       # one expression per output, every output once
    sum = "a ^ b ^ cin"
    cout = "maj(a, b, cin)"
    # table = ["000 00", "001 10"]      # rows "<input bits> <output bits>"
    lines = 4                           # optional: total number of lines (default: the
                                        #   minimum, chosen by the solver)
    [constants]                         # optional, needs `lines`: value of extra input
    3 = 0                               #   line k (key = decimal line number, k from
                                        #   len(inputs) to lines-1): 0, 1 or "?" (the
                                        #   solver chooses); lines not listed get 0
    output_lines = [0, 1]               # optional: line of each output (in the order of
                                        #   `outputs`), or "auto" (the solver chooses);
                                        #   default: output j on line j

Names (inputs and outputs) are ASCII identifiers, not Python keywords and not one of the
function names below; all of them distinct.

Table rows: the input bits in the order of ``inputs`` (first character = first input =
line 0), whitespace, then the output bits in the order of ``outputs``.  Input bits are
``0``/``1``; output bits are ``0``, ``1`` or ``-`` (don't care).  Input rows that are not
listed are entirely don't-care.  A row may be listed more than once if the specified bits
agree (they are merged); conflicting specified bits are an error.

Expressions use ``&`` (and), ``|`` (or), ``^`` (xor), ``~`` (not, on one bit),
parentheses, the input names, the constants ``0`` and ``1`` and three functions:
``maj(x, y, z, ...)`` (majority of an odd number, at least 3, of arguments),
``mux(s, x, y)`` (``x`` if ``s`` else ``y``) and ``parity(x, ...)`` (xor of one or more
arguments).  They are parsed with :mod:`ast` and evaluated by walking a whitelist of node
types; nothing is ever compiled to code or passed to ``eval``.

At most :data:`exactsyn.specification.reversible.MAX_LINES` lines in total (inputs, outputs and ``lines``).
"""

from __future__ import annotations

import ast
import keyword
import re
import warnings
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from exactsyn.errors import ExactsynError, did_you_mean
from exactsyn.specification.reversible import MAX_LINES

Evaluator = Callable[[int], int]

FUNCTIONS = ("maj", "mux", "parity")
_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")
_LINE_KEY = re.compile(r"[0-9]+")
_KNOWN_KEYS = {"name", "description", "inputs", "outputs", "expressions", "table", "lines", "constants", "output_lines"}


@dataclass(frozen=True)
class BooleanFunction:
    name: str
    inputs: tuple[str, ...]  # input i is bit i of a row index
    outputs: tuple[str, ...]
    # sorted (row index, output values; None = don't care); rows not listed are entirely don't-care
    rows: tuple[tuple[int, tuple[int | None, ...]], ...]
    lines: int | None  # total lines requested (None = minimum)
    # (line, 0/1, or None = let the solver choose), for lines >= len(inputs)
    constants: tuple[tuple[int, int | None], ...]
    output_lines: tuple[int, ...] | str | None  # explicit line per output, "auto", or None (default)


def is_function_mapping(data: dict[str, Any]) -> bool:
    """True when the TOML uses ``inputs``/``outputs`` (this format), not ``permutation``/``cycles``."""
    return "inputs" in data or "outputs" in data


# ---------------------------------------------------------------- expressions


def _compile_node(node: ast.AST, inputs: tuple[str, ...], what: str) -> Evaluator:
    """Turn one whitelisted AST node into an evaluator; anything else is an error."""
    if isinstance(node, ast.Expression):
        return _compile_node(node.body, inputs, what)
    if isinstance(node, ast.BinOp):
        left = _compile_node(node.left, inputs, what)
        right = _compile_node(node.right, inputs, what)
        if isinstance(node.op, ast.BitAnd):
            return lambda r: left(r) & right(r)
        if isinstance(node.op, ast.BitOr):
            return lambda r: left(r) | right(r)
        if isinstance(node.op, ast.BitXor):
            return lambda r: left(r) ^ right(r)
        raise ExactsynError(f"disallowed operator '{type(node.op).__name__}' in {what}")
    if isinstance(node, ast.UnaryOp):
        if not isinstance(node.op, ast.Invert):
            raise ExactsynError(f"disallowed operator '{type(node.op).__name__}' in {what}")
        operand = _compile_node(node.operand, inputs, what)
        return lambda r: 1 - operand(r)
    if isinstance(node, ast.Name):
        if node.id not in inputs:
            raise ExactsynError(f"unknown name {node.id!r} in {what}")
        bit = inputs.index(node.id)
        return lambda r: (r >> bit) & 1
    if isinstance(node, ast.Constant):
        value = node.value
        if not isinstance(value, int) or isinstance(value, bool) or value not in (0, 1):
            raise ExactsynError(f"disallowed constant {value!r} in {what} (only 0 and 1)")
        return lambda r: value
    if isinstance(node, ast.Call):
        return _compile_call(node, inputs, what)
    raise ExactsynError(f"disallowed syntax '{type(node).__name__}' in {what}")


def _compile_call(node: ast.Call, inputs: tuple[str, ...], what: str) -> Evaluator:
    if not isinstance(node.func, ast.Name):
        raise ExactsynError(f"disallowed syntax '{type(node.func).__name__}' as a function in {what}")
    fname = node.func.id
    if fname not in FUNCTIONS:
        raise ExactsynError(f"unknown function {fname!r} in {what} (known: {', '.join(FUNCTIONS)})")
    if node.keywords:
        raise ExactsynError(f"keyword arguments are not allowed in {fname}() in {what}")
    args = tuple(_compile_node(a, inputs, what) for a in node.args)
    n = len(args)
    if fname == "maj":
        if n < 3 or n % 2 == 0:
            raise ExactsynError(f"maj() takes an odd number (at least 3) of arguments, got {n}, in {what}")
        half = n // 2
        return lambda r: int(sum(a(r) for a in args) > half)
    if fname == "mux":
        if n != 3:
            raise ExactsynError(f"mux() takes 3 arguments (select, if-1, if-0), got {n}, in {what}")
        s, x, y = args
        return lambda r: x(r) if s(r) else y(r)
    if n < 1:
        raise ExactsynError(f"parity() takes at least 1 argument in {what}")

    def parity(r: int) -> int:
        v = 0
        for a in args:
            v ^= a(r)
        return v

    return parity


def evaluate_expression(text: str, inputs: tuple[str, ...], *, what: str = "expression") -> Evaluator:
    """Parse ``text`` (syntax in the module docstring) into a function row index -> 0/1.

    Input ``inputs[i]`` is bit ``i`` of the row index.  ``what`` names the expression in
    error messages.  Raises :class:`ExactsynError` for anything outside the whitelist.
    """
    if not isinstance(text, str):
        raise ExactsynError(f"{what} must be a string")
    try:
        with warnings.catch_warnings():  # e.g. "1and b": a SyntaxWarning would be a second line on stderr
            warnings.simplefilter("ignore")
            tree = ast.parse(text.strip(), mode="eval")
    except SyntaxError as e:
        raise ExactsynError(f"syntax error in {what}: {' '.join(str(e.msg).split())}") from None
    except (ValueError, RecursionError, MemoryError):
        raise ExactsynError(f"cannot parse {what}") from None
    try:
        return _compile_node(tree, tuple(inputs), what)
    except RecursionError:
        raise ExactsynError(f"{what} is nested too deeply") from None


# ---------------------------------------------------------------- the TOML mapping


def _fail(where: str, problem: str) -> ExactsynError:
    return ExactsynError(f"malformed spec file {where}: {problem}")


def _names(data: dict[str, Any], key: str, where: str) -> tuple[str, ...]:
    if key not in data:
        raise _fail(where, f"missing {key!r}")
    value = data[key]
    if not isinstance(value, list) or not value:
        raise _fail(where, f"{key!r} must be a non-empty list of names")
    seen: set[str] = set()
    for v in value:
        if not isinstance(v, str) or not _NAME.fullmatch(v) or keyword.iskeyword(v):
            raise _fail(where, f"{key!r} has an invalid name {v!r} (use letters, digits and _)")
        if v in FUNCTIONS:
            raise _fail(where, f"{key!r} has the name {v!r}, which is reserved for a function")
        if v in seen:
            raise _fail(where, f"{key!r} has the name {v!r} twice")
        seen.add(v)
    return tuple(value)


def _is_int(value: object) -> bool:
    return isinstance(value, int) and not isinstance(value, bool)


def _rows_from_expressions(
    exprs: object, inputs: tuple[str, ...], outputs: tuple[str, ...], where: str
) -> tuple[tuple[int, tuple[int | None, ...]], ...]:
    if not isinstance(exprs, dict):
        raise _fail(where, "'expressions' must be a table of output name = \"expression\"")
    for key in exprs:
        if key not in outputs:
            raise _fail(where, f"expression for unknown output {key!r}")
    evaluators = []
    for out in outputs:
        if out not in exprs:
            raise _fail(where, f"no expression for output {out!r}")
        text = exprs[out]
        if not isinstance(text, str):
            raise _fail(where, f"expression for {out} must be a string")
        try:
            evaluators.append(evaluate_expression(text, inputs, what=f"expression for {out}"))
        except ExactsynError as e:
            raise _fail(where, e.message) from None
    return tuple((r, tuple(f(r) for f in evaluators)) for r in range(1 << len(inputs)))


def _rows_from_table(
    table: object, inputs: tuple[str, ...], outputs: tuple[str, ...], where: str
) -> tuple[tuple[int, tuple[int | None, ...]], ...]:
    if not isinstance(table, list) or not table:
        raise _fail(where, "'table' must be a non-empty list of rows such as \"01 1-\"")
    n, m = len(inputs), len(outputs)
    merged: dict[int, list[int | None]] = {}
    for k, row in enumerate(table, start=1):
        if not isinstance(row, str):
            raise _fail(where, f"table row {k} is not a string")
        parts = row.split()
        if len(parts) != 2:
            raise _fail(where, f'table row {k} {row!r} must be "<input bits> <output bits>"')
        ins, outs = parts
        if len(ins) != n:
            raise _fail(where, f"table row {k} {row!r} has {len(ins)} input bits; {n} inputs are declared")
        if len(outs) != m:
            raise _fail(where, f"table row {k} {row!r} has {len(outs)} output bits; {m} outputs are declared")
        if any(c not in "01" for c in ins):
            raise _fail(where, f"table row {k} {row!r}: input bits must be 0 or 1")
        if any(c not in "01-" for c in outs):
            raise _fail(where, f"table row {k} {row!r}: output bits must be 0, 1 or -")
        index = sum(1 << i for i, c in enumerate(ins) if c == "1")
        values: list[int | None] = [None if c == "-" else int(c) for c in outs]
        old = merged.setdefault(index, [None] * m)
        for j, v in enumerate(values):
            if v is None:
                continue
            if old[j] is not None and old[j] != v:
                raise _fail(where, f"table row {k} {row!r} contradicts an earlier row for output {outputs[j]}")
            old[j] = v
    return tuple((i, tuple(vals)) for i, vals in sorted(merged.items()) if any(v is not None for v in vals))


def _constants(raw: object, n_inputs: int, lines: int | None, where: str) -> tuple[tuple[int, int | None], ...]:
    if raw is None:
        given: dict[int, int | None] = {}
    else:
        if not isinstance(raw, dict):
            raise _fail(where, "'constants' must be a table of line number = 0, 1 or \"?\"")
        if lines is None and raw:
            raise _fail(where, "'constants' needs 'lines' (the total number of lines)")
        given = {}
        for key, value in raw.items():
            if not isinstance(key, str) or not _LINE_KEY.fullmatch(key):
                raise _fail(where, f"constant key {key!r} is not a line number")
            line = int(key)
            if line in given:
                raise _fail(where, f"constant for line {line} is given twice")
            if lines is not None and not n_inputs <= line < lines:
                raise _fail(where, f"constant on line {line}: extra input lines are {n_inputs}..{lines - 1}")
            if value == "?":
                given[line] = None
            elif _is_int(value) and value in (0, 1):
                given[line] = value
            else:
                raise _fail(where, f'constant for line {line} is {value!r}; use 0, 1 or "?"')
    if lines is None:
        return ()
    return tuple((line, given.get(line, 0)) for line in range(n_inputs, lines))


def _output_lines(raw: object, n_outputs: int, lines: int | None, where: str) -> tuple[int, ...] | str | None:
    if raw is None:
        return None
    if raw == "auto":
        return "auto"
    if not isinstance(raw, list):
        raise _fail(where, "'output_lines' must be a list of line numbers or \"auto\"")
    if len(raw) != n_outputs:
        raise _fail(where, f"'output_lines' has {len(raw)} entries; {n_outputs} outputs are declared")
    top = lines if lines is not None else MAX_LINES
    seen: set[int] = set()
    for v in raw:
        if not _is_int(v):
            raise _fail(where, f"'output_lines' entry {v!r} is not an integer")
        if not 0 <= v < top:
            raise _fail(where, f"'output_lines' entry {v} is outside 0..{top - 1}")
        if v in seen:
            raise _fail(where, f"'output_lines' has line {v} twice")
        seen.add(v)
    return tuple(raw)


def function_from_mapping(data: dict[str, Any], where: str = "spec") -> BooleanFunction:
    """Validate a parsed TOML mapping (format in the module docstring)."""
    unknown = sorted(set(data) - _KNOWN_KEYS)
    if unknown:
        raise _fail(where, f"unknown key {unknown[0]!r}{did_you_mean(unknown[0], sorted(_KNOWN_KEYS))}")
    name = data.get("name", "")
    if not isinstance(name, str):
        raise _fail(where, "'name' must be a string")
    if not isinstance(data.get("description", ""), str):
        raise _fail(where, "'description' must be a string")
    inputs = _names(data, "inputs", where)
    outputs = _names(data, "outputs", where)
    both = sorted(set(inputs) & set(outputs))
    if both:
        raise _fail(where, f"{both[0]!r} is both an input and an output name")
    width = max(len(inputs), len(outputs))
    if width > MAX_LINES:
        raise _fail(where, f"{len(inputs)} inputs and {len(outputs)} outputs need more than {MAX_LINES} lines")
    lines = data.get("lines")
    if lines is not None:
        if not _is_int(lines):
            raise _fail(where, "'lines' must be an integer")
        if lines > MAX_LINES:
            raise _fail(where, f"'lines' = {lines}; exactsyn handles at most {MAX_LINES} lines")
        if lines < width:
            raise _fail(where, f"'lines' = {lines} is fewer than the {width} needed for the inputs and outputs")
    has_expr, has_table = "expressions" in data, "table" in data
    if has_expr == has_table:
        raise _fail(where, "give exactly one of 'expressions' or 'table'")
    if has_expr:
        rows = _rows_from_expressions(data["expressions"], inputs, outputs, where)
    else:
        rows = _rows_from_table(data["table"], inputs, outputs, where)
    constants = _constants(data.get("constants"), len(inputs), lines, where)
    out_lines = _output_lines(data.get("output_lines"), len(outputs), lines, where)
    return BooleanFunction(name, inputs, outputs, rows, lines, constants, out_lines)
