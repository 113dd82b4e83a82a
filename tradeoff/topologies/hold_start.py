"""Start network of the transistor RC holds: the hold capacitor's start voltage (push-button through a
diode, or the power-on PNP pulse of `devices.start`), the start capacitor's leakage, the power-on rules
(charge to 95 %, PNP drive and ratings, the PNP kept off after its pulse), the charge window the pulse
guarantees and the pulse length. Functions of the hold topology `topo` (an RcHoldTopology).
"""
from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from tradeoff.devices.capacitor import CapacitorLeakage
from tradeoff.devices.junction import hfe_at, vbe_at_v
from tradeoff.devices.start import (
    CHARGE_FRACTION_MIN, CHARGE_TIME_CONSTANTS, StartPulse, button_start_v, charge_window_s, pnp_base_currents,
    power_on_start,
)
from tradeoff.topologies.base import Finding
from tradeoff.topologies.hold_state import HoldState
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.topologies.base import Design, Topology

__all__ = ["START_PNP_OFF_V", "start_voltage", "start_leakage_a", "start_checks", "start_load_max_a",
           "charge_window", "pulse_length_s"]

START_PNP_OFF_V = 0.3
"""Design rule: the start capacitor's leakage across r_be must stay below 0.3 V so the start PNP stays
off after its pulse (common practice: a silicon junction conducts negligibly below about 0.4 V)."""


def start_voltage(topo: "Topology", design: "Design", s: HoldState) -> tuple[np.ndarray, StartPulse | None]:
    """Start voltage of the hold capacitor [V] and, for the power-on start, its pulse."""
    if not topo.power_on:
        return button_start_v(s.supply_v, topo.diode(design).value("vf", "V")), None
    pnp = topo.pnp(design)
    veb = vbe_at_v(pnp.value("vbe_on_typ", "V"), pnp.value("vbe_tempco", "V/K"), s.temp_c)
    vce = pnp.value("vce_sat", "V")
    top = np.maximum(s.supply_v - vce, 0.0)
    hfe = hfe_at(s.x["start_hfe"], pnp.value("hfe_tempco", "1/K"), s.temp_c)
    pulse = power_on_start(s.supply_v, s.x["r_start"], s.x["c_start"], topo.fixed_ohm(design, "r_be"),
                           topo.fixed_ohm(design, "r_charge"), s.c_f, hfe, veb, vce, topo.discharge_a(s, top))
    return pulse.peak_v, pulse



def start_leakage_a(topo: "Topology", design: "Design", typical: bool, temp_c: float = 25.0, c_f=None, part=None,
                    rated_v=None) -> np.ndarray:
    """Leakage of the start capacitor charged to the supply [A] (it flows through r_be after the pulse)."""
    part = part or topo.value_part(design, "c_start", "cap-ceramic-x7r")
    c_f = design.values["c_start"] if c_f is None else c_f
    rated_v = topo.rated_v(design, "c_start") if rated_v is None else rated_v
    leak = CapacitorLeakage(part, c_f, rated_v)
    a_typ, a_lim = leak.coefficients(temp_c, 0.0 if typical else 1.0)
    return leak.current_a(topo.brief.supply.max_v if not typical else topo.brief.supply.nominal_v, a_typ, a_lim)



