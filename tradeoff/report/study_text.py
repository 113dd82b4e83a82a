"""Terminal report of a study, fitted to a page width.

One comparison table with every topology considered (feasible designs by rank, then each
infeasible topology with its binding reason in a short phrase), the designs' part classes, the
winner's bill of materials, the reasons for the order, the weight sensitivity, the infeasible
topologies' explanations as bullet lists (the candidate counts per rule only with `verbose`),
and the mains cautions. Every line is at most the console's width: tables are drawn by rich
within it, bullets are wrapped here with a hanging indent.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from rich.console import Console

from tradeoff.plain import assumptions, part_classes, schematic_values
from tradeoff.report.labels import in_unit, margin_text, short_reason, span_in, split_reason, time_unit
from tradeoff.report.money import money_heading, money_lines
from tradeoff.report.terminal import delay_text, render_bom, render_rows, wrap_lines
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.trade_study import StudyResult

__all__ = ["render_study", "band_text", "ComparisonRow", "comparison_rows", "comparison_headers"]

DASH = "–"
"""Cell text where a figure does not exist (an infeasible topology has no delay, score or cost)."""


def band_text(lo: float, hi: float, nominal: float | None = None) -> str:
    """A delay interval with units (and deviations from `nominal` when given)."""
    return f"{delay_text(lo, nominal)} to {delay_text(hi, nominal)}"


@dataclass(frozen=True)
class ComparisonRow:
    """One row of the comparison of every topology considered, as display text (units included).

    For an infeasible topology `rank` and the figures are DASH and `values` holds its binding reason.
    """

    rank: str
    design: str
    values: str
    delay: str
    worst: str
    margin: str
    yield_: str
    standby: str
    rails: str
    parts: str
    cost: str
    score: str
    feasible: bool


def comparison_rows(result: "StudyResult") -> list[ComparisonRow]:
    """Every topology considered: feasible designs best first, then the infeasible topologies.

    Delays are numbers in the brief's time unit (`labels.time_unit`); margin is the worst case's
    distance from the band's minimum and from its maximum in % of the band; standby is the current after the timeout
    with its unit; cost is per unit at the brief's production volume, indicative EUR.
    """
    unit = time_unit(result.brief.delay.nominal_s)
    rows = []
    for name, ev, outcome in result.designs():
        row = result.ranking.table.loc[name]
        rows.append(ComparisonRow(
            rank=str(int(row["rank"])), design=name, values=schematic_values(outcome.model, ev.design),
            delay=in_unit(ev.nominal_s, unit), worst=span_in(ev.worst.min_s, ev.worst.max_s, unit, with_unit=False),
            margin=margin_text(ev.worst.min_s, ev.worst.max_s, ev.band),
            yield_=fq(ev.mc.yield_frac, "%"), standby=fq(ev.standby.after_a, "A"), rails=str(ev.rails),
            parts=str(ev.placements), cost=f"{ev.unit_cost_eur:.2f}", score=f"{float(row['score']):.3f}", feasible=True,
        ))
    for outcome in result.infeasible():
        rows.append(ComparisonRow(DASH, outcome.topology, short_reason(outcome.reasons), *([DASH] * 9), feasible=False))
    return rows


def comparison_headers(result: "StudyResult") -> tuple[str, ...]:
    """Headings of the comparison's figure columns (a newline splits a heading in two lines) (ComparisonRow's fields after `values`, in order),
    the delay unit being the brief's."""
    unit = time_unit(result.brief.delay.nominal_s)[0]
    return (f"delay\n[{unit}]", f"worst\ncase [{unit}]", "margin\n[% band]", "yield", "standby\nafter", "rails", "parts",
            "cost/unit\n[EUR]", "score")


def _comparison_table(result: "StudyResult", console: Console) -> None:
    """The comparison: rank, design and figures on one line, its values (or why not) under the name."""
    rows = comparison_rows(result)
    cells = [[r.rank, r.design, r.delay, r.worst, r.margin, r.yield_, r.standby, r.rails, r.parts, r.cost, r.score]
             for r in rows]
    details = [r.values if r.feasible else f"why not: {r.values}" for r in rows]
    first_infeasible = next((i for i, r in enumerate(rows) if not r.feasible), None)
    console.print()
    render_rows(console, "Every topology considered (feasible ones best first)",
                ("#", "design", *comparison_headers(result)), cells, details, left=(1,),
                gap_before=() if not first_infeasible else (first_infeasible,))


class _Page:
    """Plain lines on `console`, wrapped to its width with a hanging indent for bullets."""

    def __init__(self, console: Console):
        self.console = console

    def heading(self, text: str) -> None:
        self.console.print()
        self.console.print(text, style="bold", highlight=False, markup=False)

    def line(self, text: str, indent: int = 0) -> None:
        self._emit(text, " " * indent, " " * indent)

    def bullet(self, text: str, level: int = 0) -> None:
        lead = "  " * level + "- "
        self._emit(text, lead, " " * len(lead))

    def _emit(self, text: str, first: str, rest: str) -> None:
        wrapped = "\n".join(wrap_lines(text, self.console.width, first, rest))
        self.console.print(wrapped, highlight=False, markup=False, soft_wrap=True)


