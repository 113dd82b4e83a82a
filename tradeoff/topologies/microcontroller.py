"""Microcontroller timer: a small 8-bit microcontroller counts ticks of one of its oscillators
while asleep and switches the relay off after a programmed number of ticks.

Delay model (firmware, so no component values to pick):
    T_tick = prescaler / f_osc                  [s]   prescaler: oscillator cycles per tick
    ticks  = round(target / T_tick_nominal)           programmed once, from the nominal frequency
    delay  = ticks * prescaler / f_osc          [s]   f_osc of the built unit at its temperature
so the delay's resolution is one tick and the nominal delay sits up to half a tick off the
target. The target is the brief's nominal delay.

Oscillators (design option `oscillator`):
- `internal-rc`: factory-trimmed RC. The datasheet gives nested temperature boxes (for the
  catalog class: +/-1 % at 25 degC, +/-1.5 % over 0 to 55 degC, -4/+3 % over -40 to 105 degC).
  At ambient T the frequency error lies in the narrowest box containing T: a piecewise-constant
  band, which is exactly what the datasheet promises. Linear interpolation between the boxes
  would claim accuracy the datasheet does not give, so it is not used. A unit's place within
  the band is `rc_trim_position` in [-1, 1] (uniform); error = lo + (position + 1)/2 * (hi - lo).
  Because the boxes are nested, the widest band over an ambient range is at one of its ends,
  so the range's end points are the exact corners.
- `low-power-rc`: the watchdog-class RC, frequency anywhere in its min..max (uniform), the
  firmware counts with the typical frequency.
- a crystal class id (`crystal-32k-20ppm` ...): f = f0 * (1 + tolerance + aging + k (T - T0)^2)
  with k < 0 (parabola peaking at the turnover T0, itself spread +/- turnover_spread). The
  fastest unit runs at T = T0: the turnover temperatures are declared `critical` ambient corner
  points, so the corner search includes the parabola's interior extreme.
Supply voltage does not enter: the oscillators' limits hold over the supply range.

Power: during timing the microcontroller sleeps with the chosen oscillator running and wakes
once per tick (active current times wake time per tick); after the timeout it sits in its
deepest sleep with every oscillator stopped. The logic-rail regulator (tradeoff.topologies.logic)
keeps drawing its quiescent current after the timeout.
"""
from __future__ import annotations

import dataclasses
from typing import Callable, Mapping

import numpy as np
import pandas as pd

from tradeoff.analysis import Uncertain, worst_case
from tradeoff.devices.life import crystal_ageing
from tradeoff.devices.oscillator import crystal_frequency, rc_band
from tradeoff.errors import DesignKeyError
from tradeoff.selection import Block, SelectionModel
from tradeoff.topologies import logic
from tradeoff.topologies.base import BomLine, Design, Finding, Role, Standby, Topology, Waveform
from tradeoff.units import format_quantity as fq

__all__ = ["Microcontroller", "INTERNAL_RC", "LOW_POWER_RC", "COUNTER_MAX", "programmed_ticks"]

INTERNAL_RC = "internal-rc"
LOW_POWER_RC = "low-power-rc"
COUNTER_MAX = 2**32 - 1
"""Largest tick count the firmware's 32-bit counter holds."""

_LOAD_CAP_F = 12e-12
"""Each of the crystal's two load capacitors [F] (common practice for a 12.5 pF watch crystal with stray
capacitance)."""


def programmed_ticks(target_s: float, tick_nominal_s: float) -> int:
    """Tick count the firmware is programmed with: the whole number nearest target / tick [ticks]."""
    return int(round(target_s / tick_nominal_s))


@dataclasses.dataclass(frozen=True)
class _Oscillator:
    """One oscillator option of a microcontroller class: nominal frequency [Hz], tick dividers, sleep current
    with it running [A], its spread quantities and its frequency model."""

    option: str
    nominal_hz: float
    dividers: tuple[int, ...]
    sleep_a: float
    quantities: dict[str, Uncertain]
    frequency: Callable[[Mapping[str, np.ndarray]], np.ndarray]
    parts: tuple  # extra catalog classes on the board: the crystal


