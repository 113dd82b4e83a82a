"""Buildable candidate values for one value role: every allowed part class times every
standard value of the brief's series inside the role's range, and (when the brief allows
it) series pairs of two standard resistor values.

Topologies build their optimiser blocks from these tables, so every topology enumerates
values the same way. A two-role block need not evaluate every (R, C) combination: where the
delay grows with one role's value, `leading_below` finds by bisection, for every candidate of
the other role, the window of values whose delay can lie in the band, and `window_rows` lists
only the combinations inside it; `chunks` bounds the rows evaluated at once.
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

__all__ = ["role_candidates", "allowed_classes", "voltage_coefficient", "series_for", "rated_voltage",
           "CANDIDATE_COLUMNS", "VOLTAGE_DERATING",
           "leading_below", "window_rows", "chunks", "EVALUATION_CHUNK"]

CANDIDATE_COLUMNS = ("value", "part", "series", "tolerance", "tempco", "voltage_coefficient", "cost", "placements",
                     "first", "second", "rated_v")
"""value [ohm or F]; part: catalog class id; series: E-series used; tolerance [fraction];
tempco [1/K]; voltage_coefficient [1/V] (`voltage_coefficient`); cost [EUR, indicative, for all parts of the candidate]; placements (1, or 2 for a
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


def voltage_coefficient(part: "Part") -> float:
    """Bound of a resistor class's voltage coefficient [1/V]: its value moves by at most this fraction per
    volt across it; 0 for a class that states none (film resistors: negligible at these voltages)."""
    return part.value("voltage_coefficient", "1/V") if part.has("voltage_coefficient") else 0.0


def allowed_classes(role: "Role", catalog: "Catalog") -> list["Part"]:
    """The catalog's part classes that may fill `role`: its kind, and for a capacitor its dielectrics."""
    parts = catalog.parts(role.kind)
    if role.kind == "capacitor" and role.dielectrics:
        parts = [p for p in parts if p.fields.get("dielectric") in role.dielectrics]
    return parts


def _class_range(role: "Role", part: "Part") -> tuple[float, float]:
    """Values [ohm or F] of `part` that `role` may take: the class's min_value to max_value within the role's limits."""
    unit = "ohm" if role.kind == "resistor" else "F"
    return max(role.lo, part.value("min_value", unit)), min(role.hi, part.value("max_value", unit))


def _series_pairs(base: np.ndarray, lo: float, hi: float, singles: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(first, second) standard values of the series pairs first + second in [lo, hi], first >= second, one
    pair per total (the first of the pairs in row order), totals a single part already gives left out."""
    a, b = np.meshgrid(base, base, indexing="ij")
    keep = (a >= b) & (a + b >= lo) & (a + b <= hi)
    firsts, seconds = a[keep], b[keep]
    totals, first_index = np.unique(np.round(firsts + seconds, 12), return_index=True)
    first_index = first_index[~np.isin(totals, singles)]
    return firsts[first_index], seconds[first_index]


def role_candidates(role: "Role", brief: "Brief", catalog: "Catalog", classes: list["Part"] | None = None) -> pd.DataFrame:
    """Candidate table (columns `CANDIDATE_COLUMNS`) for `role`, sorted by value then cost.

    classes: restrict to these part classes (default: every class of the role's kind and dielectric).
    """
    tables = []
    for part in classes if classes is not None else allowed_classes(role, catalog):
        lo, hi = _class_range(role, part)
        if lo > hi:
            continue
        rated = 0.0
        if role.kind == "capacitor":
            chosen = rated_voltage(part, brief.supply.max_v)
            if chosen is None:
                continue
            rated = chosen
        series = series_for(part, brief)
        singles = np.asarray(eseries.values(series, lo, hi), dtype=float)
        firsts, seconds = singles, np.zeros(len(singles))
        if role.kind == "resistor" and brief.series.pairs:
            pair_firsts, pair_seconds = _series_pairs(np.asarray(eseries.values(series, lo / 10, hi), dtype=float),
                                                      lo, hi, singles)
            firsts, seconds = np.concatenate([firsts, pair_firsts]), np.concatenate([seconds, pair_seconds])
        placements = np.where(seconds > 0, 2, 1)
        tables.append(pd.DataFrame({
            "value": np.where(seconds > 0, np.round(firsts + seconds, 12), firsts), "part": part.id, "series": series,
            "tolerance": part.value("tolerance", ""), "tempco": part.value("tempco", "1/K"),
            "voltage_coefficient": voltage_coefficient(part),
            "cost": placements * part.cost, "placements": placements, "first": firsts, "second": seconds,
            "rated_v": rated}, columns=list(CANDIDATE_COLUMNS)))
    table = pd.concat(tables, ignore_index=True) if tables else pd.DataFrame(columns=list(CANDIDATE_COLUMNS))
    return table.sort_values(["value", "cost"], kind="stable").reset_index(drop=True)


EVALUATION_CHUNK = 1 << 16
"""Candidate rows evaluated at once. A topology's delay model holds a few dozen float arrays of
(rows x corners) while it evaluates, at most 16 corners here, so one chunk needs about
65536 x 16 x 8 bytes x 40, some 340 MB; only the rows kept (those inside the band) outlive it."""


def leading_below(evaluate, sizes: np.ndarray, threshold: float, inclusive: bool = False,
                  probes: int = 1) -> np.ndarray:
    """Per group, how many leading rows have a value below `threshold` (at or below it when `inclusive`).

    Group g has sizes[g] rows whose value evaluate(groups, rows) (two integer arrays, one value each)
    does not decrease along the rows (NaN counts as above every threshold). Vectorised search that
    probes `probes` evenly spaced rows of every group still open per call (1: bisection), so it
    needs about log(max size)/log(probes + 1) calls.
    """
    lo = np.zeros(len(sizes), dtype=np.int64)
    hi = np.asarray(sizes, dtype=np.int64).copy()
    steps = np.arange(1, probes + 1)
    while True:
        open_ = np.flatnonzero(lo < hi)
        if not open_.size:
            return lo
        at = lo[open_, None] + ((hi - lo)[open_, None] * steps[None, :]) // (probes + 1)
        value = np.asarray(evaluate(np.repeat(open_, probes), at.ravel()), dtype=float).reshape(at.shape)
        below = value <= threshold if inclusive else value < threshold
        count = below.sum(axis=1)   # probes below the threshold: a prefix of the probes
        last = np.where(count > 0, at[np.arange(len(open_)), np.maximum(count - 1, 0)] + 1, lo[open_])
        first = np.where(count < probes, at[np.arange(len(open_)), np.minimum(count, probes - 1)], hi[open_])
        lo[open_], hi[open_] = last, first


def window_rows(starts: np.ndarray, stops: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(group, row) of every row in the windows [starts[g], stops[g]) of every group, group by group."""
    lengths = np.maximum(np.asarray(stops) - np.asarray(starts), 0)
    group = np.repeat(np.arange(len(lengths)), lengths)
    offset = np.arange(int(lengths.sum())) - np.repeat(np.cumsum(lengths) - lengths, lengths)
    return group, np.asarray(starts)[group] + offset


def chunks(count: int, size: int = EVALUATION_CHUNK):
    """Slices covering range(count), `size` at a time."""
    for start in range(0, count, size):
        yield slice(start, min(count, start + size))

