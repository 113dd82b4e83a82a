"""Comparator thresholds: a reference divider with a hysteresis resistor from the output, and the
555-class monostable whose comparators sit at 1/3 and 2/3 of the supply.

Arrays in, arrays out (SI units). Sources: nodal analysis of the threshold divider (standard circuit
analysis); the monostable width t = R·C·ln((Vcc − Ix·R)/(Vcc/3 − Ix·R)), 1.0986·R·C at Ix = 0
(555-class timer datasheets, monostable operation, bipolar and CMOS classes alike); input bias and
off-state leakage limits over temperature, exponential between the datasheet's limits at two
temperatures (a silicon junction's reverse leakage doubles about every 10 K: common practice, e.g.
Sedra and Smith, Microelectronic Circuits) and held at the lower temperature's limit below it (no
datasheet promises less).
"""
from __future__ import annotations

import numpy as np

__all__ = ["THRESHOLD_FRAC", "TRIGGER_FRAC", "JUNCTION_LEAKAGE_DOUBLING_K", "LIMIT_REFERENCE_C", "threshold_v",
           "monostable_width_s", "shunted_charge", "limit_over_temperature_a", "doubling_interval_k",
           "input_bias_limit_a", "threshold_node_ohm", "discharge_leakage_a"]

THRESHOLD_FRAC = 2.0 / 3.0
"""555-class threshold comparator level as a fraction of Vcc (555-class datasheets)."""

TRIGGER_FRAC = 1.0 / 3.0
"""555-class trigger comparator level as a fraction of Vcc (555-class datasheets)."""


JUNCTION_LEAKAGE_DOUBLING_K = 10.0
"""Temperature rise that doubles a silicon junction's reverse leakage [K] (common practice; Sedra and Smith)."""

LIMIT_REFERENCE_C = 25.0
"""Temperature of the room-temperature limits in IC datasheets [degC]."""


def limit_over_temperature_a(temp_c, ref_c, ref_a, doubling_k):
    """A leakage or bias limit over temperature [A]: ref_a·2^((T − ref_c)/doubling_k) above ref_c, ref_a at
    and below it (the datasheet limit at ref_c is the least any unit is promised not to exceed).

    temp_c [degC] (array), ref_c [degC], ref_a [A], doubling_k [K] > 0."""
    rise = np.maximum(np.asarray(temp_c, dtype=float) - ref_c, 0.0)
    return ref_a * np.exp2(rise / doubling_k)


def doubling_interval_k(t1_c: float, i1_a: float, t2_c: float, i2_a: float) -> float:
    """Temperature rise that doubles a current given as i1 at t1 and i2 > i1 at t2 > t1 [K]: the exponential
    through both datasheet limits, (t2 − t1)/log2(i2/i1)."""
    return (t2_c - t1_c) / float(np.log2(i2_a / i1_a))


def input_bias_limit_a(part, temp_c):
    """Largest input bias current of a comparator class at temp_c [degC] [A].

    With `bias_room_max` (limit at 25 degC) and `bias_max` at `bias_max_temp` [degC]: the exponential
    through both limits (held at the 25 degC limit below 25 degC, extrapolated above the hot limit's
    temperature with the same slope). A class without a room-temperature limit keeps `bias_max` at every
    temperature (the old, conservative reading).
    """
    hot = part.value("bias_max", "A")
    if not part.has("bias_room_max"):
        return np.full(np.shape(temp_c), hot)
    room, t_hot = part.value("bias_room_max", "A"), part.value("bias_max_temp", "degC")
    if room >= hot:
        return np.full(np.shape(temp_c), hot)
    return limit_over_temperature_a(temp_c, LIMIT_REFERENCE_C, room,
                                    doubling_interval_k(LIMIT_REFERENCE_C, room, t_hot, hot))


def threshold_node_ohm(r_top, r_bottom, r_hyst):
    """Source resistance of the threshold node seen by the comparator's reference input [ohm]:
    R_top ∥ R_bottom ∥ R_hyst (the drain is a low-impedance node while timing)."""
    return 1.0 / (1.0 / r_top + 1.0 / r_bottom + 1.0 / r_hyst)


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


def shunted_charge(r_ohm, ix_a, vcc_v, g_s):
    """(R', Ix') for `monostable_width_s` when a conductance g_s [S] also drains the capacitor to ground.

    C·dv/dt = (Vcc − v)/R − v·G − Ix has the time constant R'·C with R' = R/(1 + R·G) and the final
    value R'·(Vcc/R − Ix) = Vcc − (Ix + Vcc·G)·R', so the width is the constant-current one with R'
    and Ix' = Ix + Vcc·G (standard circuit analysis; exact, and equal to (R, Ix) at G = 0).
    """
    g = np.asarray(g_s, dtype=float)
    return r_ohm / (1.0 + r_ohm * g), ix_a + np.asarray(vcc_v, dtype=float) * g


def discharge_leakage_a(at_25c_a, ambient_c):
    """555-class discharge pin off-state leakage at the ambient [A] from its 25 degC value `at_25c_a` [A]
    (typical or datasheet limit): doubling every 10 K above 25 degC, held below (`limit_over_temperature_a`)."""
    return limit_over_temperature_a(ambient_c, LIMIT_REFERENCE_C, at_25c_a, JUNCTION_LEAKAGE_DOUBLING_K)
