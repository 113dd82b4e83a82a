"""RC hold with a micropower comparator and voltage reference.

Circuit: the start charges the hold capacitor c_hold to the logic rail V0; it then discharges through
r_hold (and its own leakage, the comparator's input bias current, an optional shunt and any board-surface
leakage the brief states). The capacitor drives the comparator's + input; the - input sits on a fixed
threshold divider (R_TOP from the reference, R_BOTTOM to ground) with a hysteresis resistor R_HYST from
the output MOSFET's drain, an inverted copy of the comparator output. While timing, the output is high,
the MOSFET conducts and its drain is near 0 V: the threshold is
    V_th = (V_ref/R_TOP + V_drain/R_HYST) / (1/R_TOP + 1/R_BOTTOM + 1/R_HYST)
When the capacitor falls to V_th + offset the output goes low, the drain rises to the supply
and lifts the threshold by about V_s·(R_TOP ∥ R_BOTTOM)/R_HYST: snap action, and the capacitor
must be recharged above the raised threshold to start again.

The divider is fixed (not a value role): the threshold is set once by the reference and the
ratio, and the optimiser picks r_hold and c_hold, which set the delay
    t = C ∫ dV / i(V) from V_th to V0,  i(V) = V/r_hold + leakage(V) + I_bias (+ shunt, + board surface)
(tradeoff.devices.quadrature.discharge_integral_s, in u = ln V). With no leakage and no bias this is
t = r_hold·c_hold·ln(V0/V_th). Both comparator inputs carry a bias current of either sign up to the class's
limit at the sample's ambient (tradeoff.devices.comparator.input_bias_limit_a): the + input's drains or feeds
the capacitor, the reference input's shifts the threshold node by I·(R_top ∥ R_bottom ∥ R_hyst).

The delay is monotone in every spread quantity but the ambient (each lengthens or shortens it): a
bias current into the capacitor lengthens the delay more at a hot ambient, while leakage and a bias
out of it shorten it more there. The optimiser's table (`comparator_tables`) therefore takes, for each of the two
extreme corners of the other quantities, the extreme over both ambient ends; evaluate() searches every corner
and agrees (a test scans the ambient densely).
"""
from __future__ import annotations

import math
from typing import Mapping

import numpy as np

from tradeoff.analysis import Uncertain
from tradeoff.errors import DesignKeyError
from tradeoff.selection import SelectionModel
from tradeoff.devices import capacitor
from tradeoff.devices.comparator import input_bias_limit_a, threshold_node_ohm, threshold_v
from tradeoff.devices.mosfet import on_state_drop_v
from tradeoff.devices.quadrature import discharge_integral_s, evaluate_in_chunks
from tradeoff.topologies import bands, hold_state, logic
from tradeoff.topologies.base import BomLine, Design, Finding, Role, Standby, Topology, Waveform
from tradeoff.topologies.comparator_tables import comparator_selection
from tradeoff.topologies.ic_common import value_lines
from tradeoff.units import format_quantity as fq

__all__ = ["RcComparator", "R_TOP_OHM", "R_BOTTOM_OHM", "R_HYST_OHM", "HYSTERESIS_MIN_V"]

R_TOP_OHM = 1e6
"""Threshold divider, reference side [ohm]."""
R_BOTTOM_OHM = 1e6
"""Threshold divider, ground side [ohm] (with R_TOP: about half the reference)."""
R_HYST_OHM = 10e6
"""Hysteresis resistor from the output MOSFET's drain to the threshold node [ohm]."""
HYSTERESIS_MIN_V = 20e-3
"""Smallest threshold step for clean switching [V] (common practice: well above noise and offset drift)."""


