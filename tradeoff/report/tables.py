"""The review tables of a study, built once and shared by the workbook and the CSV files.

One function per table, each a pandas DataFrame with units in the column names
("delay nominal [s]", "standby after [A]", "cost [EUR]"); where a column mixes quantities, a
`unit` column says each row's unit. Numbers stay numbers: SI values, percentages as numbers
with "[%]" in the header. A value that cannot be a finite number (a unit that never ends) is an
empty cell, and the row's `note` says why. `study_tables(result)` gives every table under its
sheet name, in sheet order; the CSV export writes each as `<sheet name>.csv`:

| sheet / file        | one row per                                            |
| ------------------- | ------------------------------------------------------ |
| ranking             | feasible design, best first                            |
| bom                 | bill-of-materials line of every feasible design        |
| corners             | design and quantity: nominal and worst-case corners     |
| monte_carlo         | feasible design: percentiles, mean, std, yield          |
| infeasible          | reason a topology cannot meet the brief                |
| brief               | key of the normalised brief                            |
| cautions            | mains caution (one row saying none apply otherwise)    |
"""
from __future__ import annotations

import math
import re
from pathlib import Path
from typing import TYPE_CHECKING, Callable

import pandas as pd

from tradeoff.cautions import HAZARDOUS_VOLTAGE_V
from tradeoff.criteria import headline
from tradeoff.plain import part_classes, plain_label, schematic_values
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.trade_study import StudyResult

__all__ = [
    "ranking_table", "bom_table", "corners_table", "monte_carlo_table", "infeasible_table", "brief_table",
    "cautions_table", "TABLES", "study_tables", "csv_files", "design_stem", "NEVER_ENDS", "CORNER_VALUES",
]

NEVER_ENDS = "never ends"
"""Note beside an empty delay cell: some unit never times out (the delay is not a finite number)."""


def _finite(value: float | None) -> float | None:
    """`value` as a float, or None (an empty cell) when it is missing or not finite."""
    return float(value) if value is not None and math.isfinite(value) else None


def _never_note(*values: float) -> str:
    return NEVER_ENDS if any(not math.isfinite(v) for v in values) else ""


def _percent(fraction: float) -> float:
    return 100.0 * fraction


def _frame(rows: list[dict], columns: list[str]) -> pd.DataFrame:
    """A table from row dicts whose keys are exactly `columns` (the header stays when there are no rows)."""
    for row in rows:
        if list(row) != columns:
            raise ValueError(f"table row keys {list(row)} differ from the columns {columns}")
    return pd.DataFrame(rows, columns=columns)


RANKING_COLUMNS = ["rank", "design", "topology", "values", "part classes", "delay nominal [s]", "delay worst min [s]",
                   "delay worst max [s]", "delay spread [% of nominal]", "margin short end [% of band]",
                   "margin long end [% of band]", "margin required [% of band]", "yield [%]", "standby during [A]",
                   "standby after [A]", "standby after [W]", "rails [count]", "parts [count]", "BOM lines [count]",
                   "cost per unit [EUR]", "effort [0 to 1]", "score [0 to 1]", "Pareto front", "reason", "note"]
BOM_COLUMNS = ["design", "refs", "part class", "value", "quantity [count]", "unit cost [EUR]", "line cost [EUR]",
               "note"]
CORNERS_COLUMNS = ["design", "quantity", "key", "unit", "nominal", "at shortest delay", "at longest delay",
                   "distribution", "note"]
PRODUCTION_COLUMNS = ["design", "volume [units]", "parts [EUR]", "assembly [EUR]", "programming [EUR]",
                      "engineering [h]", "engineering per unit [EUR]", "cost per unit [EUR]", "note"]
CORNER_VALUES = ("nominal", "at shortest delay", "at longest delay")
"""The corners table's value columns, in each row's SI unit (its `unit` column)."""
RELAX_COLUMNS = ["topology", "change", "reachable", "hypothetical class", "to", "brief", "design",
                 "cost per unit [EUR]", "solves [count]"]
