"""Terminal report of a study: the ranking table, the winner's bill of materials and reasons,
weight sensitivity, the infeasible topologies with their reasons, and the cautions.

rich renders the tables; on a pipe it writes the same text without colour codes.
"""
from __future__ import annotations

import math
from typing import TYPE_CHECKING

from rich.console import Console
from rich.table import Table

from tradeoff.study import describe_values
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.study import StudyResult

__all__ = ["render_study", "band_text", "delay_text", "report_console"]

PIPED_WIDTH = 160
"""Characters per line when the report goes to a pipe or file (a terminal uses its own width)."""


def report_console() -> Console:
    """A console for reports: the terminal's width, or a wide page when piped (no colour codes then)."""
    console = Console()
    return console if console.is_terminal else Console(width=PIPED_WIDTH)


def delay_text(seconds: float) -> str:
    """A delay with its unit, or 'never ends' for a unit that never times out."""
    return fq(seconds, "s") if math.isfinite(seconds) else "never ends"


def band_text(lo: float, hi: float) -> str:
    """A delay interval with units."""
    return f"{delay_text(lo)} to {delay_text(hi)}"


def _heading(result: "StudyResult", console: Console) -> None:
    b = result.brief
    d = b.delay
    console.print(f"[bold]{b.title}[/bold]")
    console.print(
        f"delay {fq(d.nominal_s, 's')} (band {band_text(d.min_s, d.max_s)}); ambient {fq(b.ambient.min_c, 'degC')} "
        f"to {fq(b.ambient.max_c, 'degC')}; supply {fq(b.supply.min_v, 'V')} to {fq(b.supply.max_v, 'V')} "
        f"({b.supply.kind}); Monte Carlo {b.analysis.samples} samples, seed {b.analysis.seed}",
        highlight=False,
    )


def _ranking_table(result: "StudyResult") -> Table:
    table = Table(title="Feasible designs, best first", title_justify="left")
    for name, justify in (("rank", "right"), ("design", "left"), ("values", "left"), ("delay nominal", "right"),
                          ("worst case", "right"), ("yield", "right"), ("standby after", "right"),
                          ("rails", "right"), ("parts", "right"), ("cost [EUR]", "right"), ("score", "right"),
                          ("Pareto", "center")):
        table.add_column(name, justify=justify, overflow="fold")
    for name, ev, outcome in result.designs():
        row = result.ranking.table.loc[name]
        table.add_row(
            str(int(row["rank"])), name, describe_values(outcome.model, ev.design), delay_text(ev.nominal_s),
            band_text(ev.worst.min_s, ev.worst.max_s), f"{100 * ev.mc.yield_frac:.1f} %", fq(ev.standby.after_a, "A"),
            str(ev.rails), str(ev.placements), f"{ev.cost:.2f}", f"{float(row['score']):.3f}",
            "yes" if bool(row["pareto"]) else "no",
        )
    return table


def _bom_table(name: str, ev) -> Table:
    table = Table(title=f"Bill of materials of {name} (indicative costs)", title_justify="left")
    for column, justify in (("refs", "left"), ("part class", "left"), ("value", "left"), ("qty", "right"),
                            ("unit [EUR]", "right"), ("line [EUR]", "right"), ("note", "left")):
        table.add_column(column, justify=justify, overflow="fold")
    for line in ev.bom:
        table.add_row(line.refs, line.part, line.value, str(line.quantity), f"{line.unit_cost:.3f}",
                      f"{line.cost:.3f}", line.note)
    table.add_row("", "total", "", str(ev.placements), "", f"{ev.cost:.2f}", "")
    return table


def render_study(result: "StudyResult", console: Console) -> None:
    """Print the whole study report on `console`."""
    _heading(result, console)
    if result.ranking is not None:
        console.print(_ranking_table(result))
        name, ev, _ = result.winner()
        console.print(_bom_table(name, ev))
        console.print(f"[bold]Why this order[/bold] ({result.ranking.method} ranking)")
        for design, reason in result.ranking.reasons.items():
            console.print(f"  {design}: {reason}", highlight=False)
        console.print(f"[bold]Delay of {name}[/bold]: nominal {delay_text(ev.nominal_s)}, worst case "
                      f"{band_text(ev.worst.min_s, ev.worst.max_s)} ({ev.worst.method}); Monte Carlo "
                      f"{100 * (1 - ev.coverage) / 2:g} % to {100 * (1 + ev.coverage) / 2:g} % percentiles "
                      f"{band_text(min(ev.mc.percentiles.values()), max(ev.mc.percentiles.values()))}; yield "
                      f"{100 * ev.mc.yield_frac:.2f} % (95 % interval {100 * ev.mc.yield_ci[0]:.2f} % to "
                      f"{100 * ev.mc.yield_ci[1]:.2f} %)", highlight=False)
        for finding in ev.findings:
            if finding.severity == "warning":
                console.print(f"  warning: {finding.message}", highlight=False)
        console.print("[bold]Weight sensitivity[/bold]")
        for s in result.ranking.sensitivity:
            console.print(f"  {s.text}", highlight=False)
    else:
        console.print("[bold]No topology meets the brief.[/bold]")
    infeasible = result.infeasible()
    if infeasible:
        console.print("[bold]Topologies that cannot meet the brief[/bold]")
        for outcome in infeasible:
            console.print(f"  {outcome.topology}: {outcome.description}", highlight=False)
            for reason in outcome.reasons:
                console.print(f"    - {reason}", highlight=False)
    if result.cautions:
        console.print("[bold]Cautions: this brief switches a mains load[/bold]")
        for caution in result.cautions:
            console.print(f"  ! {caution}", highlight=False)
