"""Start networks of an RC hold: push-button charge and the power-on PNP pulse, and
the power-on RC that releases an IC's reset pin.

Arrays in, arrays out (SI units); the circuit analysis is the standard one for a bipolar
switch driven by an RC-coupled base (Sedra and Smith, Microelectronic Circuits: the BJT as a
switch and as a current source), solved here in closed form with one bisection.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.special import lambertw

__all__ = ["CHARGE_FRACTION_MIN", "CHARGE_TIME_CONSTANTS", "button_start_v", "StartPulse", "pnp_base_currents",
           "power_on_start", "charge_window_s",
           "power_on_release_s"]

CHARGE_FRACTION_MIN = 0.95
"""Design rule: the start must charge the hold capacitor to at least 95 % of its final voltage (common practice)."""

CHARGE_TIME_CONSTANTS = -math.log(1 - CHARGE_FRACTION_MIN)
"""Charge time constants that reach CHARGE_FRACTION_MIN: ln 20 = 3.00."""


def button_start_v(supply_v, drop_v) -> np.ndarray:
    """Hold-capacitor voltage after a push-button start [V]: supply minus the diode or switch drop."""
    return np.maximum(np.asarray(supply_v, dtype=float) - drop_v, 0.0)


@dataclass(frozen=True)
class StartPulse:
    """What a power-on start pulse does to the hold capacitor (arrays over samples).

    pulse_s: time from power-on until the PNP turns off, which adds to the delay [s];
    saturated_s: time the PNP stays saturated (charging through the charge resistor) [s];
    peak_v: hold-capacitor voltage when the PNP turns off [V]; final_v: the voltage a long
    pulse would reach (supply minus VCE(sat) minus the load's drop across the charge resistor) [V].
    """

    pulse_s: np.ndarray
    saturated_s: np.ndarray
    peak_v: np.ndarray
    final_v: np.ndarray

    @property
    def charge_frac(self) -> np.ndarray:
        """Fraction of the final voltage reached (design rule: >= CHARGE_FRACTION_MIN)."""
        return np.divide(self.peak_v, self.final_v, out=np.zeros_like(self.peak_v), where=self.final_v > 0)


def pnp_base_currents(supply_v, r_start, r_be, veb_v):
    """Base-network currents of the start PNP: IB(t) = a·exp(-t/τs) - b [A] (a, b returned)."""
    a = np.maximum(np.asarray(supply_v, dtype=float) - veb_v, 0.0) / r_start
    b = veb_v / r_be
    return a, b


def power_on_start(supply_v, r_start, c_start, r_be, r_charge, c_hold, hfe, veb_v, vce_sat_v,
                   load_a, iterations: int = 32) -> StartPulse:
    """Power-on start by a PNP stage (vectorised over samples).

    Circuit: PNP emitter at the supply, base pulled up by r_be and pulled down through r_start in
    series with c_start (discharged at power-on); collector charges the hold capacitor c_hold
    through r_charge. The base current IB(t) = a·exp(-t/τs) - b with a = (V - VEB)/r_start,
    b = VEB/r_be, τs = r_start·c_start, so the PNP turns off at pulse_s = τs·ln(a/b).
    While hFE·IB exceeds what the capacitor takes, the PNP is saturated and the capacitor charges
    as V_f·(1 - exp(-t/τc)), τc = r_charge·c_hold, V_f = V - VCE(sat) - r_charge·load_a; the
    saturated phase ends at the root of hFE·IB(t) = (V_f/r_charge)·exp(-t/τc) + load_a (bisection).
    From there to the turn-off the PNP is a decaying current source; its charge less the load's
    (load_a: the hold network's discharge current near V_f [A]) moves the voltage to peak_v.

    supply_v [V], r_start, r_be, r_charge [ohm], c_start, c_hold [F], hfe (PNP), veb_v, vce_sat_v [V].
    """
    supply_v, r_start, c_start, c_hold, hfe, load_a = np.broadcast_arrays(
        *(np.asarray(v, dtype=float) for v in (supply_v, r_start, c_start, c_hold, hfe, load_a)))
    a, b = pnp_base_currents(supply_v, r_start, r_be, veb_v)
    tau_s, tau_c = r_start * c_start, r_charge * c_hold
    on = a > b
    pulse = np.where(on, tau_s * np.log(np.where(on, a / b, 1.0)), 0.0)
    final = np.maximum(supply_v - vce_sat_v - r_charge * load_a, 0.0)

    def excess(t):
        return hfe * (a * np.exp(-t / tau_s) - b) - final / r_charge * np.exp(-t / tau_c) - load_a

    lo, hi = np.zeros_like(pulse), pulse.copy()
    saturated_at_start = excess(lo) >= 0
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        up = excess(mid) >= 0
        lo, hi = np.where(up, mid, lo), np.where(up, hi, mid)
    t_sat = np.where(saturated_at_start & on, lo, 0.0)
    v_sat = final * -np.expm1(-t_sat / tau_c)
    source_charge = hfe * (a * tau_s * (np.exp(-t_sat / tau_s) - np.exp(-pulse / tau_s)) - b * (pulse - t_sat))
    net = source_charge - load_a * (pulse - t_sat)
    peak = np.clip(v_sat + net / c_hold, 0.0, final)
    return StartPulse(pulse_s=pulse, saturated_s=t_sat, peak_v=peak, final_v=final)


def charge_window_s(supply_min_v, supply_max_v, r_start_min, tau_s_min, r_be, r_charge, hfe_min, veb_v,
                    vce_sat_v, load_max_a) -> np.ndarray:
    """Longest charge time the start pulse guarantees at its worst corner [s] (0 if none).

    The PNP stays saturated for CHARGE_TIME_CONSTANTS charge time constants (so the hold capacitor
    reaches CHARGE_FRACTION_MIN) when hFE·IB(3τc) >= exp(-3)·V_f/r_charge + load, i.e. when
    3·τc <= τs·ln(1/ρ), ρ = ((exp(-3)·V_f/r_charge + load)/hFE + b)/a. The return value is the
    right-hand side τs·ln(1/ρ) with a at the lowest supply and largest r_start, V_f at the highest
    supply, the smallest hFE and τs, and the largest load: a bound valid at every corner.
    Compare it with CHARGE_TIME_CONSTANTS·r_charge·c_hold (largest c_hold).
    """
    a, b = pnp_base_currents(supply_min_v, np.asarray(r_start_min, dtype=float), r_be, veb_v)
    final = supply_max_v - vce_sat_v
    need = (math.exp(-CHARGE_TIME_CONSTANTS) * final / r_charge + load_max_a) / hfe_min
    rho = (need + b) / np.maximum(a, 1e-300)
    return np.where(rho < 1, tau_s_min * np.log(1 / np.minimum(rho, 1.0)), 0.0)


def power_on_release_s(tau_s: float, rise_s: float, frac: float) -> float:
    """Time after power-on at which an RC-held pin is released [s].

    The supply ramps linearly from 0 to its final value V in `rise_s` [s] and then stays; a
    capacitor charges through R (time constant `tau_s` [s]) from it. Returns the time at which
    the capacitor voltage reaches `frac` of the (momentary) supply. During the ramp the ratio is
    independent of the slope: (1 − frac)·u = 1 − exp(−u), u = t/tau, solved with the Lambert W
    function; after the ramp, an ordinary exponential approach to V (standard circuit analysis).
    """
    a = 1.0 - frac
    u = 1.0 / a + float(np.real(lambertw(-(1.0 / a) * math.exp(-1.0 / a), 0)))
    if rise_s > 0 and u * tau_s <= rise_s:
        return u * tau_s
    v_at_rise = 0.0 if rise_s <= 0 else (rise_s - tau_s * (1.0 - math.exp(-rise_s / tau_s))) / rise_s
    return max(rise_s, 0.0) + tau_s * math.log((1.0 - v_at_rise) / a)
