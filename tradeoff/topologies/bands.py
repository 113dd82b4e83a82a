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

__all__ = ["component_band", "hold_pairs", "Dropped"]

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
    """Every (resistor, capacitor) candidate pair of two value roles, one row each.

    Columns: <r_role>, <c_role> (values [ohm], [F]), r_part, c_part, r_spread, c_spread (band
    fractions as in `component_band`), c_rated_v [V], cost [EUR], placements, first/second
    series parts of the resistor (r_first, r_second).
    """
    r = role_candidates(r_role, brief, catalog, r_classes)
    c = role_candidates(c_role, brief, catalog, c_classes)
    amb = brief.ambient
    ri, ci = np.meshgrid(np.arange(len(r)), np.arange(len(c)), indexing="ij")
    ri, ci = ri.ravel(), ci.ravel()
    rr, cc = r.iloc[ri].reset_index(drop=True), c.iloc[ci].reset_index(drop=True)
    return pd.DataFrame({
        r_role.name: rr["value"].to_numpy(float), c_role.name: cc["value"].to_numpy(float),
        "r_part": rr["part"].to_numpy(), "c_part": cc["part"].to_numpy(),
        "r_spread": band_frac(rr["tolerance"], rr["tempco"], amb.min_c, amb.max_c).to_numpy(float),
        "c_spread": band_frac(cc["tolerance"], cc["tempco"], amb.min_c, amb.max_c).to_numpy(float),
        "c_rated_v": cc["rated_v"].to_numpy(float),
        "cost": (rr["cost"] + cc["cost"]).to_numpy(float),
        "placements": (rr["placements"] + cc["placements"]).to_numpy(int),
        "r_first": rr["first"].to_numpy(float), "r_second": rr["second"].to_numpy(float),
    }).query("r_spread < 1 and c_spread < 1").reset_index(drop=True)  # a band of 100 % could reach zero


class Dropped(dict):
    """Candidates removed by a design rule, counted by reason (becomes Block.dropped)."""

    def drop(self, mask: np.ndarray, reason: Callable[[np.ndarray], str]) -> np.ndarray:
        """Count the rows `mask` removes under the reason text `reason(mask)`; return the keep mask."""
        mask = np.asarray(mask, dtype=bool)
        if mask.any():
            text = reason(mask)
            self[text] = self.get(text, 0) + int(mask.sum())
        return ~mask
