"""Laws of a product's service life and of leakage across the board surface.

- Electrolytic endurance: a class's datasheet rates it for `endurance` hours at rated voltage and its
  upper category temperature, after which the capacitance is within ±`endurance_drift` of its
  initial value and the leakage still within its initial limit (aluminium electrolytic datasheets'
  endurance test; the test itself is the endurance test of the sectional specification IEC 60384-4).
  Each 10 K below the upper category temperature doubles the life (the Arrhenius 10 K rule, common
  practice). The share of that life a service of `years` at the hottest ambient uses widens the
  capacitance band linearly towards the end-of-endurance change (common practice: a straight line
  between the datasheet's two points); the leakage limit, kept by the endurance rating, stays.
- Crystal ageing: the first year's figure, growing with the logarithm of time after it:
  a(t) = a1·(1 + log10(t / 1 year)) for t >= 1 year (common practice: crystal ageing follows a
  logarithmic law, so each decade of service adds about the first year's ageing again).
- Board surface: a surface insulation resistance as a conductance from a node to ground.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from tradeoff.analysis import Uncertain

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = ["HOURS_PER_YEAR", "LIFE_DOUBLING_K", "Ageing", "rated_life_h", "life_used_frac", "electrolytic_ageing",
           "crystal_ageing_frac", "crystal_ageing", "surface_conductance_s"]

HOURS_PER_YEAR = 8766.0
"""Hours of one year of service (365.25 days)."""

LIFE_DOUBLING_K = 10.0
"""Temperature drop that doubles an electrolytic capacitor's life [K] (Arrhenius 10 K rule, common practice)."""


def rated_life_h(endurance_h: float, category_max_c: float, ambient_c: float) -> float:
    """Life at `ambient_c` [h] of a class rated `endurance_h` at its upper category temperature [degC]:
    endurance · 2^((T_max − T) / 10 K)."""
    return endurance_h * 2.0 ** ((category_max_c - ambient_c) / LIFE_DOUBLING_K)


def life_used_frac(years: float, endurance_h: float, category_max_c: float, ambient_c: float) -> float:
    """Share of the rated life a service of `years` at `ambient_c` [degC] uses (above 1: beyond it)."""
    return years * HOURS_PER_YEAR / rated_life_h(endurance_h, category_max_c, ambient_c)


@dataclass(frozen=True)
class Ageing:
    """What a service life does to an electrolytic class: the share of its rated life used and the
    capacitance change bound [fraction of the value]."""

    used_frac: float = 0.0
    capacitance_change_frac: float = 0.0


def electrolytic_ageing(part: "Part", years: float | None, ambient_c: float) -> Ageing:
    """Ageing of capacitor class `part` after `years` at `ambient_c` [degC] (the brief's hottest: the
    whole life there, on the safe side); none for no stated life or a class without an endurance
    rating. The change grows in proportion to the life used, held at the end-of-endurance value
    beyond it (the design rules flag a life beyond the endurance)."""
    if years is None or not part.has("endurance"):
        return Ageing()
    used = life_used_frac(years, part.value("endurance", "s") / 3600.0, part.value("temp_max", "degC"), ambient_c)
    return Ageing(used, part.value("endurance_drift", "") * min(used, 1.0))


def crystal_ageing_frac(first_year_frac: float, years: float | None) -> float:
    """Ageing bound [fraction] after `years` of service from the first-year bound (log law); the first
    year's figure for no stated life or a life up to one year."""
    if years is None or years <= 1.0:
        return first_year_frac
    return first_year_frac * (1.0 + math.log10(years))


def crystal_ageing(part: "Part", years: float | None) -> Uncertain:
    """Ageing of crystal class `part` over `years` of service as a frequency deviation [fraction],
    anywhere within ± the bound (`crystal_ageing_frac` of the class's first-year `aging`, uniform)."""
    first = part.value("aging", "")
    bound = crystal_ageing_frac(first, years)
    span = "first year" if bound == first else f"{years:g} years (log law from the first year, common practice)"
    return Uncertain(0.0, -bound, bound, note=f"{part.id}: ageing over the {span} ({part.source('aging')}; uniform)")


def surface_conductance_s(level, surface_ohm: float | None) -> np.ndarray | float:
    """Conductance [S] of the board-surface path at `level` (0: none, 1: the brief's surface insulation
    resistance `surface_ohm` [ohm]); 0 when the brief states none."""
    if surface_ohm is None:
        return 0.0
    return np.asarray(level, dtype=float) / surface_ohm
