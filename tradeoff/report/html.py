"""The review page of a study: one self-contained HTML file a reviewer reads top to bottom.

Built from `templates/review.html.j2` with Jinja2, autoescaping on (a brief title holding
`<script>` shows as text). Styles and plots are embedded (matplotlib SVG inline, each figure's ids
prefixed so several figures share one document), nothing is fetched: no scripts, fonts or images
from anywhere. Sections: brief summary, cautions for mains briefs, the comparison of every
topology considered, each feasible design with its numbers beside its worst-case strip, waveform
and histogram, the Pareto views, the bills of materials, the weight sensitivity, the infeasible
topologies and why, and the tool version, method and seed for reproduction.

Every figure of the comparison table comes from the study's JSON (`StudyResult.to_dict`); its
cell carries the JSON path and the raw number (`data-json`, `data-value`), so a test can compare
what the browser shows with the JSON.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from tradeoff.plain import assumptions, part_classes, schematic_values
from tradeoff.report.labels import in_unit, short_reason, span_in, split_reason, time_unit
from tradeoff.report.money import money_heading, money_lines
from tradeoff.report.tables import design_stem
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.trade_study import StudyResult

__all__ = ["review_html", "Cell", "STRIP_WIDTH"]

STRIP_WIDTH = 600
"""Width of a worst-case strip's drawing [SVG user units]; it scales with the page."""


@dataclass(frozen=True)
class Cell:
    """A comparison table cell: display text, and the JSON path and number it shows (None for text)."""

    text: str
    path: str | None = None
    value: float | None = None


def _svg_inline(svg: bytes, prefix: str) -> str:
    """A matplotlib SVG as an inline <svg> element: XML prolog and doctype dropped, every id (and
    reference to it) prefixed so figures do not collide, sized by the page (viewBox kept)."""
    text = svg.decode("utf-8")
    text = text[text.index("<svg"):]
    text = re.sub(r'\bid="([^"]+)"', lambda m: f'id="{prefix}-{m[1]}"', text)
    text = re.sub(r'url\(#([^)]+)\)', lambda m: f"url(#{prefix}-{m[1]})", text)
    text = re.sub(r'href="#([^"]+)"', lambda m: f'href="#{prefix}-{m[1]}"', text)
    text = re.sub(r'<svg([^>]*?) width="[^"]+" height="[^"]+"', r'<svg\1', text, count=1)
    return text


def _figures(result: "StudyResult") -> dict[str, str]:
    """Every study plot as inline SVG markup, by file stem (tradeoff.report.plots)."""
    import matplotlib.pyplot as plt  # noqa: F401  (matplotlib's Agg canvas, as the plot module uses)

    from tradeoff.report.plots import figure_bytes, study_figures

    out = {}
    for i, (stem, fig) in enumerate(study_figures(result).items()):
        out[stem] = _svg_inline(figure_bytes(fig, ("svg",))["svg"], f"fig{i}")
    return out


def _strip(ev, unit: tuple[str, float]) -> dict[str, Any]:
    """Geometry of a design's worst-case strip: x positions in [0, STRIP_WIDTH] of the band, the
    worst-case interval, the Monte Carlo interval and the nominal delay, with their labels."""
    lo_q, hi_q = min(ev.mc.percentiles), max(ev.mc.percentiles)
    spans = {"band": ev.band, "worst case": (ev.worst.min_s, ev.worst.max_s),
             f"Monte Carlo {fq(lo_q, '%')} to {fq(hi_q, '%')}": (ev.mc.percentiles[lo_q], ev.mc.percentiles[hi_q])}
    ends = [v for pair in spans.values() for v in pair if math.isfinite(v)] + [ev.nominal_s]
    lo, hi = min(ends), max(ends)
    pad = 0.08 * (hi - lo) or 0.05 * hi
    lo, hi = lo - pad, hi + pad

    def x(v: float) -> float:
        return round(STRIP_WIDTH * ((min(v, hi) if math.isfinite(v) else hi) - lo) / (hi - lo), 2)

    bars = [{"label": label, "x0": x(a), "x1": x(b), "text": span_in(a, b, unit)} for label, (a, b) in spans.items()]
    return {"bars": bars, "nominal": x(ev.nominal_s), "nominal_text": f"nominal {in_unit(ev.nominal_s, unit)} {unit[0]}",
            "axis": (f"{in_unit(lo, unit)} {unit[0]}", f"{in_unit(hi, unit)} {unit[0]}")}


