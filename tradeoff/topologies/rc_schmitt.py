"""RC hold read by a discrete emitter-coupled Schmitt trigger (`rc-schmitt`): two NPNs, no ICs.

Circuit: r_hold charges c_hold from the supply, starting from 0 V (power-on with the capacitor
empty, or a push-button that shorts it through a small resistor). The capacitor drives the base
of Q1; Q1 and Q2 share the emitter resistor R_E; Q1's collector resistor R_C1 feeds Q2's base
through the divider R_1 (to Q2's base) and R_2 (to ground); Q2's collector resistor R_C2 pulls
the gate of a high-side P-channel MOSFET. While the capacitor is low, Q1 is off, Q2 conducts and
pulls the gate R_C2·IC2 below the supply: the MOSFET holds the relay coil (or the dc load). When
the capacitor reaches the upper trip point, Q1 takes over the emitter current, Q2's base falls,
and the loop Q2 -> emitter -> Q1 -> divider -> Q2 regenerates: the gate snaps to the supply within
microseconds and the relay drops out at once, whatever its own release point. A reset diode from
the capacitor to the supply empties it when the supply is switched off.

Model (per sample, vectorised): the emitter-coupled Schmitt trigger of `tradeoff.devices.schmitt`
(Millman and Halkias; Horowitz and Hill), solved for the diode law instead of a fixed cut-in voltage:
- both NPNs forward-active, IS from VBE(on) at the class's test current with its tempco (-2 mV/K,
  Sedra and Smith), hFE log-normal between the class limits scaled to microampere currents
  (`low_current_gain_frac`, from memory), with its tempco; no Early effect;
- the upper trip point is the fold of the DC transfer curve nearest to Q1's cut-off (`rising_trip`),
  the falling one the next fold (`falling_trip_v`): resistor ratios set about 0.35 of the supply, shifted
  by the difference of two junction drops whose temperature coefficients largely cancel;
- charge time t = C ∫ dV / i(V) from 0 V to the trip, i(V) = (V_s - V)/r_hold - leakage(V) - V/R_shunt -
  V·G_surface (a board-surface leakage the brief states) - IB1(V) (`charge_time_s`); IB1 with the emitter node
  held at its value at the trip; no timeout where i(V_trip) <= 0, so a leaky capacitor holds the load on
  longer, or for ever.
Capacitor leakage, junction temperature laws and quadrature come from `tradeoff.devices`.
"""
from __future__ import annotations

import math
from typing import Mapping

import numpy as np

from tradeoff.analysis import Uncertain
from tradeoff.selection import SelectionModel
from tradeoff.devices.capacitor import LEAK_LEVEL, CapacitorLeakage
from tradeoff.devices.junction import hfe_at, thermal_voltage_v, vbe_at_v
from tradeoff.devices.quadrature import evaluate_in_chunks
from tradeoff.devices.roots import bisect_arrays
from tradeoff.devices.schmitt import charge_time_s, falling_trip_v, rising_trip, saturation_current_a
from tradeoff.topologies import bands, hold_state
from tradeoff.topologies.base import BomLine, Design, Finding, Role, Standby, Topology, Waveform
from tradeoff.topologies.ic_common import value_lines
from tradeoff.topologies.schmitt_tables import schmitt_selection
from tradeoff.units import format_quantity as fq

__all__ = ["RcSchmitt", "NETWORK"]

NETWORK = {"r_emitter": "shared emitter resistor", "r_q1_collector": "Q1 collector resistor",
           "r_divider_top": "divider to Q2's base", "r_divider_bottom": "Q2's base to ground"}
"""Threshold network resistors (catalog entry params [ohm]) and what each does; r_q2_collector (the gate
pull-up) is the fifth fixed resistor."""
HYSTERESIS_MIN_V = 0.05
"""Smallest hysteresis for a clean snap against supply ripple and noise [V] (common practice)."""


