"""Value bands and candidate tables shared by the RC timing topologies: the uniform band of a resistor
or capacitor (tolerance plus tempco over the brief's ambient, plus a resistor's voltage coefficient at the
supply's maximum, `devices.capacitor.band_frac`, plus an electrolytic's capacitance change over the brief's
service life, `devices.life`), the board-surface leakage a brief may state at the timing node, every
(resistor, capacitor) candidate pair of two value
roles, the pairs whose worst case can lie in the band (found by bisection where the worst case grows with
one role's value), and the count of candidates a design rule removed (by reason, for the optimiser's
infeasibility explanations).
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Callable, Mapping

import numpy as np
import pandas as pd

from tradeoff.analysis import Uncertain
from tradeoff.candidates import (bom_lines, leading_below, pair_columns, role_candidates, voltage_coefficient,
                                 window_rows)
from tradeoff.devices.capacitor import band_frac
from tradeoff.devices.life import electrolytic_ageing, surface_conductance_s
from tradeoff.units import format_quantity as fq

__all__ = ["BOARD_LEAK", "board_leak", "board_conductance_s", "life_change_frac", "outlived", "component_band",
           "hold_pairs", "role_tables", "pair_rows", "pair_columns_of", "window_pairs", "Dropped"]

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part
    from tradeoff.topologies.base import Role


def life_change_frac(part: "Part", brief: "Brief") -> float:
    """Capacitance change bound of class `part` over the brief's service life at its hottest ambient
    [fraction]; 0 without a stated life or an endurance rating (`devices.life.electrolytic_ageing`).
    Folded into the band on both sides, like the tempco (conservative)."""
    return electrolytic_ageing(part, brief.environment.life_years, brief.ambient.max_c).capacitance_change_frac


BOARD_LEAK = "board_leak"
"""Quantity name of the board-surface leakage: its conductance as a fraction of the brief's figure (0: none,
1: the brief's surface insulation resistance)."""


def board_leak(brief: "Brief") -> dict[str, Uncertain]:
    """The board-surface leakage quantity of a brief that states one (none otherwise): anywhere from no
    leakage to the brief's surface insulation resistance across the node, uniform in conductance (a stated
    assumption; the worst case takes both ends)."""
    env = brief.environment
    if env.surface_ohm is None:
        return {}
    return {BOARD_LEAK: Uncertain(0.5, 0.0, 1.0, note=f"board-surface leakage from the timing node to ground: "
                                  f"none to {fq(env.surface_ohm, 'ohm')} ({env.surface_basis}; "
                                  "uniform in conductance)")}


def board_conductance_s(brief: "Brief", x: Mapping[str, np.ndarray]):
    """Conductance of the board-surface path at the samples `x` [S] (0 when the brief states none)."""
    return surface_conductance_s(x[BOARD_LEAK], brief.environment.surface_ohm) if BOARD_LEAK in x else 0.0


def outlived(part: "Part", brief: "Brief") -> bool:
    """True when the brief's service life at its hottest ambient exceeds the endurance rating of class `part`
    (`devices.life`; the design rules report it as a violation, the candidate tables leave the class out)."""
    return electrolytic_ageing(part, brief.environment.life_years, brief.ambient.max_c).used_frac > 1


def component_band(value: float, part: "Part", brief: "Brief", note: str) -> Uncertain:
    """Value spread of a resistor or capacitor [ohm or F]: tolerance plus tempco over the brief's ambient
    range and a resistor's voltage coefficient at the supply's maximum (no resistor of these circuits sees
    more; `devices.capacitor.band_frac`), plus the change over the service life (`life_change_frac`), uniform."""
    life = life_change_frac(part, brief)
    spread = band_frac(part.value("tolerance", ""), part.value("tempco", "1/K"), brief.ambient.min_c,
                       brief.ambient.max_c, voltage_coefficient(part), brief.supply.max_v) + life
    if not spread < 1:  # the value could reach zero: a part no model can use
        raise part.param_error("tolerance", f"tolerance plus tempco over the ambient range (and any change over the "
                                           f"service life) make a band of "
                                           f"±{spread * 100:.0f} %, so the value could reach zero; accepted: a band "
                                           "below 100 %")
    aged = (f" ± {life * 100:.3g} % change over {brief.environment.life_years:g} years of service "
            f"({part.source('endurance_drift')})") if life else ""
    return Uncertain(value, value * (1 - spread), value * (1 + spread), unit=note.split(":")[0],
                     note=f"{note}: {part.id} tolerance ± tempco over the ambient range{aged} (uniform)")