def _number(value: float, digits: int = 3) -> str:
    return f"{float(f'{value:.{digits}g}'):g}"


def _comparison(result: "StudyResult", data: dict[str, Any]) -> tuple[list[str], list[dict[str, Any]]]:
    """Header and rows of the comparison: feasible designs (cells from the JSON), then infeasible topologies."""
    unit = time_unit(result.brief.delay.nominal_s)
    headers = ["#", "design", "values, or why not", f"delay [{unit[0]}]", f"worst case [{unit[0]}]",
               "margin, short end [% of band]", "margin, long end [% of band]", "yield [%]", "standby after [µA]",
               "rails", "parts", "cost per unit [EUR]", "score"]
    rows = []
    for i, ((name, ev, outcome), entry) in enumerate(zip(result.designs(), data["designs"])):
        p = f"designs/{i}"
        delay = entry["delay"]
        yield_path, yield_frac = f"{p}/delay/yield_frac", delay["yield_frac"]
        cost_path, cost = f"{p}/production/per_unit_eur", entry["production"]["per_unit_eur"]
        cells = [
            Cell(str(entry["rank"]), f"{p}/rank", entry["rank"]), Cell(name), Cell(schematic_values(outcome.model, ev.design)),
            Cell(in_unit(delay["nominal_s"], unit), f"{p}/delay/nominal_s", delay["nominal_s"]),
            Cell(span_in(delay["worst_min_s"], delay["worst_max_s"], unit, with_unit=False),
                 f"{p}/delay/worst_min_s {p}/delay/worst_max_s"),
            Cell(_number(100 * delay["margin_short_frac"]), f"{p}/delay/margin_short_frac", delay["margin_short_frac"]),
            Cell(_number(100 * delay["margin_long_frac"]), f"{p}/delay/margin_long_frac", delay["margin_long_frac"]),
            Cell(_number(100 * yield_frac, 4), yield_path, yield_frac),
            Cell(_number(1e6 * entry["standby"]["after_a"]), f"{p}/standby/after_a", entry["standby"]["after_a"]),
            Cell(str(entry["rails"]), f"{p}/rails", entry["rails"]),
            Cell(str(entry["parts"]["placements"]), f"{p}/parts/placements", entry["parts"]["placements"]),
            Cell(f"{cost:.2f}", cost_path, cost),
            Cell(f"{entry['score']:.3f}", f"{p}/score", entry["score"]),
        ]
        rows.append({"feasible": True, "stem": design_stem(name), "cells": cells})
    for outcome in result.infeasible():
        rows.append({"feasible": False, "stem": f"why-{design_stem(outcome.topology)}",
                     "cells": [Cell("–"), Cell(outcome.topology), Cell(short_reason(outcome.reasons))]})
    return headers, rows


