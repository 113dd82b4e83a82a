"""Capacitor laws: value band, leakage of aluminium electrolytics, insulation of film and ceramic parts.

Arrays in, arrays out (SI units). A `part` argument is any object with `value(name, unit) -> float`
(a `tradeoff.catalog.Part`); the law reads the class parameters it names from it. Sources: the
aluminium electrolytic datasheets' leakage rule (I <= 0.01·C·V or 3 uA after 2 minutes at rated
voltage and 20 degC; IEC 60384-4 is the sectional specification) and the film and ceramic class
datasheets' insulation rule (R_ins >= R_min, or R_ins·C >= tau for large capacitances).
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

from tradeoff.analysis import Uncertain

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = ["LEAKAGE_REFERENCE_C", "TEMPCO_REFERENCE_C", "INSULATION_TYPICAL_FRAC", "LEAK_LEVEL", "band_frac",
           "electrolytic_leakage_a", "insulation_resistance_ohm", "pair_leakage_limit_a", "power_sum", "level_weights", "leakage_level",
           "CapacitorLeakage", "rc_discharge_time_s"]

LEAKAGE_REFERENCE_C = 20.0
"""Temperature at which the datasheet leakage limit applies [degC] (after 2 min at rated voltage)."""

TEMPCO_REFERENCE_C = 25.0
"""Temperature at which resistor and capacitor values hold their nominal value [degC] (class datasheets)."""

INSULATION_TYPICAL_FRAC = 0.1
"""Leakage of a typical film or ceramic part as a fraction of the one its guaranteed minimum
insulation resistance allows (from memory: real parts measure about ten times the minimum)."""

LEAK_LEVEL = "leak_level"
"""Name of the uncertain leakage level: -1 no leakage, 0 a typical part, +1 the datasheet limit."""


def band_frac(tolerance_frac, tempco_per_k, ambient_min_c: float, ambient_max_c: float, voltage_coefficient_per_v=0.0,
              volts: float = 0.0):
    """Half-width of a resistor's or capacitor's value band [fraction]: tolerance plus tempco times the
    largest distance of the ambient range from 25 degC, plus a resistor's voltage coefficient [1/V] times
    the largest voltage across it [V] (MIL-STD-202 method 309 defines the coefficient as the relative change
    of resistance per volt between 10 % and 100 % of the rated voltage). The class datasheets give both
    coefficients as bounds (the tempco without sign; thick film's resistance falls with voltage), so each
    widens the band symmetrically: a conservative fold."""
    swing = max(abs(ambient_min_c - TEMPCO_REFERENCE_C), abs(ambient_max_c - TEMPCO_REFERENCE_C))
    return tolerance_frac + tempco_per_k * swing + voltage_coefficient_per_v * volts


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
        (the limit: never below 1, so below 20 degC it stays at the 20 degC guarantee, which is all a
        datasheet promises; a typical part follows the law both ways: real parts leak less when cold)
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
    rise = temp_c - LEAKAGE_REFERENCE_C
    current = limit * (v_applied / v_rated) ** exponent * np.exp2((rise if typical else np.maximum(rise, 0.0)) / doubling_k)
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


def pair_leakage_limit_a(part, first_f, second_f, rated_v, pairing: str = "parallel") -> np.ndarray:
    """Leakage limit at rated voltage and 20 degC of two capacitors of one class [A] (second_f = 0: one part).

    first_f, second_f: the parts' capacitances [F]; rated_v [V]; pairing 'parallel' or 'series'.
    Parallel: the parts leak side by side, so the limits add, each part's at its own value:
        electrolytic  I = max(k·C1·Vr, I0) + max(k·C2·Vr, I0)  (the floor counts twice when both sit on it)
        film, ceramic I = Vr/R1 + Vr/R2,  Ri = min(R_min, tau/Ci)
    Series (film): the same DC current crosses both insulation resistances, I = Vr/(R1 + R2). In the
    time-constant regime R1 + R2 = tau·(1/C1 + 1/C2) = tau/C_series: the single-part law at the series value;
    on the fixed minimum the sum exceeds it, so the single law at the total is an upper bound.
    Both limits are proportional to the total in the proportional regime (k·C·Vr above the floor, tau/C below
    R_min), where a pair leaks exactly as one part of its total value; the voltage and temperature laws of
    `electrolytic_leakage_a` scale every part alike.
    """
    first_f, second_f = np.asarray(first_f, dtype=float), np.asarray(second_f, dtype=float)
    has_second = second_f > 0
    if part.fields.get("dielectric") == "electrolytic":
        def limit(c):
            return np.maximum(part.value("leakage_k", "A/(F*V)") * c * rated_v, part.value("leakage_floor", "A"))
        return limit(first_f) + np.where(has_second, limit(second_f), 0.0)
    first_ohm = insulation_resistance_ohm(first_f, part)
    second_ohm = insulation_resistance_ohm(np.where(has_second, second_f, 1.0), part)
    if pairing == "series":
        return rated_v / (first_ohm + np.where(has_second, second_ohm, 0.0))
    return rated_v / first_ohm + np.where(has_second, rated_v / second_ohm, 0.0)


_HORNER_MAX_EXPONENT = 4
"""Largest integer exponent `power_sum` evaluates by nested products instead of pow."""


def power_sum(v, terms) -> np.ndarray:
    """Sum of power laws Σ c·v**n over `terms` = ((n, c), ...) (c broadcasts against v).

    Equal exponents are merged; small non-negative integer exponents are evaluated by Horner's rule
    in one output array (a·v³ + b·v as ((a·v)·v + b)·v: four array operations, no pow), others by pow.
    """
    v = np.asarray(v, dtype=float)
    merged: dict[float, Any] = {}
    for n, c in terms:
        merged[n] = merged[n] + c if n in merged else c
    if not all(float(n).is_integer() and 0 <= n <= _HORNER_MAX_EXPONENT for n in merged):
        return sum(c * v ** n for n, c in merged.items())
    top = int(max(merged))
    out = np.empty(np.broadcast_shapes(v.shape, *(np.shape(c) for c in merged.values())))
    if top == 0:
        out[...] = merged[0]
        return out
    np.multiply(v, merged[top], out=out)
    for k in range(top - 1, -1, -1):
        if k in merged:
            out += merged[k]
        if k > 0:
            out *= v
    return out


def level_weights(level, typical, limit) -> tuple[np.ndarray, np.ndarray]:
    """Split a leakage level in [-1, 1] into (typical part, limit part) currents [A].

    -1 gives (0, 0); 0 gives (typical, 0); +1 gives (0, limit); linear in between.
    """
    level = np.clip(np.asarray(level, dtype=float), -1.0, 1.0)
    return np.where(level <= 0, 1 + level, 1 - level) * typical, np.maximum(level, 0.0) * limit


def leakage_level(note: str) -> Uncertain:
    """A leakage level as a spread quantity: normal about a typical part (0), the limit (+1) at 3 sigma."""
    return Uncertain(0.0, -1.0, 1.0, dist="normal", unit="", note=f"{note}: -1 none, 0 typical part, "
                     "+1 datasheet limit (normal, limit at 3 sigma)")


class CapacitorLeakage:
    """Leakage current of a hold capacitor against its voltage, at a leakage level in [-1, 1].

    Level -1: no leakage; 0: a typical part; +1: the datasheet limit; in between a linear blend
    (0 to 1 blends typical into limit). Electrolytic: tradeoff.electrolytic_leakage_a
    (0.01·C·V or 3 µA at rated voltage and 20 degC, the class's voltage and temperature laws).
    Film and ceramic: V / R_ins with R_ins = tradeoff.insulation_resistance_ohm (its
    guaranteed minimum) for the limit, INSULATION_TYPICAL_FRAC of that current for a typical part
    (no temperature law: insulation leakage is far below the hold currents).

    Every case is a sum of two power laws I(V) = a_typ·V^n_typ + a_lim·V^n_lim (V in volts), whose
    coefficients are computed once per sample so the discharge integral stays fast. c_f and
    rated_v may be arrays (one per candidate) of one part class.
    """

    def __init__(self, part: "Part", c_f, rated_v):
        self.part = part
        self.c_f, self.rated_v = np.asarray(c_f, dtype=float), np.asarray(rated_v, dtype=float)
        self.electrolytic = part.fields.get("dielectric") == "electrolytic"
        if self.electrolytic:
            self.n_typ = part.value("leakage_voltage_exponent", "")
            self.n_lim = part.value("leakage_voltage_exponent_limit", "")
        else:
            self.n_typ = self.n_lim = 1.0
            self.insulation_ohm = insulation_resistance_ohm(self.c_f, part)

    def limits_at_rated_a(self, temp_c) -> tuple[np.ndarray, np.ndarray]:
        """(typical, limit) leakage at rated voltage and `temp_c` [degC] [A]."""
        temp_c = np.asarray(temp_c, dtype=float)
        if self.electrolytic:
            limit = electrolytic_leakage_a(self.c_f, self.rated_v, self.rated_v, temp_c, self.part)
            typical = electrolytic_leakage_a(self.c_f, self.rated_v, self.rated_v, temp_c, self.part, typical=True)
            return typical, limit
        limit = self.rated_v / self.insulation_ohm + 0 * temp_c
        return INSULATION_TYPICAL_FRAC * limit, limit

    def coefficients(self, temp_c, level) -> tuple[np.ndarray, np.ndarray]:
        """(a_typ, a_lim) of I(V) = a_typ·V^n_typ + a_lim·V^n_lim [A/V^n] at `temp_c` [degC], `level`."""
        typ, lim = self.limits_at_rated_a(temp_c)
        typ, lim = level_weights(level, typ, lim)
        return typ / self.rated_v ** self.n_typ, lim / self.rated_v ** self.n_lim

    def current_a(self, v, a_typ, a_lim, scratch: bool = False) -> np.ndarray:
        """Leakage [A] at capacitor voltage v [V] >= 0 with coefficients from `coefficients`.

        scratch: v is the caller's temporary array, which may be clipped at 0 V in place.
        """
        v = np.asarray(v, dtype=float)
        v = np.maximum(v, 0.0, out=v if scratch and v.ndim else None)
        return power_sum(v, ((self.n_typ, a_typ), (self.n_lim, a_lim)))

    def uncertain(self) -> Uncertain:
        """The leakage level as a spread quantity (normal about a typical part, the limit at 3 sigma)."""
        what = "leakage rule" if self.electrolytic else "minimum insulation resistance"
        return leakage_level(f"hold capacitor {self.part.id} ({what})")

    def basis_text(self) -> str:
        """Which leakage figure the worst case and the nominal use, in words (for an 'info' finding)."""
        if self.electrolytic:
            text = (f"hold capacitor leakage ({self.part.id}): datasheet limit max(k·C·Vr, floor) scaled by "
                    f"(V/Vr)^{self.n_lim:g} and the temperature law for the worst case; a typical part "
                    f"({self.part.value('leakage_typical_frac', ''):g} of the limit, (V/Vr)^{self.n_typ:g}) "
                    "for the nominal")
        else:
            text = (f"hold capacitor leakage ({self.part.id}): V / minimum insulation resistance "
                    f"({float(np.min(self.insulation_ohm)) / 1e9:.3g} GΩ) for the worst case; {INSULATION_TYPICAL_FRAC:g} of it "
                    "for nominal")
        return text


def rc_discharge_time_s(c_f, r_ohm, v_start, v_end, leak_a) -> np.ndarray:
    """Time for C to discharge through R with a constant extra current leak_a [A] from v_start to v_end [V] [s].

    C dV/dt = -(V/R + IL) gives t = R·C·ln((V0 + IL·R)/(V1 + IL·R)) (0 where V0 <= V1; the textbook RC
    exponential at IL = 0).
    """
    r, v0, v1, il = (np.asarray(a, dtype=float) for a in (r_ohm, v_start, v_end, leak_a))
    return np.where(v0 > v1, c_f * r * np.log((v0 + il * r) / (v1 + il * r)), 0.0)
