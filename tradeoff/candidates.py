"""Buildable candidate values for one value role: every allowed part class times every
standard value of the brief's series inside the role's range, and (when the brief's `series.pairs`
allows it) pairs of two standard values of one class: resistors in series or parallel, capacitors in
parallel, film capacitors in series.

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
from tradeoff.devices import capacitor

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part
    from tradeoff.topologies.base import Role

__all__ = ["role_candidates", "allowed_classes", "voltage_coefficient", "series_for", "rated_voltage",
           "CANDIDATE_COLUMNS", "VOLTAGE_DERATING", "PAIRINGS", "PAIR_SPAN", "significant", "pair_total", "pair_columns", "bom_lines",
           "leading_below", "window_rows", "chunks", "EVALUATION_CHUNK"]

CANDIDATE_COLUMNS = ("value", "part", "series", "tolerance", "tempco", "voltage_coefficient", "cost", "placements",
                     "first", "second", "pairing", "rated_v")
"""value [ohm or F]; part: catalog class id; series: E-series used; tolerance [fraction];
tempco [1/K]; voltage_coefficient [1/V] (`voltage_coefficient`); cost [EUR, indicative, for all parts of the
candidate]; placements (1, or 2 for a pair); first, second: the pair's two standard values, first >= second
(second is 0 for a single part); pairing: 'series', 'parallel' or '' for a single part;
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


PAIRINGS = {"resistor": ("series", "parallel"), "electrolytic": ("parallel",), "film": ("parallel", "series"),
            "ceramic": ("parallel",)}
"""Pairings offered per class kind, the one whose values add first (it wins a tie on the same total): series
resistors and parallel capacitors add, parallel resistors and series capacitors combine as reciprocals.
Electrolytic and ceramic parts are not paired in series: their leakage or DC bias would set the split."""

def _one_per_gap(total: np.ndarray, edges: np.ndarray, tolerance: float) -> np.ndarray:
    """Positions in `total` of the one total per gap between adjacent `edges` (sorted) nearest the gap's
    geometric middle (the lower on a tie), in ascending order, in the gaps wider than a ratio (1 + tolerance)²
    only: IEC 60063 spaces each series so that adjacent values' tolerance bands meet (E12 for 10 %, E24 for
    5 %), and in a narrower gap every total already lies within a part's tolerance of a standard value."""
    gap = np.searchsorted(edges, total, side="right") - 1
    inside = (gap >= 0) & (gap < len(edges) - 1)
    inside[inside] = edges[gap[inside] + 1] > edges[gap[inside]] * (1 + tolerance) ** 2
    at = np.flatnonzero(inside)
    middle = np.sqrt(edges[gap[at]] * edges[gap[at] + 1])
    order = at[np.lexsort((np.abs(np.log(total[at] / middle)), gap[at]))]
    return np.sort(order[np.unique(gap[order], return_index=True)[1]])


PAIR_SPAN = 10.0
"""A pair's parts lie within this factor of its total (of the role's lower limit for the smaller part of a series
resistor pair): a far smaller part in series, or a far larger one in parallel, moves the total by less than the
class's own tolerance (common practice)."""


def significant(values, digits: int = 12) -> np.ndarray:
    """`values` rounded to `digits` significant digits: equal totals compare equal at any scale (ohms or farads)."""
    values = np.asarray(values, dtype=float)
    scale = 10.0 ** (digits - 1 - np.floor(np.log10(np.where(values > 0, values, 1.0))))
    return np.round(values * scale) / scale


def pair_total(first, second, adds: bool) -> np.ndarray:
    """Value of two parts [ohm or F]: their sum (`adds`: series resistors, parallel capacitors) or the
    reciprocal of the sum of reciprocals (parallel resistors, series capacitors)."""
    first, second = np.asarray(first, dtype=float), np.asarray(second, dtype=float)
    return significant(first + second if adds else first * second / (first + second))


