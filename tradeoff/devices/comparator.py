"""Comparator thresholds: a reference divider with a hysteresis resistor from the output, and the
555-class monostable whose comparators sit at 1/3 and 2/3 of the supply.

Arrays in, arrays out (SI units). Sources: nodal analysis of the threshold divider (standard circuit
analysis); the monostable width t = R·C·ln((Vcc − Ix·R)/(Vcc/3 − Ix·R)), 1.0986·R·C at Ix = 0
(555-class timer datasheets, monostable operation, bipolar and CMOS classes alike).
"""
from __future__ import annotations

import numpy as np

__all__ = ["THRESHOLD_FRAC", "TRIGGER_FRAC", "threshold_v", "monostable_width_s"]

THRESHOLD_FRAC = 2.0 / 3.0
"""555-class threshold comparator level as a fraction of Vcc (555-class datasheets)."""

TRIGGER_FRAC = 1.0 / 3.0
"""555-class trigger comparator level as a fraction of Vcc (555-class datasheets)."""


def threshold_v(v_ref, v_drain, r_top, r_bottom, r_hyst):
    """Voltage of the threshold node [V]: reference through r_top, ground through r_bottom, drain through r_hyst."""
    return (v_ref / r_top + v_drain / r_hyst) / (1.0 / r_top + 1.0 / r_bottom + 1.0 / r_hyst)


def monostable_width_s(r_ohm, c_f, ix_a, vcc_v):
    """Monostable pulse width t = R·C·ln((Vcc − Ix·R)/(Vcc/3 − Ix·R)) [s]; inf where Ix·R >= Vcc/3.

    r_ohm [ohm], c_f [F], ix_a: constant current drawn from the capacitor [A], vcc_v [V]; arrays broadcast.
    """
    drop = np.asarray(ix_a, dtype=float) * r_ohm
    headroom = np.asarray(vcc_v, dtype=float) * TRIGGER_FRAC - drop
    ok = headroom > 0
    with np.errstate(divide="ignore", invalid="ignore"):
        t = r_ohm * c_f * np.log((vcc_v - drop) / np.where(ok, headroom, 1.0))
    return np.where(ok, t, np.inf)
