"""Relay coil laws: the unit's release current, coil resistance against temperature, and what a linear
driver dissipates while the coil current passes through its linear region.

Arrays in, arrays out (SI units). A relay releases at a coil current (ampere-turns), so a unit whose
release point is `release_frac` of its rated voltage releases at release_frac·Vc/R_coil (relay
manufacturers' datasheets give must-operate and must-release voltages at 20 to 25 degC). Those two
are guarantees for every unit; the units of one type release in a much narrower band well below the
must-operate point (the typical release band of the relay class, from memory where no datasheet
gives it). Copper's resistance rises by about 0.393 %/K (IEC 60028, annealed copper).
"""
from __future__ import annotations

import numpy as np

__all__ = ["COPPER_TEMPCO_PER_K", "DEFAULT_RELEASE_TYPICAL", "typical_release_band", "release_current_a", "coil_ohm_at", "linear_peak_dissipation_w", "derated_power_w"]

COPPER_TEMPCO_PER_K = 0.00393
"""Temperature coefficient of annealed copper's resistance at 20 degC [1/K] (IEC 60028)."""


DEFAULT_RELEASE_TYPICAL = (0.15, 0.35)
"""Typical release band of small PCB power relays as fractions of the rated coil voltage, for a coil
without a matching relay class (from memory: drop-out of such relays lies around 15 to 35 % of the
rated voltage, far above the guaranteed 10 % and far below the 75 % must-operate)."""


def typical_release_band(typical_min: float, typical_max: float, must_release: float,
                         must_operate: float) -> tuple[float, float] | None:
    """Typical release band [fractions of the rated coil voltage] inside the guaranteed one.

    The class's typical band (typical_min to typical_max) clipped to must-release .. must-operate;
    None when nothing of it is left (a brief whose guarantees exclude the class's typical units:
    the guaranteed band is then all that is known).
    """
    low, high = max(typical_min, must_release), min(typical_max, must_operate)
    return (low, high) if high > low else None


def release_current_a(release_frac, coil_voltage_v, coil_ohm):
    """Release current [A] of a unit releasing at `release_frac` of its rated coil voltage [V] with coil
    resistance coil_ohm at 25 degC [ohm]."""
    return np.asarray(release_frac, dtype=float) * coil_voltage_v / np.asarray(coil_ohm, dtype=float)


def coil_ohm_at(coil_ohm, tempco_per_k, temp_c):
    """Coil resistance at `temp_c` [degC] from its 25 degC value [ohm]: R·(1 + tempco·(T − 25))."""
    return np.asarray(coil_ohm, dtype=float) * (1 + tempco_per_k * (np.asarray(temp_c, dtype=float) - 25.0))


def linear_peak_dissipation_w(supply_v, coil_min_ohm):
    """Largest dissipation of a driver passing a resistive coil's current in its linear region [W]:
    VCE·I = (V − I·R)·I peaks at V²/(4R) (at I = V/(2R))."""
    return np.asarray(supply_v, dtype=float) ** 2 / (4 * np.asarray(coil_min_ohm, dtype=float))


def derated_power_w(p_tot_w: float, tj_max_c: float, ambient_c: float) -> float:
    """Power rating at `ambient_c` [degC]: p_tot at 25 degC derated linearly to zero at tj_max [W]
    (the transistor datasheets' derating curve)."""
    return p_tot_w * max(tj_max_c - max(ambient_c, 25.0), 0.0) / (tj_max_c - 25.0)
