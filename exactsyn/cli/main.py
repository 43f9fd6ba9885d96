"""The ``exactsyn`` command group: every command is defined in its own module and attached here.

Exit status of every command: 0 success, 1 no circuit within the limits (or a check
failed), 2 bad input (one line on stderr, no traceback).
"""

from __future__ import annotations

import click

from exactsyn import __version__
from exactsyn.cli.apply import apply
from exactsyn.cli.batch import batch, table
from exactsyn.cli.check import check
from exactsyn.cli.optimise import optimise
from exactsyn.cli.pictures import draw, report
from exactsyn.cli.synth import synth


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="exactsyn")
def main() -> None:
    """exactsyn — provably minimal reversible circuits by SAT.

    \b
    Quick start:
      exactsyn synth --perm 1,0,3,2,5,7,4,6 --library nct
      exactsyn synth --cycles "(3 7)" --library nct --format qasm2 -o toffoli.qasm
      exactsyn apply toffoli.qasm

    Line l carries bit l of the state (line 0 = least significant bit); a permutation
    p lists p[i], the output for input i.
    """


for command in (synth, optimise, check, apply, batch, table, draw, report):
    main.add_command(command)
