"""Oscillator laws: the two-inverter RC oscillator, the tuning-fork crystal's parabolic temperature
curve, and the temperature boxes of a trimmed on-chip RC oscillator.

Arrays in, arrays out (SI units). Sources: the two-inverter RC oscillator by standard circuit
analysis, T = Rt·Ct·F(Vt/VDD) with F(v) = ln((1+v)/v) + ln((2−v)/(1−v)), F(1/2) = 2·ln 3 = 2.197,
scaled to the class's datasheet constant k (4060-type counter datasheets); the 32.768 kHz crystal
f = f0·(1 + tolerance + aging + β·(T − T0)²), β < 0 (tuning-fork crystal datasheets); the trimmed RC
oscillator's nested accuracy boxes (microcontroller datasheets' electrical characteristics).
"""
from __future__ import annotations

import numpy as np

__all__ = ["threshold_factor", "rc_period_s", "rc_half_periods_s", "rc_junction_v", "rc_running_current_a",
           "crystal_frequency", "crystal_period_s", "rc_band"]


def threshold_factor(vt_frac):
    """F(v) = T/(R·C) of a two-inverter RC oscillator with threshold v = Vt/VDD (0 < v < 1)."""
    v = np.asarray(vt_frac, dtype=float)
    return np.log((1.0 + v) / v) + np.log((2.0 - v) / (1.0 - v))


def rc_period_s(rt_ohm, ct_f, k, vt_frac, vt_typ_frac=0.5):
    """Oscillator period [s]: the datasheet's k·Rt·Ct at the typical threshold, scaled by F(v)/F(v_typ)."""
    return k * np.asarray(rt_ohm) * ct_f * threshold_factor(vt_frac) / threshold_factor(vt_typ_frac)


def rc_half_periods_s(tau_s, vdd_v, vt_v) -> tuple[float, float]:
    """Durations [s] of the two half-periods of an ideal two-inverter RC oscillator with time constant
    Rt·Ct = tau_s, supply vdd_v and threshold vt_v [V]: the Rt–Ct junction rises from Vt − VDD to Vt
    in tau·ln((2·VDD − Vt)/(VDD − Vt)), then falls from Vt + VDD to Vt in tau·ln((VDD + Vt)/Vt)
    (standard circuit analysis; their sum is tau·F(Vt/VDD))."""
    return tau_s * np.log((2 * vdd_v - vt_v) / (vdd_v - vt_v)), tau_s * np.log((vdd_v + vt_v) / vt_v)


def rc_junction_v(t_s, tau_s, vdd_v, vt_v) -> np.ndarray:
    """Voltage [V] at the Rt–Ct junction of an ideal two-inverter RC oscillator at times t_s [s] from a
    switching instant (junction just jumped to Vt − VDD): exponential approach to VDD, then to 0 after
    the jump to Vt + VDD, each ending at the threshold Vt (standard circuit analysis)."""
    t1, t2 = rc_half_periods_s(tau_s, vdd_v, vt_v)
    phase = np.mod(np.asarray(t_s, dtype=float), t1 + t2)
    return np.where(phase < t1, vdd_v - (2 * vdd_v - vt_v) * np.exp(-phase / tau_s),
                    (vdd_v + vt_v) * np.exp(-(phase - t1) / tau_s))


def rc_running_current_a(ct_f, vdd_v, period_s):
    """Supply current of a running two-inverter RC oscillator [A]: the inverters move 2·Ct·VDD of charge
    from the supply each period (standard circuit analysis: Ct's plate swings by VDD twice a period)."""
    return 2.0 * ct_f * vdd_v / period_s


def crystal_frequency(f0_hz, tolerance_frac, aging_frac, k_per_k2, temp_c, turnover_c) -> np.ndarray:
    """Tuning-fork crystal frequency [Hz]: f0 (1 + tolerance + aging + k (T - T0)^2), k [1/K^2] < 0
    (crystal datasheets' parabolic temperature curve)."""
    dt = np.asarray(temp_c, dtype=float) - turnover_c
    return f0_hz * (1.0 + tolerance_frac + aging_frac + k_per_k2 * dt * dt)


def crystal_period_s(f0_hz, tolerance_frac, aging_frac, parabolic_per_k2, turnover_c, ambient_c):
    """Crystal period [s]: 1/(f0·(1 + tolerance + aging + β·(T − T0)²)), the inverse of `crystal_frequency`."""
    return 1.0 / crystal_frequency(f0_hz, tolerance_frac, aging_frac, parabolic_per_k2, ambient_c, turnover_c)


def rc_band(temp_c, tmin_c, tmax_c, lo_frac, hi_frac) -> tuple[np.ndarray, np.ndarray]:
    """Frequency-error band [fraction] of a trimmed RC oscillator at ambient `temp_c` [degC].

    tmin_c, tmax_c, lo_frac, hi_frac: the datasheet's boxes (box i holds over tmin_c[i]..tmax_c[i]).
    At each temperature the narrowest box containing it applies; outside every box the widest
    (callers flag that ambient as out of specification).
    """
    t = np.asarray(temp_c, dtype=float)
    order = np.argsort(np.asarray(hi_frac) - np.asarray(lo_frac), kind="stable")
    inside = [(t >= tmin_c[i]) & (t <= tmax_c[i]) for i in order]
    widest = order[-1]
    lo = np.select(inside, [np.full_like(t, lo_frac[i]) for i in order], lo_frac[widest])
    hi = np.select(inside, [np.full_like(t, hi_frac[i]) for i in order], hi_frac[widest])
    return lo, hi
