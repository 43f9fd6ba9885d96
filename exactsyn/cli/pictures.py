"""The ``exactsyn draw`` and ``exactsyn report`` commands.

``draw`` draws a saved circuit (any format :mod:`exactsyn.io.registry` reads, as
``exactsyn apply`` reads it) in a picture format of the registry (SVG, PNG, a terminal
drawing); ``report`` writes one self-contained HTML page for a batch of a results store.
Exit status: 0 written, 2 bad input (one line on stderr).
"""

from __future__ import annotations

from pathlib import Path

import click

from exactsyn.batch.html_report import build_report
from exactsyn.cli.batch import DEFAULT_STORE
from exactsyn.cli.common import emit, fail
from exactsyn.cli.options import FormatChoice, store_option, with_formats
from exactsyn.errors import ExactsynError
from exactsyn.io.formats import check_writable, format_for, read_circuit_layout, render
from exactsyn.io.registry import PICTURE, suffixes

DEFAULT_WRAP = 40  # gate columns per row of a drawing


def parse_labels(text: str | None) -> list[str] | None:
    """``a,b,c`` -> ``["a", "b", "c"]`` (surrounding spaces dropped)."""
    if text is None:
        return None
    names = [part.strip() for part in text.split(",")]
    if any(not name for name in names):
        raise ExactsynError(f"--labels {text!r}: every line needs a non-empty name (comma-separated)")
    return names


@with_formats
@click.command(short_help="Draw a saved circuit as SVG, PNG or a terminal drawing.")
@click.argument("circuit_file", type=click.Path(dir_okay=False))
@click.option(
    "--format",
    "fmt",
    type=FormatChoice(PICTURE),
    help=f"Picture format; default from the -o suffix ({', '.join(suffixes(PICTURE))}), text on stdout.",
)
@click.option("-o", "--output", type=click.Path(dir_okay=False), help="Write the picture here, not stdout.")
@click.option("--packed", is_flag=True, help="Draw parallel layers: gates on disjoint lines side by side.")
@click.option("--labels", metavar="NAMES", help="Line names, line 0 first, comma-separated, e.g. a,b,cin,cout.")
@click.option(
    "--wrap",
    type=int,
    default=DEFAULT_WRAP,
    show_default=True,
    metavar="COLUMNS",
    help="Gate columns per row of an svg/png picture before it wraps; 0 = never wrap.",
)
def draw(circuit_file: str, fmt: str | None, output: str | None, packed: bool, labels: str | None, wrap: int) -> None:
    """Draw a saved circuit ({readable}) as SVG, PNG or a terminal drawing.

    One wire per line, line 0 at the top; filled dot = control, hollow dot = negative
    control, circled plus = target, a cross on both lines = swap; gates in application
    order from left to right.

    \b
    Examples:
      exactsyn synth --cycles "(6 7)" --format json -o t.json
      exactsyn draw t.json -o t.svg
      exactsyn draw t.json --format png -o t.png --labels a,b,c
      exactsyn synth --perm 1,0,3,2,5,7,4,6 --format qasm3 -o f.qasm -q
      exactsyn draw f.qasm --packed --wrap 20 -o f.svg
    """
    try:
        if wrap < 0:
            raise ExactsynError("--wrap must be 0 (never wrap) or more")
        chosen = format_for(output, fmt, PICTURE)
        if packed and chosen == "text":
            raise ExactsynError("--packed is for svg and png; the terminal drawing has one gate per column")
        circuit, layout, _ = read_circuit_layout(circuit_file)  # several registers label the lines
        drawing = render(circuit, chosen, labels=parse_labels(labels), packed=packed, wrap=wrap or None, layout=layout)
        emit(drawing, output)
    except ExactsynError as e:
        fail(e.message)


@click.command()
@store_option(DEFAULT_STORE)
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="The HTML file to write.")
@click.option("--batch", "batch_id", metavar="ID", help="Batch id (a prefix will do); default the last one run.")
@click.option(
    "--check",
    "recheck",
    is_flag=True,
    help="Re-check every certificate now (as 'exactsyn check' does) instead of reporting the stored verdict.",
)
def report(store_path: str, output: str, batch_id: str | None, recheck: bool) -> None:
    """Write one self-contained HTML page for a batch of a results store.

    The page shows the distribution table and its bar chart, and for each stored
    function its optimum, its drawn circuit and whether its certificate was checked.
    Everything is inline (no script, no network): open the file in any browser.

    \b
    Examples:
      exactsyn batch --classes 3 --library nct --store nct3.sqlite --verify
      exactsyn report --store nct3.sqlite -o nct3.html
    """
    try:
        if Path(output).suffix.lower() not in (".html", ".htm"):
            raise ExactsynError(f"the report is an HTML page: give -o a file ending .html, not {output}")
        check_writable(output, "report file")
        page = build_report(store_path, batch_id, recheck)
        emit(page, output)
    except ExactsynError as e:
        fail(e.message)
    click.echo(f"report written: {output}", err=True)
