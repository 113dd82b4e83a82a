"""The shared frame of the transistor RC holds, composed from the device laws in `tradeoff.devices`.

An RC-hold timer charges a hold capacitor at the start and ends when the capacitor has discharged
far enough for the output stage (a Darlington base, a MOSFET gate) to let the relay go. The frame
holds what every such topology shares: the part classes, the component spreads, the capacitor's
leakage (`devices.capacitor`), BOM and standby; its seams live beside it: the relay coil and its
release band (`hold_relay`, laws in `devices.relay`), the hold state and the shunt option
(`hold_state`), the start network (`hold_start`, laws in `devices.start`), the common design rules
(`hold_rules`), the SPICE skeleton (`hold_spice`), the bands and candidate pairs (`bands`) and the
optimiser blocks (`hold_tables`). The topology modules supply the driver: its load law and its
release condition.
"""
from __future__ import annotations

from abc import abstractmethod
from typing import TYPE_CHECKING, ClassVar, Mapping

import numpy as np

from tradeoff.devices.capacitor import LEAK_LEVEL, CapacitorLeakage
from tradeoff.devices.junction import hfe_spread
from tradeoff.devices.quadrature import evaluate_in_chunks
from tradeoff.analysis import Uncertain
from tradeoff.topologies.bands import board_conductance_s, board_leak, component_band
from tradeoff.topologies.base import BomLine, Finding, Topology
from tradeoff.topologies.hold_relay import RelayLoad
from tradeoff.topologies.hold_rules import hold_checks
from tradeoff.topologies.hold_spice import hold_netlist
from tradeoff.topologies.hold_start import start_leakage_a, start_voltage
from tradeoff.topologies.hold_state import HoldState, HoldWaveform, shunt_ohm
from tradeoff.topologies.hold_tables import hold_selection
from tradeoff.topologies.ic_common import value_lines

__all__ = ["RcHoldTopology"]

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.selection import SelectionModel
    from tradeoff.topologies.base import Design, Role, Standby


