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

from tradeoff.devices.quadrature import evaluate_in_chunks

__all__ = ["threshold_factor", "clamped_period_factor", "square_law_excess", "inverter_factor", "rc_period_s", "rc_half_periods_s", "rc_junction_v", "rc_running_current_a",
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


_BISECTIONS = 48
"""Bisection steps of a threshold crossing: the bracket (tens of Rt·Ct) shrinks below 1e-12 of Rt·Ct."""


def _crossing(value_at, lo, hi, target, steps: int = _BISECTIONS):
    """First time in [lo, hi] where a monotone `value_at(t)` reaches `target` (vectorised bisection)."""
    rising = value_at(hi) > value_at(lo)
    for _ in range(steps):
        mid = 0.5 * (lo + hi)
        below = value_at(mid) < target
        go_up = below == rising
        lo, hi = np.where(go_up, mid, lo), np.where(go_up, hi, mid)
    return 0.5 * (lo + hi)


def _falling_half(q0, v, g1, gs, g2, cp, clamp):
    """One half-period of the clamped oscillator in units of Rt·Ct, VDD = 1, first inverter's output low
    (source 0 through 1/g1 = 1 + Ro/Rt), second's high (source 1 through 1/g2 = Ro/Rt): the input node (pin
    capacitance cp = Cp/Ct behind Rs = 1/gs) starts at the threshold v, the Ct voltage q0 = V(o2) − V(x).
    Returns (duration, Ct voltage at the end)."""
    s = g1 + gs + g2
    a, b = -g2 * (g1 + gs) / s, -g2 * gs / s             # dq/dt = a·(q − 1) + b·vin
    c, d = -gs * g2 / (cp * s), -gs * (g1 + g2) / (cp * s)  # dvin/dt = c·(q − 1) + d·vin
    tr, det = a + d, a * d - b * c
    fast = 0.5 * (tr - np.sqrt(tr * tr - 4.0 * det))
    slow = det / fast

    def modes(e_q, e_in):
        """Coefficients of vin(t) = α·e^(fast·t) + β·e^(slow·t) and q(t) − 1 likewise."""
        din, dq = c * e_q + d * e_in, a * e_q + b * e_in
        al, aq = (din - slow * e_in) / (fast - slow), (dq - slow * e_q) / (fast - slow)
        return al, e_in - al, aq, e_q - aq

    def vin_at(coef, t):
        """Input voltage at time t."""
        return coef[0] * np.exp(fast * t) + coef[1] * np.exp(slow * t)

    def q_at(coef, t):
        """Ct voltage at time t."""
        return 1.0 + coef[2] * np.exp(fast * t) + coef[3] * np.exp(slow * t)

    horizon = 60.0 / -slow
    # segment A: the input rises from v behind the jumped Rt-Ct junction, to its peak or to the clamp
    coef = modes(q0 - 1.0, v)
    al, be = coef[0], coef[1]
    ratio = np.maximum(-slow * be / (fast * al), 1e-300)   # below 1: the peak lies after the jump
    t_peak = np.maximum(np.log(ratio) / (fast - slow), 0.0)
    peak = vin_at(coef, t_peak)
    clamped = peak > clamp
    t_a = _crossing(lambda t: vin_at(coef, t), np.zeros_like(t_peak), t_peak, clamp)
    q_a = q_at(coef, t_a)
    # segment B: input held at the clamp; Ct discharges through Rt and Rs until the junction falls to the clamp
    q_inf = 1.0 - gs * clamp / (g1 + gs)
    q_end = 1.0 - clamp * (g1 + g2) / g2
    t_b = s / (g2 * (g1 + gs)) * np.log(np.maximum((q_inf - q_a) / (q_inf - q_end), 1.0))
    # segment C: the input leaves the clamp and falls behind the junction to the threshold
    coef_c = modes(q_end - 1.0, np.full_like(q_end, clamp))
    t_c = _crossing(lambda t: vin_at(coef_c, t), np.zeros_like(t_b), np.zeros_like(t_b) + horizon, v)
    q_c = q_at(coef_c, t_c)
    # never clamped: the input peaks below the clamp and falls back to the threshold
    t_u = _crossing(lambda t: vin_at(coef, t), t_peak, t_peak + horizon, v)
    q_u = q_at(coef, t_u)
    return np.where(clamped, t_a + t_b + t_c, t_u), np.where(clamped, q_c, q_u)


def clamped_period_factor(vt_frac, rs_ratio, clamp_frac, cp_ratio, ro_n_ratio, ro_p_ratio, iterations: int = 6):
    """T/(Rt·Ct) of the two-inverter RC oscillator with the input protection (standard circuit analysis).

    vt_frac: inverter threshold Vt/VDD; rs_ratio: Rs/Rt; clamp_frac: clamp diode drop Vd/VDD (diodes from
    the input pin to both rails conduct beyond VDD + Vd and −Vd); cp_ratio: pin plus stray capacitance at
    the input, Cp/Ct; ro_n_ratio, ro_p_ratio: the inverters' output resistance low and high, Ro/Rt.
    Exact for ideal clamps and linear output resistances: each half-period is a linear two-capacitor (Ct,
    Cp) network in three segments (input catching up with the jumped junction, input clamped while Ct
    discharges through Rt ∥ Rs, input lagging the junction down to the threshold); the periodic Ct
    voltage is found by iterating the period map (it contracts by about e^−2 each period).
    Limits: clamp_frac → ∞, cp_ratio, ro → 0 give `threshold_factor`; with the ideal clamp at Rs = 2·Rt
    and Vt = VDD/2 the factor is 2.13 (Rs ∥ Rt speeds the clamped part of each half-period)."""
    v, rs, d, cp, rn, rp = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in
                                                 (vt_frac, rs_ratio, clamp_frac, cp_ratio, ro_n_ratio, ro_p_ratio)))
    cp, rn, rp = np.maximum(cp, 1e-9), np.maximum(rn, 1e-9), np.maximum(rp, 1e-9)
    gs = 1.0 / rs
    q = -v.copy()
    for _ in range(iterations):
        # falling half (first output low through Ro_n, second high through Ro_p), then the mirrored rising half
        t1, q1 = _falling_half(q, v, 1.0 / (1.0 + rn), gs, 1.0 / rp, cp, 1.0 + d)
        t2, q2 = _falling_half(-q1, 1.0 - v, 1.0 / (1.0 + rp), gs, 1.0 / rn, cp, 1.0 + d)
        q = -q2
    return t1 + t2


