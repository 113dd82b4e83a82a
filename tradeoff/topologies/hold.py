"""The shared frame of the transistor RC holds, composed from the device laws in `tradeoff.devices`.

An RC-hold timer charges a hold capacitor at the start and ends when the capacitor has discharged
far enough for the output stage (a Darlington base, a MOSFET gate) to let the relay go. The frame
holds what every such topology shares: the hold state of a batch of samples, the component bands,
the optional shunt across the capacitor (design option `shunt` [ohm], e.g. a 10 MΩ meter), the
start (`devices.start`), the capacitor's leakage (`devices.capacitor`), the relay's release
(`devices.relay`), BOM, standby, design rules, optimiser blocks and the SPICE skeleton. The
topology modules supply the driver: its load law and its release condition.
"""
from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from abc import abstractmethod
from typing import TYPE_CHECKING, Any, Callable, ClassVar, Mapping

import numpy as np
import pandas as pd

from tradeoff.devices.capacitor import LEAK_LEVEL, CapacitorLeakage, band_frac
from tradeoff.devices.junction import hfe_at, hfe_spread, thermal_voltage_v, vbe_at_v
from tradeoff.devices.quadrature import evaluate_in_chunks
from tradeoff.devices.relay import coil_ohm_at, derated_power_w, linear_peak_dissipation_w, release_current_a
from tradeoff.devices.start import (
    CHARGE_FRACTION_MIN, CHARGE_TIME_CONSTANTS, StartPulse, button_start_v, charge_window_s, pnp_base_currents,
    power_on_start,
)
from tradeoff.analysis import Uncertain
from tradeoff.candidates import role_candidates
from tradeoff.errors import DesignError, UnitParseError
from tradeoff.topologies.base import BomLine, Finding, Topology, Waveform

__all__ = ["shunt_ohm", "shunt_current_a", "component_band", "hold_pairs", "HoldWaveform", "Dropped", "option",
           "HoldState", "RcHoldTopology"]

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part
    from tradeoff.topologies.base import Design, Role


def shunt_ohm(design: "Design") -> float | None:
    """External shunt across the hold capacitor from design option `shunt` [ohm]; None when absent."""
    raw = design.options.get("shunt")
    if raw in (None, 0, "", "none"):
        return None
    if isinstance(raw, str):
        from tradeoff.units import parse_quantity
        try:
            value = parse_quantity(raw, "ohm")
        except UnitParseError as exc:
            raise DesignError.single("design", "options.shunt", f"{exc}; accepted: a resistance such as "
                                     "'10 Mohm', or none") from None
    else:
        value = float(raw)
    if not (math.isfinite(value) and value > 0):
        raise DesignError.single("design", "options.shunt", f"{raw!r} is not a positive resistance; "
                                 "accepted: a resistance such as '10 Mohm', or none")
    return value


def shunt_current_a(v, shunt: float | None):
    """Current through the optional shunt [A] at capacitor voltage v [V] (0 without one)."""
    return 0.0 if shunt is None else np.asarray(v, dtype=float) / shunt


# ---- component bands and candidate pairs --------------------------------------------------------

def component_band(value: float, part: "Part", brief: "Brief", note: str) -> Uncertain:
    """Value spread of a resistor or capacitor [ohm or F]: tolerance plus tempco over the brief's ambient
    range (`devices.capacitor.band_frac`), uniform."""
    spread = band_frac(part.value("tolerance", ""), part.value("tempco", "1/K"), brief.ambient.min_c,
                       brief.ambient.max_c)
    if not spread < 1:  # the value could reach zero: a part no model can use
        raise part.param_error("tolerance", f"tolerance plus tempco over the ambient range make a band of "
                                           f"±{spread * 100:.0f} %, so the value could reach zero; accepted: a band "
                                           "below 100 %")
    return Uncertain(value, value * (1 - spread), value * (1 + spread), unit=note.split(":")[0],
                     note=f"{note}: {part.id} tolerance ± tempco over the ambient range (uniform)")


def hold_pairs(r_role: "Role", c_role: "Role", brief: "Brief", catalog: "Catalog",
               r_classes: list["Part"] | None = None, c_classes: list["Part"] | None = None) -> pd.DataFrame:
    """Every (resistor, capacitor) candidate pair of two value roles, one row each.

    Columns: <r_role>, <c_role> (values [ohm], [F]), r_part, c_part, r_spread, c_spread (band
    fractions as in `component_band`), c_rated_v [V], cost [EUR], placements, first/second
    series parts of the resistor (r_first, r_second).
    """
    r = role_candidates(r_role, brief, catalog, r_classes)
    c = role_candidates(c_role, brief, catalog, c_classes)
    amb = brief.ambient
    ri, ci = np.meshgrid(np.arange(len(r)), np.arange(len(c)), indexing="ij")
    ri, ci = ri.ravel(), ci.ravel()
    rr, cc = r.iloc[ri].reset_index(drop=True), c.iloc[ci].reset_index(drop=True)
    return pd.DataFrame({
        r_role.name: rr["value"].to_numpy(float), c_role.name: cc["value"].to_numpy(float),
        "r_part": rr["part"].to_numpy(), "c_part": cc["part"].to_numpy(),
        "r_spread": band_frac(rr["tolerance"], rr["tempco"], amb.min_c, amb.max_c).to_numpy(float),
        "c_spread": band_frac(cc["tolerance"], cc["tempco"], amb.min_c, amb.max_c).to_numpy(float),
        "c_rated_v": cc["rated_v"].to_numpy(float),
        "cost": (rr["cost"] + cc["cost"]).to_numpy(float),
        "placements": (rr["placements"] + cc["placements"]).to_numpy(int),
        "r_first": rr["first"].to_numpy(float), "r_second": rr["second"].to_numpy(float),
    }).query("r_spread < 1 and c_spread < 1").reset_index(drop=True)  # a band of 100 % could reach zero