def _pairs(base: np.ndarray, lo: float, hi: float, adds: bool,
           near_total: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(first, second, total) of the pairs of standard values `base` with first >= second and total in
    [lo, hi], one pair per total (the first in row order); `near_total`: both parts within `PAIR_SPAN` of it."""
    a, b = np.meshgrid(base, base, indexing="ij")
    keep = a >= b
    firsts, seconds = a[keep], b[keep]
    totals = pair_total(firsts, seconds, adds)
    inside = (totals >= lo) & (totals <= hi)
    if near_total:
        inside &= (firsts <= PAIR_SPAN * totals) & (seconds * PAIR_SPAN >= totals)
    totals, first_index = np.unique(totals[inside], return_index=True)
    return firsts[inside][first_index], seconds[inside][first_index], totals


def _class_pairs(role: "Role", part: "Part", brief: "Brief", series: str, lo: float, hi: float,
                 rated: float) -> list[tuple[str, np.ndarray, np.ndarray, np.ndarray]]:
    """(pairing, first, second, total) of every pairing of `part` the brief allows for `role`, the parts inside
    the class's value range. Series resistor pairs give every total; the other pairings give one total per gap
    between adjacent single values wider than the class's tolerance band (`_one_per_gap`), which bounds their
    rows by the singles' count. Capacitor
    pairs are kept only where the pair leaks no more than one part of its total
    (`devices.capacitor.pair_leakage_limit_a`): the topologies evaluate leakage at the total."""
    unit = "ohm" if role.kind == "resistor" else "F"
    kind = role.kind if role.kind == "resistor" else part.fields["dielectric"]
    made_lo, made_hi = part.value("min_value", unit), part.value("max_value", unit)
    out = []
    for pairing in PAIRINGS[kind]:
        if pairing not in brief.series.pairs:
            continue
        adds, every_total = (pairing == "series") == (role.kind == "resistor"), (role.kind, pairing) == ("resistor", "series")
        span = (max(made_lo, lo / PAIR_SPAN), hi) if adds else (lo, min(made_hi, hi * PAIR_SPAN))
        if span[0] > span[1]:
            continue
        first, second, total = _pairs(np.asarray(eseries.values(series, *span), dtype=float), lo, hi, adds,
                                      near_total=not every_total)
        if role.kind == "capacitor":
            single = capacitor.pair_leakage_limit_a(part, total, 0.0, rated, pairing)
            keep = capacitor.pair_leakage_limit_a(part, first, second, rated, pairing) <= single * (1 + 1e-9)
            first, second, total = first[keep], second[keep], total[keep]
        if not every_total:
            at = _one_per_gap(total, np.unique(np.concatenate([[lo], eseries.values(series, lo, hi), [hi]])),
                              part.value("tolerance", ""))
            first, second, total = first[at], second[at], total[at]
        out.append((pairing, first, second, total))
    return out


def _realisations(role: "Role", part: "Part", brief: "Brief", series: str, lo: float, hi: float,
                  rated: float) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(value, first, second, pairing) of `part` for `role`: every single standard value, then one pair per
    total no single part gives (a single part of the class has the same tolerance at lower cost, and one
    realisation per total and class: the first pairing of `PAIRINGS`)."""
    singles = np.asarray(eseries.values(series, lo, hi), dtype=float)
    values, firsts, seconds, pairings = [singles], [singles], [np.zeros(len(singles))], [np.full(len(singles), "")]
    taken = significant(singles)
    for pairing, first, second, total in _class_pairs(role, part, brief, series, lo, hi, rated):
        new = ~np.isin(total, taken)
        taken = np.concatenate([taken, total[new]])
        values.append(total[new]), firsts.append(first[new]), seconds.append(second[new])
        pairings.append(np.full(int(new.sum()), pairing))
    return tuple(np.concatenate(column) for column in (values, firsts, seconds, pairings))


def role_candidates(role: "Role", brief: "Brief", catalog: "Catalog", classes: list["Part"] | None = None) -> pd.DataFrame:
    """Candidate table (columns `CANDIDATE_COLUMNS`) for `role`, sorted by value then cost.

    classes: restrict to these part classes (default: every class of the role's kind and dielectric).
    A pair's tolerance, tempco and life drift are the class's fractions: both parts at their limit in the
    same direction move the total by that fraction in either pairing. Both parts of a series capacitor pair
    are rated for the whole supply: over a long hold the DC split follows the insulation resistances, which
    the datasheets bound only from below, so either part may see nearly all of it.
    """
    columns: dict[str, list] = {name: [] for name in CANDIDATE_COLUMNS}
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
        values, firsts, seconds, pairings = _realisations(role, part, brief, series, lo, hi, rated)
        placements = np.where(seconds > 0, 2, 1)
        each = {"value": values, "part": part.id, "series": series, "tolerance": part.value("tolerance", ""),
                "tempco": part.value("tempco", "1/K"), "voltage_coefficient": voltage_coefficient(part),
                "cost": placements * part.cost, "placements": placements, "first": firsts, "second": seconds,
                "pairing": pairings.astype(object), "rated_v": rated}
        for name, column in each.items():
            columns[name].append(np.broadcast_to(np.asarray(column, dtype=object if isinstance(column, str) else None),
                                                 values.shape))
    if not columns["value"]:
        return pd.DataFrame(columns=list(CANDIDATE_COLUMNS))
    joined = {name: np.concatenate(parts) for name, parts in columns.items()}
    order = np.lexsort((joined["cost"], joined["value"]))   # by value then cost, stable: the classes' order on a tie
    return pd.DataFrame({name: pd.array(column[order], dtype="str") if column.dtype == object else column[order]
                         for name, column in joined.items()}, copy=False)


def pair_columns(role: str, table: pd.DataFrame, at) -> dict[str, np.ndarray]:
    """Block columns <role>_first, <role>_second, <role>_pairing of the candidates table.iloc[at] (a role_candidates
    table), read by the optimiser into `Design.pairs`."""
    return {f"{role}_{name}": table[name].to_numpy()[at] for name in ("first", "second", "pairing")}


def bom_lines(table: pd.DataFrame, at) -> np.ndarray:
    """BOM lines of the candidates table.iloc[at]: 2 for a pair of two different values, else 1."""
    first, second = table["first"].to_numpy(float)[at], table["second"].to_numpy(float)[at]
    return np.where((second > 0) & (first != second), 2, 1)


EVALUATION_CHUNK = 1 << 16
"""Candidate rows evaluated at once. A topology's delay model holds a few dozen float arrays of
(rows x corners) while it evaluates, at most 16 corners here, so one chunk needs about
65536 x 16 x 8 bytes x 40, some 340 MB; only the rows kept (those inside the band) outlive it."""


def leading_below(evaluate, sizes: np.ndarray, threshold: float, inclusive: bool = False,
                  probes: int = 1, last_first: bool = False, edges: bool = False):
    """Per group, how many leading rows have a value below `threshold` (at or below it when `inclusive`).

    Group g has sizes[g] rows whose value evaluate(groups, rows) (two integer arrays, one value each)
    does not decrease along the rows (NaN counts as above every threshold). Vectorised search that
    probes `probes` evenly spaced rows of every group still open per call (1: bisection), so it
    needs about log(max size)/log(probes + 1) calls. `last_first`: one call first probes the last row
    of every group, which settles at once each group lying wholly below (one evaluation instead of a
    search) and costs the others one row: worth it where most groups lie wholly below. `edges`: return
    (counts, before, after) with the values at the rows either side of each count, the last row below and
    the first not below (NaN where there is none), as the search evaluated them.
    """
    lo = np.zeros(len(sizes), dtype=np.int64)
    hi = np.asarray(sizes, dtype=np.int64).copy()
    before, after = np.full(len(lo), np.nan), np.full(len(lo), np.nan)
    if last_first:
        open_ = np.flatnonzero(hi > 0)
        if open_.size:
            value = np.asarray(evaluate(open_, hi[open_] - 1), dtype=float)
            below = value <= threshold if inclusive else value < threshold
            lo[open_[below]], before[open_[below]] = hi[open_[below]], value[below]
            hi[open_[~below]], after[open_[~below]] = hi[open_[~below]] - 1, value[~below]
    steps = np.arange(1, probes + 1)
    while True:
        open_ = np.flatnonzero(lo < hi)
        if not open_.size:
            return (lo, before, after) if edges else lo
        at = lo[open_, None] + ((hi - lo)[open_, None] * steps[None, :]) // (probes + 1)
        value = np.asarray(evaluate(np.repeat(open_, probes), at.ravel()), dtype=float).reshape(at.shape)
        below = value <= threshold if inclusive else value < threshold
        count = below.sum(axis=1)   # probes below the threshold: a prefix of the probes
        rows, has_below, has_above = np.arange(len(open_)), count > 0, count < probes
        last = np.where(has_below, at[rows, np.maximum(count - 1, 0)] + 1, lo[open_])
        first = np.where(has_above, at[rows, np.minimum(count, probes - 1)], hi[open_])
        lo[open_], hi[open_] = last, first
        before[open_[has_below]] = value[rows, np.maximum(count - 1, 0)][has_below]
        after[open_[has_above]] = value[rows, np.minimum(count, probes - 1)][has_above]


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

