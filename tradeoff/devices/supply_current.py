"""Supply currents of ICs and regulators read from datasheet tables given at a few supplies.

A quiescent or operating current listed at supplies V1 < V2 < ... is read linearly between them and
extended along the end segments beyond them (a current that rises with the supply keeps rising: the
conservative reading of the datasheets' typical-characteristics curves). Regulators' quiescent current
continues after the timeout, as long as the supply is on (regulator datasheets).
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = ["on_supply"]


def on_supply(part: "Part", axis: str, name: str, unit: str, supply_v: float) -> float:
    """Datasheet figure `name` [unit] given at the supplies `axis` [V], at `supply_v` [V].

    Linear between the listed supplies and extended along the end segments beyond them
    (a current that rises with supply keeps rising: the conservative reading).
    """
    v = np.asarray(part.values(axis, "V"), dtype=float)
    y = np.asarray(part.values(name, unit), dtype=float)
    if len(v) != len(y):
        raise ValueError(f"{part.id}: {axis} and {name} must list the same number of values")
    if len(v) == 1:
        return float(y[0])
    order = np.argsort(v)
    v, y = v[order], y[order]
    i = int(np.clip(np.searchsorted(v, supply_v) - 1, 0, len(v) - 2))
    slope = (y[i + 1] - y[i]) / (v[i + 1] - v[i])
    return float(max(0.0, y[i] + slope * (supply_v - v[i])))
