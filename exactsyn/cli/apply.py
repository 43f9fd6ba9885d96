"""``exactsyn apply``: run a saved circuit on inputs and print its truth table.

Columns are labelled with the lines their bits stand for: bits are written as binary
numbers (line n-1 first, line 0 last).
"""

from __future__ import annotations

import click
import numpy as np

from exactsyn.cli.common import fail
from exactsyn.cli.options import with_formats
from exactsyn.core.circuit import Circuit
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import read_circuit

#: The whole truth table (no --inputs) of circuits of at most this many lines: 2^20 rows.
MAX_TABLE_LINES = 20
#: Rows asked for with --inputs.
MAX_INPUTS = 1 << 20


@with_formats
@click.command(short_help="Run a saved circuit on inputs and print its truth table.")
@click.argument("circuit_file", type=click.Path(dir_okay=False))
@click.option("--inputs", metavar="LIST", help="Only these inputs (comma-separated integers); default all.")
@click.option("--perm", "as_perm", is_flag=True, help="Print the function as one permutation line.")
def apply(circuit_file: str, inputs: str | None, as_perm: bool) -> None:
    """Run a saved circuit ({readable}) on inputs and print its truth table.

    \b
    Example:
      exactsyn synth --cycles "(6 7)" -o t.qasm && exactsyn apply t.qasm

    Each row: the input as an integer, its bits, the output bits and the output as an
    integer.  Without --inputs the whole table is printed, for circuits of up to 20
    lines; wider circuits (up to 1024 lines) need --inputs.  Bits are written as binary
    numbers, line n-1 first and line 0 last (the header says so), the reverse of the bit
    strings of a spec file's 'table' rows, which list line 0 first.
    """
    try:
        circ = read_circuit(circuit_file)
        n, size = circ.lines, 1 << circ.lines
        if inputs is None:
            if n > MAX_TABLE_LINES:
                raise ExactsynError(
                    f"{circuit_file} has {n} lines: apply prints the whole table (2^n rows) of circuits of at most "
                    f"{MAX_TABLE_LINES} lines; give --inputs for some rows"
                )
            xs = list(range(size))
        else:
            xs = _inputs(inputs, n)
        outs = _run(circ, xs)
        if as_perm:
            click.echo(",".join(map(str, outs)))
            return
        w = max(2, len(str(max(xs + outs, default=0))))
        label = f"line {n - 1}..0" if n > 1 else "line 0"
        col = max(n, len(label))
        click.echo(f"{'in':>{w}}  {label:<{col}}  ->  {label:<{col}}  {'out':>{w}}")
        for x, y in zip(xs, outs, strict=True):
            click.echo(f"{x:>{w}}  {x:0{n}b}{' ' * (col - n)}  ->  {y:0{n}b}{' ' * (col - n)}  {y:>{w}}")
    except ExactsynError as e:
        fail(e.message)


def _inputs(text: str, lines: int) -> list[int]:
    """The integers of ``--inputs``, each a state of ``lines`` lines (bounded before conversion)."""
    parts = [t.strip() for t in text.split(",")]
    if not parts or any(not t for t in parts):
        raise ExactsynError(f"--inputs {text!r}: expected comma-separated integers, without empty entries")
    if len(parts) > MAX_INPUTS:
        raise ExactsynError(f"--inputs has {len(parts)} entries; apply takes at most {MAX_INPUTS:,}")
    widest = len(str(1 << lines)) + 2  # decimal digits of 2^n, or a 0x/0b prefix
    long = next((t for t in parts if len(t) > max(widest, lines + 2)), None)
    if long is not None:
        raise ExactsynError(f"input {long[:12]}… is outside 0..2^{lines}-1 for {lines} lines")
    try:
        xs = [int(t, 0) for t in parts]
    except ValueError:
        raise ExactsynError(f"--inputs {text!r}: expected comma-separated integers") from None
    bad = [x for x in xs if not 0 <= x < 1 << lines]
    if bad:
        raise ExactsynError(f"input {bad[0]} is outside 0..{(1 << lines) - 1} for {lines} lines")
    return xs


def _run(circuit: Circuit, xs: list[int]) -> list[int]:
    """Outputs for the inputs: numpy on up to 62 lines, Python integers on wider circuits."""
    if circuit.lines <= 62:
        return [int(v) for v in circuit.apply(np.array(xs, dtype=np.int64))]
    outs = []
    for x in xs:
        for g in circuit.gates:
            x = g.apply_int(x)
        outs.append(x)
    return outs
