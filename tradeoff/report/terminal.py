"""Terminal report of one evaluated design, and its bill of materials.

rich draws the tables; on a pipe its Console writes the same text without colour codes. Every
figure carries its unit (tradeoff.units.format_quantity); a delay that never ends says so.
`render_evaluation` and `render_bom` are shared by `tradeoff analyze` and the study report.
"""
from __future__ import annotations

import math
import re
import textwrap
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING

from rich import box
from rich.console import Console
from rich.table import Table
from rich.text import Text

from tradeoff.api import rating_findings
from tradeoff.cautions import cautions
from tradeoff.plain import option_texts, part_classes, plain_label, quantity_text as plain_quantity
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.analysis import Uncertain
    from tradeoff.brief import Brief
    from tradeoff.topologies.base import BomLine, Evaluation, Topology

__all__ = ["render_evaluation", "render_bom", "render_rows", "delay_text", "quantity_text", "report_console",
           "TABLE_BOX", "PIPED_WIDTH", "wrap_lines"]

_SUFFIX_UNITS = (("_ohm", "ohm"), ("_hz", "Hz"), ("_s", "s"), ("_v", "V"), ("_a", "A"), ("_f", "F"), ("_c", "degC"),
                 ("_w", "W"), ("_frac", "%"))
"""Units implied by the name suffixes of CONTRIBUTING.md, for quantities whose unit is not given
(a fraction shows in %)."""


PIPED_WIDTH = 100
"""Characters per line when a report goes to a pipe or file and no width is given."""

TABLE_BOX = box.SIMPLE_HEAD
"""The one box style of every terminal table: a rule under the header, no vertical lines."""


def report_console(width: int | None = None) -> Console:
    """A console for reports, `width` characters wide when given; otherwise the terminal's width,
    or PIPED_WIDTH when the output is not a terminal (no colour codes then)."""
    if width is not None:
        return Console(width=width)
    console = Console()
    return console if console.is_terminal else Console(width=PIPED_WIDTH)


def delay_text(seconds: float, nominal: float | None = None) -> str:
    """A delay with its unit, or 'never ends' for a unit that never times out.

    With `nominal` [s], the relative deviation follows in % (in ppm below 0.1 %), so tight
    designs (crystal, trimmed oscillator) show their spread where three digits would not.
    """
    if not math.isfinite(seconds):
        return "never ends"
    text = fq(seconds, "s")
    if nominal:
        dev = seconds / nominal - 1
        text += f" ({dev * 1e6:+.3g} ppm)" if abs(dev) < 1e-3 else f" ({100 * dev:+.3g} %)"
    return text


def quantity_text(name: str, value: float, unit: str | None = None) -> str:
    """A spread quantity's value with its unit (given, or implied by the name's suffix; plain if dimensionless)."""
    if not unit:
        unit = next((u for suffix, u in _SUFFIX_UNITS if name.endswith(suffix)), "")
    return plain_quantity(value, unit) if math.isfinite(value) else "infinite"


def _corner_text(corner: Mapping[str, float], quantities: "Mapping[str, Uncertain] | None") -> str:
    """The quantities of a corner that sit away from nominal, with their units and which limit."""
    parts = []
    for name, value in corner.items():
        q = quantities.get(name) if quantities else None
        if q is None:
            parts.append(f"{plain_label(name)} {quantity_text(name, value)}")
            continue
        if math.isclose(value, q.nominal, rel_tol=1e-12, abs_tol=1e-300):
            continue
        where = "low" if math.isclose(value, q.lo, rel_tol=1e-12) else "high" if math.isclose(
            value, q.hi, rel_tol=1e-12) else "interior"
        parts.append(f"{plain_label(name)} {quantity_text(name, value, q.unit)} ({where})")
    return ", ".join(parts) or "all nominal"


def _role_unit(name: str, quantities: "Mapping[str, Uncertain] | None") -> str:
    """Unit of a value role: its spread quantity's unit, else the role naming rule (r_* ohm, c_* F)."""
    if quantities and name in quantities and quantities[name].unit:
        return quantities[name].unit
    return "ohm" if name.startswith("r_") else "F"


# A space after a number, before the word it counts or the unit it carries ("9 parts", "2.3 h", "5 °C"),
# and the spaces of "0.7 of 1": a line break there would leave a bare number at a line's end.
_NUMBER_SPACE = re.compile(r"(?<=\d) (?=[^\s\d(\[–-])|(?<=\d of) (?=\d)")
_KEEP = "\u00a0"  # textwrap breaks only at ASCII whitespace, so a no-break space holds the pair together