SLACK_COLUMNS = ["topology", "change", "bounded", "up to", "brief", "design", "cost per unit [EUR]", "solves [count]"]
INFEASIBLE_COLUMNS = ["topology", "description", "reason no. [count]", "reason"]
BRIEF_COLUMNS = ["key", "value", "text", "unit", "origin", "note"]
CAUTIONS_COLUMNS = ["no. [count]", "caution"]


def monte_carlo_columns(coverage: float) -> list[str]:
    """Columns of the Monte Carlo table; the percentile columns follow the brief's coverage (fraction)."""
    tail = (1 - coverage) / 2
    levels = (round(tail, 12), 0.5, round(1 - tail, 12))
    return ["design", "samples [count]", "seed", "coverage [%]", *(_percentile_header(q) for q in levels),
            "delay mean [s]", "delay std [s]", "band min [s]", "band max [s]", "yield [%]", "yield 95 % low [%]",
            "yield 95 % high [%]", "never ends [%]", "note"]


def _percentile_header(level: float) -> str:
    return f"delay p{100 * level:g} [s]"


def design_stem(name: str) -> str:
    """File-name stem of a design name: 'rc-counter #2' -> 'rc-counter-2' (letters, digits, '-', '_')."""
    return re.sub(r"[^A-Za-z0-9_]+", "-", name).strip("-")


def ranking_table(result: "StudyResult") -> pd.DataFrame:
    """The feasible designs, best first, with their headline figures (tradeoff.criteria) and the ranking's reason."""
    rows = []
    for name, ev, outcome in result.designs():
        row = result.ranking.table.loc[name]
        h = headline(ev)
        rows.append({
            "rank": int(row["rank"]), "design": name, "topology": h["topology"],
            "values": schematic_values(outcome.model, ev.design),
            "part classes": "; ".join(f"{role}: {part}" for role, part in part_classes(outcome.model, ev.design)),
            "delay nominal [s]": _finite(h["delay_nominal_s"]), "delay worst min [s]": _finite(h["delay_worst_min_s"]),
            "delay worst max [s]": _finite(h["delay_worst_max_s"]),
            "delay spread [% of nominal]": _finite(_percent(h["delay_spread_frac"])),
            "margin short end [% of band]": _finite(_percent(h["delay_margin_short_frac"])),
            "margin long end [% of band]": _finite(_percent(h["delay_margin_long_frac"])),
            "margin required [% of band]": _percent(ev.margin_required_frac),
            "yield [%]": _percent(h["yield_frac"]), "standby during [A]": h["standby_during_a"],
            "standby after [A]": h["standby_after_a"], "standby after [W]": h["standby_after_w"],
            "rails [count]": h["rails"], "parts [count]": h["parts"], "BOM lines [count]": h["bom_lines"],
            "cost per unit [EUR]": h["cost_eur"], "effort [0 to 1]": h["effort"], "score [0 to 1]": float(row["score"]),
            "Pareto front": bool(row["pareto"]), "reason": result.ranking.reasons[name],
            "note": _never_note(ev.nominal_s, ev.worst.min_s, ev.worst.max_s),
        })
    return _frame(rows, RANKING_COLUMNS)


def bom_table(result: "StudyResult") -> pd.DataFrame:
    """Every feasible design's bill of materials, one line per row (costs indicative)."""
    rows = [{
        "design": name, "refs": line.refs, "part class": line.part, "value": line.value,
        "quantity [count]": line.quantity, "unit cost [EUR]": line.unit_cost, "line cost [EUR]": line.cost,
        "note": line.note,
    } for name, ev, _ in result.designs() for line in ev.bom]
    return _frame(rows, BOM_COLUMNS)