def hold_pairs(r_role: "Role", c_role: "Role", brief: "Brief", catalog: "Catalog",
               r_classes: list["Part"] | None = None, c_classes: list["Part"] | None = None) -> pd.DataFrame:
    """Every (resistor, capacitor) candidate pair of two value roles, one row each (`pair_rows`), resistor-major."""
    r, c = role_tables(r_role, c_role, brief, catalog, r_classes, c_classes)
    ri, ci = np.meshgrid(np.arange(len(r)), np.arange(len(c)), indexing="ij")
    return pair_rows(r_role, c_role, r, c, ri.ravel(), ci.ravel())


def role_tables(r_role: "Role", c_role: "Role", brief: "Brief", catalog: "Catalog",
                r_classes: list["Part"] | None = None, c_classes: list["Part"] | None = None
                ) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Resistor and capacitor candidate tables of two value roles with their band fractions (`spread`, as in
    `component_band`); candidates whose band reaches 100 % (the value could reach zero) or whose class the
    brief's service life outlives (`outlived`) left out."""
    amb = brief.ambient
    tables = []
    for role, classes in ((r_role, r_classes), (c_role, c_classes)):
        table = role_candidates(role, brief, catalog, classes)
        gone = {p for p in table["part"].unique() if outlived(catalog.part(p), brief)} if len(table) else set()
        table = table[~table["part"].isin(gone)].reset_index(drop=True) if gone else table
        life = table["part"].map({p: life_change_frac(catalog.part(p), brief) for p in table["part"].unique()}) \
            if len(table) else 0.0
        table = table.assign(spread=(band_frac(table["tolerance"], table["tempco"], amb.min_c, amb.max_c,
                                               table["voltage_coefficient"], brief.supply.max_v) + life)
                             .to_numpy(float) if len(table) else np.zeros(0))
        tables.append(table[table["spread"] < 1].reset_index(drop=True))
    return tables[0], tables[1]


def pair_rows(r_role: "Role", c_role: "Role", r: pd.DataFrame, c: pd.DataFrame, ri: np.ndarray,
              ci: np.ndarray) -> pd.DataFrame:
    """Rows of the candidate pairs (r.iloc[ri], c.iloc[ci]) of two `role_tables` (columns `pair_columns_of`)."""
    return pd.DataFrame(pair_columns_of(r_role, c_role, r, c, ri, ci), copy=False)


def pair_columns_of(r_role: "Role", c_role: "Role", r: pd.DataFrame, c: pd.DataFrame, ri: np.ndarray,
                    ci: np.ndarray) -> dict[str, np.ndarray | pd.api.extensions.ExtensionArray]:
    """Columns of the candidate pairs (r.iloc[ri], c.iloc[ci]) of two `role_tables`, one array each, for a table
    built once (a table's columns are not copied again).

    Columns: <r_role>, <c_role> (values [ohm], [F]), r_part, c_part, r_spread, c_spread (band
    fractions as in `component_band`), c_rated_v [V], cost [EUR], placements, BOM lines, and each role's pair
    (<role>_first, <role>_second, <role>_pairing: `candidates.CANDIDATE_COLUMNS`).
    """
    ri, ci = np.asarray(ri, dtype=np.int64), np.asarray(ci, dtype=np.int64)

    def both(name, dtype):   # the two candidates' figures, summed
        total = r[name].to_numpy(dtype)[ri]
        total += c[name].to_numpy(dtype)[ci]
        return total

    lines = bom_lines(r, slice(None))[ri]   # per candidate first, then per pair: no pair-sized intermediates
    lines += bom_lines(c, slice(None))[ci]
    return {
        r_role.name: r["value"].to_numpy(float)[ri], c_role.name: c["value"].to_numpy(float)[ci],
        "r_part": r["part"].array.take(ri), "c_part": c["part"].array.take(ci),
        "r_spread": r["spread"].to_numpy(float)[ri], "c_spread": c["spread"].to_numpy(float)[ci],
        "c_rated_v": c["rated_v"].to_numpy(float)[ci], "cost": both("cost", float),
        "placements": both("placements", int), "lines": lines,
        **pair_columns(r_role.name, r, ri), **pair_columns(c_role.name, c, ci),
    }