class RcSchmitt(Topology):
    """RC charge read by a two-NPN emitter-coupled Schmitt trigger driving a high-side P-MOSFET."""

    id = "rc-schmitt"
    option_units = {"c_hold_rated_v": "V", "shunt": "ohm"}
    option_parts = {"r_hold_part": "resistor", "c_hold_part": "capacitor", "npn": "npn", "switch": "mosfet",
                    "diode": "diode", "fixed_resistor": "resistor"}
    DEFAULTS = {"r_hold_part": "res-metal-film-1pct", "c_hold_part": "cap-electrolytic-85c", "npn": "npn-small",
                "switch": "mosfet-p-logic-power", "diode": "diode-small-signal",
                "fixed_resistor": "res-thick-film-chip-1pct"}
    """Part class of each option when the design names none."""

    # ---- parts ------------------------------------------------------------------------
    def part(self, design: Design, option: str):
        """Catalog class named by design option `option` (default DEFAULTS[option]), with the design's overrides."""
        return self.option_part(design, option, self.DEFAULTS[option])

    def _leakage(self, design: Design, c_f=None) -> CapacitorLeakage:
        """Leakage law of the timing capacitor (of `c_f` [F], an array of candidates, if given)."""
        from tradeoff.candidates import rated_voltage
        part, rated = self.part(design, "c_hold_part"), design.options.get("c_hold_rated_v")
        if rated in (None, ""):
            rated = rated_voltage(part, self.brief.supply.max_v) or max(part.values("rated_voltages", "V"))
        return CapacitorLeakage(part, self.design_value(design, "c_hold") if c_f is None else c_f, float(rated))

    def _network(self) -> dict[str, float]:
        return {name: self.entry.value(name, "ohm") for name in (*NETWORK, "r_q2_collector")}

    @staticmethod
    def _arrays(point: Mapping[str, float]) -> dict[str, np.ndarray]:
        return {k: np.array([float(v)]) for k, v in point.items()}

    def _load_a(self, supply_v: float) -> float:
        """Load current at supply_v [V] [A]: the coil (its current scales with the voltage) or the dc load."""
        load = self.brief.load
        return load.current_a * supply_v / load.coil_voltage_v if load.kind == "relay" else load.current_a

    # ---- physics ----------------------------------------------------------------------
    def roles(self) -> list[Role]:
        """r_hold and c_hold: the charge time constant (the threshold network is fixed)."""
        return [Role("r_hold", "resistor", "charge resistor from the supply to the timing capacitor"),
                Role("c_hold", "capacitor", "timing capacitor on Q1's base", ("electrolytic", "film"))]

    def uncertain(self, design: Design) -> dict[str, Uncertain]:
        """Hold R and C, leakage level, both transistors' gain and VBE(on), the threshold network's resistors."""
        npn, frac = self.part(design, "npn"), self.entry.value("low_current_gain_frac", "")
        q = {"r_hold": bands.component_band(self.design_value(design, "r_hold"), self.part(design, "r_hold_part"),
                                           self.brief, "ohm: charge resistor"),
             "c_hold": bands.component_band(self.design_value(design, "c_hold"), self.part(design, "c_hold_part"),
                                           self.brief, "F: timing capacitor"),
             LEAK_LEVEL: self._leakage(design).uncertain(), **bands.board_leak(self.brief)}
        for k in ("q1", "q2"):
            q[f"hfe_{k}"] = Uncertain(*(frac * npn.value(f"hfe_{s}", "") for s in ("typ", "min", "max")),
                                      dist="lognormal", note=f"{k.upper()} {npn.id}: hFE at 25 degC scaled by {frac:g} "
                                      "to microampere currents (from memory), log-normal between the limits")
            q[f"vbe_{k}"] = Uncertain(*(npn.value(f"vbe_on_{s}", "V") for s in ("typ", "min", "max")), unit="V",
                                      note=f"{k.upper()} {npn.id}: VBE(on) at its test current, 25 degC (uniform)")
        fixed = self.part(design, "fixed_resistor")
        q.update({n: bands.component_band(self._network()[n], fixed, self.brief, f"ohm: {what}")
                  for n, what in NETWORK.items()})
        return q

    def _trip_args(self, design: Design, x: Mapping[str, np.ndarray]) -> tuple:
        """Arguments of `rising_trip` / `falling_trip_v` at the samples `x`: hFE, IS and n·kT/q at temperature."""
        npn = self.part(design, "npn")
        t, n = np.asarray(x["ambient_c"], dtype=float), npn.value("ideality", "")
        test = npn.value("vbe_test_current", "A")
        is1, is2 = (saturation_current_a(vbe_at_v(x[f"vbe_{k}"], npn.value("vbe_tempco", "V/K"), t), test, n, t)
                    for k in ("q1", "q2"))
        hfe1, hfe2 = (hfe_at(x[f"hfe_{k}"], npn.value("hfe_tempco", "1/K"), t) for k in ("q1", "q2"))
        return (x["supply_v"], *(x[k] for k in NETWORK), hfe1, hfe2, is1, is2, n * thermal_voltage_v(t))

    def trip(self, design: Design, x: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
        """Upper trip point and Q1's state there (`rising_trip`) plus hfe1, is1, nvt at the samples `x`."""
        args = self._trip_args(design, x)
        return {**rising_trip(*args), "hfe1": args[5], "is1": args[7], "nvt": args[9]}

    def _extra(self, x, tr, leak: CapacitorLeakage, shunt: float | None):
        """extra_a(V) of `charge_time_s` (trailing node axis): leakage, shunt, board surface and Q1's base
        current [A]."""
        a_typ, a_lim = leak.coefficients(x["ambient_c"], x[LEAK_LEVEL])
        p = {k: np.asarray(v, dtype=float)[..., None] for k, v in
             {"a_typ": a_typ, "a_lim": a_lim, "g": (0.0 if shunt is None else 1.0 / shunt)
              + bands.board_conductance_s(self.brief, x),
              **{k: tr[k] for k in ("ie1_a", "ve_v", "hfe1", "is1", "nvt")}}.items()}

        def extra(v):
            rise = np.exp(np.minimum((v - p["ve_v"]) / p["nvt"], 50.0))
            ie1 = np.minimum(p["is1"] * (p["hfe1"] + 1) / p["hfe1"] * rise, p["ie1_a"])
            out = leak.current_a(v, p["a_typ"], p["a_lim"]) + ie1 / (p["hfe1"] + 1)
            return out + v * p["g"] if np.any(p["g"]) else out
        return extra

    def delay(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Charge time from 0 V to the upper trip point [s]; inf where the capacitor never reaches it."""
        leak, shunt = self._leakage(design), hold_state.shunt_ohm(design)

        def chunk(xc):
            tr = self.trip(design, xc)
            return charge_time_s(xc["c_hold"], xc["r_hold"], xc["supply_v"], tr["v_trip"],
                                 self._extra(xc, tr, leak, shunt))
        return evaluate_in_chunks(chunk, x)

    # ---- currents -------------------------------------------------------------------------
    def after_state(self, design: Design, x: Mapping[str, np.ndarray],
                    leak: CapacitorLeakage | None = None) -> dict[str, np.ndarray]:
        """Steady state long after the timeout (Q1 on, Q2 off, typical leakage): capacitor voltage v_in [V],
        emitter node ve_v [V], Q1's collector vc1_v [V] and the supply current supply_a [A].

        The capacitor settles where r_hold's current equals Q1's base current plus leakage; Q1 saturates
        (collector at V_E + VCE(sat)) once its collector resistor cannot carry α·IE. Bisection in V_E.
        """
        leak, vs = leak or self._leakage(design), np.asarray(x["supply_v"], dtype=float)
        a_typ, a_lim = leak.coefficients(x["ambient_c"], 0.0)
        tr, vce_sat = self.trip(design, x), self.part(design, "npn").value("vce_sat", "V")
        r_e, r_c1, alpha = x["r_emitter"], x["r_q1_collector"], tr["hfe1"] / (tr["hfe1"] + 1)
        r_div = x["r_divider_top"] + x["r_divider_bottom"]

        def state(ve):
            ie = ve / r_e
            vc1 = np.maximum((vs - r_c1 * alpha * ie) * r_div / (r_c1 + r_div), ve + vce_sat)
            ic = (vs - vc1) / r_c1 - vc1 / r_div
            v_in = ve + tr["nvt"] * np.log(np.maximum(alpha * ie, 1e-300) / tr["is1"])
            leak_a = leak.current_a(np.maximum(v_in, 0.0), a_typ, a_lim)
            return (vs - v_in) / x["r_hold"] - (ie - ic) - leak_a, v_in, vc1, leak_a
        lo = bisect_arrays(lambda ve: state(ve)[0] <= 0, np.zeros(np.shape(vs)), vs - vce_sat, 50)[0]
        _, v_in, vc1, leak_a = state(lo)
        off = self.part(design, "switch").value("idss", "A")
        return {"v_in": v_in, "ve_v": lo, "vc1_v": vc1, "supply_a": lo / r_e + vc1 / r_div + leak_a + off}

    def standby(self, design: Design) -> Standby:
        """Typical currents at nominal supply: while timing the load plus the Schmitt trigger (Q2's emitter
        current, the divider, the charge current at the trip); after the timeout Q1's emitter current, the
        divider, the capacitor's typical leakage and the MOSFET's off-state current."""
        x = self._arrays(self.nominal_point(design))
        tr, vs = self.trip(design, x), self.brief.supply.nominal_v
        divider = x["r_q1_collector"] + x["r_divider_top"] + x["r_divider_bottom"]
        trigger = tr["ve_v"] / x["r_emitter"] + vs / divider + (vs - tr["v_trip"]) / x["r_hold"]
        return Standby(self._load_a(vs) + float(trigger[0]), float(self.after_state(design, x)["supply_a"][0]))
    # ---- parts list -----------------------------------------------------------------------
    def _fixed_bom(self, design: Design) -> list[BomLine]:
        """Everything but the charge resistor and timing capacitor."""
        npn, switch, diode, fixed = (self.part(design, k) for k in ("npn", "switch", "diode", "fixed_resistor"))
        notes = {**NETWORK, "r_q2_collector": "Q2 collector resistor, gate pull-up"}
        lines = [BomLine("Q1, Q2", npn.id, "NPN", 2, npn.cost, "emitter-coupled Schmitt trigger"),
                 BomLine("M1", switch.id, "P-channel MOSFET", 1, switch.cost, "high-side load switch"),
                 BomLine("D2", diode.id, "reset", 1, diode.cost, "empties the timing capacitor at switch-off")]
        lines += [BomLine(f"R{i}", fixed.id, fq(value, "Ω"), 1, fixed.cost, notes[name])
                  for i, (name, value) in enumerate(self._network().items(), start=2)]
        if self.brief.load.kind == "relay":
            lines.append(BomLine("D1", diode.id, "flyback", 1, diode.cost, "across the relay coil"))
        if self.brief.start == "button":
            lines += [BomLine("SW1", "push-button", "momentary, normally open", 1, self.entry.value("button_cost", ""),
                              "start: shorts the timing capacitor (not a catalog class; indicative cost)"),
                      BomLine("R7", fixed.id, fq(self.entry.value("r_reset", "ohm"), "Ω"), 1, fixed.cost,
                              "limits the button's discharge current")]
        return lines

    def bom(self, design: Design) -> list[BomLine]:
        """Charge R and C, two NPNs and their network, the P-MOSFET, reset and flyback diodes, the button."""
        r_part, leak = self.part(design, "r_hold_part"), self._leakage(design)
        return [*value_lines(design, "r_hold", "R1", r_part, "charge resistor"),
                *value_lines(design, "c_hold", "C1", leak.part, "timing capacitor", float(leak.rated_v))] + self._fixed_bom(design)

    # ---- design rules ---------------------------------------------------------------------
    def checks(self, design: Design) -> list[Finding]:
        """Capacitor rating, snap and hysteresis, gate drive, Q2 saturation, junction ratings, stays off after
        the timeout, MOSFET ratings, dissipation and pick-up, start and release, which leakage figure is used."""
        brief, q, leak = self.brief, self.quantities(design), self._leakage(design)
        npn, switch = self.part(design, "npn"), self.part(design, "switch")
        v_max, v_min, rated = brief.supply.max_v, brief.supply.min_v, float(leak.rated_v)
        veb, r_c2 = npn.value("veb_max", "V"), self._network()["r_q2_collector"]
        names = ("ambient_c", "supply_v", "hfe_q1", "hfe_q2")  # every combination of these limits
        grid = np.array(np.meshgrid(*[[q[n].lo, q[n].hi] for n in names], indexing="ij")).reshape(len(names), -1)
        x = {**{n: np.full(grid.shape[1], u.nominal) for n, u in q.items()}, **dict(zip(names, grid))}
        tr, args = self.trip(design, x), self._trip_args(design, x)
        ends = {}
        for vs in (v_min, v_max):
            xs = self._arrays({**self.nominal_point(design), "supply_v": vs})
            ends[vs] = float(self.trip(design, xs)["v_trip"][0]), float(falling_trip_v(*self._trip_args(design, xs))[0])
        (v_up, v_down), after = ends[v_min], self.after_state(design, self._arrays({**self.nominal_point(design),
                                                                                     "supply_v": v_max}))
        spread = q["r_emitter"].hi / q["r_emitter"].nominal - 1  # the network's class: R_C2 at its low and high ends
        ic2 = (tr["ve_v"] / x["r_emitter"] - tr["ie1_a"]) * x["hfe_q2"] / (x["hfe_q2"] + 1)
        drive = float(np.min(np.where(x["supply_v"] == v_min, ic2 * r_c2 * (1 - spread), np.inf)))
        vcb = float(np.min(x["supply_v"] - ic2 * r_c2 * (1 + spread)
                           - tr["ve_v"] - args[9] * np.log(ic2 / args[8])))  # base: V_E + n·Vt·ln(IC2/IS2)
        bottom = x["r_divider_bottom"][0] / (x["r_divider_top"][0] + x["r_divider_bottom"][0])
        q2_reverse = float(after["ve_v"][0] - after["vc1_v"][0] * bottom)
        hot, tj, rds = brief.ambient.max_c, switch.value("tj_max", "degC"), switch.value("rds_on", "ohm")
        heat = self._load_a(v_max) ** 2 * rds * (1 + switch.value("rds_on_tempco", "1/K") * max(hot - 25.0, 0.0))
        derated = switch.value("p_tot", "W") * max(tj - max(hot, 25.0), 0.0) / (tj - 25.0)
        hysteresis = (f"trip points {fq(v_up, 'V')} rising, {fq(v_down, 'V')} falling at the lowest supply (nominal "
                      f"parts, active-region model): hysteresis {fq(v_up - v_down, 'V')}")
        rules = [
            (v_max > 0.8 * rated, "violation" if v_max > rated else "warning", "capacitor-rating", f"timing capacitor "
             f"rated {fq(rated, 'V')} charges to {fq(v_max, 'V')} (common practice: derate to 80 %)"),
            (not tr["regenerative"].all(), "violation", "snap", "the Schmitt trigger does not regenerate at some gain "
             "and temperature corners: the output would fade instead of snapping"),
            (True, *(("violation", "hysteresis", f"{hysteresis}, below {fq(HYSTERESIS_MIN_V, 'V')} (common "
                      "practice)") if v_up - v_down < HYSTERESIS_MIN_V else
                     ("info", "hysteresis", f"{hysteresis}: the output snaps"))),
            (drive < switch.value("vgs_on", "V"), "violation", "gate-drive", f"Q2 pulls the MOSFET's gate only "
             f"{fq(drive, 'V')} below the supply at the lowest supply; its on-resistance is rated at "
             f"{fq(switch.value('vgs_on', 'V'), 'V')}"),
            (vcb < 0, "warning", "q2-saturation", f"Q2's collector falls {fq(-vcb, 'V')} below its base at the trip "
             "point at some corners: Q2 saturates and the active-region trip point is approximate"),
            (float(np.max(tr["ve_v"])) > veb, "violation", "junction-rating", f"with the capacitor empty Q1's "
             f"emitter-base junction is reverse biased by {fq(float(np.max(tr['ve_v'])), 'V')}, above its "
             f"{fq(veb, 'V')} rating"),
            (q2_reverse > veb, "violation", "junction-rating", f"after the timeout Q2's emitter-base junction is "
             f"reverse biased by {fq(q2_reverse, 'V')}, above its {fq(veb, 'V')} rating"),
            (float(after["v_in"][0]) <= ends[v_max][1], "violation", "stays-off", f"after the timeout Q1's base "
             f"current holds the capacitor at {fq(float(after['v_in'][0]), 'V')}, below the falling trip point: it "
             "would restart"),
            (heat > 0.5 * derated, "violation" if heat > derated else "warning", "switch-dissipation", f"the MOSFET "
             f"dissipates up to {fq(heat, 'W')} at its on-resistance (hottest ambient) against {fq(derated, 'W')} "
             f"derated to {hot:g} °C (common practice: stay below half)"),
            (True, "info", "start", "power-on start assumes the timing capacitor starts empty (the reset diode empties "
             "it into the supply at switch-off; a quick off-on restarts from what is left, a shorter delay)"
             if brief.start == "power-on" else "the button empties the timing capacitor; timing starts when it is "
             "released"),
        ]
        rules += [(value > switch.value(name, unit), "violation", "switch-rating", f"{what} up to {fq(value, unit)} "
                   f"exceeds the MOSFET's rating {fq(switch.value(name, unit), unit)}")
                  for name, what, value, unit in (("vds_max", "VDS", v_max, "V"), ("vgs_max", "VGS", v_max, "V"),
                                                  ("id_max", "ID", self._load_a(v_max), "A"))]
        if brief.load.kind == "relay":
            need, coil_v = brief.load.must_operate_frac * brief.load.coil_voltage_v, v_min - self._load_a(v_min) * rds
            rules += [(coil_v < need, "violation", "pick-up", f"at the lowest supply {fq(v_min, 'V')} the coil gets "
                       f"{fq(coil_v, 'V')}, below its must-operate voltage {fq(need, 'V')}"),
                      (True, "info", "release", "the gate snaps to the supply at the trip point, so the relay drops "
                       "out within its own release time wherever its release point lies")]
        return [Finding("info", "leakage-model", leak.basis_text())] + [Finding(severity, code, text)
                                                                   for bad, severity, code, text in rules if bad]

    # ---- optimiser ------------------------------------------------------------------------
    def selection(self) -> SelectionModel:
        """One block: the (r_hold, c_hold) pairs whose nominal delay lies in the band, with their delays at the corners
        the model's directions select and the standby after (`schmitt_tables.schmitt_selection`)."""
        return schmitt_selection(self)

    # ---- plots and SPICE ------------------------------------------------------------------
    def waveform(self, design: Design, x: Mapping[str, float]) -> Waveform:
        """Timing capacitor voltage against time up to the upper trip point at the point `x`."""
        xa = self._arrays(x)
        tr = self.trip(design, xa)
        volts = np.linspace(0.0, float(tr["v_trip"][0]), 200)
        t = charge_time_s(xa["c_hold"], xa["r_hold"], xa["supply_v"], volts,
                          self._extra(xa, tr, self._leakage(design), hold_state.shunt_ohm(design)))
        keep = np.isfinite(t)
        return Waveform(t[keep], volts[keep], "timing capacitor voltage", "V", float(tr["v_trip"][0]),
                        "Schmitt trigger's upper trip point")

    def spice(self, design: Design, point: Mapping[str, float] | None = None) -> str:
        """ngspice netlist at `point` (default nominal), `.measure tran delay` at the gate's snap: Gummel–Poon NPNs
        with the model's IS, BF, NF at the point's temperature (TNOM equal), leakage as a behavioural source,
        10 pF on the switching nodes, a level-1 P-MOSFET through its rated on-resistance, the coil as R + L."""
        x = {**self.nominal_point(design), **(point or {})}
        xa = self._arrays(x)
        args = [float(np.ravel(a)[0]) for a in self._trip_args(design, xa)]
        switch, diode, leak = self.part(design, "switch"), self.part(design, "diode"), self._leakage(design)
        a_typ, a_lim = (float(np.ravel(a)[0]) for a in leak.coefficients(x["ambient_c"], x[LEAK_LEVEL]))
        t_model, vs, n = float(self.delay(design, xa)[0]), x["supply_v"], self.part(design, "npn").value("ideality", "")
        vth = switch.value("vth_typ", "V")
        lines = [f"* {self.id}: {self.brief.title}",
                 f".options temp={x['ambient_c']:.6g} tnom={x['ambient_c']:.6g} reltol=1e-6 abstol=1e-15 vntol=1e-8",
                 f"Vcc vcc 0 dc {vs:.9g}", f"Rhold vcc in {x['r_hold']:.9g}", f"Chold in 0 {x['c_hold']:.9g} ic=0",
                 "Q1 c1 in e QN1", "Q2 c2 b2 e QN2", f"RE e 0 {x['r_emitter']:.9g}",
                 f"RC1 vcc c1 {x['r_q1_collector']:.9g}", f"R1 c1 b2 {x['r_divider_top']:.9g}",
                 f"R2 b2 0 {x['r_divider_bottom']:.9g}", f"RC2 vcc c2 {self._network()['r_q2_collector']:.9g}",

                 "CC1 c1 0 10p", "CB2 b2 0 10p", "CC2 c2 0 10p",
                 f".model QN1 NPN(IS={args[7]:.9g} BF={args[5]:.9g} NF={n:.6g} BR=1)",
                 f".model QN2 NPN(IS={args[8]:.9g} BF={args[6]:.9g} NF={n:.6g} BR=1)",
                 "M1 out c2 vcc vcc PSW L=100u W=100u",
                 f".model PSW PMOS(LEVEL=1 VTO={-vth:.6g} "
                 f"KP={1 / (switch.value('rds_on', 'ohm') * (switch.value('vgs_on', 'V') - vth)):.6g})"]
        terms = [f"{a:.9g}*pwr(max(v(in),0),{m:g})" for a, m in ((a_typ, leak.n_typ), (a_lim, leak.n_lim)) if a > 0]
        lines += [f"BLEAK in 0 I={'+'.join(terms)}"] if terms else []
        shunt = hold_state.shunt_ohm(design)
        lines += [f"RSH in 0 {shunt:.9g}"] if shunt is not None else []
        surface = float(np.ravel(bands.board_conductance_s(self.brief, xa))[0]) if bands.BOARD_LEAK in xa else 0.0
        lines += [f"RSURFACE in 0 {1.0 / surface:.9g}"] if surface > 0 else []
        if self.brief.load.kind == "relay":
            lines += [f"RCOIL out mid {self.brief.load.coil_resistance_ohm:.9g}",
                      f"LCOIL mid 0 {self.entry.value('coil_inductance', 'H'):.6g}", "D1 0 out DFLY",
                      f".model DFLY D(IS={diode.value('is_sat', 'A'):.6g} N={diode.value('ideality', ''):.6g})"]
        else:
            lines.append(f"RLOAD out 0 {vs / self.brief.load.current_a:.9g}")
        stop = 1.5 * t_model if math.isfinite(t_model) else 20 * x["r_hold"] * x["c_hold"]
        lines += [f".tran {stop / 4000:.6g} {stop:.6g} 0 {stop / 4000:.6g} uic",
                  f".measure tran delay when v(c2)={vs - 1.0:.9g} rise=1", ".end", ""]
        return "\n".join(lines)