class Microcontroller(Topology):
    """Firmware timer in a small 8-bit microcontroller; see the module docstring for the model."""

    id = "mcu"
    option_units = {"oscillator": None, "regulator": None, "prescaler": None, "ticks": None}
    option_parts = {"mcu": "mcu"}
    required_options = ("oscillator", "regulator", "prescaler")

    # ---- parts and options ----------------------------------------------------------
    def _mcu(self, design: Design):
        return self.option_part(design, "mcu")

    def _option_error(self, key: str, got, accepted: str) -> DesignKeyError:
        return DesignKeyError(("options", key), f"got {got!r}; accepted: {accepted}")

    def oscillator_options(self) -> list[str]:
        """Oscillator option values: the two on-chip RC oscillators and every crystal class."""
        return [INTERNAL_RC, LOW_POWER_RC, *(p.id for p in self.catalog.parts("crystal"))]

    def _oscillator(self, design: Design) -> _Oscillator:
        option = design.options.get("oscillator")
        mcu = self._mcu(design)
        dividers = {INTERNAL_RC: "internal_rc_dividers", LOW_POWER_RC: "low_power_rc_dividers"}
        if option == INTERNAL_RC:
            tmin, tmax = mcu.values("internal_rc_band_tmin", "degC"), mcu.values("internal_rc_band_tmax", "degC")
            lo, hi = mcu.values("internal_rc_band_lo", ""), mcu.values("internal_rc_band_hi", "")
            f0 = mcu.value("internal_rc_frequency", "Hz")

            def frequency(x):
                band_lo, band_hi = rc_band(x["ambient_c"], tmin, tmax, lo, hi)
                return f0 * (1.0 + band_lo + (x["rc_trim_position"] + 1.0) / 2.0 * (band_hi - band_lo))

            q = {"rc_trim_position": Uncertain(0.0, -1.0, 1.0, note="unit's place within the datasheet's "
                                               "temperature band of the factory-trimmed RC (uniform)")}
            return _Oscillator(option, f0, self._dividers(mcu, dividers[option]),
                               mcu.value("sleep_current_internal_rc", "A"), q, frequency, ())
        if option == LOW_POWER_RC:
            f_min, f_typ, f_max = mcu.values("low_power_rc_frequency", "Hz")
            q = {"lp_rc_frequency": Uncertain(f_typ, f_min, f_max, unit="Hz", note="watchdog-class RC oscillator: "
                                              "datasheet min..max over temperature and supply (uniform)")}
            return _Oscillator(option, f_typ, self._dividers(mcu, dividers[option]),
                               mcu.value("sleep_current_low_power_rc", "A"), q, lambda x: x["lp_rc_frequency"], ())
        if option in self.oscillator_options():
            xtal = self.design_part(design, option, "oscillator")
            f0, tol = xtal.value("frequency", "Hz"), xtal.value("frequency_tolerance", "")
            k = xtal.value("parabolic_coefficient", "1/K^2")
            t0, spread = xtal.value("turnover", "degC"), xtal.value("turnover_spread", "K")
            q = {
                "crystal_tolerance": Uncertain(0.0, -tol, tol, note=f"{xtal.id}: initial frequency tolerance at "
                                               "25 degC (uniform)"),
                "crystal_aging": crystal_ageing(xtal, self.brief.environment.life_years),
                "crystal_turnover_c": Uncertain(t0, t0 - spread, t0 + spread, unit="degC", critical=(t0,),
                                                note=f"{xtal.id}: turnover temperature of the parabola (uniform)"),
            }

            def frequency(x):
                return crystal_frequency(f0, x["crystal_tolerance"], x["crystal_aging"], k, x["ambient_c"],
                                         x["crystal_turnover_c"])

            return _Oscillator(option, f0, self._dividers(mcu, "crystal_dividers"),
                               mcu.value("sleep_current_crystal", "A"), q, frequency, (xtal,))
        raise self._option_error("oscillator", option, ", ".join(self.oscillator_options()))

    @staticmethod
    def _dividers(mcu, name: str) -> tuple[int, ...]:
        return tuple(int(round(d)) for d in mcu.values(name, ""))

    def _rail(self, design: Design) -> logic.LogicRail:
        mcu = self._mcu(design)
        option = design.options.get("regulator")
        if option is None:
            raise self._option_error("regulator", None, f"{logic.NO_REGULATOR!r} or a regulator class id")
        return logic.logic_rail(self.brief, self.catalog, option, mcu.value("supply_min", "V"),
                                mcu.value("supply_max", "V"))

    def _prescaler(self, design: Design, osc: _Oscillator) -> int:
        p = design.options.get("prescaler")
        if p not in osc.dividers:
            raise self._option_error("prescaler", p, f"one of {', '.join(map(str, osc.dividers))} "
                                     f"(oscillator cycles per tick of {osc.option})")
        return int(p)

    def ticks(self, design: Design) -> int:
        """Programmed tick count: option `ticks`, else the count nearest the brief's nominal delay [ticks]."""
        osc = self._oscillator(design)
        given = design.options.get("ticks")
        if given is None:
            return programmed_ticks(self.brief.delay.nominal_s, self._prescaler(design, osc) / osc.nominal_hz)
        if not float(given).is_integer() or not 1 <= given <= COUNTER_MAX:
            raise self._option_error("ticks", given, f"a whole number from 1 to {COUNTER_MAX}")
        return int(given)

    def tick_s(self, design: Design) -> float:
        """Nominal tick period [s]."""
        osc = self._oscillator(design)
        return self._prescaler(design, osc) / osc.nominal_hz

    # ---- Topology interface ---------------------------------------------------------
    def roles(self) -> list[Role]:
        """None: the firmware constant (tick count) is continuous, not a component value."""
        return []

    def uncertain(self, design: Design) -> dict[str, Uncertain]:
        """The oscillator's spread quantities; for a crystal also the ambient with the turnover
        temperatures as critical corner points (the parabola's interior extreme)."""
        osc = self._oscillator(design)
        q = dict(osc.quantities)
        if "crystal_turnover_c" in q:
            t0 = q["crystal_turnover_c"]
            ambient = self.environment()["ambient_c"]
            q["ambient_c"] = dataclasses.replace(ambient, critical=(t0.lo, t0.nominal, t0.hi),
                                                 note=ambient.note + "; crystal turnover temperatures as corners")
        return q

    @staticmethod
    def _period(osc: _Oscillator, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Oscillator period [s]; inf where the model gives no positive frequency."""
        f = np.asarray(osc.frequency(x), dtype=float)
        with np.errstate(divide="ignore"):
            return np.where(f > 0, 1.0 / np.where(f > 0, f, 1.0), np.inf)

    def delay(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Delay [s] = (ticks * prescaler) * oscillator period."""
        osc = self._oscillator(design)
        return float(self.ticks(design) * self._prescaler(design, osc)) * self._period(osc, x)

    def _currents(self, mcu, osc: _Oscillator, rail: logic.LogicRail, tick_s: float) -> tuple[float, float]:
        """Supply current during timing and after the timeout [A], typical values at nominal supply."""
        wake_a = mcu.value("active_current", "A") * mcu.value("wake_time", "s") / tick_s
        gate_a = rail.nominal_v / logic.GATE_PULLDOWN_OHM
        during = self.brief.load.current_a + osc.sleep_a + wake_a + gate_a + rail.quiescent_typ_a
        after = mcu.value("sleep_current_off", "A") + rail.quiescent_typ_a
        return during, after

    def standby(self, design: Design) -> Standby:
        """During timing: load, sleep current with the oscillator, wake-ups, gate pull-down, regulator;
        after: deepest sleep plus the regulator's quiescent current (typical values)."""
        osc = self._oscillator(design)
        during, after = self._currents(self._mcu(design), osc, self._rail(design), self.tick_s(design))
        return Standby(during, after)

    def rails(self, design: Design) -> int:
        """1 when the microcontroller runs straight from a regulated supply in its range, else 2."""
        return self._rail(design).rails

    def _bom(self, mcu, osc: _Oscillator, rail: logic.LogicRail) -> list[BomLine]:
        lines = logic.rail_bom(self.brief, self.catalog, rail, "U1", mcu)
        for xtal in osc.parts:
            cap = logic.cheapest(self.catalog, "capacitor", lambda p: p.value("min_value", "F") <= _LOAD_CAP_F
                                 <= p.value("max_value", "F"), f"a {fq(_LOAD_CAP_F, 'F')} load capacitor",
                                 dielectric="ceramic")
            lines += [BomLine("Y1", xtal.id, xtal.summary, 1, xtal.cost, "timer clock"),
                      BomLine("C4, C5", cap.id, fq(_LOAD_CAP_F, "F"), 2, cap.cost, "crystal load capacitors")]
        return lines + logic.output_driver_bom(self.brief, self.catalog, rail, first_r=1)

    def bom(self, design: Design) -> list[BomLine]:
        """Microcontroller, decoupling, regulator (if any), crystal (if chosen), output MOSFET and flyback diode."""
        return self._bom(self._mcu(design), self._oscillator(design), self._rail(design))

    def _ambient_outside(self, mcu, osc: _Oscillator) -> str | None:
        """Why the brief's ambient range leaves the internal RC's specified range, or None."""
        if osc.option != INTERNAL_RC:
            return None
        tmin, tmax = min(mcu.values("internal_rc_band_tmin", "degC")), max(mcu.values("internal_rc_band_tmax", "degC"))
        amb = self.brief.ambient
        if tmin <= amb.min_c and amb.max_c <= tmax:
            return None
        return (f"the internal RC oscillator is specified for {fq(tmin, 'degC')} to {fq(tmax, 'degC')}; the ambient "
                f"reaches {fq(amb.min_c, 'degC')} to {fq(amb.max_c, 'degC')}")

    def checks(self, design: Design) -> list[Finding]:
        """Oscillator range, counter range, quantisation, standby maxima, power-on and brown-out."""
        mcu, osc, rail = self._mcu(design), self._oscillator(design), self._rail(design)
        ticks, tick = self.ticks(design), self.tick_s(design)
        out = []
        outside = self._ambient_outside(mcu, osc)
        if outside:
            out.append(Finding("violation", "oscillator-range", outside))
        if ticks > COUNTER_MAX:
            out.append(Finding("violation", "counter-range", f"{ticks} ticks exceed the 32-bit counter"))
        programmed = ticks * tick
        out.append(Finding("info", "tick-resolution",
                           f"tick {fq(tick, 's')}: {ticks} ticks give a nominal {fq(programmed, 's')} against the "
                           f"target {fq(self.brief.delay.nominal_s, 's')} (resolution one tick)"))
        after_max = mcu.value("sleep_current_off_max", "A") + rail.quiescent_max_a
        limit = self.brief.limits.standby_after_a
        severity = "warning" if limit is not None and after_max > limit else "info"
        out.append(Finding(severity, "standby-max",
                           f"standby currents are typical values; with datasheet maxima the current after the timeout "
                           f"reaches {fq(after_max, 'A')}" + (f" (limit {fq(limit, 'A')})" if limit else "")))
        start = ("timing starts at reset when power is applied" if self.brief.start == "power-on"
                 else "a pin-change interrupt on the button starts timing and wakes the deepest sleep")
        out.append(Finding("info", "power-on",
                           f"{start}; keep the brown-out detector on while awake (it adds about "
                           f"{fq(mcu.value('brownout_current', 'A'), 'A')} if left on in sleep) so a slowly rising or "
                           "sagging supply cannot run the firmware below its rated voltage; the gate pull-down keeps "
                           "the load off while the pins float in reset"))
        out.append(Finding("info", "firmware", "needs firmware and a programming step in production (effort "
                           "criterion)"))
        return out + logic.output_driver_checks(self.brief, self.catalog, rail)

    def waveform(self, design: Design, x: Mapping[str, float]) -> Waveform:
        """Tick count against time at the point `x`, ending at the programmed count."""
        osc = self._oscillator(design)
        ticks, prescaler = self.ticks(design), self._prescaler(design, osc)
        f = float(np.asarray(osc.frequency({k: np.array([v]) for k, v in x.items()})).reshape(-1)[0])
        end = ticks * prescaler / f
        t = np.linspace(0.0, 1.1 * end, 1101)
        return Waveform(t, np.floor(t * f / prescaler), "tick count", "ticks", float(ticks), "programmed count")

    # ---- optimiser --------------------------------------------------------------------
    def _reference(self, osc_option: str, rail: logic.LogicRail, mcu_id: str) -> Design:
        return Design(self.id, {}, {"mcu": mcu_id, "oscillator": osc_option, "regulator": rail.option})

    def selection(self) -> SelectionModel:
        """One block: oscillator x regulator x prescaler, with the exact worst-case delay of each row.

        The delay is ticks * prescaler times the oscillator's period, so the period's extremes over
        the oscillator's corners (found once per oscillator, exhaustively) scale exactly to every row.
        """
        band_lo, band_hi = self.brief.delay.min_s, self.brief.delay.max_s
        target = self.brief.delay.nominal_s
        rows, dropped = [], {}

        def drop(reason: str, n: int = 1):
            dropped[reason] = dropped.get(reason, 0) + n

        mcu = self.catalog.parts("mcu")[0]
        rails, reasons = logic.rail_options(self.brief, self.catalog, mcu.value("supply_min", "V"),
                                            mcu.value("supply_max", "V"))
        for reason in reasons:
            drop(f"logic rail: {reason}")
        for rail in list(rails):
            for finding in logic.output_driver_checks(self.brief, self.catalog, rail):
                if finding.severity == "violation" and rail in rails:
                    drop(f"logic rail {rail.option} ({fq(rail.nominal_v, 'V')}): {finding.message}")
                    rails.remove(rail)
        for option in self.oscillator_options() if rails else ():
            probe = self._reference(option, rails[0], mcu.id)
            osc = self._oscillator(probe)
            outside = self._ambient_outside(mcu, osc)
            if outside:
                drop(f"{option}: {outside}", len(osc.dividers))
                continue
            # the delay is (ticks * prescaler) * period: the period's corner extremes scale exactly to every row
            quantities = self.quantities(probe)
            worst = worst_case(lambda x: self._period(osc, x), quantities)
            nominal = {n: np.array([q.nominal]) for n, q in quantities.items()}
            period = (worst.min_s, float(self._period(osc, nominal)[0]), worst.max_s)
            for divider in osc.dividers:
                tick = divider / osc.nominal_hz
                ticks = programmed_ticks(target, tick)
                if ticks < 1:
                    drop(f"{option}: tick {fq(tick, 's')} is longer than twice the nominal delay")
                    continue
                if ticks > COUNTER_MAX:
                    drop(f"{option}: tick {fq(tick, 's')} needs more than {COUNTER_MAX} ticks")
                    continue
                cycles = float(ticks * divider)
                lo, nom, hi = (cycles * p for p in period)
                if not band_lo <= nom <= band_hi:
                    drop(f"{option}: tick {fq(tick, 's')} puts the nominal delay at {fq(nom, 's')}, "
                         f"outside the band {fq(band_lo, 's')} to {fq(band_hi, 's')}")
                    continue
                for rail in rails:
                    bom = self._bom(mcu, osc, rail)
                    during, after = self._currents(mcu, osc, rail, tick)
                    rows.append({
                        "mcu": mcu.id, "oscillator": option, "regulator": rail.option, "prescaler": divider,
                        "ticks": ticks, "delay_lo": lo, "delay_nom": nom, "delay_hi": hi,
                        "cost": sum(b.cost for b in bom), "placements": sum(b.quantity for b in bom),
                        "lines": len(bom), "during_a": during, "after_a": after, "rails": rail.rails - 1,
                    })
        columns = ["mcu", "oscillator", "regulator", "prescaler", "ticks", "delay_lo", "delay_nom", "delay_hi",
                   "cost", "placements", "lines", "during_a", "after_a", "rails"]
        block = Block("firmware", pd.DataFrame(rows, columns=columns),
                      options=("mcu", "oscillator", "regulator", "prescaler", "ticks"), dropped=dropped)
        return SelectionModel(self.id, "sum", [block], rails=1, effort=self.effort(Design(self.id)),
                              notes=["ticks = round(nominal delay / tick); the delay is quantised to whole ticks"])