def production_table(result: "StudyResult") -> pd.DataFrame:
    """Each feasible design's cost per unit at the brief's volume, broken down (EUR, indicative), then one row
    per sweep volume with each design's cost per unit under its name and the cheapest in the note."""
    from tradeoff.economics import break_even_of, volume_sweep

    rows = []
    even = break_even_of(result)
    for name, ev, _ in result.designs():
        c = ev.production
        rows.append({"design": name, "volume [units]": c.volume, "parts [EUR]": c.parts_eur,
                     "assembly [EUR]": c.assembly_eur, "programming [EUR]": c.programming_eur,
                     "engineering [h]": c.engineering_hours, "engineering per unit [EUR]": c.engineering_eur,
                     "cost per unit [EUR]": c.per_unit_eur,
                     "note": "; ".join((*c.notes, *((even.text,) if even and name == even.first else ())))})
    sweep = volume_sweep(result) if rows else {"volumes": []}
    for i, volume in enumerate(sweep["volumes"]):
        for name in sweep["cost_per_unit_eur"]:
            rows.append({"design": name, "volume [units]": volume, "parts [EUR]": None, "assembly [EUR]": None,
                         "programming [EUR]": None, "engineering [h]": None, "engineering per unit [EUR]": None,
                         "cost per unit [EUR]": sweep["cost_per_unit_eur"][name][i],
                         "note": "sweep; cheapest here" if sweep["cheapest"][i] == name else "sweep"})
    return _frame(rows, PRODUCTION_COLUMNS)


def corners_table(result: "StudyResult") -> pd.DataFrame:
    """For each feasible design: the delay, then every quantity at nominal and at the corners where
    the worst-case shortest and longest delays occur (one row per quantity: its plain name, its key
    in the model for scripts, and its SI unit)."""
    rows = []
    for name, ev, outcome in result.designs():
        rows.append({
            "design": name, "quantity": "delay", "key": "delay", "unit": "s", "nominal": _finite(ev.nominal_s),
            "at shortest delay": _finite(ev.worst.min_s), "at longest delay": _finite(ev.worst.max_s),
            "distribution": "", "note": "; ".join(filter(None, (
                ev.worst.method, _never_note(ev.nominal_s, ev.worst.min_s, ev.worst.max_s)))),
        })
        quantities = outcome.model.quantities(ev.design)
        for q_name, q in quantities.items():
            rows.append({
                "design": name, "quantity": plain_label(q_name), "key": q_name, "unit": q.unit or "dimensionless",
                "nominal": q.nominal,
                "at shortest delay": ev.worst.at_min.get(q_name, q.nominal),
                "at longest delay": ev.worst.at_max.get(q_name, q.nominal),
                "distribution": q.dist if q.spreads else "fixed", "note": q.note,
            })
    return _frame(rows, CORNERS_COLUMNS)


def monte_carlo_table(result: "StudyResult") -> pd.DataFrame:
    """Monte Carlo summary of each feasible design: percentiles at the brief's coverage, mean, std,
    yield inside the band with its 95 % (Wilson) interval, samples and seed."""
    rows = []
    for name, ev, _ in result.designs():
        mc = ev.mc
        row = {"design": name, "samples [count]": mc.samples, "seed": mc.seed,
               "coverage [%]": _percent(ev.coverage)}
        row.update({_percentile_header(q): _finite(v) for q, v in sorted(mc.percentiles.items())})
        row.update({
            "delay mean [s]": _finite(mc.mean_s), "delay std [s]": _finite(mc.std_s),
            "band min [s]": ev.band[0], "band max [s]": ev.band[1], "yield [%]": _percent(mc.yield_frac),
            "yield 95 % low [%]": _percent(mc.yield_ci[0]), "yield 95 % high [%]": _percent(mc.yield_ci[1]),
            "never ends [%]": _percent(mc.never_ends_frac),
            "note": _never_note(*mc.percentiles.values(), mc.mean_s, mc.std_s),
        })
        rows.append(row)
    return _frame(rows, monte_carlo_columns(result.brief.analysis.coverage))


