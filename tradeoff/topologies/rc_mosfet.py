"""RC hold into a logic-level MOSFET gate (`rc-mosfet`): no ICs.

The hold capacitor sits on the gate with a bleed resistor r_hold across it; charged at the start,
it discharges through the bleed, the gate leakage, its own leakage and an optional shunt. The
MOSFET holds the relay coil (flyback diode across it) until its drain current, falling along the
square law Id = K/2·(Vgs - Vto)² of its linear (amplifying) region, reaches the relay's release
current: the gate voltage at release is Vto + sqrt(2·I_release/K).

Model (per sample, vectorised): threshold VGS(th) at its test current uniform between the class
limits with its tempco; Vto = VGS(th) - sqrt(2·I_test/K) so the square law passes through the
datasheet threshold point; K spread uniform between limits, scaling as T^k_temp_exponent (mobility);
gate leakage as the conductance IGSS/V_test (a typical part a fraction of it); discharge time
t = C ∫ dV / (V/R_eq + leakage(V)) in u = ln V by Gauss–Legendre quadrature, with the closed form
R_eq·C·ln((V0 + IL·R_eq)/(V1 + IL·R_eq)) for a constant leakage (`devices.capacitor.rc_discharge_time_s`).
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from tradeoff.analysis import Uncertain
from tradeoff.topologies.base import Finding
from tradeoff.devices.capacitor import leakage_level, level_weights
from tradeoff.devices.mosfet import drain_current_a, gate_voltage_for_a, k_at, vto_v
from tradeoff.devices.quadrature import discharge_time_s
from tradeoff.devices.start import CHARGE_FRACTION_MIN
from tradeoff.topologies.hold import RcHoldTopology
from tradeoff.topologies.hold_state import HoldState

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.topologies.base import Design

__all__ = ["RcMosfet"]


class RcMosfet(RcHoldTopology):
    """RC hold on the gate of a logic-level N-MOSFET driving the relay coil."""

    id = "rc-mosfet"
    driver_option = "mosfet"
    driver_default = "mosfet-n-logic-small"
    option_parts = {**RcHoldTopology.option_parts, "mosfet": "mosfet"}
    directions = {"r_hold": 1, "c_hold": 1, "vth": -1, "k": 1, "gate_leak": -1, "leak_level": -1, "board_leak": -1,
                  "release_frac": -1, "coil_ohm": 1, "supply_v": 1, "ambient_c": 0}

    def driver_uncertain(self, driver: "Part") -> dict[str, Uncertain]:
        """Threshold at its test current, square-law factor K (both uniform, 25 degC) and gate leakage level."""
        return {
            "vth": Uncertain(driver.value("vth_typ", "V"), driver.value("vth_min", "V"), driver.value("vth_max", "V"),
                             unit="V", note=f"MOSFET {driver.id}: VGS(th) at "
                                            f"{driver.value('vth_test_current', 'A') * 1e6:g} uA and 25 degC (uniform)"),
            "k": Uncertain(driver.value("k_typ", "A/V**2"), driver.value("k_min", "A/V**2"),
                           driver.value("k_max", "A/V**2"), unit="A/V^2",
                           note=f"MOSFET {driver.id}: square-law factor K at 25 degC (uniform)"),
            "gate_leak": leakage_level(f"MOSFET {driver.id} gate leakage (IGSS limit as a conductance)"),
        }

    def gate(self, s: HoldState) -> dict[str, np.ndarray]:
        """Gate-law parameters at the samples' temperature: vto [V], k [A/V²], sat_a [A], g [S] (bleed + gate)."""
        d = s.driver
        k = k_at(s.x["k"], s.temp_c, d.value("k_temp_exponent", ""))
        vth = s.x["vth"] + d.value("vth_tempco", "V/K") * (s.temp_c - 25.0)
        g_limit = d.value("igss", "A") / d.value("igss_test_voltage", "V")
        g_typ, g_lim = level_weights(s.x["gate_leak"], d.value("igss_typical_frac", "") * g_limit, g_limit)
        return {"k": np.asarray(k, dtype=float),
                "vto": np.asarray(vto_v(vth, d.value("vth_test_current", "A"), k), dtype=float),
                "sat_a": np.asarray(s.supply_v / s.coil_ohm, dtype=float),
                "g": np.asarray(1 / s.r_ohm + g_typ + g_lim, dtype=float)}

    def discharge_a(self, s: HoldState, v) -> np.ndarray:
        """Bleed, gate leakage, capacitor leakage and shunt current at capacitor voltage v [V] [A]."""
        return np.asarray(v, dtype=float) * self.gate(s)["g"] + s.leakage_a(v)

    def output_a(self, s: HoldState, v) -> np.ndarray:
        """Drain (coil) current min(K/2·(V - Vto)², I_sat) at gate voltage v [V] [A]."""
        p = self.gate(s)
        return drain_current_a(v, p["vto"], p["k"], p["sat_a"])

    def voltage_for_a(self, s: HoldState, i_a) -> np.ndarray:
        """Gate voltage [V] where the drain current is i_a [A]: Vto + sqrt(2·I/K)."""
        p = self.gate(s)
        return gate_voltage_for_a(i_a, p["vto"], p["k"], p["sat_a"])

    def time_between_s(self, s: HoldState, v_hi, v_lo) -> np.ndarray:
        """Discharge time from v_hi to v_lo [s] by quadrature in u = ln V."""
        g = self.gate(s)["g"][..., None]

        def path(u):
            v = np.exp(u)
            return v, v * g + s.leakage_a(v)

        lo = np.log(np.maximum(v_lo, 1e-12))
        return discharge_time_s(s.c_f, lo, np.log(np.maximum(v_hi, 1e-12)), path)

    def start_voltage_min_v(self, design: "Design") -> float:
        """Lowest start voltage on the gate over the supply range [V]."""
        v = self.brief.supply.min_v
        if self.power_on:
            return CHARGE_FRACTION_MIN * (v - self.pnp(design).value("vce_sat", "V"))
        return v - self.diode(design).value("vf", "V")

    def start_drive(self, r_hi_ohm: np.ndarray, design: "Design") -> tuple[np.ndarray, str]:
        """The start voltage must reach the gate voltage at which the class rates R_DS(on)."""
        from tradeoff.units import format_quantity as fq
        v0, need = self.start_voltage_min_v(design), self.driver(design).value("vgs_on", "V")
        return (np.full(np.shape(r_hi_ohm), v0 >= need),
                f"start voltage on the gate {fq(v0, 'V')} at the lowest supply is below the {fq(need, 'V')} at "
                f"which the MOSFET's on-resistance is rated")

    def driver_checks(self, design: "Design") -> list[Finding]:
        """MOSFET ratings, and gate plus capacitor leakage against the bleed current at release."""
        from tradeoff.units import format_quantity as fq
        d, out, v_max = self.driver(design), [], self.brief.supply.max_v
        for name, what, value in (("vds_max", "VDS", v_max), ("vgs_max", "VGS", v_max)):
            if value > d.value(name, "V"):
                out.append(Finding("violation", "driver-rating", f"{what} up to {fq(value, 'V')} exceeds the MOSFET's "
                                   f"{what} rating {fq(d.value(name, 'V'), 'V')}"))
        out += self.coil_current_finding(d.value("id_max", "A"), "MOSFET", "ID")
        s = self.nominal_state(design, {"ambient_c": self.brief.ambient.max_c, "leak_level": 1.0, "gate_leak": 1.0})
        v_rel = self.voltage_for_a(s, s.release_a)
        leak = float(s.leakage_a(v_rel)[0] + v_rel[0] * (self.gate(s)["g"][0] - 1 / s.r_ohm[0]))
        bleed = float(v_rel[0] / s.r_ohm[0])
        out.append(self.leakage_finding(
            f"capacitor and gate leakage at release (limits, {self.brief.ambient.max_c:g} °C) {fq(leak, 'A')} "
            f"against the bleed current at release {fq(bleed, 'A')}", leak, bleed))
        return out

    def driver_spice(self, s: HoldState) -> tuple[list[str], list[str]]:
        """Bleed resistor, gate leakage resistor and a level-1 MOSFET with the model's VTO and KP (W = L)."""
        p = {k: float(np.ravel(v)[0]) for k, v in self.gate(s).items()}
        r = float(np.ravel(s.r_ohm)[0])
        g_gate = p["g"] - 1 / r
        lines = [f"R1 hold 0 {r:.9g}", "M1 col hold 0 0 NHOLD L=100u W=100u"]
        if g_gate > 0:
            lines.append(f"RG hold 0 {1 / g_gate:.9g}")
        return lines, [f".model NHOLD NMOS(LEVEL=1 VTO={p['vto']:.9g} KP={p['k']:.9g} LAMBDA=0)"]
