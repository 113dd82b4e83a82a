"""Command-line shell over the library: each command parses options, calls one library
function and formats its result. Heavy modules are imported inside commands so that
`tradeoff --help` stays fast."""
from __future__ import annotations

import functools
import sys

import click

from tradeoff.errors import TradeoffError


def _translate_errors(func):
    """Turn library errors into `Error: ...` on stderr with the error's exit code, never a traceback."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        try:
            return func(*args, **kwargs)
        except TradeoffError as exc:
            click.echo(f"Error: {exc}", err=True)
            sys.exit(exc.exit_code)

    return wrapper


def catalog_option(func):
    """`--catalog FILE` (repeatable): user catalog files merged over the shipped ones."""
    return click.option(
        "--catalog", "catalogs", multiple=True, type=click.Path(dir_okay=False),
        help="Extra catalog YAML file; its entries override shipped ones of the same id. Repeatable.",
    )(func)


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="tradeoff")
def cli():
    """Trade studies for timing functions (auto-off, run-on, start-up hold).

    Reads a YAML brief, models each circuit architecture physically, picks
    E-series values by integer program, proves them by worst-case corners and
    Monte Carlo, and ranks the architectures against your weights.
    """


@cli.command()
@click.argument("brief", type=click.Path(dir_okay=False))
@_translate_errors
def check(brief):
    """Validate BRIEF and print it normalised: every value with its unit and
    whether it was given, a default or derived from other values.

    Exits 2 listing every problem (FILE:LINE:COLUMN: key: what is wrong) when the
    brief is malformed or contradictory.

    Example:

        tradeoff check examples/towel_rail_boost.yaml
    """
    from rich.console import Console
    from rich.table import Table

    from tradeoff.brief import load_brief

    loaded = load_brief(brief)
    console = Console()
    heading = f"{loaded.title} ({brief})"
    if console.is_terminal:
        table = Table(title=heading, title_justify="left")
        for column in ("key", "value", "origin", "note"):
            table.add_column(column)
        for value in loaded.values:
            table.add_row(value.key, value.text, value.origin, value.note)
        console.print(table)
    else:
        key_width = max(len(v.key) for v in loaded.values)
        text_width = max(len(v.text) for v in loaded.values)
        click.echo(heading)
        for value in loaded.values:
            note = f"  {value.note}" if value.note else ""
            click.echo(f"{value.key:<{key_width}}  {value.text:<{text_width}}  {value.origin}{note}".rstrip())
    for caution in loaded.cautions:
        click.echo(f"CAUTION: {caution}")


def main():
    """Console-script entry point."""
    cli(prog_name="tradeoff")
