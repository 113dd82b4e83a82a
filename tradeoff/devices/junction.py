"""Bipolar junction laws: thermal voltage, the diode law of a base-emitter junction, a Darlington's
base current and its discharge time, gain and drop against temperature.

Arrays in, arrays out (SI units). Sources: the diode law I = IS·exp(V/(n·kT/q)) and its
temperature behaviour (Sedra and Smith, Microelectronic Circuits); kT/q from the CODATA constants
in scipy.constants; VBE(on) at the datasheet's test current (Darlington datasheets).
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from scipy import constants

from tradeoff.analysis import Uncertain

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = ["thermal_voltage_v", "NEWTON_STEPS", "darlington_vbe_v", "base_current_a", "darlington_hold_closed_s",
           "vbe_at_v", "hfe_at", "hfe_spread"]


def thermal_voltage_v(temp_c) -> np.ndarray:
    """Thermal voltage kT/q [V] at `temp_c` [degC] (CODATA constants from scipy.constants)."""
    return constants.k * (np.asarray(temp_c, dtype=float) + constants.zero_Celsius) / constants.e


NEWTON_STEPS = 14
"""Newton steps for the base current at a given capacitor voltage (converges to machine precision)."""


def darlington_vbe_v(ib_a, hfe, vbe_on_v, test_a, n, vt_v, sat_a) -> np.ndarray:
    """Both junctions' drop at base current ib_a [A]: VBE(on) + 2·n·Vt·ln(min(hFE·IB, I_sat)/I_test) [V]."""
    return vbe_on_v + 2 * n * vt_v * np.log(np.minimum(hfe * ib_a, sat_a) / test_a)


def base_current_a(v, r_ohm, hfe, vbe_on_v, test_a, n, vt_v, sat_a, steps: int = NEWTON_STEPS) -> np.ndarray:
    """Base current [A] at which IB·r + VBE(IB) equals the capacitor voltage v [V].

    Saturated (v above the saturation point): IB = (v - VBE_sat)/r. Otherwise Newton in u = ln IB on
    f(u) = e^u·r + VBE(e^u) - v, convex and increasing, started right of the root: monotone convergence.
    A voltage below the junction law's reach gives a vanishing (not negative) current.
    """
    v, r_ohm, hfe, vbe_on_v, vt_v, sat_a = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in
                                                                (v, r_ohm, hfe, vbe_on_v, vt_v, sat_a)))
    ib_sat = sat_a / hfe
    drop_sat = vbe_on_v + 2 * n * vt_v * np.log(sat_a / test_a)
    out = np.maximum(v - drop_sat, 0.0) / r_ohm
    todo = v < ib_sat * r_ohm + drop_sat
    if todo.any():
        v, r, vbe, slope, cap = v[todo], r_ohm[todo], vbe_on_v[todo], 2 * n * vt_v[todo], np.log(ib_sat[todo])
        k = np.log(hfe[todo] / test_a)
        u = np.minimum(cap, np.log(np.maximum(v, 1e-12) / r))
        for _ in range(steps):
            e = np.exp(u)
            u = u - (e * r + vbe + slope * (u + k) - v) / (e * r + slope)
        out[todo] = np.exp(np.minimum(u, cap))
    return out


def darlington_hold_closed_s(c_f, r_ohm, ib_start_a, ib_end_a, ib_sat_a, n, vt_v, leak_a) -> np.ndarray:
    """Closed-form discharge time [s] from base current ib_start_a to ib_end_a with a constant leakage.

    Saturated part (fixed drop): C·r·ln((I0 + IL)/(Is + IL)). Junction-law part, with
    dV = (r + 2nVt/I) dI and i = I + IL: C·[r·ln((Ia + IL)/(I1 + IL)) + (2nVt/IL)·(ln(1 + IL/I1) - ln(1 + IL/Ia))],
    Ia = min(I0, Is); the IL -> 0 limit of the last term is 2nVt·(1/I1 - 1/Ia). Exact for the model's
    junction law without a shunt (with n = 0 it is the textbook RC exponential).
    """
    i0, i1, i_s, leak = (np.asarray(a, dtype=float) for a in (ib_start_a, ib_end_a, ib_sat_a, leak_a))
    ia = np.minimum(i0, i_s)
    sat = r_ohm * np.log((np.maximum(i0, i_s) + leak) / (i_s + leak))
    safe = np.where(leak > 0, leak, 1.0)
    junction_term = np.where(leak > 0, (np.log1p(leak / i1) - np.log1p(leak / ia)) / safe, 1 / i1 - 1 / ia)
    linear = r_ohm * np.log((ia + leak) / (i1 + leak)) + 2 * n * vt_v * junction_term
    return np.where(i0 > i1, c_f * (sat + np.where(ia > i1, linear, 0.0)), 0.0)


def vbe_at_v(vbe_25c_v, tempco_v_per_k, temp_c):
    """Base-emitter drop at `temp_c` [degC] from its 25 degC value [V] with its tempco [V/K] (about
    -2 mV/K per junction, Sedra and Smith)."""
    return vbe_25c_v + tempco_v_per_k * (np.asarray(temp_c, dtype=float) - 25.0)


def hfe_at(hfe_25c, tempco_per_k, temp_c):
    """Current gain at `temp_c` [degC] from its 25 degC value: hFE·exp(tempco·(T − 25)) (tempco [1/K],
    the class datasheets' gain-against-temperature curves read as an exponential)."""
    return hfe_25c * np.exp(tempco_per_k * (np.asarray(temp_c, dtype=float) - 25.0))


def hfe_spread(part: "Part", what: str) -> Uncertain:
    """hFE of a bipolar class at 25 degC as a spread quantity: log-normal between its datasheet limits,
    median hfe_typ."""
    return Uncertain(part.value("hfe_typ", ""), part.value("hfe_min", ""), part.value("hfe_max", ""),
                     dist="lognormal", note=f"{what} {part.id}: hFE at 25 degC, log-normal between the limits")
