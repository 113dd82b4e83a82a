"""Emitter-coupled (two-transistor) Schmitt trigger: its DC transfer curve, upper and lower trip points,
and the time an RC takes to charge to a trip point against an extra current.

The trigger of Millman and Halkias, Integrated Electronics, and Horowitz and Hill, The Art of
Electronics, solved for the diode law instead of a fixed cut-in voltage: both NPNs forward-active,
IC = IS·exp(VBE/(n·Vt)), IB = IE/(hFE + 1), no Early effect. The upper trip point is the fold
dV_in/dw = 0 of the curve nearest to Q1's cut-off, the falling one the next fold. The charge time is
t = C ∫ dV / i(V) by Gauss–Legendre quadrature in u = -ln(V_s - V) (Abramowitz and Stegun 25.4.29;
the plain RC gives r·C·ln(V_s/(V_s - V_trip))).

Arrays in, arrays out: supply [V], resistors [ohm], gains, saturation currents [A], nvt = n·kT/q [V].
"""
from __future__ import annotations

import numpy as np

from tradeoff.devices.roots import bisect_arrays
from tradeoff.devices.junction import thermal_voltage_v
from tradeoff.devices.quadrature import discharge_integral_s

__all__ = ["saturation_current_a", "transfer_curve", "rising_trip", "falling_trip_v",
           "charge_time_s"]

_FOLD_GRID = np.geomspace(1e-7, 0.6, 64)
"""Distances below Q1's cut-off in Q2's junction voltage where the fold is looked for [V]."""


def saturation_current_a(vbe_on_v, test_a, n, temp_c) -> np.ndarray:
    """Transport saturation current IS [A] from VBE(on) [V] at the test current test_a [A] and temp_c [degC]."""
    return test_a * np.exp(-np.asarray(vbe_on_v, dtype=float) / (n * thermal_voltage_v(temp_c)))


class _Curve:
    """The transfer curve at fixed arguments: its terms that do not depend on w computed once, so the
    bisections of a trip search pay only for what changes with w (same values as `transfer_curve`)."""

    def __init__(self, supply_v, r_e, r_c1, r_1, r_2, hfe1, hfe2, is1, is2, nvt):
        self.r_e, self.is1, self.nvt = r_e, is1, nvt
        self.a1 = hfe1 / (hfe1 + 1)
        self.ie2_scale = is2 * (hfe2 + 1) / hfe2
        self.k = (1 + r_1 / r_c1) / (hfe2 + 1)
        self.g = (1 + r_1 / r_2) / r_c1 + 1 / r_2
        self.d = self.a1 + self.g * r_e
        self.source = supply_v / r_c1

    def trailing(self) -> "_Curve":
        """The same curve with a trailing axis on every term (to evaluate a grid of w per point)."""
        out = object.__new__(_Curve)
        out.__dict__ = {k: np.asarray(v)[..., None] for k, v in self.__dict__.items()}
        return out

    def currents(self, w):
        """(IE1, IE2) [A] at Q2 junction voltage w [V]."""
        ie2 = self.ie2_scale * np.exp(w / self.nvt)
        return (self.source - self.k * ie2 - self.g * (ie2 * self.r_e + w)) / self.d, ie2

    def slope(self, w, ie1, ie2):
        """dV_in/dw at w [V] from the currents there; also the clipped IE1 [A] the input voltage uses."""
        die2 = ie2 / self.nvt
        die1 = (-self.k * die2 - self.g * (die2 * self.r_e + 1)) / self.d
        safe = np.maximum(ie1, 1e-300)
        return self.r_e * (die1 + die2) + self.nvt * die1 / safe, safe

    def input_v(self, ie1, ie2, safe):
        """V_in [V] from the currents (-inf where Q1 is cut off)."""
        return np.where(ie1 > 0, (ie1 + ie2) * self.r_e + self.nvt * np.log(self.a1 * safe / self.is1), -np.inf)


def transfer_curve(w, supply_v, r_e, r_c1, r_1, r_2, hfe1, hfe2, is1, is2, nvt):
    """The Schmitt trigger's DC curve at Q2 junction voltage w [V]: (IE1, IE2 [A], V_in [V], dV_in/dw).

    Node equations (both NPNs active): V_E = (IE1 + IE2)·R_E, V_B2 = V_E + w, Q2's base current
    IE2/(hFE2 + 1) from the divider, Q1's collector current α1·IE1 from the rest of R_C1's current:
    IE1 = (V_s/R_C1 - k·IE2 - g·(IE2·R_E + w)) / (α1 + g·R_E), k = (1 + R_1/R_C1)/(hFE2 + 1),
    g = (1 + R_1/R_2)/R_C1 + 1/R_2. IE1 <= 0 means Q1 is cut off (V_in is then -inf).
    """
    return _on_curve(_Curve(supply_v, r_e, r_c1, r_1, r_2, hfe1, hfe2, is1, is2, nvt), w)