_TAIL_POINTS = 2000
"""Grid points of the input voltage over one half-period's end (VDD down to the pull-down threshold)."""
_TAIL_CHUNK = 512
"""Operating points whose half-period ends are evaluated together: temporaries of 8 MB each, which the
allocator reuses (one pass over a whole table's points allocates and faults in fresh pages, 2 to 3 times
slower)."""


def _square_law_half(vt_drive, vt_load, load_ratio, drive, ro_drive, ro_load, vm):
    """Extra duration [Rt·Ct] of the half-period that ends with the first inverter's output low, from
    square-law transistors over the linear-output law (see `square_law_excess`); VDD = 1, currents in units
    of the pull-down's KP·VDD²."""
    vt_drive, vt_load, load_ratio, drive, ro_drive, ro_load, vm = (np.asarray(a, dtype=float)[..., None] for a in
                                                                  (vt_drive, vt_load, load_ratio, drive, ro_drive, ro_load, vm))
    x = 1.0 - np.linspace(0.0, 1.0, _TAIL_POINTS) * (1.0 - vt_drive)   # input (= junction) from VDD down
    # first inverter: pull-down in triode (gate x) sinks the saturated pull-up's current plus Rt's (x − o1)/Rt
    pull_up = 0.5 * load_ratio * np.maximum(1.0 - x - vt_load, 0.0) ** 2
    b = x - vt_drive + 1.0 / drive
    disc1 = b * b - 2.0 * (pull_up + x / drive)
    o1 = b - np.sqrt(np.maximum(disc1, 0.0))
    rt_current = (x - o1) / drive
    # second inverter (gate o1): its pull-up in triode sources Rt's current into Ct plus its pull-down's
    headroom = 1.0 - o1 - vt_load
    disc2 = headroom ** 2 - 2.0 * (0.5 * np.maximum(o1 - vt_drive, 0.0) ** 2 + rt_current) / load_ratio
    o2 = 1.0 - headroom + np.sqrt(np.maximum(disc2, 0.0))
    q = o2 - x                                                          # Ct voltage on the quasi-static branch
    steps = np.diff(q, axis=-1)
    valid = (disc1 >= 0) & (o1 <= x - vt_drive) & (disc2 >= 0)
    # the branch ends where Ct's voltage stops rising with falling input: the loop gain reaches 1 and the
    # circuit switches (both triode conditions hold until then)
    on_branch = np.logical_and.accumulate(valid[..., 1:] & (steps > 0), axis=-1)
    gap = 0.5 * ((x - o1)[..., 1:] + (x - o1)[..., :-1])               # Rt's voltage: dq/dt = (x − o1)/(Rt·Ct)
    soft = np.sum(np.where(on_branch, steps / gap, 0.0), axis=-1)
    linear = (1.0 + ro_drive[..., 0] + ro_load[..., 0]) * np.log(1.0 / vm[..., 0])
    return soft - linear


