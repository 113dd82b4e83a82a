"""Command-line shell over the library: each command parses options, calls one library
function and formats its result. Heavy modules are imported inside commands so that
`tradeoff --help` stays fast."""
from __future__ import annotations

import functools
import signal
import sys

import click

from tradeoff.errors import EXIT_INTERNAL, Interrupted, TradeoffError


def _translate_errors(func):
    """Turn library errors into `Error: ...` on stderr with the error's exit code, never a traceback;
    Ctrl-C, SIGTERM or SIGHUP exits 128 + the signal number; anything else is an internal error
    (exit 4), reported in one line."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        try:
            return func(*args, **kwargs)
        except TradeoffError as exc:
            click.echo(f"Error: {exc}", err=True)
            sys.exit(exc.exit_code)
        except (Interrupted, KeyboardInterrupt) as exc:  # output writing cleans up before this
            signum = getattr(exc, "signum", signal.SIGINT)
            click.echo(f"Error: interrupted by {signal.Signals(signum).name}; no partial output was left", err=True)
            sys.exit(128 + signum)
        except (click.exceptions.Exit, click.ClickException):
            raise
        except Exception as exc:  # a bug: one line, a distinct exit code
            click.echo(f"Error: internal error ({exc.__class__.__name__}: {str(exc)[:300]}); this is a bug in "
                       "tradeoff, please report it with the command and input files", err=True)
            sys.exit(EXIT_INTERNAL)

    return wrapper


OUTPUT_PATH = click.Path()
"""An output file or folder: checked by tradeoff.report.files (a refusal exits 3, naming the path), not by
click (whose refusal would read as an input error)."""


def catalog_option(func):
    """`--catalog FILE` (repeatable): user catalog files merged over the shipped ones."""
    return click.option(
        "--catalog", "catalogs", multiple=True, type=click.Path(dir_okay=False),
        help="Extra catalog YAML file; its entries override shipped ones of the same id. Repeatable.",
    )(func)


def timing_option(func):
    """`--timing`: wall times in the JSON (left out otherwise, so two runs with one seed are identical)."""
    return click.option("--timing", is_flag=True,
                        help="Add a 'timing' block of wall times to the JSON (left out by default, so two runs "
                             "with one seed give identical JSON).")(func)


def width_option(func):
    """`--width N`: characters per line of a terminal report."""
    return click.option("--width", type=click.IntRange(72, 1000), default=None,
                        help="Characters per line of the report [default: the terminal's width, 100 when not a "
                             "terminal].")(func)


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
    from tradeoff.report.terminal import TABLE_BOX

    from tradeoff.topologies.registry import topology_ids

    loaded = load_brief(brief)
    loaded.check_topologies(topology_ids())
    console = Console()
    heading = f"{loaded.title} ({brief})"
    if console.is_terminal:
        table = Table(box=TABLE_BOX, title=heading, title_justify="left")
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
@click.option("--xlsx", "xlsx_path", type=OUTPUT_PATH, default=None,
              help="Write the workbook (ranking, BOMs, corners, Monte Carlo, infeasible, brief, cautions).")
@click.option("--csv", "csv_dir", type=OUTPUT_PATH, default=None,
              help="Write the workbook's tables as CSV files, one per sheet, into this folder.")
@click.option("--plots", "plots_dir", type=OUTPUT_PATH, default=None,
              help="Write waveform, Monte Carlo histogram and Pareto plots (PNG and SVG) into this folder.")
@click.option("--netlist", "netlist_dir", type=OUTPUT_PATH, default=None,
              help="Write each feasible design's SPICE netlist (DESIGN.cir) into this folder.")
@click.option("--review", "review_dir", type=OUTPUT_PATH, default=None,
              help="Write the full review set into this folder: review.html, report.txt, study.json, study.xlsx, "
                   "tables/, plots/, netlists/.")
@click.option("--html", "html_path", type=OUTPUT_PATH, default=None,
              help="Write the review page (one self-contained HTML file, no network needed) here.")
@width_option
@click.option("--verbose", is_flag=True, help="Also say how many candidates each of a topology's own rules removed.")
@click.option("--relax", is_flag=True,
              help="For each infeasible topology, the smallest change of each requirement alone (and of each part "
                   "class) that makes it feasible, found by re-running its selection (seconds to minutes; the "
                   "brief's analysis.relax does the same).")
@click.option("--slack", is_flag=True,
              help="With or without --relax: for each feasible topology, how far each requirement alone could be "
                   "tightened before it stops being feasible (analysis.relax: all in the brief does both).")
@click.option("--force", is_flag=True, help="Replace output files that exist (otherwise nothing is written).")
@timing_option
@catalog_option
@_translate_errors
def study_command(brief, output_format, only, alternatives, method, solver, samples, seed, xlsx_path, csv_dir,
                  plots_dir, netlist_dir, review_dir, html_path, width, verbose, relax, slack, force, timing, catalogs):
    """Run the trade study on BRIEF: for every allowed topology the best E-series
    design proven at the worst-case corners and by Monte Carlo, then a ranking by
    the brief's weights, the winner's bill of materials, the reasons, and why the
    other topologies cannot meet the brief.

    Exits 1 when no topology meets the brief (the report still says why), 2 on
    input errors. Output files are written atomically; an existing one is left
    untouched (and nothing is written) unless --force is given.

    Examples:

    \b
        tradeoff study examples/towel_rail_boost.yaml --alternatives 2 --method topsis

        tradeoff study examples/towel_rail_boost.yaml --review out/review

        tradeoff study examples/glue_pot_warmer.yaml --width 80 --verbose
    """
    from tradeoff.report.progress import TerminalProgress
    from tradeoff.trade_study import study

    only = [name.strip() for item in only for name in item.split(",") if name.strip()]
    with TerminalProgress("topologies") as shown:
        result = study(brief, only=only or None, alternatives=alternatives, method=method, solver=solver,
                       samples=samples, seed=seed, catalog_files=catalogs, progress=shown.update)
    if relax and result.relaxations is None:
        from tradeoff.relax import relax as relax_study

        relax_study(result)
    if slack and result.slack is None:
        from tradeoff.relax import slack_of

        slack_of(result)
    if output_format == "json":
        from tradeoff.report.review import json_text

        click.echo(json_text(result, timing=timing), nl=False)
    else:
        from tradeoff.report.study_text import render_study
        from tradeoff.report.terminal import report_console

        render_study(result, report_console(width), verbose=verbose)
    targets = dict(xlsx=xlsx_path, csv=csv_dir, plots=plots_dir, netlists=netlist_dir, review=review_dir,
                   html=html_path)
    if any(path is not None for path in targets.values()):
        from tradeoff.report.review import export

        done = export(result, force=force, **targets)
        for name in done.without_netlist:
            click.echo(f"no SPICE netlist for {name}: its topology provides none", err=True)
        for path in done.written:
            click.echo(f"wrote {path}", err=True)
    if not result.feasible:
        sys.exit(1)


def format_option(func):
    """`--format text|json`: terminal report, or JSON on stdout."""
    return click.option("--format", "output_format", type=click.Choice(["text", "json"]), default="text",
                        show_default=True, help="Terminal report, or the result as JSON on stdout.")(func)


@cli.command("topologies")
@format_option
@catalog_option
@_translate_errors
def topologies_command(output_format, catalogs):
    """List every registered timing topology with its one-line description.

    Example:

        tradeoff topologies --format json
    """
    from tradeoff.catalog import load_catalog
    from tradeoff.topologies.registry import topology_ids

    loaded = load_catalog(extra=catalogs)
    rows = [(topology_id, loaded.part(topology_id).description) for topology_id in topology_ids(loaded)]
    if output_format == "json":
        import json

        click.echo(json.dumps([{"id": i, "description": d} for i, d in rows], indent=2))
        return
    width = max((len(i) for i, _ in rows), default=0)
    for topology_id, description in rows:
        click.echo(f"{topology_id:<{width}}  {description}")


@cli.command("analyze")
@click.argument("design", type=click.Path(dir_okay=False))
@format_option
@click.option("--samples", type=click.IntRange(100, 10_000_000), default=None,
              help="Monte Carlo samples (overrides the brief's analysis.samples).")
@click.option("--seed", type=click.IntRange(0, 2**32 - 1), default=None,
              help="Monte Carlo seed (overrides the brief's analysis.seed).")
@catalog_option
@_translate_errors
def analyze_command(design, output_format, samples, seed, catalogs):
    """Evaluate the design in DESIGN (a YAML file naming the brief, the topology,
    the component values, options and part overrides) against its brief: nominal
    delay, worst-case corners, Monte Carlo percentiles and yield, standby current
    and power, rails, parts, cost, ratings, design-rule findings, and whether it
    meets the brief (and why not).

    Exits 0 when the design was evaluated, whether or not it meets the brief (the
    report and the JSON's `feasible` and `reasons` say so); 2 on input errors.

    Example:

        tradeoff analyze examples/designs/rc-darlington.yaml --samples 5000 --format json
    """
    from tradeoff.api import analyze

    changes = {key: value for key, value in (("analysis.samples", samples), ("analysis.seed", seed))
               if value is not None}
    result = analyze(design, catalog_files=catalogs, brief_changes=changes)
    if output_format == "json":
        import json

        click.echo(json.dumps(result.to_dict(), indent=2, allow_nan=False))
        return
    from tradeoff.report.terminal import render_evaluation, report_console

    render_evaluation(result.evaluation, result.brief, report_console(), model=result.topology)


@cli.command("netlist")
@click.argument("design", type=click.Path(dir_okay=False))
@click.option("-o", "--output", type=OUTPUT_PATH, default=None,
              help="Write the netlist to this file (default: stdout).")
@click.option("--force", is_flag=True, help="Replace the output file if it exists.")
@catalog_option
@_translate_errors
def netlist_command(design, output, force, catalogs):
    """Write a SPICE netlist of the design in DESIGN: generic device models with
    parameters from the catalog classes, a transient analysis and a `.measure`
    of the delay at the nominal point (ngspice prints `delay = <seconds>`).

    An existing output file is left untouched unless --force is given; the file
    is written atomically, so no half-written netlist is ever left.

    Example:

        tradeoff netlist examples/designs/rc-darlington.yaml -o hold.cir
    """
    from tradeoff.design import load_design
    from tradeoff.errors import OutputError

    _, topology, loaded = load_design(design, catalogs)
    if output is not None:  # refuse before the work, not after it
        from tradeoff.report.files import check_writable

        check_writable(output, force)
    netlist = topology.spice(loaded)
    if netlist is None:
        raise OutputError(f"{design}: the {topology.id} topology provides no SPICE netlist")
    if output is None:
        click.echo(netlist, nl=not netlist.endswith("\n"))
        return
    from tradeoff.report.files import write_atomic

    write_atomic(output, netlist, force)
    click.echo(f"wrote {output}", err=True)


@cli.command("sweep")
@click.argument("brief", type=click.Path(dir_okay=False))
@click.option("--vary", multiple=True, required=True, metavar="KEY=VALUES",
              help="A brief field and its values: a list (delay.nominal=10min,1h,4h) or a range with a count, "
                   "linear or log (supply.nominal=5V..24V:5:log). Repeatable: the grid is every combination.")
@click.option("--jobs", type=click.IntRange(1, 256), default=1, show_default=True,
              help="Local worker processes (1 runs in this process).")
@click.option("--scheduler", metavar="ADDRESS", default=None,
              help="Run on an existing Dask cluster at ADDRESS (pip install 'tradeoff[cluster]'); --jobs is ignored.")
@click.option("--csv", "csv_path", type=OUTPUT_PATH, default=None, help="Write the table as CSV.")
@click.option("--xlsx", "xlsx_path", type=OUTPUT_PATH, default=None, help="Write the table as a workbook.")
@click.option("--plot", "plot_path", type=OUTPUT_PATH, default=None,
              help="Write the decision map (.png or .svg): the winner over one or two varied fields.")
@format_option
@click.option("--only", multiple=True, metavar="TOPOLOGY",
              help="Study only these topologies at each point (repeatable, or comma-separated).")
@click.option("--method", type=click.Choice(["wsm", "topsis"]), default="wsm", show_default=True,
              help="Ranking method at each point.")
@click.option("--samples", type=click.IntRange(100, 10_000_000), default=None,
              help="Monte Carlo samples per design (fewer make a sweep faster; overrides analysis.samples).")
@click.option("--seed", type=click.IntRange(0, 2**32 - 1), default=None,
              help="Monte Carlo seed at every point (overrides analysis.seed).")
@width_option
@click.option("--force", is_flag=True, help="Replace existing output files.")
@click.option("--yes", "confirmed", is_flag=True,
              help="Run a grid of more than 1,000 points or estimated at more than 10 min (without it such a "
                   "grid is refused with its estimate after the first point).")
@timing_option
@catalog_option
@_translate_errors
def sweep_command(brief, vary, jobs, scheduler, csv_path, xlsx_path, plot_path, output_format, only, method,
                  samples, seed, width, force, confirmed, timing, catalogs):
    """Run the study at every point of a grid over brief fields and tabulate, per
    point, the winner and the runner-up with their scores, the winner's worst-case
    delay band, yield, standby current after the timeout, parts and cost, and how
    many topologies cannot meet the brief there.

    Each --vary takes KEY=V1,V2,... or KEY=START..STOP:COUNT[:lin|:log], values
    with the field's unit. Every point is checked before any runs; a grid of more
    than 1,000 points or estimated (from the first point) at more than 10 min needs
    --yes. Exits 1 when no point has a feasible design, 2 on input errors.

    Example:

    \b
        tradeoff sweep examples/fan_run_on.yaml --vary delay.nominal=10min..4h:5:log \\
            --vary weights.effort=0,1,2,4 --jobs 2 --samples 2000 --plot map.png
    """
    from tradeoff.report.files import check_writable
    from tradeoff.report.progress import TerminalProgress
    from tradeoff.report.sweep_report import (check_mappable, plot_decision_map, render_sweep, write_csv,
                                              write_workbook)
    from tradeoff.grid_sweep import sweep

    outputs = [p for p in (csv_path, xlsx_path, plot_path) if p]
    if len(set(outputs)) != len(outputs):
        raise click.UsageError("--csv, --xlsx and --plot name the same file; give each its own")
    for path in outputs:
        check_writable(path, force)
    if plot_path:
        check_mappable([item.partition("=")[0].strip() for item in vary])
    only = [name.strip() for item in only for name in item.split(",") if name.strip()]
    with TerminalProgress("grid points") as shown:
        result = sweep(brief, list(vary), jobs=jobs, scheduler=scheduler, only=only or None, samples=samples,
                       seed=seed, method=method, catalog_files=catalogs, confirmed=confirmed,
                       progress=lambda done, total: shown.update(done, total))
    if output_format == "json":
        import json

        click.echo(json.dumps(result.to_dict(timing=timing), indent=2, allow_nan=False))
    else:
        from tradeoff.report.terminal import report_console

        render_sweep(result, report_console(width))
    if csv_path:
        write_csv(result, csv_path, force)
    if xlsx_path:
        write_workbook(result, xlsx_path, force)
    if plot_path:
        plot_decision_map(result, plot_path, force)
    if not any(point["winner"] for point in result.points):
        sys.exit(1)


def main():
    """Console-script entry point."""
    cli(prog_name="tradeoff")
