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


def main():
    """Console-script entry point."""
    cli(prog_name="tradeoff")
