"""RC hold into an NPN Darlington (`rc-darlington`): no ICs.

The hold capacitor, charged at the start, discharges through r_hold into the Darlington's base;
the Darlington holds the relay coil (flyback diode across it) until its collector current falls
to the relay's release current.

Model (per sample, vectorised):
- both base-emitter junctions follow the diode law, n·kT/q each (kT/q from scipy.constants):
  VBE(IB) = VBE(on) + 2·n·Vt·ln(min(hFE·IB, I_sat) / I_test), VBE(on) at the catalog's test
  current with its tempco (about -2 mV/K per junction, Sedra and Smith); while the Darlington is
  saturated the coil limits the collector current to I_sat = (V - VCE(sat)) / R_coil and the
  junction drop stays at its saturated value;
- hFE log-normal between its limits with its temperature coefficient; the Darlington releases the
  relay when hFE·IB falls to the release current of the unit (anywhere between must-release and
  must-operate current: that spread dominates the worst case);
- discharge current i(V) = IB + capacitor leakage(V) + V/R_shunt; the hold time
  t = C ∫ dV / i(V) is integrated in u = ln IB (dV/du = IB·r + 2·n·Vt, split at saturation) by
  Gauss–Legendre quadrature; `devices.junction.darlington_hold_closed_s` is the closed form for a constant leakage.
"""
from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from tradeoff.analysis import Uncertain
from tradeoff.topologies.base import Finding
from tradeoff.devices.junction import (
    base_current_a, darlington_vbe_v, hfe_at, hfe_spread, thermal_voltage_v, vbe_at_v,
)
from tradeoff.devices.quadrature import discharge_integral_s
from tradeoff.devices.start import CHARGE_FRACTION_MIN
from tradeoff.topologies.hold import RcHoldTopology
from tradeoff.topologies.hold_state import HoldState

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.topologies.base import Design

__all__ = ["RcDarlington"]

