"""``exactsyn apply``: run a saved circuit on inputs and print its truth table.

Columns are labelled with the lines their bits stand for: bits are written as binary
numbers (line n-1 first, line 0 last).
"""

from __future__ import annotations

import click
import numpy as np

from exactsyn.cli.common import fail
from exactsyn.cli.options import with_formats
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import read_circuit


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
    integer.  Bits are written as binary numbers, line n-1 first and line 0 last (the
    header says so), the reverse of the bit strings of a spec file's 'table' rows, which
    list line 0 first.
    """
    try:
        circ = read_circuit(circuit_file)
        n, size = circ.lines, 1 << circ.lines
        if inputs is None:
            xs = list(range(size))
        else:
            parts = [t.strip() for t in inputs.split(",")]
            if not parts or any(not t for t in parts):
                raise ExactsynError(f"--inputs {inputs!r}: expected comma-separated integers, without empty entries")
            try:
                xs = [int(t, 0) for t in parts]
            except ValueError:
                raise ExactsynError(f"--inputs {inputs!r}: expected comma-separated integers") from None
            bad = [x for x in xs if not 0 <= x < size]
            if bad:
                raise ExactsynError(f"input {bad[0]} is outside 0..{size - 1} for {n} lines")
        outs = [int(v) for v in circ.apply(np.array(xs, dtype=np.int64))]
        if as_perm:
            click.echo(",".join(map(str, outs)))
            return
        w = max(2, len(str(size - 1)))
        label = f"line {n - 1}..0" if n > 1 else "line 0"
        col = max(n, len(label))
        click.echo(f"{'in':>{w}}  {label:<{col}}  ->  {label:<{col}}  {'out':>{w}}")
        for x, y in zip(xs, outs, strict=True):
            click.echo(f"{x:>{w}}  {x:0{n}b}{' ' * (col - n)}  ->  {y:0{n}b}{' ' * (col - n)}  {y:>{w}}")
    except ExactsynError as e:
        fail(e.message)