def _on_curve(curve: _Curve, w):
    """(IE1, IE2 [A], V_in [V], dV_in/dw) of `curve` at w [V]."""
    ie1, ie2 = curve.currents(w)
    slope, safe = curve.slope(w, ie1, ie2)
    return ie1, ie2, curve.input_v(ie1, ie2, safe), slope


def _cutoff_w(curve: _Curve, shape) -> np.ndarray:
    """Q2 junction voltage where Q1's emitter current reaches zero [V] (IE1 falls as w rises)."""
    return bisect_arrays(lambda w: curve.currents(w)[0] <= 0, np.zeros(shape), np.full(shape, 1.5), 56)[0]


def _curve_of(args) -> tuple[_Curve, tuple[int, ...]]:
    """The curve of `rising_trip`'s arguments and their broadcast shape."""
    args = tuple(np.asarray(a, dtype=float) for a in args)
    return _Curve(*args), np.broadcast_shapes(*(np.shape(a) for a in args))


def rising_trip(supply_v, r_e, r_c1, r_1, r_2, hfe1, hfe2, is1, is2, nvt, steps: int = 40) -> dict[str, np.ndarray]:
    """Upper trip point of the Schmitt trigger: the fold of the transfer curve nearest to Q1's cut-off.

    Returns v_trip [V] (input where the snap starts), ie1_a [A] (Q1's emitter current there), ve_v
    [V] (emitter node there), regenerative (bool: a fold exists; without one the steepest point of a
    soft transfer curve is returned). All arguments broadcast; supply [V], resistors [ohm], gains,
    saturation currents [A], nvt = n·kT/q [V].
    """
    curve, shape = _curve_of((supply_v, r_e, r_c1, r_1, r_2, hfe1, hfe2, is1, is2, nvt))
    w0 = _cutoff_w(curve, shape)
    grid_w = w0[..., None] - _FOLD_GRID
    wide = curve.trailing()
    slope = wide.slope(grid_w, *wide.currents(grid_w))[0]
    rising = slope > 0
    regenerative = rising.any(axis=-1)
    first = np.where(regenerative, np.argmax(rising, axis=-1), np.argmax(slope, axis=-1))
    hi = _FOLD_GRID[first]
    lo = np.where(regenerative, _FOLD_GRID[np.maximum(first - 1, 0)] * np.where(first > 0, 1.0, 0.1), hi)

    def rises(d):
        """slope < 0 at lo (nearer the cut-off), > 0 at hi"""
        return curve.slope(w0 - d, *curve.currents(w0 - d))[0] > 0
    lo, hi = bisect_arrays(rises, lo, hi, steps, geometric=True)
    ie1, ie2, v_in, _ = _on_curve(curve, w0 - lo)
    return {"v_trip": v_in, "ie1_a": ie1, "ve_v": (ie1 + ie2) * curve.r_e, "regenerative": regenerative}


def falling_trip_v(*args) -> np.ndarray:
    """Lower trip point [V]: the lowest input on the curve's unstable middle, beyond the upper fold
    (same arguments as `rising_trip`; active-region model, used for the hysteresis check)."""
    curve, shape = _curve_of(args)
    w0 = _cutoff_w(curve, shape)
    grid = np.geomspace(1e-7, 1.0, 400)
    ie1, _, v_in, slope = _on_curve(curve.trailing(), w0[..., None] - grid)
    past = np.cumsum(slope > 0, axis=-1) > 0
    return np.min(np.where(past & (ie1 > 0), v_in, np.inf), axis=-1)


def charge_time_s(c_f, r_ohm, supply_v, v_end, extra_a) -> np.ndarray:
    """Time to charge c_f [F] through r_ohm [ohm] from 0 V to v_end [V] against extra_a(V) [A] [s].

    t = C ∫ dV / ((V_s - V)/r - extra(V)) in u = -ln(V_s - V) (dV/du = V_s - V), Gauss–Legendre;
    extra_a(v) receives voltages with a trailing node axis. inf where the current at v_end is not
    positive (the capacitor never gets there); 0 where v_end <= 0.
    """
    c_f, r, vs, v_end = (np.asarray(a, dtype=float) for a in (c_f, r_ohm, supply_v, v_end))
    top = np.clip(v_end, 0.0, vs * (1 - 1e-9))
    ends = ((vs - top) / r - extra_a(top[..., None])[..., 0]) > 0

    def integrand(u):
        headroom = np.exp(-u)
        v = vs[..., None] - headroom
        return headroom / (headroom / r[..., None] - extra_a(v))

    t = discharge_integral_s(c_f, -np.log(vs), -np.log(vs - top), integrand)
    return np.where(ends, t, np.inf)
