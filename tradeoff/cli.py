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
    from tradeoff.cautions import cautions

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
        text_width = min(16, max(len(v.text) for v in loaded.values))
        click.echo(heading)
        for value in loaded.values:
            note = f"  {value.note}" if value.note else ""
            click.echo(f"{value.key:<{key_width}}  {value.text:<{text_width}}  {value.origin}{note}".rstrip())
    for caution in cautions(loaded):
        click.echo(f"CAUTION: {caution}")


@cli.command("catalog")
@click.argument("query", required=False, metavar="[CATEGORY_OR_ID]")
@catalog_option
@_translate_errors
def catalog_command(query, catalogs):
    """List the part classes and their parameters, each with its unit and source.

    CATEGORY_OR_ID filters: a category (resistor, capacitor, relay, ...), a part
    id, a dielectric (electrolytic, film, ceramic), or any part of an id or
    description. Costs are indicative (EUR): replace them with your own prices
    in a file given with --catalog.

    Example:

        tradeoff catalog capacitor --catalog my_parts.yaml
    """
    from tradeoff.catalog import load_catalog

    loaded = load_catalog(extra=catalogs)
    for part in loaded.select(query):
        kind = f"{part.category}, {part.fields['dielectric']}" if "dielectric" in part.fields else part.category
        click.echo(f"{part.id}  [{kind}]  {part.description}  ({part.file}:{part.line})")
        width = max((len(name) for name in part.params), default=0)
        text_width = max((len(param.text) for param in part.params.values()), default=0)
        for name, param in part.params.items():
            click.echo(f"  {name:<{width}}  {param.text:<{text_width}}  {param.source}")


@cli.command("study")
@click.argument("brief", type=click.Path(dir_okay=False))
@click.option("--format", "output_format", type=click.Choice(["text", "json"]), default="text", show_default=True,
              help="Terminal report, or the whole result as JSON on stdout.")
@click.option("--only", multiple=True, metavar="TOPOLOGY",
              help="Study only these topologies (repeatable, or comma-separated).")
@click.option("--alternatives", type=click.IntRange(1, 20), default=1, show_default=True,
              help="Distinct designs kept per topology (the K best, by no-good cuts).")
@click.option("--method", type=click.Choice(["wsm", "topsis"]), default="wsm", show_default=True,
              help="Ranking method: weighted sum of min-max normalised criteria, or TOPSIS.")
@click.option("--solver", type=click.Choice(["highs", "cbc"]), default="highs", show_default=True,
              help="Integer-program solver (HiGHS in-process, or CBC).")
@click.option("--samples", type=click.IntRange(100, 10_000_000), default=None,
              help="Monte Carlo samples per design (overrides the brief's analysis.samples).")
@click.option("--seed", type=int, default=None, help="Monte Carlo seed (overrides the brief's analysis.seed).")
@catalog_option
@_translate_errors
def study_command(brief, output_format, only, alternatives, method, solver, samples, seed, catalogs):
    """Run the trade study on BRIEF: for every allowed topology the best E-series
    design proven at the worst-case corners and by Monte Carlo, then a ranking by
    the brief's weights, the winner's bill of materials, the reasons, and why the
    other topologies cannot meet the brief.

    Exits 1 when no topology meets the brief (the report still says why), 2 on
    input errors.

    Example:

        tradeoff study examples/towel_rail_boost.yaml --alternatives 2 --method topsis
    """
    from tradeoff.study import study

    only = [name.strip() for item in only for name in item.split(",") if name.strip()]
    result = study(brief, only=only or None, alternatives=alternatives, method=method, solver=solver,
                   samples=samples, seed=seed, catalog_files=catalogs)
    if output_format == "json":
        import json

        click.echo(json.dumps(result.to_dict(), indent=2, allow_nan=False))
    else:
        from tradeoff.report.study_text import render_study, report_console

        render_study(result, report_console())
    if not result.feasible:
        sys.exit(1)


def main():
    """Console-script entry point."""
    cli(prog_name="tradeoff")