class Dropped(dict):
    """Candidates removed by a design rule, counted by reason (becomes Block.dropped)."""

    def drop(self, mask: np.ndarray, reason: Callable[[np.ndarray], str]) -> np.ndarray:
        """Count the rows `mask` removes under the reason text `reason(mask)`; return the keep mask."""
        mask = np.asarray(mask, dtype=bool)
        if mask.any():
            text = reason(mask)
            self[text] = self.get(text, 0) + int(mask.sum())
        return ~mask


@dataclass(frozen=True)
class HoldWaveform(Waveform):
    """A hold waveform: capacitor voltage (the signal) plus the output current and the release point.

    output_a: coil (collector or drain) current [A] at each time; release_s: the delay [s];
    release_a: the release current [A].
    """

    output_a: np.ndarray = None
    release_s: float = 0.0
    release_a: float = 0.0


def option(design: "Design", name: str, default: Any) -> Any:
    """A design option with its default (topology entry or class default)."""
    value = design.options.get(name)
    return default if value in (None, "") else value


# ---- the shared frame of the transistor RC holds ------------------------------------------------

@dataclass
class HoldState:
    """One batch of hold evaluations (arrays broadcast over samples or candidates x corners).

    r_ohm, c_f: hold resistor [ohm] and capacitor [F]; temp_c [degC]; supply_v [V]; release_a:
    the unit's relay release current [A] (release_frac·Vc/R_coil at 25 degC); coil_ohm: coil resistance at temp_c [ohm]; leak with (a_typ, a_lim):
    capacitor leakage law; shunt_ohm: external shunt or None; x: every sample quantity by name
    (driver-specific ones included); driver: the driver part class; memo: per-sample arrays a driver
    derives once per state (junction or gate parameters at the samples' temperature).
    """

    r_ohm: np.ndarray
    c_f: np.ndarray
    temp_c: np.ndarray
    supply_v: np.ndarray
    release_a: np.ndarray
    coil_ohm: np.ndarray
    leak: CapacitorLeakage
    a_typ: np.ndarray
    a_lim: np.ndarray
    shunt_ohm: float | None
    x: Mapping[str, np.ndarray]
    driver: "Part"
    memo: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    def leakage_a(self, v, scratch: bool = False) -> np.ndarray:
        """Capacitor leakage plus shunt current at capacitor voltage v [V] [A].

        v may carry one trailing axis more than the state's arrays (quadrature nodes). scratch: v is
        the caller's temporary array, which may be clipped at 0 V in place (saves one array).
        """
        v = np.asarray(v, dtype=float)
        a_typ, a_lim = np.asarray(self.a_typ), np.asarray(self.a_lim)
        if v.ndim > a_typ.ndim:
            a_typ, a_lim = a_typ[..., None], a_lim[..., None]
        shunt = None if self.shunt_ohm is None else shunt_current_a(v, self.shunt_ohm)
        out = self.leak.current_a(v, a_typ, a_lim, scratch)
        if shunt is not None:
            out += shunt
        return out

    def trail(self, name: str) -> np.ndarray:
        """Sample quantity `name` with a trailing axis of length 1 (to broadcast against nodes)."""
        return np.asarray(self.x[name], dtype=float)[..., None]


CHATTER_RELEASE_TIMES = 10
"""Warn when the coil current takes longer than 10 relay release times to cross the band between
must-operate and must-release: far slower than the armature's own motion, the contacts open under
a slowly falling force and can chatter or arc (common practice; release time from the relay class)."""

DEFAULT_RELEASE_TIME_S = 5e-3
"""Relay release time when no relay class matches the brief's coil [s] (from memory: small PCB relays)."""

DISSIPATION_DERATING = 0.5
"""Warn above half the derated dissipation rating (common practice)."""

START_PNP_OFF_V = 0.3
"""Design rule: the start capacitor's leakage across r_be must stay below 0.3 V so the start PNP stays
off after its pulse (common practice: a silicon junction conducts negligibly below about 0.4 V)."""

FLYBACK_REVERSE_FACTOR = 3.0
"""Flyback diode reverse rating of about 3 times the supply (relay manufacturers' application notes)."""