class RcHoldTopology(RelayLoad, Topology):
    """Frame shared by the transistor RC holds: a hold capacitor charged at the start (push-button or
    power-on PNP pulse) discharging through r_hold into a driver (Darlington, MOSFET) that holds the
    relay until the driver's current falls to the relay's release current.

    The frame owns the start, capacitor leakage, shunt, relay coil and release band (`RelayLoad`),
    component spreads, BOM, standby, common design rules, the optimiser blocks and the SPICE
    skeleton; a subclass supplies
    the driver: its spread quantities, its hold time from a start voltage, its discharge current,
    its output current, its start-drive rule, its checks and its SPICE elements.
    """

    driver_option: ClassVar[str] = "driver"
    driver_default: ClassVar[str] = ""
    option_units = {"c_hold_rated_v": "V", "c_start_rated_v": "V", "r_be": "ohm", "r_charge": "ohm", "shunt": "ohm"}
    option_parts = {"diode": "diode", "pnp": "pnp", "r_hold_part": "resistor", "c_hold_part": "capacitor",
                    "r_start_part": "resistor", "c_start_part": "capacitor"}
    directions: ClassVar[dict[str, int]] = {}
    """Sign of d(delay)/d(quantity) (+1, -1; 0: either, both corners tried) used by the optimiser
    blocks; tests check them against exhaustive corners."""

    # ---- driver hooks ----------------------------------------------------------------------
    @abstractmethod
    def driver_uncertain(self, driver: "Part") -> dict[str, Uncertain]:
        """Spread quantities of the driver (gain, junction or threshold voltage ...)."""

    @abstractmethod
    def discharge_a(self, s: HoldState, v) -> np.ndarray:
        """Total discharge current of the hold capacitor at voltage v [V] [A]."""

    @abstractmethod
    def time_between_s(self, s: HoldState, v_hi, v_lo) -> np.ndarray:
        """Time the hold capacitor takes to discharge from v_hi to v_lo [V] [s] (0 where v_hi <= v_lo)."""

    @abstractmethod
    def output_a(self, s: HoldState, v) -> np.ndarray:
        """Coil current the driver passes at capacitor voltage v [V] [A]."""

    @abstractmethod
    def voltage_for_a(self, s: HoldState, i_a) -> np.ndarray:
        """Capacitor voltage [V] at which the driver's current, out of saturation, equals i_a [A]."""

    @abstractmethod
    def start_drive(self, r_hi_ohm: np.ndarray, design: "Design") -> tuple[np.ndarray, str]:
        """Whether the start voltage drives the driver fully on at the worst corner, per hold resistor value
        (largest, [ohm]). Returns (ok mask, the failure in designer terms with numbers)."""

    @abstractmethod
    def driver_checks(self, design: "Design") -> list[Finding]:
        """Driver-specific design rules (ratings, leakage against the drive ...)."""

    @abstractmethod
    def driver_spice(self, s: HoldState) -> tuple[list[str], list[str]]:
        """SPICE element lines of the driver (capacitor node 'hold', coil node 'col') and its .model lines."""

    # ---- built on the hooks ---------------------------------------------------------------
    def coil_current_finding(self, rating_a: float, driver: str, rating: str) -> list[Finding]:
        """Violation when the coil current at the highest supply and lowest coil resistance exceeds the
        driver's current rating `rating_a` [A] (driver: 'Darlington', 'MOSFET'; rating: 'IC', 'ID')."""
        from tradeoff.units import format_quantity as fq

        coil = self.brief.supply.max_v / (self.coil_nominal_ohm() * (1 - self.coil_tolerance()[0]))
        if coil <= rating_a:
            return []
        return [Finding("violation", "driver-current", f"coil current {fq(coil, 'A')} exceeds the {driver}'s "
                        f"{rating} rating {fq(rating_a, 'A')}")]

    @staticmethod
    def leakage_finding(text: str, leak_a: float, drive_a: float) -> Finding:
        """Warning when leakage at release, `leak_a` [A], reaches the current that holds the driver on,
        `drive_a` [A]: the end of the hold is then set by leakage, which datasheets bound only loosely."""
        if leak_a >= drive_a:
            return Finding("warning", "leakage-dominates", f"{text}: the end of the hold is set by leakage, which "
                           "datasheets bound only loosely")
        return Finding("info", "leakage-dominates", text)

    def hold_s(self, s: HoldState, v0) -> np.ndarray:
        """Time from start voltage v0 [V] until the coil current falls to s.release_a [s]."""
        return self.time_between_s(s, v0, self.voltage_for_a(s, s.release_a))

    def band_s(self, s: HoldState, i_high_a, i_low_a) -> np.ndarray:
        """Time the coil current takes to fall from i_high_a to i_low_a [A] in the linear region [s]."""
        return self.time_between_s(s, self.voltage_for_a(s, i_high_a), self.voltage_for_a(s, i_low_a))

    # ---- parts -------------------------------------------------------------------------------
    def part(self, design: "Design", option_name: str, default: str) -> "Part":
        """Catalog part named by design option `option_name` (or `default`), with the design's overrides."""
        return self.option_part(design, option_name, default)

    def entry_default(self, name: str, fallback: str) -> str:
        """A default part class id from the topology's catalog entry (field or param), else `fallback`."""
        return str(self.entry.fields.get(name, fallback))

    def driver(self, design: "Design") -> "Part":
        """The driver part class (Darlington, MOSFET)."""
        return self.part(design, self.driver_option, self.entry_default(self.driver_option, self.driver_default))

    def diode(self, design: "Design") -> "Part":
        """Flyback (and button charge) diode class."""
        return self.part(design, "diode", self.entry_default("diode", "diode-small-signal"))

    def pnp(self, design: "Design") -> "Part":
        """Start PNP class (power-on start)."""
        return self.part(design, "pnp", self.entry_default("pnp", "pnp-small"))

    def value_part(self, design: "Design", role: str, default: str) -> "Part":
        """Part class filling value role `role` (design option '<role>_part')."""
        return self.part(design, f"{role}_part", self.entry_default(f"{role}_part", default))

    def rated_v(self, design: "Design", role: str) -> float:
        """Rated voltage of the capacitor filling `role` [V]: design option '<role>_rated_v' or the smallest
        rating the class offers above the brief's maximum supply with the usual derating."""
        from tradeoff.candidates import rated_voltage
        raw = design.options.get(f"{role}_rated_v")
        if raw not in (None, ""):
            return float(raw)
        part = self.value_part(design, role, "cap-electrolytic-85c")
        chosen = rated_voltage(part, self.brief.supply.max_v)
        return chosen if chosen is not None else max(part.values("rated_voltages", "V"))

    def fixed_resistor(self) -> "Part":
        """Resistor class of the fixed resistors (r_be, r_charge)."""
        return self.catalog.part(self.entry_default("fixed_resistor", "res-thick-film-chip-5pct"))

    def fixed_ohm(self, design: "Design", name: str) -> float:
        """Fixed resistor value from a design option or the topology entry's param [ohm]."""
        raw = design.options.get(name)
        if raw not in (None, ""):
            return float(raw)
        return self.entry.value(name, "ohm")

    # ---- interface ----------------------------------------------------------------------------
    @property
    def power_on(self) -> bool:
        """True for the power-on PNP start, False for the push-button start."""
        return self.brief.start == "power-on"

    def roles(self) -> list["Role"]:
        """Hold resistor and capacitor; start resistor and capacitor for the power-on start."""
        from tradeoff.topologies.base import Role
        roles = [Role("r_hold", "resistor", "hold resistor: sets the discharge time with c_hold", lo=10e3,
                      limit="the hold resistor: at least 10 kΩ, so that its discharge current at full charge stays "
                            "small beside the start network's charge current (common practice)"),
                 Role("c_hold", "capacitor", "hold capacitor, charged at the start", ("electrolytic", "film"))]
        if self.power_on:
            roles += [Role("r_start", "resistor", "start resistor: base current of the start PNP", lo=1e3, hi=1e6,
                           limit="the start PNP's base resistor: 1 kΩ to 1 MΩ for a small-signal PNP (common practice)"),
                      Role("c_start", "capacitor", "start capacitor: length of the power-on pulse",
                           ("electrolytic", "film", "ceramic"), lo=1e-7, hi=1e-3,
                           limit="the power-on pulse's capacitor: 100 nF to 1 mF (common practice)")]
        return roles

    def uncertain(self, design: "Design") -> dict[str, Uncertain]:
        """Hold R and C, leakage level, release current, coil resistance, driver, start network."""
        q = {
            "r_hold": component_band(design.values["r_hold"], self.value_part(design, "r_hold", "res-metal-film-1pct"),
                                     self.brief, "ohm: hold resistor"),
            "c_hold": component_band(design.values["c_hold"], self.value_part(design, "c_hold", "cap-electrolytic-85c"),
                                     self.brief, "F: hold capacitor"),
            LEAK_LEVEL: self.leakage(design).uncertain(),
            **board_leak(self.brief),
        }
        q["release_frac"] = self.release_uncertain()
        tol, _ = self.coil_tolerance()
        q["coil_ohm"] = Uncertain.band(self.coil_nominal_ohm(), tol, unit="ohm",
                                       note="coil resistance at 25 degC, relay class tolerance (uniform)")
        q.update(self.driver_uncertain(self.driver(design)))
        if self.power_on:
            q["r_start"] = component_band(design.values["r_start"],
                                          self.value_part(design, "r_start", "res-metal-film-1pct"),
                                          self.brief, "ohm: start resistor")
            q["c_start"] = component_band(design.values["c_start"],
                                          self.value_part(design, "c_start", "cap-ceramic-x7r"),
                                          self.brief, "F: start capacitor")
            q["start_hfe"] = hfe_spread(self.pnp(design), "start PNP")
        return q

    def leakage(self, design: "Design", c_f=None, rated_v=None, part: "Part | None" = None) -> CapacitorLeakage:
        """Leakage law of the hold capacitor of `design` (or of arrays of candidate values of one class)."""
        part = part or self.value_part(design, "c_hold", "cap-electrolytic-85c")
        return CapacitorLeakage(part, design.values["c_hold"] if c_f is None else c_f,
                                self.rated_v(design, "c_hold") if rated_v is None else rated_v)

    def state(self, design: "Design", x: Mapping[str, np.ndarray], leak: CapacitorLeakage | None = None) -> HoldState:
        """HoldState of the samples `x` (quantity name -> array)."""
        leak = leak or self.leakage(design)
        temp = np.asarray(x["ambient_c"], dtype=float)
        a_typ, a_lim = leak.coefficients(temp, x[LEAK_LEVEL])
        coil = np.asarray(x["coil_ohm"], dtype=float)
        return HoldState(np.asarray(x["r_hold"], dtype=float), np.asarray(x["c_hold"], dtype=float), temp,
                         np.asarray(x["supply_v"], dtype=float), self.release_current_a(x["release_frac"], coil),
                         self.coil_ohm_at(coil, temp), leak, a_typ, a_lim, shunt_ohm(design), x, self.driver(design),
                         surface_s=board_conductance_s(self.brief, x))

    def delay(self, design: "Design", x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Delay [s]: (power-on pulse +) hold time from the start voltage to the relay's release.

        Long sample arrays are evaluated in chunks (`evaluate_in_chunks`); the leakage law is built once.
        """
        leak = self.leakage(design)
        return evaluate_in_chunks(lambda chunk: self._delay(design, chunk, leak), x)

    def _delay(self, design: "Design", x: Mapping[str, np.ndarray], leak: CapacitorLeakage | None = None) -> np.ndarray:
        """Delay [s] of one chunk of samples (see `delay`)."""
        s = self.state(design, x, leak)
        v0, pulse = start_voltage(self, design, s)
        t = self.hold_s(s, v0)
        return t if pulse is None else t + pulse.pulse_s

    # ---- parts list, supply current -------------------------------------------------------------
    def bom(self, design: "Design") -> list[BomLine]:
        """Hold R and C, driver, flyback diode; button: charge diode; power-on: PNP, its RC, r_be, r_charge."""
        from tradeoff.units import format_quantity as fq
        r_part = self.value_part(design, "r_hold", "res-metal-film-1pct")
        c_part = self.value_part(design, "c_hold", "cap-electrolytic-85c")
        driver, diode = self.driver(design), self.diode(design)
        lines = [*value_lines(design, "r_hold", "R1", r_part, "hold resistor"),
                 *value_lines(design, "c_hold", "C1", c_part, "hold capacitor", self.rated_v(design, "c_hold")),
                 BomLine("Q1", driver.id, driver.category, 1, driver.cost, "relay driver"),
                 BomLine("D1", diode.id, "flyback", 1, diode.cost, "across the relay coil")]
        if not self.power_on:
            lines.append(BomLine("D2", diode.id, "charge", 1, diode.cost, "push-button charge path"))
            return lines
        fixed = self.fixed_resistor()
        rs_part = self.value_part(design, "r_start", "res-metal-film-1pct")
        cs_part = self.value_part(design, "c_start", "cap-ceramic-x7r")
        pnp = self.pnp(design)
        lines += [BomLine("Q2", pnp.id, "PNP", 1, pnp.cost, "power-on start pulse"),
                  *value_lines(design, "r_start", "R2", rs_part, "start resistor"),
                  *value_lines(design, "c_start", "C2", cs_part, "start capacitor", self.rated_v(design, "c_start")),
                  BomLine("R3", fixed.id, fq(self.fixed_ohm(design, "r_be"), "Ω"), 1, fixed.cost, "start PNP base pull-up"),
                  BomLine("R4", fixed.id, fq(self.fixed_ohm(design, "r_charge"), "Ω"), 1, fixed.cost, "charge resistor")]
        return lines

    def after_timeout_a(self, design: "Design") -> float:
        """Supply current long after the timeout [A]: driver cut-off current (+ start capacitor leakage)."""
        driver = self.driver(design)
        off = driver.value("iceo", "A") if driver.has("iceo") else driver.value("idss", "A")
        if self.power_on:
            off += float(start_leakage_a(self, design, typical=True))
        return off

    def standby(self, design: "Design") -> "Standby":
        """During timing: the coil current at nominal supply; after: cut-off and leakage currents."""
        from tradeoff.topologies.base import Standby
        v = self.brief.supply.nominal_v
        vdrop = self.driver(design).value("vce_sat", "V") if self.driver(design).has("vce_sat") else 0.0
        return Standby(during_a=max(v - vdrop, 0.0) / self.coil_nominal_ohm(), after_a=self.after_timeout_a(design))

    # ---- design rules ---------------------------------------------------------------------------
    def nominal_state(self, design: "Design", point: Mapping[str, float] | None = None) -> HoldState:
        """HoldState of one point (default: every quantity nominal)."""
        point = {**self.nominal_point(design), **(point or {})}
        return self.state(design, {k: np.array([float(v)]) for k, v in point.items()})

    def checks(self, design: "Design") -> list[Finding]:
        """Common design rules (`hold_rules.hold_checks`) plus the driver's."""
        return hold_checks(self, design)

    # ---- optimiser blocks -----------------------------------------------------------------------
    def selection(self) -> "SelectionModel":
        """Hold block (r_hold, c_hold and their classes); power-on: start block and the 95 % charge Link
        (tradeoff.topologies.hold_tables)."""
        return hold_selection(self)

    # ---- plots and SPICE ------------------------------------------------------------------------
    def waveform(self, design: "Design", x: Mapping[str, float] | None = None, points: int = 200) -> HoldWaveform:
        """Hold-capacitor voltage and coil current against time at the point `x` (default nominal)."""
        s = self.nominal_state(design, x)
        v0, pulse = start_voltage(self, design, s)
        offset = 0.0 if pulse is None else float(pulse.pulse_s[0])
        v_rel = float(self.voltage_for_a(s, s.release_a)[0])
        v_end = max(0.5 * v_rel, 1e-3)
        v = np.linspace(float(v0[0]), v_end, points)
        t = offset + self.time_between_s(s, v0, v)
        release_s = offset + float(self.hold_s(s, v0)[0])
        return HoldWaveform(time_s=t, signal=v, signal_label="hold capacitor voltage", unit="V", threshold=v_rel,
                            threshold_label="release: coil current down to the release current",
                            output_a=self.output_a(s, v), release_s=release_s, release_a=float(s.release_a[0]))

    def spice(self, design: "Design", point: Mapping[str, float] | None = None) -> str:
        """ngspice netlist of `design` at `point` (default nominal) with `.measure tran delay`
        (`hold_spice.hold_netlist`)."""
        return hold_netlist(self, design, point)