def wrap_lines(text: str, width: int, first: str = "", rest: str = "") -> list[str]:
    """`text` wrapped to `width` columns after the indents `first` and `rest`, never between a number and its
    unit or counted word; hyphenated words stay whole."""
    held = _NUMBER_SPACE.sub(_KEEP, text.replace(_KEEP, " "))
    return [line.replace(_KEEP, " ") for line in textwrap.wrap(
        held, width=width, initial_indent=first, subsequent_indent=rest, break_on_hyphens=False)]


def _wrapped(text: str, width: int, indent: int) -> str:
    return "\n".join(wrap_lines(text, width, " " * indent, " " * indent))


def render_rows(console: Console, title: str, headers: Sequence[str], rows: Sequence[Sequence[str]],
                details: Sequence[str | None] | None = None, left: Sequence[int] = (), gap_before: Sequence[int] = ()
                ) -> None:
    """A table within `console.width`: header (a heading splits into two lines at a newline), a rule,
    one line per row, and the row's `details` text wrapped under its second column.

    left: indices of left-aligned columns (the others align right); gap_before: row indices that
    start a new group after a blank line. Two spaces between columns where the width allows, one
    otherwise; on a page narrower still, the second column moves to the start of the row's details, and
    then the next ones (each with its heading) until the rest fits.
    """
    details = list(details) if details else [None] * len(rows)
    split = [tuple(h.split("\n", 1)) if "\n" in h else (h, "") for h in headers]
    width = console.width

    def widths_of(columns: Sequence[int]) -> list[int]:
        return [max([len(split[i][0]), len(split[i][1]), *(len(r[i]) for r in rows)]) for i in columns]

    columns = list(range(len(headers)))
    widths = widths_of(columns)
    gap = 2 if sum(widths) + 2 * (len(widths) - 1) <= width else 1
    moved: list[int] = []
    while sum(widths) + len(widths) - 1 > width and len(columns) > 2:
        moved.append(columns.pop(1))
        widths = widths_of(columns)
    if moved:
        def lead(row: Sequence[str]) -> str:
            return ", ".join([row[moved[0]], *(f"{' '.join(filter(None, split[i]))} {row[i]}" for i in moved[1:])])
        details = [f"{lead(row)}: {d}" if d else lead(row) for row, d in zip(rows, details)]

    def line(texts: Sequence[str]) -> str:
        return (" " * gap).join(texts[i].ljust(w) if i in left else texts[i].rjust(w)
                                for i, w in zip(columns, widths)).rstrip()

    out = [title] if title else []
    out += [line([h[0] for h in split]), line([h[1] for h in split])]
    out.append("─" * min(width, sum(widths) + gap * (len(widths) - 1)))
    for i, row in enumerate(rows):
        if i in gap_before:
            out.append("")
        out.append(line(row))
        if details[i]:
            out.append(_wrapped(details[i], width, widths[0] + gap))
    for text in out:
        console.print(text, highlight=False, markup=False, soft_wrap=True)


def render_bom(bom: "list[BomLine]", console: Console, title: str = "Bill of materials") -> None:
    """The bill of materials: references, part class, quantity, unit and line cost [EUR, indicative],
    with each line's value and note under it."""
    rows = [[line.refs, line.part, str(line.quantity), f"{line.unit_cost:.3f}", f"{line.cost:.3f}"] for line in bom]
    details = [f"{line.value}" + (f"; {line.note}" if line.note else "") for line in bom]
    rows.append(["total", "indicative", str(sum(line.quantity for line in bom)), "",
                 f"{sum(line.cost for line in bom):.3f}"])
    details.append(None)
    render_rows(console, title, ("refs", "part class", "qty", "each\n[EUR]", "cost\n[EUR]"), rows, details,
                left=(0, 1), gap_before=(len(bom),))


def _delay_table(ev: "Evaluation", quantities: "Mapping[str, Uncertain] | None") -> Table:
    lo, hi = ev.band
    mc = ev.mc
    table = Table(box=TABLE_BOX, title=f"Delay (brief's band {fq(lo, 's')} to {fq(hi, 's')})", title_justify="left")
    table.add_column("figure")
    table.add_column("value", justify="right")
    table.add_column("where / how")
    table.add_row("nominal", delay_text(ev.nominal_s), "every quantity at its nominal value")
    table.add_row("worst-case minimum", delay_text(ev.worst.min_s, ev.nominal_s), _corner_text(ev.worst.at_min, quantities))
    table.add_row("worst-case maximum", delay_text(ev.worst.max_s, ev.nominal_s), _corner_text(ev.worst.at_max, quantities))
    table.add_row("corner method", "", ev.worst.method)
    for q, value in sorted(mc.percentiles.items()):
        table.add_row(f"Monte Carlo {fq(q, '%')} percentile", delay_text(value, ev.nominal_s),
                      f"coverage {fq(ev.coverage, '%')}, {mc.samples} samples, seed {mc.seed}")
    table.add_row("Monte Carlo mean", delay_text(mc.mean_s),
                  f"standard deviation {delay_text(mc.std_s)}" if math.isfinite(mc.std_s) else "")
    table.add_row("yield", fq(mc.yield_frac, "%"),
                  f"units inside the band; 95 % confidence interval {fq(mc.yield_ci[0], '%')} to "
                  f"{fq(mc.yield_ci[1], '%')} (Wilson)")
    if mc.never_ends_frac > 0:
        table.add_row("never time out", fq(mc.never_ends_frac, "%"), "of the Monte Carlo units")
    return table