def square_law_excess(vtn_frac, vtp_frac, kp_ratio, drive, ro_n_ratio, ro_p_ratio):
    """Extra T/(Rt·Ct) of unbuffered CMOS inverters over inverters that switch sharply at their threshold.

    vtn_frac, vtp_frac: the transistors' threshold voltages over VDD (|Vtp| for the p-channel); kp_ratio: the
    p-channel's KP·W/L over the n-channel's; drive: the n-channel's KP·W/L·VDD·Rt. Near the end of each
    half-period both transistors of the first inverter conduct: its output leaves the rail and the junction
    approaches a moving target (slower), while the second inverter's output leaves its rail too (faster);
    the period ends where the loop gain reaches 1. Long-channel square law in triode and saturation
    (Sedra and Smith, Microelectronic Circuits, the CMOS inverter's transfer characteristic), quasi-static
    (the input follows the junction). Add to `clamped_period_factor` at the threshold
    Vm = (VDD − |Vtp| + Vtn·√(1/kp_ratio))/(1 + √(1/kp_ratio)), whose output resistances this replaces over
    the period's end. With thresholds a fixed number of volts, the excess falls with supply: the
    period's supply dependence. Not modelled: the lag of the input behind the junction at the switching
    point (a longer passage, from Rs·Cp) and the Ct charge left at the switching point (a shorter next
    half-period); they change the period by about ±1 % each in the ngspice comparison."""
    root = np.sqrt(1.0 / np.asarray(kp_ratio, dtype=float))
    vm = (1.0 - np.asarray(vtp_frac) + np.asarray(vtn_frac) * root) / (1.0 + root)
    falling = _square_law_half(vtn_frac, vtp_frac, kp_ratio, drive, ro_n_ratio, ro_p_ratio, vm)
    rising = _square_law_half(vtp_frac, vtn_frac, 1.0 / np.asarray(kp_ratio, dtype=float),
                              np.asarray(drive) * kp_ratio, ro_p_ratio, ro_n_ratio, 1.0 - vm)
    return falling + rising


_NEVER_CLAMPED = 1e3
"""Clamp drop over VDD that the input never reaches: `clamped_period_factor` without the clamp."""


def inverter_factor(vdd_v, mos_vt_v, kp_a_per_v2, rt_ohm):
    """T/(Rt·Ct) of the two-inverter oscillator without clamp or pin capacitance, at symmetric transistor
    thresholds mos_vt_v [V] and KP·W/L kp_a_per_v2 [A/V²] of both channel types: the output resistance
    1/(KP·(VDD − Vt)) (triode at a small drain voltage) and the square-law excess (Sedra and Smith,
    Microelectronic Circuits: the long-channel MOSFET and the CMOS inverter). Its ratio between two
    supplies is the period's supply dependence."""
    vdd, vt = np.asarray(vdd_v, dtype=float), np.asarray(mos_vt_v, dtype=float)
    ro = 1.0 / (kp_a_per_v2 * (vdd - vt) * np.asarray(rt_ohm, dtype=float))
    drive = kp_a_per_v2 * vdd * np.asarray(rt_ohm, dtype=float)
    # matched channels switch at VDD/2 and their two half-periods mirror each other: one half, twice
    # (`square_law_excess` at equal thresholds, KP ratio 1 and equal output resistances)
    frac, drive, ro = np.broadcast_arrays(vt / vdd, drive, ro)
    excess = evaluate_in_chunks(lambda p: 2.0 * _square_law_half(p["v"], p["v"], 1.0, p["drive"], p["ro"], p["ro"], 0.5),
                                {"v": frac.ravel(), "drive": drive.ravel(), "ro": ro.ravel()}, _TAIL_CHUNK)
    return clamped_period_factor(0.5, 1.0, _NEVER_CLAMPED, 0.0, ro, ro) + excess.reshape(frac.shape)
