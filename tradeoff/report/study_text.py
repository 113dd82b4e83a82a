"""Terminal report of a study: the ranking table, the winner's bill of materials and reasons,
weight sensitivity, the infeasible topologies with their reasons, and the cautions.

rich renders the tables; on a pipe it writes the same text without colour codes.
"""
from __future__ import annotations

from typing import TYPE_CHECKING

from rich.console import Console
from rich.table import Table

from tradeoff.report.terminal import delay_text, render_bom
from tradeoff.study import describe_values
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.study import StudyResult

__all__ = ["render_study", "band_text"]

def band_text(lo: float, hi: float, nominal: float | None = None) -> str:
    """A delay interval with units (and deviations from `nominal` when given)."""
    return f"{delay_text(lo, nominal)} to {delay_text(hi, nominal)}"


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
            band_text(ev.worst.min_s, ev.worst.max_s, ev.nominal_s), f"{100 * ev.mc.yield_frac:.1f} %", fq(ev.standby.after_a, "A"),
            str(ev.rails), str(ev.placements), f"{ev.cost:.2f}", f"{float(row['score']):.3f}",
            "yes" if bool(row["pareto"]) else "no",
        )
    return table


def render_study(result: "StudyResult", console: Console) -> None:
    """Print the whole study report on `console`."""
    _heading(result, console)
    if result.ranking is not None:
        console.print(_ranking_table(result))
        name, ev, _ = result.winner()
        render_bom(ev.bom, console, title=f"Bill of materials of {name} (indicative costs)")
        console.print(f"[bold]Why this order[/bold] ({result.ranking.method} ranking)")
        for design, reason in result.ranking.reasons.items():
            console.print(f"  {design}: {reason}", highlight=False)
        console.print(f"[bold]Delay of {name}[/bold]: nominal {delay_text(ev.nominal_s)}, worst case "
                      f"{band_text(ev.worst.min_s, ev.worst.max_s, ev.nominal_s)} ({ev.worst.method}); Monte Carlo "
                      f"{100 * (1 - ev.coverage) / 2:g} % to {100 * (1 + ev.coverage) / 2:g} % percentiles "
                      f"{band_text(min(ev.mc.percentiles.values()), max(ev.mc.percentiles.values()), ev.nominal_s)}; yield "
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