def _supply_table(ev: "Evaluation") -> Table:
    table = Table(box=TABLE_BOX, title=f"Supply and parts (nominal supply {fq(ev.supply_v, 'V')})", title_justify="left")
    table.add_column("figure")
    table.add_column("value", justify="right")
    table.add_column("note")
    table.add_row("current during timing", fq(ev.standby.during_a, "A"), "including the relay coil when energised")
    table.add_row("current after timeout", fq(ev.standby.after_a, "A"), "what the circuit still draws")
    table.add_row("power after timeout", fq(ev.after_w, "W"), "circuit only")
    if ev.adapter_no_load_w is not None:
        table.add_row("power after timeout, with adapter", fq(ev.after_w + ev.adapter_no_load_w, "W"),
                      f"adds the adapter's own no-load {fq(ev.adapter_no_load_w, 'W')}")
    table.add_row("supply rails", str(ev.rails), "the supply itself counts as one")
    table.add_row("parts", f"{ev.placements} placements", f"{ev.lines} BOM lines")
    table.add_row("cost", f"{ev.cost:.2f} EUR", "indicative; replace with your own prices (--catalog)")
    ratings = rating_findings(ev)
    table.add_row("supply within ratings", "yes" if not ratings else "no",
                  "; ".join(f.message for f in ratings) or f"{fq(ev.supply_v, 'V')} nominal; every part rated "
                  "for the brief's supply range")
    return table


def _findings_table(ev: "Evaluation") -> Table | None:
    if not ev.findings:
        return None
    table = Table(box=TABLE_BOX, title="Findings (design-rule checks)", title_justify="left")
    for name in ("severity", "check", "finding"):
        table.add_column(name)
    order = {"violation": 0, "warning": 1, "info": 2}
    for f in sorted(ev.findings, key=lambda f: order[f.severity]):
        table.add_row(f.severity, f.code, f.message)
    return table


def render_evaluation(ev: "Evaluation", brief: "Brief", console: Console, model: "Topology | None" = None) -> None:
    """Everything `tradeoff analyze` says about one design: values, part classes, delay (nominal,
    worst case with its corners, Monte Carlo, yield), supply current and power, rails, parts, cost,
    ratings, BOM, findings, the verdict against the brief and the mains cautions.

    model: the design's topology, to name each corner's units and limits, show quantity options
    with their unit and tell part class choices from other options (names in plain words).
    """
    design = ev.design
    quantities = model.quantities(design) if model is not None else None
    console.print(Text(f"{ev.topology}: {brief.title}", style="bold"))
    roles = ", ".join(f"{plain_label(k)} {quantity_text(k, v, _role_unit(k, quantities))}"
                      for k, v in design.values.items())
    console.print(f"values: {roles or 'none (no value roles)'}", highlight=False)
    classes = part_classes(model, design)
    if classes:
        console.print("part classes: " + "; ".join(f"{role}: {part}" for role, part in classes), highlight=False)
    choices = option_texts(model, design)
    if choices:
        console.print(f"options: {', '.join(choices)}", highlight=False)
    if design.overrides:
        console.print("overrides: " + "; ".join(f"{part}: " + ", ".join(
            f"{k} {v:g} (SI)" if isinstance(v, float) else f"{k} {v}" for k, v in params.items())
                                                for part, params in design.overrides.items()), highlight=False)
    console.print(_delay_table(ev, quantities))
    console.print(_supply_table(ev))
    render_bom(ev.bom, console)
    findings = _findings_table(ev)
    if findings is not None:
        console.print(findings)
    if ev.feasible:
        console.print(Text("Meets the brief: every corner inside the band, every limit and design rule kept.",
                           style="bold green"))
    else:
        console.print(Text("Does not meet the brief:", style="bold red"))
        for reason in ev.reasons:
            console.print(f"  - {reason}", highlight=False)
    for caution in cautions(brief):
        console.print(f"CAUTION: {caution}", highlight=False)
