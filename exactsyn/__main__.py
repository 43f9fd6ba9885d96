"""``python -m exactsyn``: the command line, as the ``exactsyn`` script runs it."""

from exactsyn.cli import main

main(prog_name="exactsyn")