def _summary(result: "StudyResult", page: _Page) -> None:
    b = result.brief
    d = b.delay
    page.console.print(b.title, style="bold", highlight=False, markup=False)
    page.line(f"delay {fq(d.nominal_s, 's')}, band {fq(d.min_s, 's')} to {fq(d.max_s, 's')}; ambient "
              f"{fq(b.ambient.min_c, 'degC')} to {fq(b.ambient.max_c, 'degC')}; supply {fq(b.supply.min_v, 'V')} to "
              f"{fq(b.supply.max_v, 'V')} ({b.supply.kind}); Monte Carlo {b.analysis.samples} samples, seed "
              f"{b.analysis.seed}; {result.method.upper()} ranking")
    for sentence in assumptions(result.brief):
        page.line(sentence)


def _details(result: "StudyResult", page: _Page) -> None:
    page.heading("Part classes of each design")
    for name, ev, outcome in result.designs():
        classes = part_classes(outcome.model, ev.design)
        page.bullet(f"{name}: " + ("; ".join(f"{label} {part}" for label, part in classes)
                                   or "the bill of materials names every part"))


def _winner(result: "StudyResult", page: _Page) -> None:
    name, ev, _ = result.winner()
    page.console.print()
    render_bom(ev.bom, page.console, title=f"Bill of materials of {name}, the top design (indicative costs)")
    page.heading(f"Why this order ({result.method.upper()} ranking)")
    for design, reason in result.ranking.reasons.items():
        page.bullet(f"{design}:")
        for clause in reason.split("; "):
            page.bullet(clause, level=1)
    lo_q, hi_q = min(ev.mc.percentiles), max(ev.mc.percentiles)
    page.heading(f"Delay of {name}")
    page.bullet(f"nominal {delay_text(ev.nominal_s)}; worst case {band_text(ev.worst.min_s, ev.worst.max_s, ev.nominal_s)}"
                f" ({ev.worst.method})")
    page.bullet(f"Monte Carlo {fq(lo_q, '%')} to {fq(hi_q, '%')} percentiles "
                f"{band_text(ev.mc.percentiles[lo_q], ev.mc.percentiles[hi_q], ev.nominal_s)}; yield "
                f"{100 * ev.mc.yield_frac:.2f} % (95 % interval {100 * ev.mc.yield_ci[0]:.2f} % to "
                f"{100 * ev.mc.yield_ci[1]:.2f} %)")
    for finding in ev.findings:
        if finding.severity == "warning":
            page.bullet(f"warning: {finding.message}")
    page.heading(money_heading(result))
    for line in money_lines(result):
        page.bullet(line)
    page.heading("Weight sensitivity (how far each weight may move before the top design changes)")
    for s in result.ranking.sensitivity:
        page.bullet(s.text)


def _slack(result: "StudyResult", page: _Page) -> None:
    if not result.slack:
        return
    page.heading("Slack: how far each requirement alone could tighten before a topology stops being feasible")
    for topology in dict.fromkeys(r.topology for r in result.slack):
        page.bullet(f"{topology}:")
        for r in result.slack:
            if r.topology == topology:
                page.bullet(r.line, level=1)


def _infeasible(result: "StudyResult", page: _Page, verbose: bool) -> None:
    infeasible = result.infeasible()
    if not infeasible:
        return
    page.heading("Topologies that cannot meet the brief, and why")
    for outcome in infeasible:
        page.bullet(f"{outcome.topology}: {outcome.description}")
        for reason in outcome.reasons:
            parts = split_reason(reason)
            page.bullet(parts.lead + (":" if parts.rules else ""), level=1)
            for rule in sorted(parts.rules, key=lambda r: -r.count):
                page.bullet(f"{rule.count}: {rule.rule}" if verbose else rule.rule, level=2)
        relaxations = [r for r in result.relaxations or () if r.topology == outcome.topology]
        if relaxations:
            page.bullet("what alone would make it feasible (--relax):", level=1)
            for r in relaxations:
                page.bullet(r.line, level=2)
    if not verbose:
        page.line("(--verbose adds how many candidates each rule removed)")


def render_study(result: "StudyResult", console: Console, verbose: bool = False) -> None:
    """Print the whole study report on `console`, no line wider than `console.width`.

    verbose: also give how many candidates each of a topology's own rules removed.
    """
    page = _Page(console)
    _summary(result, page)
    _comparison_table(result, console)
    if result.ranking is not None:
        _details(result, page)
        _winner(result, page)
    else:
        page.heading("No topology meets the brief.")
    _slack(result, page)
    _infeasible(result, page, verbose)
    if result.cautions:
        page.heading("Cautions: this brief switches a mains load")
        for caution in result.cautions:
            page.bullet(f"CAUTION: {caution}")
