"""Ripple counter clocked by a 32.768 kHz crystal on its on-chip inverter (`crystal-counter`, a Pierce
oscillator).

f = 32768 Hz·(1 + tolerance + aging + β·(T − T0)²) with β < 0 about the turnover T0 (crystal datasheets,
tradeoff.devices.oscillator); T0 and T0 ± its spread are interior corner points of the ambient so the
corner search finds the frequency peak. Delays are whole counts of 1/32768 s. The counter chain,
decode, latch, rail and load switch are the shared counter frame (tradeoff.topologies.ripple_counter).
"""
from __future__ import annotations

import dataclasses
from typing import TYPE_CHECKING, Mapping

import numpy as np
import pandas as pd

from tradeoff import eseries
from tradeoff.analysis import Uncertain
from tradeoff.devices.life import crystal_ageing
from tradeoff.devices.oscillator import crystal_period_s
from tradeoff.topologies.base import BomLine, Design, Finding, Role
from tradeoff.topologies.counter_switch import CounterPlan
from tradeoff.topologies.ic_common import fixed_part
from tradeoff.topologies.ripple_counter import CounterTimer

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = ["CrystalCounter", "CRYSTAL_BIAS_OHM", "CRYSTAL_SERIES_OHM", "STRAY_CAPACITANCE_F"]

CRYSTAL_BIAS_OHM = 10e6
"""Feedback (bias) resistor of the crystal inverter [ohm] (common practice: 10 to 22 Mohm)."""

CRYSTAL_SERIES_OHM = 330e3
"""Series resistor between the inverter output and the crystal [ohm]: limits the drive level (common practice)."""

STRAY_CAPACITANCE_F = 3e-12
"""Board and pin capacitance in parallel with each crystal load capacitor [F] (common practice)."""


