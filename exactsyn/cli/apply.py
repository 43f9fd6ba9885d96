"""``exactsyn apply``: run a saved circuit on inputs and print its truth table."""

from __future__ import annotations

import click
import numpy as np

from exactsyn.cli.common import fail
from exactsyn.errors import ExactsynError
from exactsyn.io.files import read_circuit


@click.command()
@click.argument("circuit_file", type=click.Path(dir_okay=False))
@click.option("--inputs", metavar="LIST", help="Only these inputs (comma-separated integers); default all.")
@click.option("--perm", "as_perm", is_flag=True, help="Print the function as one permutation line.")
def apply(circuit_file: str, inputs: str | None, as_perm: bool) -> None:
    """Run a saved circuit (JSON or OpenQASM 2/3) on inputs and print its truth table.

    \b
    Example:
      exactsyn synth --cycles "(6 7)" --format qasm2 -o t.qasm && exactsyn apply t.qasm
    Columns show the bits line n-1 ... line 0 (line 0 rightmost) and the integer.
    """
    try:
        circ = read_circuit(circuit_file)
        n, size = circ.lines, 1 << circ.lines
        if inputs is None:
            xs = list(range(size))
        else:
            try:
                xs = [int(t, 0) for t in inputs.replace(" ", "").split(",") if t]
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
        head = "in".rjust(w) + "  " + "bits".ljust(n) + "  ->  " + "bits".ljust(n) + "  " + "out".rjust(w)
        click.echo(head)
        for x, y in zip(xs, outs, strict=True):
            click.echo(f"{x:>{w}}  {x:0{n}b}{' ' * max(0, 4 - n)}  ->  {y:0{n}b}{' ' * max(0, 4 - n)}  {y:>{w}}")
    except ExactsynError as e:
        fail(e.message)