class RcDarlington(RcHoldTopology):
    """RC hold into a small-signal NPN Darlington driving the relay coil."""

    id = "rc-darlington"
    driver_option = "darlington"
    driver_default = "darlington-npn-small"
    option_parts = {**RcHoldTopology.option_parts, "darlington": "darlington"}
    directions = {"r_hold": 0, "c_hold": 1, "hfe": 1, "vbe_on": -1, "leak_level": -1, "board_leak": -1, "release_frac": -1,
                  "coil_ohm": 1, "supply_v": 1, "ambient_c": 0}

    def driver_uncertain(self, driver: "Part") -> dict[str, Uncertain]:
        """Darlington hFE (log-normal between limits) and VBE(on) at its test current (uniform), at 25 degC."""
        return {
            "hfe": hfe_spread(driver, "Darlington"),
            "vbe_on": Uncertain(driver.value("vbe_on_typ", "V"), driver.value("vbe_on_min", "V"),
                                driver.value("vbe_on_max", "V"), unit="V",
                                note=f"Darlington {driver.id}: VBE(on) at {driver.value('vbe_test_current', 'A') * 1e3:g} "
                                     "mA and 25 degC, both junctions (uniform)"),
        }

    def junction(self, s: HoldState, trail: bool = False) -> dict[str, np.ndarray]:
        """Junction-law parameters of the samples at their temperature (trailing node axis if `trail`).

        Computed once per state (kept in s.memo): every hold evaluation needs them several times.
        """
        p = s.memo.get("junction")
        if p is None:
            d = s.driver
            p = {"hfe": hfe_at(s.x["hfe"], d.value("hfe_tempco", "1/K"), s.temp_c),
                 "vbe_on_v": vbe_at_v(s.x["vbe_on"], d.value("vbe_tempco", "V/K"), s.temp_c),
                 "vt_v": thermal_voltage_v(s.temp_c), "sat_a": np.maximum(s.supply_v - d.value("vce_sat", "V"), 1e-3)
                 / s.coil_ohm, "r_ohm": s.r_ohm}
            p = {k: np.asarray(v, dtype=float) for k, v in p.items()}
            p.update(test_a=d.value("vbe_test_current", "A"), n=d.value("ideality", ""))
            s.memo["junction"] = p
        if trail:
            return {k: v[..., None] if isinstance(v, np.ndarray) else v for k, v in p.items()}
        return dict(p)

    def discharge_a(self, s: HoldState, v) -> np.ndarray:
        """Base current plus leakage and shunt at capacitor voltage v [V] [A]."""
        return base_current_a(v, **self.junction(s)) + s.leakage_a(v)

    def output_a(self, s: HoldState, v) -> np.ndarray:
        """Collector (coil) current min(hFE·IB, I_sat) at capacitor voltage v [V] [A]."""
        j = self.junction(s)
        return np.minimum(j["hfe"] * base_current_a(v, **j), j["sat_a"])

    def voltage_for_a(self, s: HoldState, i_a) -> np.ndarray:
        """Capacitor voltage [V] where the collector current, out of saturation, is i_a [A]."""
        j = self.junction(s)
        ib = np.minimum(i_a, j["sat_a"]) / j["hfe"]
        return ib * j["r_ohm"] + darlington_vbe_v(ib, j["hfe"], j["vbe_on_v"], j["test_a"], j["n"], j["vt_v"],
                                                  j["sat_a"])

    def hold_s(self, s: HoldState, v0) -> np.ndarray:
        """Time from v0 [V] until hFE·IB falls to the release current [s] (end point taken in IB directly)."""
        j = self.junction(s)
        return self.time_between_ib(s, base_current_a(v0, **j), np.minimum(s.release_a, j["sat_a"]) / j["hfe"])

    def time_between_s(self, s: HoldState, v_hi, v_lo) -> np.ndarray:
        """Discharge time from v_hi to v_lo [V] [s]."""
        j = self.junction(s)
        return self.time_between_ib(s, base_current_a(v_hi, **j), base_current_a(v_lo, **j))

    def time_between_ib(self, s: HoldState, ib_hi, ib_lo) -> np.ndarray:
        """Discharge time from base current ib_hi to ib_lo [A] [s]: quadrature in u = ln IB, split where
        the Darlington saturates."""
        j = self.junction(s)
        u_hi = np.log(np.maximum(ib_hi, 1e-300))
        u_lo = np.log(np.maximum(ib_lo, 1e-300))
        log_sat, log_hfe, log_test = np.log(j["sat_a"]), np.log(j["hfe"]), math.log(j["test_a"])
        u_sat = log_sat - log_hfe
        slope = 2 * j["n"] * j["vt_v"]
        drop_sat = (j["vbe_on_v"] + slope * (log_sat - log_test))[..., None]
        # VBE = drop_at_1a + slope·ln IB
        drop_at_1a = (j["vbe_on_v"] + slope * (log_hfe - log_test))[..., None]
        r, slope = j["r_ohm"][..., None], slope[..., None]

        # integrands (dV/du) / i(u) at the nodes u (overwritten), built in place: dV/du = IB·r (+ slope
        # out of saturation), i = IB + leakage(V) + shunt(V), V = IB·r + VBE
        def linear(u):
            ib = np.exp(u)
            dv_du = ib * r
            v = np.multiply(u, slope, out=u)
            v += drop_at_1a
            v += dv_du
            current = s.leakage_a(v, scratch=True)
            current += ib
            dv_du += slope
            dv_du /= current
            return dv_du

        def saturated(u):
            ib = np.exp(u, out=u)
            dv_du = ib * r
            current = s.leakage_a(dv_du + drop_sat, scratch=True)
            current += ib
            dv_du /= current
            return dv_du

        c = s.c_f
        t = discharge_integral_s(c, u_lo, np.minimum(u_hi, u_sat), linear)
        t += discharge_integral_s(c, np.maximum(u_lo, u_sat), u_hi, saturated)
        return t

    def start_drive(self, r_hi_ohm: np.ndarray, design: "Design") -> tuple[np.ndarray, str]:
        """Base current at the start must saturate the Darlington at its worst corner.

        Worst corner: hFE min and VBE(on) max at the coldest ambient, lowest coil resistance, both
        supply limits, start voltage the button's or CHARGE_FRACTION_MIN of the power-on final voltage.
        """
        from tradeoff.units import format_quantity as fq
        d, amb, sup = self.driver(design), self.brief.ambient, self.brief.supply
        tol, _ = self.coil_tolerance()
        coil_min = float(self.coil_ohm_at(self.coil_nominal_ohm() * (1 - tol), amb.min_c))
        dt = amb.min_c - 25.0
        hfe = d.value("hfe_min", "") * math.exp(d.value("hfe_tempco", "1/K") * dt)
        vbe = d.value("vbe_on_max", "V") + d.value("vbe_tempco", "V/K") * dt
        r_allowed = math.inf
        for v in (sup.min_v, sup.max_v):
            sat = (v - d.value("vce_sat", "V")) / coil_min
            drop = vbe + 2 * d.value("ideality", "") * float(thermal_voltage_v(amb.min_c)) * math.log(
                sat / d.value("vbe_test_current", "A"))
            if self.power_on:
                v0 = CHARGE_FRACTION_MIN * (v - self.pnp(design).value("vce_sat", "V"))
            else:
                v0 = v - self.diode(design).value("vf", "V")
            r_allowed = min(r_allowed, hfe * max(v0 - drop, 0.0) / sat)
        ok = np.asarray(r_hi_ohm, dtype=float) <= r_allowed
        return ok, (f"base drive at the start cannot saturate the Darlington (hFE min {fq(hfe, '')} and VBE(on) "
                    f"{fq(vbe, 'V')} at {amb.min_c:g} °C, coil current up to {fq(sat, 'A')}): the hold resistor "
                    f"with its tolerance may be at most {fq(r_allowed, 'Ω')}")

    def driver_checks(self, design: "Design") -> list[Finding]:
        """Darlington ratings, and capacitor leakage against the base current at release."""
        from tradeoff.units import format_quantity as fq
        d, out, v_max = self.driver(design), [], self.brief.supply.max_v
        if v_max > d.value("vceo_max", "V"):
            out.append(Finding("violation", "driver-rating", f"supply {fq(v_max, 'V')} exceeds the Darlington's VCEO "
                               f"{fq(d.value('vceo_max', 'V'), 'V')}"))
        out += self.coil_current_finding(d.value("ic_max", "A"), "Darlington", "IC")
        hot = {"ambient_c": self.brief.ambient.max_c, "leak_level": 1.0}
        s = self.nominal_state(design, hot)
        v_rel = self.voltage_for_a(s, s.release_a)
        leak = float(s.leakage_a(v_rel)[0])
        ib = float(base_current_a(v_rel, **self.junction(s))[0])
        out.append(self.leakage_finding(
            f"capacitor leakage at release (datasheet limit, {self.brief.ambient.max_c:g} °C) {fq(leak, 'A')} "
            f"against the base current at release {fq(ib, 'A')}", leak, ib))
        return out

    def driver_spice(self, s: HoldState) -> tuple[list[str], list[str]]:
        """Two identical NPNs in Darlington connection whose diode law matches the model's.

        Each has BF = b with b² + 2b = hFE (so IC = hFE·IB), NF = n, and IS from VBE(on): at the
        test current IC1 = b·IB_t and IC2 = b(b+1)·IB_t, VBE(on) = n·Vt·ln(IC1·IC2/IS²). VAF, IKF
        and ISE are left off (infinite, infinite, zero) so hFE is constant, as in the model.
        """
        j = {k: (float(np.ravel(v)[0]) if np.ndim(v) else float(v)) for k, v in self.junction(s).items()}
        hfe, n, vt = j["hfe"], j["n"], j["vt_v"]
        b = math.sqrt(hfe + 1) - 1
        ib_t = j["test_a"] / hfe
        i_s = math.sqrt(b * ib_t * b * (b + 1) * ib_t) * math.exp(-j["vbe_on_v"] / (2 * n * vt))
        return ([f"R1 hold base {j['r_ohm']:.9g}", "Q1 col base e1 QDARL", "Q2 col e1 0 QDARL"],
                [f".model QDARL NPN(IS={i_s:.9g} BF={b:.9g} NF={n:.6g} BR=1)"])
