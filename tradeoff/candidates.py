"""Buildable candidate values for one value role: every allowed part class times every
standard value of the brief's series inside the role's range, and (when the brief allows
it) series pairs of two standard resistor values.

Topologies build their optimiser blocks from these tables, so every topology enumerates
values the same way.
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from tradeoff import eseries

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part
    from tradeoff.topologies.base import Role

__all__ = ["role_candidates", "series_for", "rated_voltage", "CANDIDATE_COLUMNS", "VOLTAGE_DERATING"]

CANDIDATE_COLUMNS = ("value", "part", "series", "tolerance", "tempco", "cost", "placements", "first", "second",
                     "rated_v")
"""value [ohm or F]; part: catalog class id; series: E-series used; tolerance [fraction];
tempco [1/K]; cost [EUR, indicative, for all parts of the candidate]; placements (1, or 2 for a
pair); first, second: the pair's two standard values (second is 0 for a single part);
rated_v: capacitor voltage rating chosen [V] (0 for resistors)."""

VOLTAGE_DERATING = 0.8
"""Capacitors are chosen with the brief's maximum supply at most 80 % of the rated voltage (common practice)."""


def series_for(part: "Part", brief: "Brief") -> str:
    """The brief's E-series for this part class: resistors, or the capacitor's dielectric."""
    if part.category == "resistor":
        return brief.series.resistor
    return getattr(brief.series, part.fields["dielectric"])


def rated_voltage(part: "Part", supply_max_v: float) -> float | None:
    """Smallest rated voltage of a capacitor class that keeps `supply_max_v` within the derating [V]."""
    ratings = sorted(part.values("rated_voltages", "V"))
    for v in ratings:
        if supply_max_v <= VOLTAGE_DERATING * v:
            return v
    return None


def _classes(role: "Role", catalog: "Catalog") -> list["Part"]:
    parts = catalog.parts(role.kind)
    if role.kind == "capacitor" and role.dielectrics:
        parts = [p for p in parts if p.fields.get("dielectric") in role.dielectrics]
    return parts


def role_candidates(role: "Role", brief: "Brief", catalog: "Catalog", classes: list["Part"] | None = None) -> pd.DataFrame:
    """Candidate table (columns `CANDIDATE_COLUMNS`) for `role`, sorted by value then cost.

    classes: restrict to these part classes (default: every class of the role's kind and dielectric).
    """
    rows = []
    for part in classes if classes is not None else _classes(role, catalog):
        lo = max(role.lo, part.value("min_value", "ohm" if role.kind == "resistor" else "F"))
        hi = min(role.hi, part.value("max_value", "ohm" if role.kind == "resistor" else "F"))
        if lo > hi:
            continue
        rated = 0.0
        if role.kind == "capacitor":
            chosen = rated_voltage(part, brief.supply.max_v)
            if chosen is None:
                continue
            rated = chosen
        series = series_for(part, brief)
        singles = eseries.values(series, lo, hi)
        common = dict(part=part.id, series=series, tolerance=part.value("tolerance", ""),
                      tempco=part.value("tempco", "1/K"), rated_v=rated)
        unit_cost = part.cost
        for v in singles:
            rows.append(dict(value=float(v), cost=unit_cost, placements=1, first=float(v), second=0.0, **common))
        if role.kind == "resistor" and brief.series.pairs:
            base = eseries.values(series, lo / 10, hi)
            a, b = np.meshgrid(base, base, indexing="ij")
            keep = (a >= b) & (a + b >= lo) & (a + b <= hi)
            totals = np.round(a[keep] + b[keep], 12)
            firsts, seconds = a[keep], b[keep]
            _, first_index = np.unique(totals, return_index=True)
            for i in first_index:
                if totals[i] in singles:
                    continue
                rows.append(dict(value=float(totals[i]), cost=2 * unit_cost, placements=2,
                                 first=float(firsts[i]), second=float(seconds[i]), **common))
    table = pd.DataFrame(rows, columns=list(CANDIDATE_COLUMNS))
    return table.sort_values(["value", "cost"], kind="stable").reset_index(drop=True)