class RcComparator(Topology):
    """RC hold read by a nanopower comparator against a reference divider; see the module docstring."""

    id = "rc-comparator"
    option_units = {"regulator": None, "c_rated_v": "V", "shunt": "ohm"}
    option_parts = {"comparator": "comparator", "reference": "reference", "r_hold_part": "resistor",
                    "c_hold_part": "capacitor"}
    required_options = ("regulator",)

    # ---- parts ------------------------------------------------------------------------
    def _ics(self, design: Design):
        return self.option_part(design, "comparator"), self.option_part(design, "reference")

    def _ic_range(self, comp, ref) -> tuple[float, float]:
        return (max(comp.value("supply_min", "V"), ref.value("supply_min", "V")),
                min(comp.value("supply_max", "V"), ref.value("supply_max", "V")))

    def _rail(self, design: Design) -> logic.LogicRail:
        option = design.options.get("regulator")
        if option is None:
            raise DesignKeyError(("options", "regulator"), f"missing; accepted: {logic.NO_REGULATOR!r} or "
                                 "a regulator class id")
        return logic.logic_rail(self.brief, self.catalog, option, *self._ic_range(*self._ics(design)))

    def _cap(self, design: Design):
        part = self.option_part(design, "c_hold_part")
        rated = design.options.get("c_rated_v") or min(v for v in part.values("rated_voltages", "V")
                                                       if v >= self._rail(design).max_v / 0.8)
        return part, float(rated)

    def _drain_max_v(self, rail: logic.LogicRail) -> float:
        """Largest drain voltage while the MOSFET conducts [V] (square-law model at its weakest corner)."""
        fet = logic.output_mosfet(self.brief, self.catalog, rail)
        vth = fet.value("vth_max", "V") + fet.value("vth_tempco", "V/K") * (self.brief.ambient.min_c - 25.0)
        drop = on_state_drop_v(rail.min_v - vth, fet.value("k_min", "A/V**2"), logic.load_current_max(self.brief))
        return min(drop, self.brief.supply.max_v)

    # ---- Topology interface ---------------------------------------------------------
    def roles(self) -> list[Role]:
        """r_hold and c_hold: the hold time constant (the divider is fixed)."""
        return [Role("r_hold", "resistor", "hold resistor the capacitor discharges through"),
                Role("c_hold", "capacitor", "hold capacitor", ("electrolytic", "film"))]

    def uncertain(self, design: Design) -> dict[str, Uncertain]:
        """Hold R and C, leakage level, rail, reference, divider, comparator offset and bias, drain voltage."""
        comp, ref = self._ics(design)
        rail = self._rail(design)
        r_part = self.option_part(design, "r_hold_part")
        c_part, rated = self._cap(design)
        fixed_r = logic.resistor_class(self.catalog, R_TOP_OHM)
        offset = comp.value("offset_max", "V")
        return {
            "r_hold": bands.component_band(self.design_value(design, "r_hold"), r_part, self.brief, "ohm: hold resistor"),
            "c_hold": bands.component_band(self.design_value(design, "c_hold"), c_part, self.brief, "F: hold capacitor"),
            capacitor.LEAK_LEVEL: capacitor.CapacitorLeakage(c_part, self.design_value(design, "c_hold"), rated).uncertain(),
            "rail_v": Uncertain(rail.nominal_v, rail.min_v, rail.max_v, unit="V",
                                note=f"start voltage: the logic rail ({rail.option}) the capacitor charges to"),
            "v_ref": bands.component_band(ref.value("output", "V"), ref, self.brief, "V: reference output"),
            "r_top": bands.component_band(R_TOP_OHM, fixed_r, self.brief, "ohm: divider, reference side"),
            "r_bottom": bands.component_band(R_BOTTOM_OHM, fixed_r, self.brief, "ohm: divider, ground side"),
            "r_hyst": bands.component_band(R_HYST_OHM, logic.resistor_class(self.catalog, R_HYST_OHM), self.brief,
                                          "ohm: hysteresis resistor"),
            "offset_v": Uncertain(0.0, -offset, offset, unit="V", note=f"{comp.id}: input offset (uniform)"),
            "bias_frac": Uncertain(0.0, -1.0, 1.0, note=f"{comp.id}: + input bias current as a fraction of its "
                                   f"limit at the ambient, either sign (uniform; {self._bias_basis(comp)})"),
            "ref_bias_frac": Uncertain(0.0, -1.0, 1.0, note=f"{comp.id}: reference-input bias current as a fraction "
                                       "of its limit at the ambient, either sign (uniform)"),
            "drain_v": Uncertain(0.0, 0.0, self._drain_max_v(rail), unit="V",
                                 note="output MOSFET drain while on: 0 to its weakest-corner drop (uniform)"),
            **bands.board_leak(self.brief),
        }

    @staticmethod
    def _bias_basis(comp) -> str:
        """What the bias limit over temperature rests on, in words."""
        if not comp.has("bias_room_max"):
            return f"{fq(comp.value('bias_max', 'A'), 'A')} at every ambient, {comp.source('bias_max')}"
        return (f"datasheet limits {fq(comp.value('bias_room_max', 'A'), 'A')} at 25 °C and "
                f"{fq(comp.value('bias_max', 'A'), 'A')} at {comp.value('bias_max_temp', 'degC'):g} °C, exponential "
                "between them, held at the 25 °C limit below it")

    def _bias_limit_a(self, design: Design, ambient_c) -> np.ndarray:
        """Input bias limit of the comparator class at each sample's ambient [A]."""
        return input_bias_limit_a(self._ics(design)[0], ambient_c)

    def _leakage(self, design: Design) -> capacitor.CapacitorLeakage:
        c_part, rated = self._cap(design)
        return capacitor.CapacitorLeakage(c_part, self.design_value(design, "c_hold"), rated)

    def trip_v(self, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Capacitor voltage at which the comparator switches [V]: the threshold node (lowered by the
        reference input's bias current through the node's resistance, `ref_bias_a` [A], 0 when absent)
        plus the offset."""
        node = threshold_v(x["v_ref"], x["drain_v"], x["r_top"], x["r_bottom"], x["r_hyst"])
        shift = np.asarray(x.get("ref_bias_a", 0.0)) * threshold_node_ohm(x["r_top"], x["r_bottom"], x["r_hyst"])
        return node - shift + x["offset_v"]

    def _with_bias(self, design: Design, x: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
        """`x` with both inputs' bias currents [A] (`bias_a`, `ref_bias_a`) and the board conductance [S] (`surface_s`)."""
        x = {k: np.asarray(v, dtype=float) for k, v in x.items()}
        limit = self._bias_limit_a(design, x["ambient_c"])
        return {**x, "bias_a": x["bias_frac"] * limit, "ref_bias_a": x["ref_bias_frac"] * limit,
                "surface_s": np.zeros_like(x["ambient_c"]) + bands.board_conductance_s(self.brief, x)}

    @staticmethod
    def _current_terms(leak: capacitor.CapacitorLeakage, x: Mapping[str, np.ndarray], shunt: float | None):
        """Discharge current I(V) = Σ c·V**n as (n, c) terms: leakage power laws, the hold resistor's, the
        shunt's and the board surface's conductance (n = 1) and the comparator's bias current (n = 0) [A/V^n]."""
        a_typ, a_lim = leak.coefficients(x["ambient_c"], x[capacitor.LEAK_LEVEL])
        conductance = 1.0 / x["r_hold"] + (0.0 if shunt is None else 1.0 / shunt) + x["surface_s"]
        return [(leak.n_typ, a_typ), (leak.n_lim, a_lim), (1, conductance), (0, x["bias_a"])]

    def discharge_current_a(self, design: Design, v, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Current leaving the hold capacitor at voltage v [V] > 0: hold resistor, leakage, bias, optional shunt [A]."""
        x = self._with_bias(design, x)
        return capacitor.power_sum(v, self._current_terms(self._leakage(design), x, hold_state.shunt_ohm(design)))

    def delay(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Discharge time from the rail to the trip voltage [s]; inf where the current at the trip is not positive.

        Long sample arrays are evaluated in chunks (evaluate_in_chunks); the leakage law is built once.
        """
        leak, shunt = self._leakage(design), hold_state.shunt_ohm(design)
        return evaluate_in_chunks(lambda chunk: self._delay(self._with_bias(design, chunk), leak, shunt), x)

    def _delay(self, x: Mapping[str, np.ndarray], leak: capacitor.CapacitorLeakage, shunt: float | None) -> np.ndarray:
        """Delay [s] of one chunk of samples (see `delay`)."""
        v0, v_end = x["rail_v"], np.clip(self.trip_v(x), 1e-6, None)
        terms = self._current_terms(leak, x, shunt)
        ends = (capacitor.power_sum(v_end, terms) > 0) & (v0 > v_end)
        # I(V) rises with V, so it stays positive above the trip where it is positive at the trip; samples that
        # never end get no bias current in the quadrature (their result is replaced below)
        n_bias, bias = terms[-1]
        terms[-1] = (n_bias, np.where(ends, bias, 0.0))
        along = [(n, np.asarray(c)[..., None]) for n, c in terms]

        def integrand(u):  # (dV/du) / I = V / I(V) in u = ln V, built in place
            v = np.exp(u, out=u)
            current = capacitor.power_sum(v, along)
            return np.divide(v, current, out=current)

        t = discharge_integral_s(x["c_hold"], np.log(v_end), np.log(np.maximum(v0, v_end)), integrand)
        return np.where(ends, t, np.where(v0 > v_end, np.inf, 0.0))

    def _currents(self, design: Design, rail: logic.LogicRail) -> tuple[float, float]:
        comp, ref = self._ics(design)
        ics = comp.value("quiescent_typ", "A") + ref.value("quiescent_typ", "A") + rail.quiescent_typ_a
        v_ref = ref.value("output", "V")
        divider = v_ref / (R_TOP_OHM + R_BOTTOM_OHM)
        node_after = threshold_v(v_ref, self.brief.supply.nominal_v, R_TOP_OHM, R_BOTTOM_OHM, R_HYST_OHM)
        hyst_after = (self.brief.supply.nominal_v - node_after) / R_HYST_OHM
        during = self.brief.load.current_a + ics + divider + rail.nominal_v / logic.GATE_PULLDOWN_OHM
        return during, ics + divider + hyst_after

    def standby(self, design: Design) -> Standby:
        """Typical currents at nominal supply: the comparator, reference, divider and regulator keep drawing after
        the timeout, plus the hysteresis resistor's current from the drain (now at the supply)."""
        return Standby(*self._currents(design, self._rail(design)))

    def rails(self, design: Design) -> int:
        """2 with a regulated logic rail, 1 when the ICs run straight from a regulated supply."""
        return self._rail(design).rails

    def _fixed_bom(self, design: Design, rail: logic.LogicRail) -> list[BomLine]:
        comp, ref = self._ics(design)
        lines = logic.rail_bom(self.brief, self.catalog, rail, "U1", comp)
        lines.append(BomLine("U3", ref.id, ref.summary, 1, ref.cost, "threshold reference"))
        for refs, value, note in (("R1", R_TOP_OHM, "threshold divider"), ("R2", R_BOTTOM_OHM, "threshold divider"),
                                  ("R3", R_HYST_OHM, "hysteresis from the drain")):
            part = logic.resistor_class(self.catalog, value)
            lines.append(BomLine(refs, part.id, fq(value, "ohm"), 1, part.cost, note))
        return lines + logic.output_driver_bom(self.brief, self.catalog, rail, first_r=5)

    def bom(self, design: Design) -> list[BomLine]:
        """Comparator, reference, divider, hysteresis, hold R and C, output MOSFET, flyback diode, logic rail."""
        rail = self._rail(design)
        r_part = self.option_part(design, "r_hold_part")
        c_part, rated = self._cap(design)
        hold_lines = [*value_lines(design, "r_hold", "R4", r_part, "hold"),
                      *value_lines(design, "c_hold", "C4", c_part, "hold", rated)]
        return self._fixed_bom(design, rail) + hold_lines

    def checks(self, design: Design) -> list[Finding]:
        """Clean switching (hysteresis step), restart above the raised threshold, leakage model, start, driver."""
        rail = self._rail(design)
        q = self.quantities(design)
        nominal = {k: v.nominal for k, v in q.items()}
        on = threshold_v(nominal["v_ref"], 0.0, R_TOP_OHM, R_BOTTOM_OHM, R_HYST_OHM)
        off = threshold_v(nominal["v_ref"], self.brief.supply.min_v, R_TOP_OHM, R_BOTTOM_OHM, R_HYST_OHM)
        off_max = threshold_v(q["v_ref"].hi, self.brief.supply.max_v, q["r_top"].lo, q["r_bottom"].hi, q["r_hyst"].lo)
        out = [Finding("info", "leakage-model", self._leakage(design).basis_text())]
        step = off - on - 2 * q["offset_v"].hi
        if step < HYSTERESIS_MIN_V:
            out.append(Finding("violation", "hysteresis", f"the threshold steps only {fq(off - on, 'V')} when the "
                               f"output switches; clean switching needs {fq(HYSTERESIS_MIN_V, 'V')} beyond the "
                               f"offset"))
        else:
            out.append(Finding("info", "hysteresis", f"threshold {fq(on, 'V')} while timing, {fq(off, 'V')} after "
                               f"(step {fq(off - on, 'V')} at minimum supply): the output snaps"))
        if off_max >= rail.min_v:
            out.append(Finding("violation", "restart", f"the raised threshold reaches {fq(off_max, 'V')}, at or "
                               f"above the {fq(rail.min_v, 'V')} the capacitor charges to: it could not restart"))
        if self.brief.start == "power-on":
            out.append(Finding("warning", "start", "power-on start: the model assumes the hold capacitor starts "
                               "fully charged to the logic rail (a start pulse that charges it is not modelled "
                               "for this topology)"))
        return out + logic.output_driver_checks(self.brief, self.catalog, rail)

    def waveform(self, design: Design, x: Mapping[str, float]) -> Waveform:
        """Capacitor voltage against time with the trip voltage, at the point `x` (integrated on a time grid)."""
        xa = {k: np.array([v], dtype=float) for k, v in x.items()}
        end = float(self.delay(design, xa)[0])
        span = 1.2 * end if math.isfinite(end) and end > 0 else 10 * x["r_hold"] * x["c_hold"]
        v0, trip = float(x["rail_v"]), float(self.trip_v(self._with_bias(design, xa))[0])
        volts = np.geomspace(v0, max(trip * 0.5, 1e-3), 400)
        current = self.discharge_current_a(design, volts, x)
        # time to reach each voltage: cumulative trapezoid of C dV / i(V) from v0 downwards
        dt = x["c_hold"] * np.diff(-volts) * 0.5 * (1 / current[1:] + 1 / current[:-1])
        t = np.concatenate([[0.0], np.cumsum(np.where(current[1:] > 0, dt, np.inf))])
        keep = t <= span
        return Waveform(t[keep], volts[keep], "hold capacitor voltage", "V", trip, "comparator trip voltage")

    # ---- optimiser --------------------------------------------------------------------
    def selection(self) -> SelectionModel:
        """One block: the (r_hold, c_hold) pairs of every logic rail whose nominal delay lies in the band, with the
        delay at the two extreme corners (`comparator_tables.comparator_selection`)."""
        return comparator_selection(self)

    def spice(self, design: Design) -> str:
        """ngspice netlist of `design` at nominal values (typical leakage as a behavioural current source,
        behavioural comparator, switch as the output MOSFET, relay coil as its resistance), with
        `.measure tran delay` at the comparator output's falling edge."""
        q = self.quantities(design)
        x = {n: float(v[0]) for n, v in self._with_bias(design, {n: [u.nominal] for n, u in q.items()}).items()}
        leak = self._leakage(design)
        a_typ, a_lim = (float(np.asarray(a).reshape(-1)[0]) for a in leak.coefficients(x["ambient_c"],
                                                                                        x[capacitor.LEAK_LEVEL]))
        shunt = hold_state.shunt_ohm(design)
        expected = self.nominal_delay(design)
        stop = 1.3 * expected if math.isfinite(expected) else 20 * x["r_hold"] * x["c_hold"]
        coil = self.brief.load.coil_resistance_ohm or self.brief.supply.nominal_v / self.brief.load.current_a
        rail = x["rail_v"]
        lines = [
            f"* {self.id}: {fq(x['r_hold'], 'ohm')} / {fq(x['c_hold'], 'F')} hold read by a comparator",
            f"Vrail rail 0 {rail:.6g}",
            f"Vsup sup 0 {self.brief.supply.nominal_v:.6g}",
            f"Vref ref 0 {x['v_ref']:.6g}",
            f"Rtop ref th {x['r_top']:.6g}",
            f"Rbot th 0 {x['r_bottom']:.6g}",
            f"Rhys drain th {x['r_hyst']:.6g}",
            f"Chold cap 0 {x['c_hold']:.6g} IC={rail:.6g}",
            f"Rhold cap 0 {x['r_hold']:.6g}",
            f"Bleak cap 0 I = {a_typ:.6g}*pow(max(V(cap),0),{leak.n_typ:.6g})"
            f" + {a_lim:.6g}*pow(max(V(cap),0),{leak.n_lim:.6g}) + {x['bias_a']:.6g}",
            f"Iref th 0 {x['ref_bias_a']:.6g}",
            f"Bcomp out 0 V = {rail:.6g}*(0.5+0.5*tanh((V(cap)-V(th)-({x['offset_v']:.6g}))/1e-3))",
            f"Rcoil sup drain {coil:.6g}",
            f"Sdrv drain 0 out 0 swdrv",
            f".model swdrv sw(vt={rail / 2:.6g} vh=0.01 ron=0.01 roff=1e10)",
            "Dfly drain sup dfly",
            ".model dfly d(is=4n n=1.9)",
        ]
        lines += [f"Rshunt cap 0 {shunt:.6g}"] if shunt is not None else []
        lines += [f"Rsurface cap 0 {1.0 / x['surface_s']:.6g}"] if x["surface_s"] > 0 else []
        lines += [f".tran {stop / 4000:.6g} {stop:.6g} uic",
                  f".measure tran delay when v(out)={rail / 2:.6g} fall=1", ".end", ""]
        return "\n".join(lines)