class CrystalCounter(CounterTimer):
    """Ripple counter clocked by a 32.768 kHz crystal on its on-chip inverter (Pierce oscillator)."""

    id = "crystal-counter"
    _OSC_OPTIONS = ("crystal",)
    option_parts = {**CounterTimer.option_parts, "crystal": "crystal"}

    def roles(self) -> list[Role]:
        """None: the crystal fixes the period; only the counter stages are chosen."""
        return []

    def _crystal(self, design: Design) -> "Part":
        return self.option_part(design, "crystal")

    def _turnover(self, crystal: "Part") -> tuple[float, float]:
        return crystal.value("turnover", "degC"), crystal.value("turnover_spread", "K")

    def environment(self) -> dict[str, Uncertain]:
        """Ambient with the crystal's turnover T0 and T0 ± spread as interior corner points."""
        env = super().environment()
        points = set()
        for crystal in self.catalog.parts("crystal"):
            t0, spread = self._turnover(crystal)
            points |= {t0 - spread, t0, t0 + spread}
        env["ambient_c"] = dataclasses.replace(env["ambient_c"], critical=tuple(sorted(points)))
        return env

    def _osc_uncertain(self, design: Design) -> dict[str, Uncertain]:
        return self._crystal_quantities(self._crystal(design))

    def _crystal_quantities(self, crystal: "Part") -> dict[str, Uncertain]:
        tol = crystal.value("frequency_tolerance", "")
        t0, spread = crystal.value("turnover", "degC"), crystal.value("turnover_spread", "K")
        return {
            "crystal_tolerance": Uncertain(0.0, -tol, tol, note=f"{crystal.id}: ({crystal.source('frequency_tolerance')})"),
            "crystal_aging": crystal_ageing(crystal, self.brief.environment.life_years),
            "crystal_turnover_c": Uncertain(t0, t0 - spread, t0 + spread, unit="degC",
                                            note=f"{crystal.id}: turnover ({crystal.source('turnover_spread')})"),
        }

    def _period_of(self, crystal: "Part", x: Mapping[str, np.ndarray]) -> np.ndarray:
        return crystal_period_s(crystal.value("frequency", "Hz"), x["crystal_tolerance"], x["crystal_aging"],
                                crystal.value("parabolic_coefficient", "1/K**2"), x["crystal_turnover_c"],
                                x["ambient_c"])

    def period_s(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """1/(f0·(1 + tolerance + aging + β·(T − T0)²)) [s]."""
        return self._period_of(self._crystal(design), x)

    def load_capacitor_f(self, crystal: "Part") -> float:
        """Each load capacitor: 2·(C_L − C_stray), the nearest standard ceramic value [F] (common practice)."""
        need = 2.0 * (crystal.value("load_capacitance", "F") - STRAY_CAPACITANCE_F)
        return float(eseries.nearest(self.brief.series.ceramic, need))

    def _crystal_bom(self, crystal: "Part") -> list[BomLine]:
        cap = fixed_part(self, "capacitor", self.load_capacitor_f(crystal), "C1", "crystal load capacitor", timing=True)
        return [BomLine("Y1", crystal.id, crystal.description, 1, crystal.cost, "sets the counter clock"),
                dataclasses.replace(cap, refs="C1, C2", quantity=2, note="crystal load capacitors"),
                fixed_part(self, "resistor", CRYSTAL_BIAS_OHM, "R1", "inverter bias (feedback) resistor"),
                fixed_part(self, "resistor", CRYSTAL_SERIES_OHM, "R2", "series resistor limiting the crystal drive")]

    def _osc_bom(self, design: Design) -> list[BomLine]:
        return self._crystal_bom(self._crystal(design))

    def _osc_running_a(self, design: Design, rail_v: float) -> float:
        # the inverter's class-A bias current while oscillating is not in the catalog: left out (stated)
        return 0.0

    def _latch_path_ohm(self, design: Design) -> float:
        """The bias resistor: the latched input drives DC through it into the inverter's low output [ohm]."""
        return CRYSTAL_BIAS_OHM

    def _stage_latch_a(self, rail_v: float, pullup_ohm: float) -> float:
        """(VDD − Vf)/(Rp + R_bias): the latch current, exact in the stage block (fixed bias resistor) [A]."""
        return (rail_v - self._vf()) / (pullup_ohm + CRYSTAL_BIAS_OHM)

    def _osc_checks(self, design: Design) -> list[Finding]:
        return [Finding("info", "crystal", "delays are whole counts of 1/32768 s (powers of two, or sums of two or "
                                           "three with a diode-AND); the running oscillator's inverter bias current "
                                           "is not modelled (no catalog figure)")]

    def _extremes(self, crystal: "Part") -> tuple[float, float, float]:
        """Nominal and extreme periods [s] over the ambient × turnover lattice, tolerance and aging at their limits."""
        q = self._crystal_quantities(crystal)
        amb = self.environment()["ambient_c"]
        grid_t, grid_t0 = np.meshgrid(np.array(amb.corner_values()), np.array(q["crystal_turnover_c"].corner_values()))
        n = grid_t.size
        out = []
        for sign in (-1.0, 1.0):   # -1: slowest clock, longest period
            x = {"ambient_c": grid_t.ravel(), "crystal_turnover_c": grid_t0.ravel(),
                 "crystal_tolerance": np.full(n, sign * q["crystal_tolerance"].hi),
                 "crystal_aging": np.full(n, sign * q["crystal_aging"].hi)}
            out.append(self._period_of(crystal, x))
        nominal = {"ambient_c": np.array([amb.nominal]), **{k: np.array([u.nominal]) for k, u in q.items()}}
        return float(self._period_of(crystal, nominal)[0]), float(out[1].min()), float(out[0].max())

    def _osc_block(self, counters: list["Part"], plans: list[CounterPlan], dropped: dict[str, int]) -> pd.DataFrame:
        """One row per crystal class; its latch current is in the stage block (it depends on the rail and pull-up)."""
        rows = []
        for crystal in self.catalog.parts("crystal"):
            nom, lo, hi = self._extremes(crystal)
            lines = self._crystal_bom(crystal)
            rows.append(dict(delay_lo=lo, delay_nom=nom, delay_hi=hi, cost=sum(b.cost for b in lines),
                             placements=sum(b.quantity for b in lines), lines=len(lines), during_a=0.0,
                             after_a=0.0, crystal=crystal.id))
        return pd.DataFrame(rows, columns=["delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines",
                                           "during_a", "after_a", "crystal"])
