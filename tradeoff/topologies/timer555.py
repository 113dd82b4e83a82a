"""555-class monostable: a timing resistor charges a timing capacitor from the supply until
the threshold comparator trips at 2/3 of the supply, ending the output pulse.

Model (NE555 and TLC555 datasheets, monostable operation; leakage term by standard circuit
analysis): with the capacitor starting discharged and a constant current Ix drawn from it
(capacitor leakage, the threshold input current and, for a class that states it, the discharge
pin's off-state leakage: the off discharge transistor sits on the capacitor node while timing),

    t = R·C·ln((Vcc − Ix·R) / (Vcc/3 − Ix·R)),   1.0986·R·C (ln 3, "1.1 RC") at Ix = 0,

and no unit ever times out once Ix·R reaches Vcc/3. Ix is taken at the highest voltage the
capacitor reaches (2/3 Vcc, the conservative reading): for an electrolytic, the datasheet
leakage limit (0.01·C·V or 3 uA, scaled to voltage and temperature by tradeoff.devices.capacitor) in the
worst case and the class's typical fraction for nominal; for film and ceramic, the minimum
insulation resistance. The discharge pin's off-state leakage is the class's 25 degC figure (typical
for nominal, datasheet limit for the worst case) doubled every 10 K above 25 degC (junction reverse
leakage, common practice) and held at it below. The datasheet class adds its initial error, temperature drift and
supply drift as factors on t; R and C carry their tolerance and temperature coefficient. A board-surface
leakage G the brief states (`environment.board`) drains the capacitor node to ground: t is the same
law with R/(1 + R·G) for R and Ix + Vcc·G for Ix (`devices.comparator.shunted_charge`, exact).

The quiescent current continues after the timeout, as does the current through R into the
discharge pin (Vcc/R), which holds the capacitor empty. A bipolar class drives a small relay
coil from its output (with a flyback diode); otherwise a logic-level MOSFET does
(tradeoff.topologies.logic). Timing starts at power-on through an RC on the trigger pin, or by
a push-button to ground (brief.start).
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Mapping

import numpy as np

from tradeoff.devices import capacitor
from tradeoff.devices.supply_current import on_supply
from tradeoff.devices.comparator import (
    THRESHOLD_FRAC, TRIGGER_FRAC, discharge_leakage_a, monostable_width_s, shunted_charge,
)
from tradeoff.analysis import Uncertain
from tradeoff.candidates import rated_voltage
from tradeoff.selection import SelectionModel
from tradeoff.topologies import bands, logic
from tradeoff.topologies.base import BomLine, Design, Finding, Role, Standby, Topology, Waveform
from tradeoff.topologies.ic_common import (
    TEMPCO_REFERENCE_C, at_temperature, diode, fixed_part, role_bom, role_part, start_bom, start_checks,
    supply_problem, typical_to_limit, value_spread,
)
from tradeoff.topologies.timer555_tables import TimerClass, timer_selection
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = ["Timer555", "monostable_netlist"]

R_MIN_OHM = 1e3
"""Smallest timing resistance [ohm]: below it the discharge transistor's saturation current grows
large (common practice). Larger values are bounded by the resistor classes and the threshold-current rule."""

C_MIN_F = 100e-12
"""Smallest timing capacitance [F]: below it pin and stray capacitance take a noticeable share
(common practice). Larger values are bounded by the capacitor classes."""

DECOUPLING_F = 100e-9
"""Supply decoupling at the timer [F] (common practice)."""

CONTROL_PIN_F = 10e-9
"""Control-voltage pin capacitor of a bipolar timer [F] (common practice from the datasheets' application circuits)."""

_ROLES = (
    Role("r_timing", "resistor", "timing resistor", lo=R_MIN_OHM,
         limit="below 1 kΩ the discharge transistor's current grows large (common practice)"),
    Role("c_timing", "capacitor", "timing capacitor", ("electrolytic", "film", "ceramic"), lo=C_MIN_F,
         limit="below 100 pF pin and stray capacitance take a noticeable share (common practice)"),
)


def monostable_netlist(r_ohm: float, c_f: float, ix_a: float, vcc_v: float, title: str,
                       shunt_ohm: float | None = None) -> str:
    """Behavioural SPICE monostable: R charges C from Vcc, a constant current Ix (and a board-surface
    resistance `shunt_ohm` [ohm], if any) drains it, a comparator at 2/3 Vcc ends the output pulse;
    `.measure` prints `delay` [s]."""
    r_eq, ix_eq = shunted_charge(r_ohm, ix_a, vcc_v, 0.0 if shunt_ohm is None else 1.0 / shunt_ohm)
    t_est = float(monostable_width_s(r_eq, c_f, ix_eq, vcc_v))
    t_stop = 1.5 * (t_est if np.isfinite(t_est) else 5 * r_ohm * c_f)
    return "\n".join([
        f"* {title}",
        "* behavioural 555-class monostable: threshold comparator at 2/3 Vcc, capacitor leakage as a current",
        f"vcc vcc 0 dc {vcc_v:.6g}",
        f"rt vcc cap {r_ohm:.6g}",
        f"ct cap 0 {c_f:.6g} ic=0",
        f"ix cap 0 dc {ix_a:.6g}",
        *([f"rsurface cap 0 {shunt_ohm:.6g}"] if shunt_ohm is not None else []),
        f"bout out 0 v = {vcc_v:.6g} * (1 - u(v(cap) - {THRESHOLD_FRAC * vcc_v:.9g}))",
        "rout out 0 1meg",
        f".tran {t_stop / 4000:.6g} {t_stop:.6g} uic",
        f".measure tran delay when v(out)={vcc_v / 2:.6g} fall=1",
        ".end",
        "",
    ])


class Timer555(Topology):
    """555-class monostable (bipolar or CMOS class) with power-on or push-button trigger."""

    id = "timer555"
    option_parts = {"timer": "timer555", "r_timing_part": "resistor", "c_timing_part": "capacitor"}

    # ---- parts -------------------------------------------------------------------------
    def roles(self) -> list[Role]:
        """Timing resistor [ohm] and timing capacitor [F]."""
        return list(_ROLES)

    def _timer(self, design: Design) -> TimerClass:
        return self.timer_class(self.option_part(design, "timer"))

    def timer_ids(self) -> list[str]:
        """Ids of every 555-class timer class in the catalog."""
        return [p.id for p in self.catalog.parts("timer555")]

    def timer_class(self, part: "Part") -> TimerClass:
        """The quantities of timer class `part` at the brief's supply and load."""
        s = self.brief.supply
        load = self.brief.load
        direct = load.current_a <= part.value("output_source_max", "A")
        if direct and load.kind == "relay":
            direct = s.min_v - part.value("output_high_drop", "V") >= load.must_operate_frac * load.coil_voltage_v
        return TimerClass(
            part, direct,
            on_supply(part, "quiescent_supply", "quiescent_typ", "A", s.nominal_v),
            on_supply(part, "quiescent_supply", "quiescent_max", "A", s.nominal_v),
            on_supply(part, "r_max_supply", "r_max", "ohm", s.min_v),
        )

    def _rail(self) -> logic.LogicRail:
        s = self.brief.supply
        return logic.LogicRail(None, s.nominal_v, s.min_v, s.max_v, 0.0, 0.0)

    def support_bom(self, timer: TimerClass) -> list[BomLine]:
        """Every BOM line except the timing R and C: timer, decoupling, trigger network, output stage."""
        part = timer.part
        lines = [BomLine("U1", part.id, part.description, 1, part.cost, "555-class timer, monostable"),
                 fixed_part(self, "capacitor", DECOUPLING_F, "C2", "supply decoupling at the timer"),
                 fixed_part(self, "capacitor", CONTROL_PIN_F, "C3", "control-voltage pin to ground"),
                 *start_bom(self, "trigger", "R2", "C4", "D2")]
        if timer.direct:
            if self.brief.load.kind == "relay":
                lines.append(diode(self, "D1", "flyback diode across the coil (the timer output drives the coil)",
                                   logic.DIODE_REVERSE_FACTOR))
        else:
            lines += logic.output_driver_bom(self.brief, self.catalog, self._rail(), first_r=3)
        return lines

    def bom(self, design: Design) -> list[BomLine]:
        """Timer, timing R and C, decoupling, trigger network and output stage; the relay coil is the load."""
        return [*role_bom(self, design, _ROLES[0], "R1", "timing resistor"),
                *role_bom(self, design, _ROLES[1], "C1", "timing capacitor"),
                *self.support_bom(self._timer(design))]

    # ---- device laws --------------------------------------------------------------------
    def cap_model(self, c_part: "Part", c_nominal_f):
        """Leakage limit at (supply [V], ambient [degC]) -> [A] for the timing capacitor, and the nominal fraction."""
        if c_part.fields.get("dielectric") == "electrolytic":
            rated = rated_voltage(c_part, self.brief.supply.max_v) or max(c_part.values("rated_voltages", "V"))

            def limit(v, t):
                return capacitor.electrolytic_leakage_a(c_nominal_f, THRESHOLD_FRAC * v, rated, t, c_part)

            v0, t0 = self.brief.supply.nominal_v, TEMPCO_REFERENCE_C
            typical = capacitor.electrolytic_leakage_a(1.0, THRESHOLD_FRAC * v0, rated, t0, c_part, typical=True)
            frac = float(typical / capacitor.electrolytic_leakage_a(1.0, THRESHOLD_FRAC * v0, rated, t0, c_part))
            return limit, frac, "electrolytic leakage: datasheet limit (k·C·V or the floor) for the worst case, " \
                                f"typical fraction {frac:.3g} of it for nominal ({c_part.source('leakage_typical_frac')})"
        r_ins = capacitor.insulation_resistance_ohm(c_nominal_f, c_part)

        def limit(v, t):
            return THRESHOLD_FRAC * v / r_ins

        return limit, 1.0, "film/ceramic insulation: minimum insulation resistance for every unit (conservative)"

    def spread_quantities(self, timer: "Part", r_part: "Part", c_part: "Part", r_ohm, c_f, leak_frac: float,
                          leak_note: str) -> dict[str, Uncertain]:
        """Spread quantities of timer class `timer` with R [ohm] and C [F] of the given classes (values may be
        1.0 to give relative bands) and the capacitor's nominal leakage fraction."""
        q = {**value_spread("r_timing", r_ohm, r_part, "ohm", self.brief.supply.max_v),
             **value_spread("c_timing", c_f, c_part, "F", self.brief.supply.max_v,
                            bands.life_change_frac(c_part, self.brief)),
             **bands.board_leak(self.brief)}
        q["c_timing_leakage"] = typical_to_limit(leak_frac, 1.0, "", leak_note + " (fraction of the limit)")
        q["threshold_a"] = typical_to_limit(timer.value("threshold_current_typ", "A"),
                                            timer.value("threshold_current_max", "A"), "A",
                                            f"{timer.id}: threshold current ({timer.source('threshold_current_max')})")
        if timer.has("discharge_leakage_max"):
            q["discharge_a"] = typical_to_limit(timer.value("discharge_leakage_typ", "A"),
                                                timer.value("discharge_leakage_max", "A"), "A",
                                                f"{timer.id}: discharge pin off-state leakage at 25 °C, doubling every "
                                                f"10 K above ({timer.source('discharge_leakage_max')})")
        else:
            q["discharge_a"] = Uncertain.fixed(0.0, unit="A", note=f"{timer.id}: no discharge pin leakage stated")
        err, tc, sc = (timer.value("initial_error", ""), timer.value("tempco", "1/K"),
                       timer.value("supply_coefficient", "1/V"))
        q["timer_error"] = Uncertain(0.0, -err, err, note=f"{timer.id}: initial error ({timer.source('initial_error')})")
        q["timer_tempco"] = Uncertain(0.0, -tc, tc, unit="1/K", note=f"{timer.id}: drift ({timer.source('tempco')})")
        q["timer_supply_coef"] = Uncertain(0.0, -sc, sc, unit="1/V",
                                           note=f"{timer.id}: supply drift ({timer.source('supply_coefficient')})")
        return q

    def uncertain(self, design: Design) -> dict[str, Uncertain]:
        """R and C tolerance and tempco, capacitor leakage, threshold current, the class's three drifts."""
        timer = self._timer(design).part
        c = design.values["c_timing"]
        _, frac, note = self.cap_model(role_part(self, design, _ROLES[1]), c)
        return self.spread_quantities(timer, role_part(self, design, _ROLES[0]), role_part(self, design, _ROLES[1]),
                                design.values["r_timing"], c, frac, note)

    def width_s(self, leak_limit, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Pulse width [s] of the samples `x` with the capacitor leakage limit `leak_limit(v, t)` [A]."""
        v, t = x["supply_v"], x["ambient_c"]
        ix = x["c_timing_leakage"] * leak_limit(v, t) + x["threshold_a"] + discharge_leakage_a(x["discharge_a"], t)
        r, ix = shunted_charge(at_temperature(x, "r_timing"), ix, v, bands.board_conductance_s(self.brief, x))
        core = monostable_width_s(r, at_temperature(x, "c_timing"), ix, v)
        drift = ((1.0 + x["timer_error"]) * (1.0 + x["timer_tempco"] * (t - TEMPCO_REFERENCE_C))
                 * (1.0 + x["timer_supply_coef"] * (v - self.brief.supply.nominal_v)))
        return core * drift

    def delay(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Pulse width [s] per sample; inf where leakage and threshold current stop the charge short of 2/3 Vcc."""
        limit, _, _ = self.cap_model(role_part(self, design, _ROLES[1]), design.values["c_timing"])
        return self.width_s(limit, x)

    # ---- metrics and rules -------------------------------------------------------------
    def currents_a(self, timer: TimerClass, r_ohm):
        """Supply current during timing and after the timeout at nominal supply [A] (typical quiescent current)."""
        v = self.brief.supply.nominal_v
        load = self.brief.load.current_a
        gate = 0.0 if timer.direct else v / logic.GATE_PULLDOWN_OHM
        # mean charging current: 2/3 Vcc·C delivered over R·C·ln 3
        during = timer.quiescent_typ_a + load + gate + THRESHOLD_FRAC * v / (np.asarray(r_ohm) * np.log(3.0))
        after = timer.quiescent_typ_a + v / np.asarray(r_ohm)
        return during, after

    def standby(self, design: Design) -> Standby:
        """During: timer, load, charging current, gate pull-down; after: timer plus Vcc/R into the discharge pin."""
        during, after = self.currents_a(self._timer(design), design.values["r_timing"])
        return Standby(float(during), float(after))

    def checks(self, design: Design) -> list[Finding]:
        """Supply rating, largest timing resistance, leakage headroom, capacitor rating, drive and trigger."""
        timer = self._timer(design)
        part, s, amb = timer.part, self.brief.supply, self.brief.ambient
        r, c = design.values["r_timing"], design.values["c_timing"]
        c_part = role_part(self, design, _ROLES[1])
        out = []
        out += [Finding("violation", "supply-range", p) for p in [supply_problem(self, part)] if p]
        if r > timer.r_max_ohm:
            out.append(Finding("violation", "r-max", self.r_max_reason(timer)))
        limit, _, note = self.cap_model(c_part, c)
        discharge = part.value("discharge_leakage_max", "A") if part.has("discharge_leakage_max") else 0.0
        ix = (float(limit(s.min_v, amb.max_c)) + part.value("threshold_current_max", "A")
              + float(discharge_leakage_a(discharge, amb.max_c)))
        surface = self.brief.environment.surface_ohm
        r_eq, ix_eq = (float(u) for u in shunted_charge(r, ix, s.min_v, 0.0 if surface is None else 1.0 / surface))
        drop, headroom = ix_eq * r_eq, TRIGGER_FRAC * s.min_v
        board = "" if surface is None else f", with the board surface ({fq(surface, 'ohm')}) across the capacitor,"
        if drop >= headroom:
            out.append(Finding("violation", "leakage",
                               f"worst-case leakage plus threshold and discharge-pin current {fq(ix, 'A')} through "
                               f"R {fq(r, 'ohm')}{board} "
                               f"drops {fq(drop, 'V')}, reaching Vcc/3 = {fq(headroom, 'V')} at "
                               f"{fq(s.min_v, 'V')} and {amb.max_c:g} °C: the capacitor never reaches 2/3 Vcc"))
        elif drop > 0.1 * headroom:
            out.append(Finding("warning", "leakage",
                               f"worst-case leakage plus threshold current{board} drops {fq(drop, 'V')} across R, "
                               f"{100 * drop / headroom:.0f} % of the Vcc/3 headroom: "
                               "the delay depends strongly on leakage"))
        out.append(Finding("info", "leakage-model", note))
        if rated_voltage(c_part, s.max_v) is None:
            out.append(Finding("violation", "c-rating", f"{c_part.id} has no voltage rating with 20 % margin over "
                                                        f"the supply maximum {fq(s.max_v, 'V')}"))
        if c_part.has("temp_max") and amb.max_c > c_part.value("temp_max", "degC"):
            out.append(Finding("violation", "c-temperature",
                               f"{c_part.id} is rated to {c_part.value('temp_max', 'degC'):g} °C; the ambient reaches "
                               f"{amb.max_c:g} °C"))
        out += self._drive_checks(timer)
        out += start_checks(self, "trigger", TRIGGER_FRAC, part.value("supply_min", "V"), part.value("trigger_pulse_min", "s"))
        out.append(Finding("info", "quiescent",
                           f"{part.id}: standby uses the typical supply current {fq(timer.quiescent_typ_a, 'A')} at "
                           f"{fq(s.nominal_v, 'V')}; the datasheet maximum is {fq(timer.quiescent_max_a, 'A')}"))
        return out

    def _drive_checks(self, timer: TimerClass) -> list[Finding]:
        if not timer.direct:
            return logic.output_driver_checks(self.brief, self.catalog, self._rail())
        load, s = self.brief.load, self.brief.supply
        drop = timer.part.value("output_high_drop", "V")
        msg = (f"{timer.part.id} drives the load directly ({fq(load.current_a, 'A')}, within its "
               f"{fq(timer.part.value('output_source_max', 'A'), 'A')} output)")
        if load.kind == "relay":
            msg += (f"; the coil gets {fq(s.min_v - drop, 'V')} at minimum supply, must-operate "
                    f"{fq(load.must_operate_frac * load.coil_voltage_v, 'V')}")
        return [Finding("info", "output-drive", msg)]

    def r_max_reason(self, timer: TimerClass) -> str:
        """Why a timing resistance above the class's largest practical value is refused."""
        p = timer.part
        return (f"timing resistance above the {p.id} class's largest practical value {fq(timer.r_max_ohm, 'ohm')} "
                f"at the minimum supply {fq(self.brief.supply.min_v, 'V')} ({p.source('r_max')})")

    # ---- optimiser tables --------------------------------------------------------------
    def selection(self) -> SelectionModel:
        """One block: every (timer class, R, C) with its exact worst-case delay over the corners
        (`timer555_tables.timer_selection`)."""
        return timer_selection(self)

    # ---- plots and simulation ----------------------------------------------------------
    def waveform(self, design: Design, x: Mapping[str, float]) -> Waveform | None:
        """Timing capacitor voltage [V] from the trigger to 20 % past the delay, with the 2/3 Vcc threshold."""
        point = {n: np.array([float(v)]) for n, v in x.items()}
        r = float(at_temperature(point, "r_timing")[0])
        c = float(at_temperature(point, "c_timing")[0])
        v, ix = float(x["supply_v"]), self._ix_at(design, x)
        r, ix = (float(u) for u in shunted_charge(r, ix, v, bands.board_conductance_s(self.brief, point)))
        end = float(monostable_width_s(r, c, ix, v))
        span = 1.2 * end if np.isfinite(end) else 5 * r * c
        t = np.linspace(0.0, span, 400)
        vc = (v - ix * r) * (1.0 - np.exp(-t / (r * c)))
        return Waveform(t, vc, "timing capacitor voltage", "V", THRESHOLD_FRAC * v, "threshold 2/3 Vcc")

    def spice(self, design: Design) -> str | None:
        """Behavioural monostable at the nominal point (R, C, nominal leakage, threshold current and any
        board-surface leakage)."""
        x = self.nominal_point(design)
        g = float(np.asarray(bands.board_conductance_s(self.brief, x)))
        return monostable_netlist(design.values["r_timing"], design.values["c_timing"], self._ix_at(design, x),
                                  x["supply_v"], f"{self.id}: {self.brief.title}", 1.0 / g if g > 0 else None)

    def _ix_at(self, design: Design, x: Mapping[str, float]) -> float:
        """Current drawn from the timing capacitor at the point `x` [A]: leakage, threshold current and the
        discharge pin's off-state leakage."""
        limit, _, _ = self.cap_model(role_part(self, design, _ROLES[1]), design.values["c_timing"])
        leak = np.asarray(limit(float(x["supply_v"]), float(x["ambient_c"])), dtype=float).reshape(-1)[0]
        discharge = float(np.asarray(discharge_leakage_a(x["discharge_a"], x["ambient_c"])).reshape(-1)[0])
        return float(x["c_timing_leakage"] * leak + x["threshold_a"] + discharge)