def start_checks(topo: "Topology", design: "Design") -> list[Finding]:
    """Power-on start rules: charge to 95 %, PNP drive and ratings, start capacitor leakage."""
    out, q = [], topo.uncertain(design)
    pnp, v_max = topo.pnp(design), topo.brief.supply.max_v
    r_charge, r_be = topo.fixed_ohm(design, "r_charge"), topo.fixed_ohm(design, "r_be")
    window = float(charge_window(topo, design, q["r_start"].lo, q["r_start"].hi, q["c_start"].lo,
                                      start_load_max_a(topo, design)))
    need = CHARGE_TIME_CONSTANTS * r_charge * q["c_hold"].hi
    if window < need:
        out.append(Finding("violation", "start-charge", f"the start PNP is sure to stay saturated for only "
                           f"{fq(window, 's')} at its worst corner, less than the {fq(need, 's')} (3 time "
                           f"constants of r_charge·c_hold) that charge the hold capacitor to "
                           f"{CHARGE_FRACTION_MIN:.0%}"))
    if v_max / r_charge > pnp.value("ic_max", "A"):
        out.append(Finding("violation", "start-current", f"charge current at power-on {fq(v_max / r_charge, 'A')} "
                           f"exceeds the start PNP's rating {fq(pnp.value('ic_max', 'A'), 'A')}"))
    if v_max > pnp.value("vceo_max", "V"):
        out.append(Finding("violation", "start-rating", f"supply {fq(v_max, 'V')} exceeds the start PNP's VCEO "
                           f"{fq(pnp.value('vceo_max', 'V'), 'V')}"))
    leak = float(start_leakage_a(topo, design, typical=False, temp_c=topo.brief.ambient.max_c))
    if leak * r_be > START_PNP_OFF_V:
        out.append(Finding("violation", "start-leakage", f"start capacitor leakage {fq(leak, 'A')} (limit, "
                           f"hottest) across r_be {fq(r_be, 'Ω')} gives {fq(leak * r_be, 'V')}, above "
                           f"{fq(START_PNP_OFF_V, 'V')}: the start PNP would keep charging the hold capacitor"))
    return out


def start_load_max_a(topo: "Topology", design: "Design") -> float:
    """Largest discharge current the hold network draws at full supply [A] (shortest-delay corner, hottest)."""
    q = topo.uncertain(design)
    x = {n: np.array([u.hi if topo.directions.get(n, 1) < 0 else u.lo]) for n, u in q.items()}
    x.update(ambient_c=np.array([topo.brief.ambient.max_c]), supply_v=np.array([topo.brief.supply.max_v]))
    s = topo.state(design, x)
    return float(topo.discharge_a(s, s.supply_v)[0])


def charge_window(topo: "Topology", design: "Design", r_start_lo, r_start_hi, c_start_lo, load_max_a) -> np.ndarray:
    """Charge time the start pulse guarantees at its worst corner (see `charge_window_s`) [s].

    r_start_lo, r_start_hi [ohm], c_start_lo [F]: the start network's band limits (arrays).
    """
    pnp, amb = topo.pnp(design), topo.brief.ambient
    hfe_min = pnp.value("hfe_min", "") * math.exp(pnp.value("hfe_tempco", "1/K") * (amb.min_c - 25.0))
    veb = vbe_at_v(pnp.value("vbe_on_max", "V"), pnp.value("vbe_tempco", "V/K"), amb.min_c)
    tau_min = np.asarray(r_start_lo, dtype=float) * np.asarray(c_start_lo, dtype=float)
    return charge_window_s(topo.brief.supply.min_v, topo.brief.supply.max_v, r_start_hi, tau_min,
                           topo.fixed_ohm(design, "r_be"), topo.fixed_ohm(design, "r_charge"), hfe_min, veb,
                           pnp.value("vce_sat", "V"), load_max_a)



def pulse_length_s(topo: "Topology", design: "Design", supply_v, r_start, c_start, temp_c) -> np.ndarray:
    """Power-on pulse length τs·ln(a/b) [s] (see `power_on_start`), typical VEB at `temp_c`."""
    pnp = topo.pnp(design)
    veb = vbe_at_v(pnp.value("vbe_on_typ", "V"), pnp.value("vbe_tempco", "V/K"), temp_c)
    a, b = pnp_base_currents(supply_v, np.asarray(r_start, dtype=float), topo.fixed_ohm(design, "r_be"), veb)
    return np.where(a > b, r_start * np.asarray(c_start, dtype=float) * np.log(np.maximum(a / b, 1.0)), 0.0)
