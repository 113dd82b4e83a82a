"""Design rules shared by the transistor RC holds: hold capacitor rating, start drive, the relay's
chatter band and pick-up, the driver's linear-region dissipation, the flyback diode's rating, the
power-on start's rules (`hold_start`) and the release tail; the driver adds its own
(`RcHoldTopology.driver_checks`). Functions of the hold topology `topo` (an RcHoldTopology).
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from tradeoff.devices.relay import derated_power_w, linear_peak_dissipation_w
from tradeoff.topologies.base import Finding
from tradeoff.topologies.hold_start import start_checks
from tradeoff.units import format_quantity as fq

__all__ = ["CHATTER_RELEASE_TIMES", "DISSIPATION_DERATING", "FLYBACK_REVERSE_FACTOR", "hold_checks",
           "linear_dissipation_w"]

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.topologies.base import Design, Topology


CHATTER_RELEASE_TIMES = 10
"""Warn when the coil current takes longer than 10 relay release times to cross the band between
must-operate and must-release: far slower than the armature's own motion, the contacts open under
a slowly falling force and can chatter or arc (common practice; release time from the relay class)."""

DISSIPATION_DERATING = 0.5
"""Warn above half the derated dissipation rating (common practice)."""

FLYBACK_REVERSE_FACTOR = 3.0
"""Flyback diode reverse rating of about 3 times the supply (relay manufacturers' application notes)."""


def linear_dissipation_w(topo: "Topology", design: "Design") -> tuple[float, float]:
    """(largest driver dissipation in its linear region, derated rating at the hottest ambient) [W].

    Between saturation and cut-off the driver passes every coil current; VCE·I = (V - I·R)·I peaks
    at V²/(4R) (highest supply, lowest coil resistance: cold, -tolerance). Rating derated linearly
    from p_tot at 25 degC to zero at tj_max.
    """
    driver = topo.driver(design)
    tol, _ = topo.coil_tolerance()
    r_min = float(topo.coil_ohm_at(topo.coil_nominal_ohm() * (1 - tol), topo.brief.ambient.min_c))
    peak = float(linear_peak_dissipation_w(topo.brief.supply.max_v, r_min))
    return peak, derated_power_w(driver.value("p_tot", "W"), driver.value("tj_max", "degC"), topo.brief.ambient.max_c)


def hold_checks(topo: "Topology", design: "Design") -> list[Finding]:
    """Common design rules (start, chatter band, dissipation, ratings) plus the driver's."""
    brief, out = topo.brief, [Finding("info", "leakage-model", topo.leakage(design).basis_text())]
    v_max, v_min = brief.supply.max_v, brief.supply.min_v
    rated = topo.rated_v(design, "c_hold")
    if v_max > rated:
        out.append(Finding("violation", "capacitor-rating", f"hold capacitor rated {fq(rated, 'V')} sees up to "
                           f"{fq(v_max, 'V')}; choose a rating of at least {fq(v_max / 0.8, 'V')}"))
    elif v_max > 0.8 * rated:
        out.append(Finding("warning", "capacitor-rating", f"hold capacitor rated {fq(rated, 'V')} runs above "
                           f"80 % of its rating at {fq(v_max, 'V')} (common practice: derate to 80 %)"))
    r_hi = np.array([topo.uncertain(design)["r_hold"].hi])
    ok, reason = topo.start_drive(r_hi, design)
    if not ok[0]:
        out.append(Finding("violation", "start-drive", reason))
    if brief.load.kind == "relay":
        s = topo.nominal_state(design)
        load = brief.load
        i_mo = load.must_operate_frac * load.coil_voltage_v / load.coil_resistance_ohm
        i_mr = load.must_release_frac * load.coil_voltage_v / load.coil_resistance_ohm
        band = float(topo.band_s(s, np.array([i_mo]), np.array([i_mr]))[0])
        limit = CHATTER_RELEASE_TIMES * topo.release_time_s()
        text = (f"coil current falls from the must-operate ({fq(i_mo, 'A')}) to the must-release current "
                f"({fq(i_mr, 'A')}) in {fq(band, 's')} at nominal")
        if band > limit:
            out.append(Finding("warning", "chatter-band", f"{text}: slower than {CHATTER_RELEASE_TIMES} relay "
                               f"release times ({fq(limit, 's')}), so the contacts open under a slowly falling "
                               "force: chatter and arcing risk (a snap-action threshold avoids it)"))
        else:
            out.append(Finding("info", "chatter-band", text))
        vdrop = topo.driver(design).value("vce_sat", "V") if topo.driver(design).has("vce_sat") else 0.0
        need = load.must_operate_frac * load.coil_voltage_v
        if v_min - vdrop < need:
            out.append(Finding("violation", "pick-up", f"at the lowest supply {fq(v_min, 'V')} the coil gets "
                               f"{fq(v_min - vdrop, 'V')} after the driver's drop, below its must-operate "
                               f"voltage {fq(need, 'V')}"))
    peak, rating = linear_dissipation_w(topo, design)
    if peak > rating:
        out.append(Finding("violation", "dissipation", f"driver dissipates up to {fq(peak, 'W')} while the coil "
                           f"current passes the linear region, above its rating {fq(rating, 'W')} at "
                           f"{brief.ambient.max_c:g} °C"))
    elif peak > DISSIPATION_DERATING * rating:
        out.append(Finding("warning", "dissipation", f"driver dissipates up to {fq(peak, 'W')} in its linear "
                           f"region, above half its rating {fq(rating, 'W')} at {brief.ambient.max_c:g} °C"))
    diode = topo.diode(design)
    if diode.value("vr_max", "V") < FLYBACK_REVERSE_FACTOR * v_max:
        out.append(Finding("warning", "flyback-rating", f"flyback diode reverse rating "
                           f"{fq(diode.value('vr_max', 'V'), 'V')} is below {FLYBACK_REVERSE_FACTOR:g} times the "
                           f"supply ({fq(FLYBACK_REVERSE_FACTOR * v_max, 'V')})"))
    if topo.power_on:
        out.extend(start_checks(topo, design))
    out.append(Finding("info", "release-tail", "after the release the coil current keeps falling with the hold "
                       "capacitor for several time constants; the standby figure after the timeout is the "
                       "driver's cut-off current once the capacitor is empty"))
    out.extend(topo.driver_checks(design))
    return out