def window_pairs(r: pd.DataFrame, c: pd.DataFrame, inner_is_r: bool,
                 delay: Callable[[np.ndarray, np.ndarray, str], np.ndarray], band: tuple[float, float],
                 dropped: "Dropped", above: str, below: str | None, quote_nearest: bool = True
                 ) -> tuple[np.ndarray, np.ndarray]:
    """(ri, ci): positions in `r` and `c` (two `role_tables`) of every pair whose delays lie in the band [s], in
    the order of the full resistor-major (r, c) table; the other pairs are counted in `dropped`.

    delay(ri, ci, end) is the delay [s] of those pairs held against the band's maximum (end 'hi') or minimum
    ('lo'), for example the worst-case longest and shortest delay; it must not decrease along the ascending
    values of one part class of the inner role (r where `inner_is_r`, else c) for a fixed candidate of the
    other. For every such group, bisection finds how many leading rows keep delay(.., 'hi') at most the
    maximum and how many of those keep delay(.., 'lo') below the minimum, so only the rows between are listed
    (each search first tries the group's last row: often the whole group lies on one side). Rows
    beyond are counted under the reason `above`, rows before under `below` (None: the minimum is not applied),
    each quoting the nearest (finite) delay its rows reach where `quote_nearest`.
    """
    inner, outer = (r, c) if inner_is_r else (c, r)
    by_part = [np.flatnonzero(inner["part"].to_numpy() == part) for part in pd.unique(inner["part"].to_numpy())]
    group_outer = np.repeat(np.arange(len(outer)), len(by_part))
    group_part = np.tile(np.arange(len(by_part)), len(outer))
    counts = np.array([len(rows) for rows in by_part], dtype=np.int64)
    sizes, offsets = counts[group_part], np.concatenate([[0], np.cumsum(counts)])
    inner_order = np.concatenate(by_part) if by_part else np.zeros(0, dtype=np.int64)

    def pairs(groups, rows):
        at_inner, at_outer = inner_order[offsets[group_part[groups]] + rows], group_outer[groups]
        return (at_inner, at_outer) if inner_is_r else (at_outer, at_inner)

    def along(end):
        return lambda groups, rows: delay(*pairs(groups, rows), end)

    stop, _, first_above = leading_below(along("hi"), sizes, band[1], inclusive=True, last_first=True, edges=True)
    nearest = _nearest(first_above[stop < sizes], np.min) if quote_nearest else None
    dropped.count(above + _beside(" (at least {})", nearest, band[1]), int((sizes - stop).sum()))
    start = np.zeros_like(stop)
    if below is not None:   # among the first `stop` rows only: the rows beyond are counted above
        start, last_below, _ = leading_below(along("lo"), stop, band[0], last_first=True, edges=True)
        nearest = _nearest(last_below[start > 0], np.max) if quote_nearest else None
        dropped.count(below + _beside(" (at most {})", nearest, band[0]), int(start.sum()))
    ri, ci = pairs(*window_rows(start, stop))
    order = np.lexsort((ci, ri))   # resistor-major: the order of the full (r, c) table
    return ri[order], ci[order]


def _nearest(values: np.ndarray, reduce) -> float | None:
    """reduce() of the delays [s] the dropped groups reach at their row nearest the band; None where there are
    none or it is not finite (the figure a dropped reason quotes)."""
    if not values.size:
        return None
    value = float(reduce(values))
    return value if np.isfinite(value) else None


def _beside(template: str, value: float | None, edge: float) -> str:
    """template filled with `value` [s] in as few digits (3 to 6) as tell it from the band's `edge` [s]; '' for None."""
    if value is None:
        return ""
    digits = 3
    while digits < 6 and fq(value, "s", digits) == fq(edge, "s", digits):
        digits += 1
    return template.format(fq(value, "s", digits))


class Dropped(dict):
    """Candidates removed by a design rule, counted by reason (becomes Block.dropped)."""

    def drop(self, mask: np.ndarray, reason: Callable[[np.ndarray], str]) -> np.ndarray:
        """Count the rows `mask` removes under the reason text `reason(mask)`; return the keep mask."""
        mask = np.asarray(mask, dtype=bool)
        if mask.any():
            text = reason(mask)
            self.count(text, int(mask.sum()))
        return ~mask

    def count(self, text: str, removed: int) -> None:
        """Count `removed` candidates under the reason `text` (none: no entry)."""
        if removed:
            self[text] = self.get(text, 0) + int(removed)
