"""``exactsyn check``: re-check a certificate and print one line per item.

Exit status: 0 everything checked, 1 some check failed, 2 unreadable certificate.
"""

from __future__ import annotations

import sys

import click

from exactsyn.cli.common import fail
from exactsyn.core.words import count
from exactsyn.errors import ExactsynError
from exactsyn.proof.checker import CheckLine, check_certificate


@click.command()
@click.argument("certificate", type=click.Path())
@click.option("-q", "--quiet", is_flag=True, help="Only the verdict line.")
def check(certificate: str, quiet: bool) -> None:
    """Re-check a certificate written by 'synth --certificate DIR'.

    The checker trusts nothing but the claims: it rebuilds the spec and the library,
    re-derives every k-query's CNF with the encoder, checks each LRAT refutation by
    unit propagation over its hints, re-derives the initial lower bound, and
    simulates the circuit on every input.  One line per item: ok / what failed.

    \b
    Example:
      exactsyn synth --cycles "(1 2)" --certificate swap-cert && exactsyn check swap-cert
    Exit status: 0 everything checked, 1 some check failed, 2 unreadable certificate.
    """
    def show(line: CheckLine) -> None:
        if not quiet:
            click.echo(f"{'ok  ' if line.ok else 'FAIL'}  {line.what:<12} {line.detail}")

    try:
        rep = check_certificate(certificate, progress=show)
    except ExactsynError as e:
        fail(e.message)
    if rep.ok:
        what = "optimal" if rep.optimal_claim else "not claimed optimal"
        gates = "no circuit" if rep.gate_count is None else count(rep.gate_count, "gate")
        click.echo(f"certificate OK: {gates}, {what} ({rep.seconds:.2f} s)")
    else:
        click.echo("certificate REJECTED")
        sys.exit(1)