class RcHoldTopology(Topology):
    """Frame shared by the transistor RC holds: a hold capacitor charged at the start (push-button or
    power-on PNP pulse) discharging through r_hold into a driver (Darlington, MOSFET) that holds the
    relay until the driver's current falls to the relay's release current.

    The frame owns the start, capacitor leakage, shunt, relay release band, component spreads, BOM,
    standby, common design rules, the optimiser blocks and the SPICE skeleton; a subclass supplies
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
        part_id = option(design, option_name, default)
        try:
            part = self.catalog.part(part_id)
        except LookupError:
            known = ", ".join(p.id for p in self.catalog.parts())
            raise DesignError.single("design", f"options.{option_name}", f"unknown part class {part_id!r}; "
                                     f"accepted: one of {known}") from None
        if part.id in design.overrides:
            part = part.with_overrides(design.overrides[part.id], origin="design overrides")
        return part

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

    # ---- relay ------------------------------------------------------------------------------
    def relay_part(self) -> "Part | None":
        """Relay class whose coil voltage matches the brief's coil (for its tolerance and release time)."""
        load = self.brief.load
        if load.kind != "relay":
            return None
        for part in self.catalog.parts("relay"):
            if abs(part.value("coil_voltage", "V") - load.coil_voltage_v) < 1e-9:
                return part
        return None

    def coil_nominal_ohm(self) -> float:
        """Load resistance at 25 degC [ohm]: the relay coil, or supply / current for a dc load."""
        load = self.brief.load
        if load.kind == "relay":
            return load.coil_resistance_ohm
        return self.brief.supply.nominal_v / load.current_a

    def coil_tolerance(self) -> tuple[float, float]:
        """Coil resistance tolerance (fraction) and temperature coefficient [1/K]."""
        relay = self.relay_part()
        if relay is None:
            return (0.10, 0.00393) if self.brief.load.kind == "relay" else (0.0, 0.0)
        return relay.value("coil_resistance_tol", ""), relay.value("coil_tempco", "1/K")

    def release_band_frac(self) -> tuple[float, float, float]:
        """(must-release, must-operate) fractions of the coil's rated current and that rated voltage [V].

        The datasheet's must-release / must-operate voltages hold for every unit at 20-25 degC with
        its own coil resistance, and a relay releases at a current (ampere-turns), so a unit releases at
        release_frac·Vc/R_unit with release_frac anywhere between must-release and must-operate (release
        never exceeds that unit's pick-up). A dc load ends at half its current (stated assumption).
        """
        load = self.brief.load
        if load.kind != "relay":
            return 0.5, 0.5, self.brief.supply.nominal_v
        return load.must_release_frac, load.must_operate_frac, load.coil_voltage_v

    def release_current_a(self, release_frac, coil_ohm) -> np.ndarray:
        """Release current [A] of a unit at `release_frac` with coil resistance coil_ohm at 25 degC [ohm]."""
        return release_current_a(release_frac, self.release_band_frac()[2], coil_ohm)

    def coil_ohm_at(self, coil_ohm, temp_c) -> np.ndarray:
        """Coil resistance at `temp_c` [degC] from its 25 degC value [ohm] (copper tempco)."""
        return coil_ohm_at(coil_ohm, self.coil_tolerance()[1], temp_c)

    def release_time_s(self) -> float:
        """Relay release time [s] (relay class, else DEFAULT_RELEASE_TIME_S)."""
        relay = self.relay_part()
        return relay.value("release_time", "s") if relay is not None else DEFAULT_RELEASE_TIME_S

    # ---- interface ----------------------------------------------------------------------------
    @property
    def power_on(self) -> bool:
        """True for the power-on PNP start, False for the push-button start."""
        return self.brief.start == "power-on"

    def roles(self) -> list["Role"]:
        """Hold resistor and capacitor; start resistor and capacitor for the power-on start."""
        from tradeoff.topologies.base import Role
        roles = [Role("r_hold", "resistor", 10e3, 10e6, "hold resistor: sets the discharge time with c_hold"),
                 Role("c_hold", "capacitor", 1e-6, 4.7e-3, "hold capacitor, charged at the start",
                      ("electrolytic", "film"))]
        if self.power_on:
            roles += [Role("r_start", "resistor", 1e3, 1e6, "start resistor: base current of the start PNP"),
                      Role("c_start", "capacitor", 1e-7, 1e-3, "start capacitor: length of the power-on pulse",
                           ("electrolytic", "film", "ceramic"))]
        return roles

    def uncertain(self, design: "Design") -> dict[str, Uncertain]:
        """Hold R and C, leakage level, release current, coil resistance, driver, start network."""
        q = {
            "r_hold": component_band(design.values["r_hold"], self.value_part(design, "r_hold", "res-metal-film-1pct"),
                                     self.brief, "ohm: hold resistor"),
            "c_hold": component_band(design.values["c_hold"], self.value_part(design, "c_hold", "cap-electrolytic-85c"),
                                     self.brief, "F: hold capacitor"),
            LEAK_LEVEL: self.leakage(design).uncertain(),
        }
        lo, hi, _ = self.release_band_frac()
        q["release_frac"] = Uncertain((lo + hi) / 2, lo, hi, unit="", note="release point of a real unit as a "
                                      "fraction of its coil's rated current Vc/R_coil: between must-release and "
                                      "must-operate (uniform)")
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
                         self.coil_ohm_at(coil, temp), leak, a_typ, a_lim, shunt_ohm(design), x, self.driver(design))

    def start(self, design: "Design", s: HoldState) -> tuple[np.ndarray, StartPulse | None]:
        """Start voltage of the hold capacitor [V] and, for the power-on start, its pulse."""
        if not self.power_on:
            return button_start_v(s.supply_v, self.diode(design).value("vf", "V")), None
        pnp = self.pnp(design)
        veb = vbe_at_v(pnp.value("vbe_on_typ", "V"), pnp.value("vbe_tempco", "V/K"), s.temp_c)
        vce = pnp.value("vce_sat", "V")
        top = np.maximum(s.supply_v - vce, 0.0)
        hfe = hfe_at(s.x["start_hfe"], pnp.value("hfe_tempco", "1/K"), s.temp_c)
        pulse = power_on_start(s.supply_v, s.x["r_start"], s.x["c_start"], self.fixed_ohm(design, "r_be"),
                               self.fixed_ohm(design, "r_charge"), s.c_f, hfe, veb, vce, self.discharge_a(s, top))
        return pulse.peak_v, pulse

    def delay(self, design: "Design", x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Delay [s]: (power-on pulse +) hold time from the start voltage to the relay's release.

        Long sample arrays are evaluated in chunks (`evaluate_in_chunks`); the leakage law is built once.
        """
        leak = self.leakage(design)
        return evaluate_in_chunks(lambda chunk: self._delay(design, chunk, leak), x)

    def _delay(self, design: "Design", x: Mapping[str, np.ndarray], leak: CapacitorLeakage | None = None) -> np.ndarray:
        """Delay [s] of one chunk of samples (see `delay`)."""
        s = self.state(design, x, leak)
        v0, pulse = self.start(design, s)
        t = self.hold_s(s, v0)
        return t if pulse is None else t + pulse.pulse_s

    # ---- parts list, supply current -------------------------------------------------------------
    def bom(self, design: "Design") -> list[BomLine]:
        """Hold R and C, driver, flyback diode; button: charge diode; power-on: PNP, its RC, r_be, r_charge."""
        from tradeoff.units import format_quantity as fq
        r_part = self.value_part(design, "r_hold", "res-metal-film-1pct")
        c_part = self.value_part(design, "c_hold", "cap-electrolytic-85c")
        driver, diode = self.driver(design), self.diode(design)
        lines = [BomLine("R1", r_part.id, fq(design.values["r_hold"], "Ω"), 1, r_part.cost, "hold resistor"),
                 BomLine("C1", c_part.id, f"{fq(design.values['c_hold'], 'F')} {fq(self.rated_v(design, 'c_hold'), 'V')}",
                         1, c_part.cost, "hold capacitor"),
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
                  BomLine("R2", rs_part.id, fq(design.values["r_start"], "Ω"), 1, rs_part.cost, "start resistor"),
                  BomLine("C2", cs_part.id, f"{fq(design.values['c_start'], 'F')} "
                          f"{fq(self.rated_v(design, 'c_start'), 'V')}", 1, cs_part.cost, "start capacitor"),
                  BomLine("R3", fixed.id, fq(self.fixed_ohm(design, "r_be"), "Ω"), 1, fixed.cost, "start PNP base pull-up"),
                  BomLine("R4", fixed.id, fq(self.fixed_ohm(design, "r_charge"), "Ω"), 1, fixed.cost, "charge resistor")]
        return lines

    def after_timeout_a(self, design: "Design") -> float:
        """Supply current long after the timeout [A]: driver cut-off current (+ start capacitor leakage)."""
        driver = self.driver(design)
        off = driver.value("iceo", "A") if driver.has("iceo") else driver.value("idss", "A")
        if self.power_on:
            off += float(self.start_leakage_a(design, typical=True))
        return off

    def start_leakage_a(self, design: "Design", typical: bool, temp_c: float = 25.0, c_f=None, part=None,
                        rated_v=None) -> np.ndarray:
        """Leakage of the start capacitor charged to the supply [A] (it flows through r_be after the pulse)."""
        part = part or self.value_part(design, "c_start", "cap-ceramic-x7r")
        c_f = design.values["c_start"] if c_f is None else c_f
        rated_v = self.rated_v(design, "c_start") if rated_v is None else rated_v
        leak = CapacitorLeakage(part, c_f, rated_v)
        a_typ, a_lim = leak.coefficients(temp_c, 0.0 if typical else 1.0)
        return leak.current_a(self.brief.supply.max_v if not typical else self.brief.supply.nominal_v, a_typ, a_lim)

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

    def linear_dissipation_w(self, design: "Design") -> tuple[float, float]:
        """(largest driver dissipation in its linear region, derated rating at the hottest ambient) [W].

        Between saturation and cut-off the driver passes every coil current; VCE·I = (V - I·R)·I peaks
        at V²/(4R) (highest supply, lowest coil resistance: cold, -tolerance). Rating derated linearly
        from p_tot at 25 degC to zero at tj_max.
        """
        driver = self.driver(design)
        tol, _ = self.coil_tolerance()
        r_min = float(self.coil_ohm_at(self.coil_nominal_ohm() * (1 - tol), self.brief.ambient.min_c))
        peak = float(linear_peak_dissipation_w(self.brief.supply.max_v, r_min))
        return peak, derated_power_w(driver.value("p_tot", "W"), driver.value("tj_max", "degC"), self.brief.ambient.max_c)

    def checks(self, design: "Design") -> list[Finding]:
        """Common design rules (start, chatter band, dissipation, ratings) plus the driver's."""
        from tradeoff.units import format_quantity as fq
        brief, out = self.brief, [Finding("info", "leakage-model", self.leakage(design).basis_text())]
        v_max, v_min = brief.supply.max_v, brief.supply.min_v
        rated = self.rated_v(design, "c_hold")
        if v_max > rated:
            out.append(Finding("violation", "capacitor-rating", f"hold capacitor rated {fq(rated, 'V')} sees up to "
                               f"{fq(v_max, 'V')}; choose a rating of at least {fq(v_max / 0.8, 'V')}"))
        elif v_max > 0.8 * rated:
            out.append(Finding("warning", "capacitor-rating", f"hold capacitor rated {fq(rated, 'V')} runs above "
                               f"80 % of its rating at {fq(v_max, 'V')} (common practice: derate to 80 %)"))
        r_hi = np.array([self.uncertain(design)["r_hold"].hi])
        ok, reason = self.start_drive(r_hi, design)
        if not ok[0]:
            out.append(Finding("violation", "start-drive", reason))
        if brief.load.kind == "relay":
            s = self.nominal_state(design)
            load = brief.load
            i_mo = load.must_operate_frac * load.coil_voltage_v / load.coil_resistance_ohm
            i_mr = load.must_release_frac * load.coil_voltage_v / load.coil_resistance_ohm
            band = float(self.band_s(s, np.array([i_mo]), np.array([i_mr]))[0])
            limit = CHATTER_RELEASE_TIMES * self.release_time_s()
            text = (f"coil current falls from the must-operate ({fq(i_mo, 'A')}) to the must-release current "
                    f"({fq(i_mr, 'A')}) in {fq(band, 's')} at nominal")
            if band > limit:
                out.append(Finding("warning", "chatter-band", f"{text}: slower than {CHATTER_RELEASE_TIMES} relay "
                                   f"release times ({fq(limit, 's')}), so the contacts open under a slowly falling "
                                   "force: chatter and arcing risk (a snap-action threshold avoids it)"))
            else:
                out.append(Finding("info", "chatter-band", text))
            vdrop = self.driver(design).value("vce_sat", "V") if self.driver(design).has("vce_sat") else 0.0
            need = load.must_operate_frac * load.coil_voltage_v
            if v_min - vdrop < need:
                out.append(Finding("violation", "pick-up", f"at the lowest supply {fq(v_min, 'V')} the coil gets "
                                   f"{fq(v_min - vdrop, 'V')} after the driver's drop, below its must-operate "
                                   f"voltage {fq(need, 'V')}"))
        peak, rating = self.linear_dissipation_w(design)
        if peak > rating:
            out.append(Finding("violation", "dissipation", f"driver dissipates up to {fq(peak, 'W')} while the coil "
                               f"current passes the linear region, above its rating {fq(rating, 'W')} at "
                               f"{brief.ambient.max_c:g} °C"))
        elif peak > DISSIPATION_DERATING * rating:
            out.append(Finding("warning", "dissipation", f"driver dissipates up to {fq(peak, 'W')} in its linear "
                               f"region, above half its rating {fq(rating, 'W')} at {brief.ambient.max_c:g} °C"))
        diode = self.diode(design)
        if diode.value("vr_max", "V") < FLYBACK_REVERSE_FACTOR * v_max:
            out.append(Finding("warning", "flyback-rating", f"flyback diode reverse rating "
                               f"{fq(diode.value('vr_max', 'V'), 'V')} is below {FLYBACK_REVERSE_FACTOR:g} times the "
                               f"supply ({fq(FLYBACK_REVERSE_FACTOR * v_max, 'V')})"))
        if self.power_on:
            out.extend(self.start_checks(design))
        out.append(Finding("info", "release-tail", "after the release the coil current keeps falling with the hold "
                           "capacitor for several time constants; the standby figure after the timeout is the "
                           "driver's cut-off current once the capacitor is empty"))
        out.extend(self.driver_checks(design))
        return out

    def start_checks(self, design: "Design") -> list[Finding]:
        """Power-on start rules: charge to 95 %, PNP drive and ratings, start capacitor leakage."""
        from tradeoff.units import format_quantity as fq
        out, q = [], self.uncertain(design)
        pnp, v_max = self.pnp(design), self.brief.supply.max_v
        r_charge, r_be = self.fixed_ohm(design, "r_charge"), self.fixed_ohm(design, "r_be")
        window = float(self.charge_window(design, q["r_start"].lo, q["r_start"].hi, q["c_start"].lo,
                                          self.start_load_max_a(design)))
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
        leak = float(self.start_leakage_a(design, typical=False, temp_c=self.brief.ambient.max_c))
        if leak * r_be > START_PNP_OFF_V:
            out.append(Finding("violation", "start-leakage", f"start capacitor leakage {fq(leak, 'A')} (limit, "
                               f"hottest) across r_be {fq(r_be, 'Ω')} gives {fq(leak * r_be, 'V')}, above "
                               f"{fq(START_PNP_OFF_V, 'V')}: the start PNP would keep charging the hold capacitor"))
        return out

    def start_load_max_a(self, design: "Design") -> float:
        """Largest discharge current the hold network draws at full supply [A] (shortest-delay corner, hottest)."""
        q = self.uncertain(design)
        x = {n: np.array([u.hi if self.directions.get(n, 1) < 0 else u.lo]) for n, u in q.items()}
        x.update(ambient_c=np.array([self.brief.ambient.max_c]), supply_v=np.array([self.brief.supply.max_v]))
        s = self.state(design, x)
        return float(self.discharge_a(s, s.supply_v)[0])

    def charge_window(self, design: "Design", r_start_lo, r_start_hi, c_start_lo, load_max_a) -> np.ndarray:
        """Charge time the start pulse guarantees at its worst corner (see `charge_window_s`) [s].

        r_start_lo, r_start_hi [ohm], c_start_lo [F]: the start network's band limits (arrays).
        """
        pnp, amb = self.pnp(design), self.brief.ambient
        hfe_min = pnp.value("hfe_min", "") * math.exp(pnp.value("hfe_tempco", "1/K") * (amb.min_c - 25.0))
        veb = vbe_at_v(pnp.value("vbe_on_max", "V"), pnp.value("vbe_tempco", "V/K"), amb.min_c)
        tau_min = np.asarray(r_start_lo, dtype=float) * np.asarray(c_start_lo, dtype=float)
        return charge_window_s(self.brief.supply.min_v, self.brief.supply.max_v, r_start_hi, tau_min,
                               self.fixed_ohm(design, "r_be"), self.fixed_ohm(design, "r_charge"), hfe_min, veb,
                               pnp.value("vce_sat", "V"), load_max_a)

    # ---- optimiser blocks -----------------------------------------------------------------------
    START_QUANTITIES: ClassVar[tuple[str, ...]] = ("r_start", "c_start", "start_hfe")
    ROW_QUANTITIES: ClassVar[dict[str, tuple[str, str]]] = {"r_hold": ("r_hold", "r_spread"),
                                                            "c_hold": ("c_hold", "c_spread")}

    def corner_sets(self, q: Mapping[str, Uncertain], names) -> tuple[list[dict], list[dict]]:
        """Corners (name -> 'lo' | 'hi') holding the smallest and the largest delay under `directions`.

        A quantity with direction +1 sits at 'lo' for the minimum and 'hi' for the maximum (-1 the
        reverse); direction 0 tries both. Quantities without spread stay nominal.
        """
        fixed_min, fixed_max, either = {}, {}, []
        for n in names:
            if not q[n].spreads:
                continue
            d = self.directions.get(n, 0)
            if d == 0:
                either.append(n)
            else:
                fixed_min[n], fixed_max[n] = ("lo", "hi") if d > 0 else ("hi", "lo")
        combos = [dict(zip(either, c)) for c in itertools.product(("lo", "hi"), repeat=len(either))]
        return [{**fixed_min, **c} for c in combos], [{**fixed_max, **c} for c in combos]

    def _corner_arrays(self, q, rows: pd.DataFrame, corners: list[dict], names) -> dict[str, np.ndarray]:
        """Quantity arrays (rows x corners) of `corners`; r_hold, c_hold from each row's own band."""
        x = {}
        for n in names:
            pick = [c.get(n, "nom") for c in corners]
            if n in self.ROW_QUANTITIES:
                col, spread = self.ROW_QUANTITIES[n]
                sign = np.array([{"lo": -1.0, "hi": 1.0, "nom": 0.0}[p] for p in pick])
                x[n] = rows[col].to_numpy(float)[:, None] * (1 + sign[None, :] * rows[spread].to_numpy(float)[:, None])
            else:
                vals = np.array([{"lo": q[n].lo, "hi": q[n].hi, "nom": q[n].nominal}[p] for p in pick])
                x[n] = np.broadcast_to(vals[None, :], (len(rows), len(corners)))
        return x

    def _hold_rows(self, design0: "Design", rows: pd.DataFrame) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(delay_lo, delay_nom, delay_hi) [s] of the hold time of every candidate row (no start pulse).

        Button start: exactly evaluate()'s corners. Power-on start: from the final voltage V_f for the
        nominal and the maximum, from CHARGE_FRACTION_MIN·V_f for the minimum (the 95 % rule, kept by a Link).
        """
        q = self.quantities(design0)
        names = [n for n in q if n not in self.START_QUANTITIES]
        mins, maxs = self.corner_sets(q, names)
        out = np.zeros((3, len(rows)))
        for part_id, idx in rows.groupby("c_part").indices.items():
            sub = rows.iloc[idx]
            leak = self.leakage(design0, sub["c_hold"].to_numpy(float)[:, None],
                                sub["c_rated_v"].to_numpy(float)[:, None], self.catalog.part(part_id))
            for k, (corners, scale, reduce) in enumerate(((mins, CHARGE_FRACTION_MIN, np.min), ([{}], 1.0, np.min),
                                                          (maxs, 1.0, np.max))):
                s = self.state(design0, self._corner_arrays(q, sub, corners, names), leak)
                v0 = self._v0_without_pulse(design0, s, scale)
                out[k, idx] = reduce(self.hold_s(s, v0), axis=1)
        return out[0], out[1], out[2]

    def _v0_without_pulse(self, design: "Design", s: HoldState, scale: float) -> np.ndarray:
        """Start voltage [V]: the button's, or scale x the power-on final voltage V_f."""
        if not self.power_on:
            return self.start(design, s)[0]
        top = np.maximum(s.supply_v - self.pnp(design).value("vce_sat", "V"), 0.0)
        return scale * np.maximum(top - self.fixed_ohm(design, "r_charge") * self.discharge_a(s, top), 0.0)

    def _example_design(self, rows: pd.DataFrame, start: pd.DataFrame | None = None) -> "Design":
        """A design built from the first row(s): carries the options the block evaluation needs."""
        from tradeoff.topologies.base import Design
        first = rows.iloc[0]
        values = {"r_hold": float(first["r_hold"]), "c_hold": float(first["c_hold"])}
        options = {"r_hold_part": first["r_part"], "c_hold_part": first["c_part"],
                   "c_hold_rated_v": float(first["c_rated_v"])}
        if self.power_on:
            roles = {r.name: r for r in self.roles()}
            if start is not None and len(start):
                s0 = start.iloc[0]
                values.update(r_start=float(s0["r_start"]), c_start=float(s0["c_start"]))
                options.update(r_start_part=s0["r_part"], c_start_part=s0["c_part"], c_start_rated_v=float(s0["c_rated_v"]))
            else:
                values.update(r_start=math.sqrt(roles["r_start"].lo * roles["r_start"].hi),
                              c_start=math.sqrt(roles["c_start"].lo * roles["c_start"].hi))
        return Design(self.id, values, options)

    def selection(self) -> "SelectionModel":
        """Hold block (r_hold, c_hold and their classes); power-on: start block and the 95 % charge Link."""
        from tradeoff.selection import Block, Link, SelectionModel
        from tradeoff.units import format_quantity as fq
        roles = {r.name: r for r in self.roles()}
        rows = hold_pairs(roles["r_hold"], roles["c_hold"], self.brief, self.catalog)
        dropped = Dropped()
        design0 = self._example_design(rows)
        ok, reason = self.start_drive(rows["r_hold"].to_numpy(float) * (1 + rows["r_spread"].to_numpy(float)), design0)
        rows = rows[dropped.drop(~ok, lambda m: reason)].reset_index(drop=True)
        lo_band, hi_band = self.brief.delay.min_s, self.brief.delay.max_s
        if len(rows):
            lo, nom, hi = self._hold_rows(design0, rows)
            keep = dropped.drop(hi > hi_band, lambda m: f"worst-case longest hold above the band's maximum "
                                f"{fq(hi_band, 's')}")
            if not self.power_on:
                keep &= dropped.drop(keep & (lo < lo_band), lambda m: f"worst-case shortest hold below the band's "
                                     f"minimum {fq(lo_band, 's')}")
            rows = rows.assign(delay_lo=lo, delay_nom=nom, delay_hi=hi)[keep].reset_index(drop=True)
        else:
            rows = rows.assign(delay_lo=[], delay_nom=[], delay_hi=[])
        rows = rows.rename(columns={"r_part": "r_hold_part", "c_part": "c_hold_part", "c_rated_v": "c_hold_rated_v"})
        rows = rows.assign(lines=2, during_a=0.0, after_a=0.0,
                           log_need=np.log(CHARGE_TIME_CONSTANTS * self.fixed_ohm(design0, "r_charge")
                                           * rows["c_hold"] * (1 + rows["c_spread"])) if self.power_on else 0.0)
        blocks = [Block("hold", rows, roles=("r_hold", "c_hold"),
                        options=("r_hold_part", "c_hold_part", "c_hold_rated_v"), dropped=dict(dropped))]
        links = []
        if self.power_on:
            blocks.append(self._start_block(design0, rows))
            links.append(Link((("start", "log_window", 1.0), ("hold", "log_need", -1.0)), ">=", 0.0,
                              f"start pulse keeps the PNP saturated for {CHARGE_TIME_CONSTANTS:.0f} time constants "
                              f"of r_charge·c_hold (hold capacitor charged to {CHARGE_FRACTION_MIN:.0%})"))
        fixed = [line for line in self.bom(design0) if line.refs not in ("R1", "C1", "R2", "C2")]
        standby = self.standby(design0)
        return SelectionModel(
            topology=self.id, combine="sum", blocks=blocks, links=links,
            fixed_cost=float(sum(line.cost for line in fixed)), fixed_placements=sum(line.quantity for line in fixed),
            fixed_lines=len(fixed), fixed_during_a=standby.during_a,
            fixed_after_a=standby.after_a - (float(self.start_leakage_a(design0, typical=True)) if self.power_on else 0.0),
            rails=1, effort=self.effort(design0),
            notes=["hold block delays at the corners the model's monotone directions select (tests check them "
                   "against exhaustive corners)"] + (["power-on: hold minimum from 95 % charge; the start block adds "
                                                      "the pulse length to the nominal and maximum only"]
                                                     if self.power_on else []))

    def _start_block(self, design0: "Design", hold_rows: pd.DataFrame) -> "Block":
        """Start block: (r_start, c_start) rows with the pulse length over its corners and the charge window."""
        from tradeoff.selection import Block
        from tradeoff.units import format_quantity as fq
        roles = {r.name: r for r in self.roles()}
        rows = hold_pairs(roles["r_start"], roles["c_start"], self.brief, self.catalog)
        dropped = Dropped()
        pnp, amb, sup = self.pnp(design0), self.brief.ambient, self.brief.supply
        r_be = self.fixed_ohm(design0, "r_be")
        r_lo = rows["r_start"].to_numpy(float) * (1 - rows["r_spread"].to_numpy(float))
        r_hi = rows["r_start"].to_numpy(float) * (1 + rows["r_spread"].to_numpy(float))
        c_lo = rows["c_start"].to_numpy(float) * (1 - rows["c_spread"].to_numpy(float))
        c_hi = rows["c_start"].to_numpy(float) * (1 + rows["c_spread"].to_numpy(float))
        load_max = self._load_max_a(design0, hold_rows)
        window = self.charge_window(design0, r_lo, r_hi, c_lo, load_max)
        keep = dropped.drop(window <= 0, lambda m: f"start PNP base current (hFE min {pnp.value('hfe_min', ''):g} at "
                            f"{amb.min_c:g} °C, largest r_start) cannot saturate it against the charge current at "
                            f"power-on {fq(sup.max_v / self.fixed_ohm(design0, 'r_charge'), 'A')}")
        leak = np.zeros(len(rows))
        for part_id, idx in rows.groupby("c_part").indices.items():
            sub = rows.iloc[idx]
            leak[idx] = self.start_leakage_a(design0, typical=False, temp_c=amb.max_c, c_f=sub["c_start"].to_numpy(float),
                                             part=self.catalog.part(part_id), rated_v=sub["c_rated_v"].to_numpy(float))
        keep &= dropped.drop(keep & (leak * r_be > START_PNP_OFF_V), lambda m: f"start capacitor leakage at "
                             f"{amb.max_c:g} °C (limit, largest {fq(float(leak[m].max()), 'A')}) across r_be "
                             f"{fq(r_be, 'Ω')} exceeds {fq(START_PNP_OFF_V, 'V')}: the start PNP would stay on")
        pulses = []
        for r in (r_lo, r_hi):
            for c in (c_lo, c_hi):
                for v in (sup.min_v, sup.max_v):
                    for t in (amb.min_c, amb.max_c):
                        pulses.append(self.pulse_length_s(design0, v, r, c, t))
        pulses = np.array(pulses)
        t_nom = self.environment()["ambient_c"].nominal
        nom = self.pulse_length_s(design0, sup.nominal_v, rows["r_start"].to_numpy(float),
                                  rows["c_start"].to_numpy(float), t_nom)
        typical_leak = np.zeros(len(rows))
        for part_id, idx in rows.groupby("c_part").indices.items():
            sub = rows.iloc[idx]
            typical_leak[idx] = self.start_leakage_a(design0, typical=True, c_f=sub["c_start"].to_numpy(float),
                                                     part=self.catalog.part(part_id),
                                                     rated_v=sub["c_rated_v"].to_numpy(float))
        # delay_lo takes no credit for the pulse: while the PNP fades its tail may already drain a small hold
        # capacitor, so only the hold block's own minimum (from 95 % charge) is a guaranteed lower bound
        table = rows.assign(delay_lo=0.0, delay_nom=nom, delay_hi=pulses.max(axis=0), lines=2,
                            during_a=0.0, after_a=typical_leak,
                            log_window=np.log(np.maximum(window, 1e-300)))[keep]
        table = table.rename(columns={"r_part": "r_start_part", "c_part": "c_start_part", "c_rated_v": "c_start_rated_v"})
        return Block("start", table, roles=("r_start", "c_start"),
                     options=("r_start_part", "c_start_part", "c_start_rated_v"), dropped=dict(dropped))

    def _load_max_a(self, design0: "Design", rows: pd.DataFrame) -> float:
        """Largest discharge current near full charge over the hold rows [A] (hottest, highest supply,
        every quantity at its shortest-delay end)."""
        if not len(rows):
            return 0.0
        q = self.quantities(design0)
        names = [n for n in q if n not in self.START_QUANTITIES]
        corner = {n: ("hi" if self.directions.get(n, 1) < 0 else "lo") for n in names if q[n].spreads}
        corner.update(ambient_c="hi", supply_v="hi")
        rows = rows.rename(columns={"r_hold_part": "r_part", "c_hold_part": "c_part", "c_hold_rated_v": "c_rated_v"})
        best = 0.0
        for part_id, idx in rows.groupby("c_part").indices.items():
            sub = rows.iloc[idx]
            leak = self.leakage(design0, sub["c_hold"].to_numpy(float)[:, None],
                                sub["c_rated_v"].to_numpy(float)[:, None], self.catalog.part(part_id))
            st = self.state(design0, self._corner_arrays(q, sub, [corner], names), leak)
            best = max(best, float(np.max(self.discharge_a(st, st.supply_v))))
        return best

    def pulse_length_s(self, design: "Design", supply_v, r_start, c_start, temp_c) -> np.ndarray:
        """Power-on pulse length τs·ln(a/b) [s] (see `power_on_start`), typical VEB at `temp_c`."""
        pnp = self.pnp(design)
        veb = vbe_at_v(pnp.value("vbe_on_typ", "V"), pnp.value("vbe_tempco", "V/K"), temp_c)
        a, b = pnp_base_currents(supply_v, np.asarray(r_start, dtype=float), self.fixed_ohm(design, "r_be"), veb)
        return np.where(a > b, r_start * np.asarray(c_start, dtype=float) * np.log(np.maximum(a / b, 1.0)), 0.0)

    # ---- plots and SPICE ------------------------------------------------------------------------
    def waveform(self, design: "Design", x: Mapping[str, float] | None = None, points: int = 200) -> HoldWaveform:
        """Hold-capacitor voltage and coil current against time at the point `x` (default nominal)."""
        s = self.nominal_state(design, x)
        v0, pulse = self.start(design, s)
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
        """ngspice netlist of `design` at `point` (default nominal) with `.measure tran delay`.

        Device parameters are the model's at the point's temperature and the simulator runs at that
        temperature with TNOM equal to it, so no SPICE temperature law intervenes. The capacitor
        leakage is a behavioural current source with the model's power laws; the coil is R + L with
        a flyback diode; the delay is the time the coil current falls through the release current.
        """
        s = self.nominal_state(design, point)
        v0, pulse = self.start(design, s)
        t_model = float(self.delay(design, {k: np.array([float(v)]) for k, v in
                                            {**self.nominal_point(design), **(point or {})}.items()})[0])
        temp = float(s.temp_c[0])
        diode = self.diode(design)
        a_typ, a_lim = float(s.a_typ[0]), float(s.a_lim[0])
        lines = [f"* {self.id}: {self.brief.title}", f".options temp={temp:.6g} tnom={temp:.6g} reltol=1e-5 "
                 "abstol=1e-14 vntol=1e-7", f"Vcc vcc 0 dc {float(s.supply_v[0]):.9g}"]
        if pulse is None:
            lines.append(f"C1 hold 0 {float(s.c_f[0]):.9g} ic={float(v0[0]):.9g}")
        else:
            pnp = self.pnp(design)
            hfe = float(s.x["start_hfe"][0]) * math.exp(pnp.value("hfe_tempco", "1/K") * (temp - 25.0))
            vt = float(thermal_voltage_v(temp))
            veb = float(vbe_at_v(pnp.value("vbe_on_typ", "V"), pnp.value("vbe_tempco", "V/K"), temp))
            i_s = pnp.value("vbe_test_current", "A") * math.exp(-veb / (pnp.value("ideality", "") * vt))
            lines += [f"C1 hold 0 {float(s.c_f[0]):.9g} ic=0",
                      "QS chg b2 vcc QSTART",
                      f"R3 vcc b2 {self.fixed_ohm(design, 'r_be'):.9g}",
                      f"R2 b2 st {float(s.x['r_start'][0]):.9g}",
                      f"C2 st 0 {float(s.x['c_start'][0]):.9g} ic=0",
                      f"R4 chg hold {self.fixed_ohm(design, 'r_charge'):.9g}",
                      f".model QSTART PNP(IS={i_s:.6g} BF={hfe:.6g} NF={pnp.value('ideality', ''):.6g} BR=1)"]
        elements, models = self.driver_spice(s)
        lines += elements
        leak_terms = [f"{a:.9g}*pwr(v(hold),{n:g})" for a, n in ((a_typ, s.leak.n_typ), (a_lim, s.leak.n_lim)) if a > 0]
        if leak_terms:
            lines.append(f"B1 hold 0 I={'+'.join(leak_terms)}")
        if s.shunt_ohm is not None:
            lines.append(f"RSH hold 0 {s.shunt_ohm:.9g}")
        lines += ["Vsense vcc top dc 0", f"RCOIL top mid {float(s.coil_ohm[0]):.9g}",
                  f"LCOIL mid col {self.entry.value('coil_inductance', 'H'):.6g}", "D1 col top DFLY",
                  f".model DFLY D(IS={diode.value('is_sat', 'A'):.6g} N={diode.value('ideality', ''):.6g})", *models]
        stop = 1.5 * t_model + 1.0
        lines += [f".tran {stop / 4000:.6g} {stop:.6g} 0 {stop / 4000:.6g} uic",
                  f".measure tran delay when i(vsense)={float(s.release_a[0]):.9g} fall=1", ".end", ""]
        return "\n".join(lines)
