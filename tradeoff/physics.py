"""Pure vectorised physics shared by the topologies: capacitor leakage and insulation.

Every function takes numpy arrays (or scalars) in SI units and broadcasts them. A `part`
argument is any object with `value(name, unit) -> float` (a `tradeoff.catalog.Part`); the
function reads the class parameters it names from it.
"""
from __future__ import annotations

import numpy as np

__all__ = ["electrolytic_leakage_a", "insulation_resistance_ohm", "LEAKAGE_REFERENCE_C"]

LEAKAGE_REFERENCE_C = 20.0
"""Temperature at which the datasheet leakage limit applies [degC] (after 2 min at rated voltage)."""


def electrolytic_leakage_a(c_f, v_applied, v_rated, temp_c, part, typical: bool = False) -> np.ndarray:
    """Leakage current of an aluminium electrolytic capacitor [A].

    c_f: nominal capacitance [F]; v_applied: voltage across it [V], >= 0; v_rated: rated
    voltage [V]; temp_c: capacitor temperature [degC]; part: the capacitor class; typical:
    False for the datasheet limit (worst case), True for a typical conditioned part.

    limit at rated voltage and 20 degC:  I0 = max(leakage_k * C * V_rated, leakage_floor)
        (datasheet rule "0.01 CV or 3 uA, whichever is greater, after 2 minutes";
        leakage_k = 0.01 [A/(F*V)] is 0.01 uA per uF*V)
    below rated voltage:                 * (V / V_rated) ** n
        n = leakage_voltage_exponent_limit (worst case; 1, a conservative linear fall)
        or leakage_voltage_exponent (typical: the steeper fall of real parts, from memory)
    temperature:                         * 2 ** ((T - 20 degC) / leakage_temp_doubling)
    typical part:                        * leakage_typical_frac

    The datasheet guarantees only the 20 degC, rated-voltage limit; the voltage and
    temperature scalings are the catalog's stated assumptions (sources in the catalog).
    """
    c_f, v_applied, v_rated, temp_c = (np.asarray(a, dtype=float) for a in (c_f, v_applied, v_rated, temp_c))
    if np.any(v_applied < 0):
        raise ValueError("electrolytic leakage is modelled for forward voltage only (v_applied >= 0 V)")
    if np.any(v_rated <= 0) or np.any(c_f < 0):
        raise ValueError("v_rated must be > 0 V and c_f >= 0 F")
    limit = np.maximum(part.value("leakage_k", "A/(F*V)") * c_f * v_rated, part.value("leakage_floor", "A"))
    exponent = part.value("leakage_voltage_exponent" if typical else "leakage_voltage_exponent_limit", "")
    doubling_k = part.value("leakage_temp_doubling", "K")
    current = limit * (v_applied / v_rated) ** exponent * np.exp2((temp_c - LEAKAGE_REFERENCE_C) / doubling_k)
    if typical:
        current = current * part.value("leakage_typical_frac", "")
    return current


def insulation_resistance_ohm(c_f, part) -> np.ndarray:
    """Minimum insulation resistance of a film or ceramic capacitor [ohm].

    c_f: capacitance [F]. Rule of the class datasheets: R_ins >= insulation_resistance_min
    [ohm] for small capacitances, and R_ins * C >= insulation_time_constant [s] for large
    ones, whichever resistance is lower: R = min(R_min, tau / C).
    """
    c_f = np.asarray(c_f, dtype=float)
    if np.any(c_f <= 0):
        raise ValueError("c_f must be > 0 F")
    return np.minimum(part.value("insulation_resistance_min", "ohm"),
                      part.value("insulation_time_constant", "s") / c_f)
