"""Value bands and candidate tables shared by the RC timing topologies: the uniform band of a resistor
or capacitor (tolerance plus tempco over the brief's ambient, `devices.capacitor.band_frac`), every
(resistor, capacitor) candidate pair of two value roles, and the count of candidates a design rule
removed (by reason, for the optimiser's infeasibility explanations).
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Callable

import numpy as np
import pandas as pd

from tradeoff.analysis import Uncertain
from tradeoff.candidates import role_candidates
from tradeoff.devices.capacitor import band_frac

__all__ = ["component_band", "hold_pairs", "role_tables", "pair_rows", "Dropped"]

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part
    from tradeoff.topologies.base import Role


def component_band(value: float, part: "Part", brief: "Brief", note: str) -> Uncertain:
    """Value spread of a resistor or capacitor [ohm or F]: tolerance plus tempco over the brief's ambient
    range (`devices.capacitor.band_frac`), uniform."""
    spread = band_frac(part.value("tolerance", ""), part.value("tempco", "1/K"), brief.ambient.min_c,
                       brief.ambient.max_c)
    if not spread < 1:  # the value could reach zero: a part no model can use
        raise part.param_error("tolerance", f"tolerance plus tempco over the ambient range make a band of "
                                           f"±{spread * 100:.0f} %, so the value could reach zero; accepted: a band "
                                           "below 100 %")
    return Uncertain(value, value * (1 - spread), value * (1 + spread), unit=note.split(":")[0],
                     note=f"{note}: {part.id} tolerance ± tempco over the ambient range (uniform)")


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
    `component_band`); candidates whose band reaches 100 % (the value could reach zero) left out."""
    amb = brief.ambient
    tables = []
    for role, classes in ((r_role, r_classes), (c_role, c_classes)):
        table = role_candidates(role, brief, catalog, classes)
        table = table.assign(spread=band_frac(table["tolerance"], table["tempco"], amb.min_c, amb.max_c)
                             .to_numpy(float) if len(table) else np.zeros(0))
        tables.append(table[table["spread"] < 1].reset_index(drop=True))
    return tables[0], tables[1]


def pair_rows(r_role: "Role", c_role: "Role", r: pd.DataFrame, c: pd.DataFrame, ri: np.ndarray,
              ci: np.ndarray) -> pd.DataFrame:
    """Rows of the candidate pairs (r.iloc[ri], c.iloc[ci]) of two `role_tables`.

    Columns: <r_role>, <c_role> (values [ohm], [F]), r_part, c_part, r_spread, c_spread (band
    fractions as in `component_band`), c_rated_v [V], cost [EUR], placements, first/second
    series parts of the resistor (r_first, r_second).
    """
    ri, ci = np.asarray(ri, dtype=np.int64), np.asarray(ci, dtype=np.int64)
    column = {name: (r[name].to_numpy()[ri], c[name].to_numpy()[ci]) for name in
              ("value", "part", "spread", "cost", "placements")}
    return pd.DataFrame({
        r_role.name: column["value"][0].astype(float), c_role.name: column["value"][1].astype(float),
        "r_part": column["part"][0], "c_part": column["part"][1],
        "r_spread": column["spread"][0].astype(float), "c_spread": column["spread"][1].astype(float),
        "c_rated_v": c["rated_v"].to_numpy(float)[ci],
        "cost": (column["cost"][0] + column["cost"][1]).astype(float),
        "placements": (column["placements"][0] + column["placements"][1]).astype(int),
        "r_first": r["first"].to_numpy(float)[ri], "r_second": r["second"].to_numpy(float)[ri],
    })


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