def _designs(result: "StudyResult", figures: dict[str, str]) -> list[dict[str, Any]]:
    unit = time_unit(result.brief.delay.nominal_s)
    out = []
    for name, ev, outcome in result.designs():
        stem = design_stem(name)
        lo_q, hi_q = min(ev.mc.percentiles), max(ev.mc.percentiles)
        facts = [
            ("values", schematic_values(outcome.model, ev.design)),
            ("part classes", "; ".join(f"{label} {part}" for label, part in part_classes(outcome.model, ev.design))
             or "as in the bill of materials"),
            ("nominal delay", fq(ev.nominal_s, "s")),
            ("worst case", f"{span_in(ev.worst.min_s, ev.worst.max_s, unit)} ({ev.worst.method})"),
            (f"Monte Carlo {fq(lo_q, '%')} to {fq(hi_q, '%')}",
             f"{span_in(ev.mc.percentiles[lo_q], ev.mc.percentiles[hi_q], unit)} ({ev.mc.samples} samples, "
             f"seed {ev.mc.seed})"),
            ("yield", f"{100 * ev.mc.yield_frac:.2f} % (95 % interval {100 * ev.mc.yield_ci[0]:.2f} % to "
                      f"{100 * ev.mc.yield_ci[1]:.2f} %, Wilson)"),
            ("margin", f"{fq(ev.margin_short_frac, '%', 2)} of the band above its minimum, "
                       f"{fq(ev.margin_long_frac, '%', 2)} below its maximum (the brief asks "
                       f"{fq(ev.margin_required_frac, '%')} at each end)"),
            ("standby", f"{fq(ev.standby.after_a, 'A')} after the timeout, {fq(ev.standby.during_a, 'A')} while timing"),
            ("rails, parts, cost", f"{ev.rails} rails, {ev.placements} placements, parts {ev.cost:.2f} EUR, "
                                   f"{ev.unit_cost_eur:.2f} EUR per unit at {result.brief.production.volume:,} units "
                                   "(indicative)"),
            ("why here", result.ranking.reasons[name]),
        ]
        out.append({
            "name": name, "stem": stem, "topology": ev.topology, "facts": facts, "strip": _strip(ev, unit),
            "plots": [(kind, figures[f"{kind}-{stem}"]) for kind in ("waveform", "histogram")
                      if f"{kind}-{stem}" in figures],
            "findings": [(f.severity, f.message) for f in ev.findings],
            "bom": ev.bom, "bom_total": sum(line.cost for line in ev.bom),
            "bom_count": sum(line.quantity for line in ev.bom),
        })
    return out


def _infeasible(result: "StudyResult") -> list[dict[str, Any]]:
    return [{"topology": o.topology, "description": o.description, "short": short_reason(o.reasons),
             "reasons": [split_reason(r) for r in o.reasons],
             "relax": [r.line for r in result.relaxations or () if r.topology == o.topology]} for o in result.infeasible()]


def _slack(result: "StudyResult") -> list[dict[str, Any]]:
    return [{"topology": t, "lines": [r.line for r in result.slack if r.topology == t]}
            for t in dict.fromkeys(r.topology for r in result.slack or ())]


def _brief_summary(result: "StudyResult") -> list[tuple[str, str, str]]:
    """(key, value with unit, origin) of the brief's values; the path of the file and the title aside."""
    return [(v.key, v.text, v.origin) for v in result.brief.values if v.key not in ("title", "path")]


def review_html(result: "StudyResult") -> str:
    """The review page of `result` as one self-contained HTML document."""
    import jinja2

    import tradeoff

    env = jinja2.Environment(loader=jinja2.PackageLoader("tradeoff.report", "templates"),
                             autoescape=jinja2.select_autoescape(default=True, default_for_string=True),
                             undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True)
    data = result.to_dict()
    figures = _figures(result)
    headers, rows = _comparison(result, data)
    brief = result.brief
    return env.get_template("review.html.j2").render(
        title=brief.title, version=tradeoff.__version__, seed=brief.analysis.seed, samples=brief.analysis.samples,
        assumptions=" ".join(assumptions(brief)),
        method=result.method.upper(), solver=result.solver, brief_values=_brief_summary(result),
        cautions=result.cautions, headers=headers, rows=rows, designs=_designs(result, figures) if data["designs"] else [],
        pareto=figures.get("pareto"), volume=figures.get("volume"), money_heading=money_heading(result),
        money=money_lines(result), sensitivity=[s.text for s in result.ranking.sensitivity] if result.ranking else [],
        infeasible=_infeasible(result), slack=_slack(result), top=result.ranking.top if result.ranking else None, strip_width=STRIP_WIDTH,
        band=f"{fq(brief.delay.min_s, 's')} to {fq(brief.delay.max_s, 's')}", nominal=fq(brief.delay.nominal_s, "s"),
    )