def infeasible_table(result: "StudyResult") -> pd.DataFrame:
    """Each reason why a topology cannot meet the brief, one per row."""
    rows = [{"topology": o.topology, "description": o.description, "reason no. [count]": i, "reason": reason}
            for o in result.infeasible() for i, reason in enumerate(o.reasons, start=1)]
    return _frame(rows, INFEASIBLE_COLUMNS)


def relax_table(result: "StudyResult") -> pd.DataFrame:
    """What alone would make each infeasible topology feasible (tradeoff.relax; no rows unless --relax)."""
    rows = [{"topology": r.topology, "change": r.label, "reachable": r.reachable, "hypothetical class": r.hypothetical,
             "to": r.text if r.reachable else "not reachable by this change alone", "brief": r.original,
             "design": r.design, "cost per unit [EUR]": r.cost_per_unit_eur, "solves [count]": r.solves}
            for r in result.relaxations or ()]
    return _frame(rows, RELAX_COLUMNS)


def slack_table(result: "StudyResult") -> pd.DataFrame:
    """How far each requirement could tighten for each feasible topology (tradeoff.relax; no rows unless asked);
    bounded false: still feasible at the far end tried."""
    rows = [{"topology": r.topology, "change": r.label, "bounded": r.bounded, "up to": r.text, "brief": r.original,
             "design": r.design, "cost per unit [EUR]": r.cost_per_unit_eur, "solves [count]": r.solves}
            for r in result.slack or ()]
    return _frame(rows, SLACK_COLUMNS)


def brief_table(result: "StudyResult") -> pd.DataFrame:
    """The normalised brief: key, SI value (numbers only; percentages in %), the value as text, unit,
    and whether it was given, a default or derived."""
    rows = []
    for v in result.brief.values:
        number = v.value if isinstance(v.value, (int, float)) and not isinstance(v.value, bool) else None
        if number is not None and v.unit == "%":
            number = _percent(number)
        rows.append({"key": v.key, "value": _finite(number), "text": v.text, "unit": v.unit,
                     "origin": v.origin, "note": v.note})
    return _frame(rows, BRIEF_COLUMNS)


def cautions_table(result: "StudyResult") -> pd.DataFrame:
    """The mains cautions, numbered; for a low-voltage-only brief one row saying none apply and why."""
    if result.cautions:
        rows = [{"no. [count]": i, "caution": text} for i, text in enumerate(result.cautions, start=1)]
    else:
        switched = result.brief.load.switched
        rows = [{"no. [count]": None, "caution": (
            f"None apply: the switched load is {fq(switched.voltage_v, 'V')}, not mains and not above "
            f"{fq(HAZARDOUS_VOLTAGE_V, 'V')}.")}]
    return _frame(rows, CAUTIONS_COLUMNS)


TABLES: dict[str, Callable[["StudyResult"], pd.DataFrame]] = {
    "ranking": ranking_table,
    "bom": bom_table,
    "production": production_table,
    "corners": corners_table,
    "monte_carlo": monte_carlo_table,
    "infeasible": infeasible_table,
    "relax": relax_table,
    "slack": slack_table,
    "brief": brief_table,
    "cautions": cautions_table,
}
"""Sheet (and CSV file) name -> table builder, in sheet order."""


def study_tables(result: "StudyResult") -> dict[str, pd.DataFrame]:
    """Every review table of `result` under its sheet name, in sheet order."""
    return {name: build(result) for name, build in TABLES.items()}


def csv_files(result: "StudyResult", directory: str | Path,
              tables: dict[str, pd.DataFrame] | None = None) -> dict[Path, str]:
    """The CSV files of the review tables: `<directory>/<sheet name>.csv` -> text (UTF-8, comma-separated,
    empty field where the workbook has an empty cell)."""
    tables = study_tables(result) if tables is None else tables
    return {Path(directory) / f"{name}.csv": frame.to_csv(index=False, lineterminator="\n")
            for name, frame in tables.items()}
