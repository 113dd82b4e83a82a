"""CMOS 14-stage ripple counters clocked by an oscillator: an RC oscillator built from the
counter's two on-chip inverters (`rc-counter`), or a 32.768 kHz crystal (`crystal-counter`).

The output of stage N goes high after 2^(N−1) oscillator periods (4060-type datasheets); only
the stages the class brings out can be used (4 to 10 and 12 to 14). For longer delays a stage L
(`link_stage`, normally 14) of each counter clocks the next one, so with `cascade` extra
counters the output stage N of the last counter ends the timing at N_total = N + L·cascade,
delay = 2^(N_total − 1)·T (the k-th falling edge of stage L comes after k·2^L periods).
A diode from that output to the first counter's oscillator input stops the oscillator at the
timeout (the latch); after it the supply carries the counters' quiescent current, the current
the latch diode pushes through the oscillator's resistors, and the off-state leakage of the
PNP that switches the load (it conducts while the output is low, i.e. during the timing). A
power-on RC on the reset pins (or a push-button) starts the count from zero.

RC oscillator (two inverters with threshold Vt, Rt, Ct and series resistor Rs ≈ 2·Rt; standard
circuit analysis): T = Rt·Ct·F(Vt/VDD), F(v) = ln((1+v)/v) + ln((2−v)/(1−v)), F(1/2) = 2.197.
The class's datasheet constant k (f = 1/(k·Rt·Ct)) fixes the period at the typical threshold;
the threshold's spread scales it by F(v)/F(v_typ). F is smallest at v = 1/2, an interior point
the corner search is told about.

Crystal: f = 32768 Hz·(1 + tolerance + aging + β·(T − T0)²) with β < 0 about the turnover T0
(crystal datasheets); T0 and T0 ± its spread are interior corner points of the ambient so the
corner search finds the frequency peak. Delays are powers of two of 1/32768 s only.
"""
from __future__ import annotations

import dataclasses
import math
from abc import abstractmethod
from typing import TYPE_CHECKING, Mapping

import numpy as np
import pandas as pd

from tradeoff import eseries
from tradeoff.analysis import Uncertain
from tradeoff.selection import Block, Link, SelectionModel
from tradeoff.topologies.base import BomLine, Design, Finding, Role, Standby, Topology, Waveform
from tradeoff.topologies.ic_common import (
    at_temperature, diode, drop_count, drop_dominated, fixed_part, on_supply, part_of, role_bom, role_part, start_bom,
    start_checks, supply_problem, timing_candidates, value_spread, TEMPCO_REFERENCE_C,
)
from tradeoff.topologies import logic
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = [
    "threshold_factor", "rc_period_s", "stage_factor", "crystal_period_s", "oscillator_netlist",
    "RCCounter", "CrystalCounter", "RS_MIN_OHM", "RT_RANGE_OHM", "CT_MIN_F",
]

RT_RANGE_OHM = (10e3, 1e6)
"""Timing resistor range of the RC oscillator [ohm] (4060-type datasheets, REFERENCES.md)."""

CT_MIN_F = 100e-12
"""Smallest timing capacitor of the RC oscillator [F] (4060-type datasheets: at least 50 to 100 pF)."""

CT_MAX_F = 10e-6
"""Largest timing capacitor considered [F]: the largest non-polarised class (Ct's voltage reverses)."""

RS_MIN_OHM = 10e3
"""Smallest series resistor at the oscillator input [ohm] (4060-type datasheets: Rs about 2·Rt, at least 10 kohm)."""

DECOUPLING_F = 100e-9
"""Supply decoupling at each counter [F] (common practice)."""

CRYSTAL_BIAS_OHM = 10e6
"""Feedback (bias) resistor of the crystal inverter [ohm] (common practice: 10 to 22 Mohm)."""

CRYSTAL_SERIES_OHM = 330e3
"""Series resistor between the inverter output and the crystal [ohm]: limits the drive level (common practice)."""

STRAY_CAPACITANCE_F = 3e-12
"""Board and pin capacitance in parallel with each crystal load capacitor [F] (common practice)."""

BASE_OVERDRIVE = 3.0
"""Base current of the PNP load switch over the minimum its hFE needs (common practice)."""

_RT = Role("r_timing", "resistor", *RT_RANGE_OHM, "oscillator timing resistor Rt")
_CT = Role("c_timing", "capacitor", CT_MIN_F, CT_MAX_F, "oscillator timing capacitor Ct", ("film", "ceramic"))


# ---- physics ------------------------------------------------------------------------------

def threshold_factor(vt_frac):
    """F(v) = T/(R·C) of a two-inverter RC oscillator with threshold v = Vt/VDD (0 < v < 1)."""
    v = np.asarray(vt_frac, dtype=float)
    return np.log((1.0 + v) / v) + np.log((2.0 - v) / (1.0 - v))


def rc_period_s(rt_ohm, ct_f, k, vt_frac, vt_typ_frac=0.5):
    """Oscillator period [s]: the datasheet's k·Rt·Ct at the typical threshold, scaled by F(v)/F(v_typ)."""
    return k * np.asarray(rt_ohm) * ct_f * threshold_factor(vt_frac) / threshold_factor(vt_typ_frac)


def stage_factor(n_total):
    """Oscillator periods until counter stage N goes high: 2^(N−1) (4060-type datasheets)."""
    return np.power(2.0, np.asarray(n_total, dtype=float) - 1.0)


def crystal_period_s(f0_hz, tolerance_frac, aging_frac, parabolic_per_k2, turnover_c, ambient_c):
    """Crystal period [s]: 1/(f0·(1 + tolerance + aging + β·(T − T0)²))."""
    dt = np.asarray(ambient_c, dtype=float) - turnover_c
    return 1.0 / (f0_hz * (1.0 + tolerance_frac + aging_frac + parabolic_per_k2 * dt * dt))


def oscillator_netlist(rt_ohm: float, ct_f: float, rs_ohm: float, vdd_v: float, vt_frac: float, title: str,
                       periods_to_delay: float | None = None) -> str:
    """Behavioural two-inverter RC oscillator: steep tanh inverters sharing the threshold Vt (one die), Rt from the
    first inverter's output to the Ct junction, Ct from the second inverter's output, Rs into the
    first inverter's input. `.measure` prints `period` [s] (and `delay` = period·periods_to_delay)."""
    tau = rt_ohm * ct_f
    period = tau * float(threshold_factor(vt_frac))
    stop = 7.0 * period
    gain = 2000.0 / vdd_v   # steep enough that switching adds under 0.1 % to the period
    lines = [
        f"* {title}",
        "* behavioural two-inverter RC oscillator (CMOS counter's on-chip inverters, threshold Vt)",
        f"vdd vdd 0 dc {vdd_v:.6g}",
        f"b1 o1 0 v = {vdd_v / 2:.9g} * (1 - tanh({gain:.6g} * (v(in) - {vt_frac * vdd_v:.9g})))",
        f"b2 o2 0 v = {vdd_v / 2:.9g} * (1 - tanh({gain:.6g} * (v(o1) - {vt_frac * vdd_v:.9g})))",
        f"rt o1 x {rt_ohm:.6g}",
        f"ct o2 x {ct_f:.6g} ic=0",
        f"rs x in {rs_ohm:.6g}",
        "cin in 0 1f",
        f".tran {period / 2000:.6g} {stop:.6g} 0 {period / 2000:.6g} uic",
        # x jumps from Vt to Vt + VDD once a period: the only upward crossing of Vt + VDD/2
        f".measure tran t3 when v(x)={(vt_frac + 0.5) * vdd_v:.6g} rise=3",
        f".measure tran t5 when v(x)={(vt_frac + 0.5) * vdd_v:.6g} rise=5",
        ".measure tran period param='(t5-t3)/2'",
    ]
    if periods_to_delay is not None:
        lines.append(f".measure tran delay param='(t5-t3)/2*{periods_to_delay:.17g}'")
    return "\n".join([*lines, ".end", ""])


# ---- shared counter logic -----------------------------------------------------------------

class _CounterTimer(Topology):
    """Common base of the counter topologies: counter chain, stage choice, latch, reset, load switch.

    A subclass supplies its oscillator: roles, spread quantities, period, parts, currents, checks
    and the oscillator block of the optimiser tables.
    """

    # -- what the oscillator subclass provides
    @abstractmethod
    def _osc_uncertain(self, design: Design) -> dict[str, Uncertain]:
        """Spread quantities of the oscillator."""

    @abstractmethod
    def period_s(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Oscillator period [s] per sample."""

    @abstractmethod
    def _osc_bom(self, design: Design) -> list[BomLine]:
        """Oscillator parts."""

    @abstractmethod
    def _osc_currents(self, design: Design) -> tuple[float, float]:
        """Oscillator supply current while running, and the latch current after the timeout [A] at nominal supply."""

    @abstractmethod
    def _osc_checks(self, design: Design) -> list[Finding]:
        """Oscillator design rules."""

    @abstractmethod
    def _osc_block(self, counters: list["Part"], dropped: dict[str, int]) -> pd.DataFrame:
        """Oscillator block rows: period lo/nom/hi [s], cost, parts, currents, role and option columns."""

    _OSC_OPTIONS: tuple[str, ...] = ()
    option_units = {"stage": None, "cascade": None, "link_stage": None}
    option_parts = {"counter": "counter"}

    # -- counter chain
    def _counter(self, design: Design) -> "Part":
        chosen = design.options.get("counter") or self.catalog.parts("counter")[0].id
        return part_of(self, design, str(chosen))

    def _chain(self, design: Design) -> tuple[int, int, int]:
        """(output stage N of the last counter, extra counters in cascade, stage L of each earlier
        counter that clocks the next; default its last stage)."""
        last = int(self._counter(design).value("stages", ""))
        return (int(design.options.get("stage", last)), int(design.options.get("cascade", 0)),
                int(design.options.get("link_stage", last)))

    def n_total(self, design: Design) -> int:
        """Binary stages from the oscillator to the output: N + L·cascade."""
        stage, cascade, link = self._chain(design)
        return stage + cascade * link

    def delay(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """2^(N_total − 1) oscillator periods [s]."""
        return self.period_s(design, x) * float(stage_factor(self.n_total(design)))

    def uncertain(self, design: Design) -> dict[str, Uncertain]:
        """The oscillator's spread quantities (the counter itself divides exactly)."""
        return self._osc_uncertain(design)

    def _vf(self) -> float:
        return self.catalog.part(self._latch_diode().part).value("vf", "V")

    def _latch_diode(self) -> BomLine:
        return diode(self, "D2", "latch: the output stage holds the oscillator input high after the timeout")

    # -- load switch: PNP high side, on while the counter output is low (timing)
    def _load_max_a(self) -> float:
        load, s = self.brief.load, self.brief.supply
        return s.max_v / load.coil_resistance_ohm if load.kind == "relay" else load.current_a

    def _pnp(self) -> "Part":
        return logic.cheapest(self.catalog, "pnp", lambda p: p.value("vceo_max", "V") >= self.brief.supply.max_v,
                              f"a PNP rated {fq(self.brief.supply.max_v, 'V')} to switch the load")

    def _base_resistor_ohm(self) -> float:
        """Largest standard base resistor giving BASE_OVERDRIVE times the base current hFE_min needs at minimum supply."""
        pnp, s = self._pnp(), self.brief.supply
        need_a = BASE_OVERDRIVE * self._load_max_a() / pnp.value("hfe_min", "")
        target = (s.min_v - pnp.value("vbe_on_max", "V")) / need_a
        below = eseries.values(self.brief.series.resistor, target / 10, target)
        return float(below[-1])

    def _fixed_bom(self) -> list[BomLine]:
        """Parts that do not depend on the chosen values: reset network, latch diode, load switch."""
        pnp, rb = self._pnp(), self._base_resistor_ohm()
        lines = [*start_bom(self, "reset", "R10", "C10", "D3"), self._latch_diode(),
                 BomLine("Q1", pnp.id, pnp.description, 1, pnp.cost,
                         "high-side load switch, on while the counter output is low (timing)"),
                 fixed_part(self, "resistor", rb, "R11", "PNP base resistor from the counter output")]
        if self.brief.load.kind == "relay":
            lines.append(diode(self, "D1", "flyback diode across the coil", logic.DIODE_REVERSE_FACTOR))
        return lines

    def _counter_bom(self, counter: "Part", cascade: int, link: int = 0) -> list[BomLine]:
        n = 1 + cascade
        refs = ", ".join(f"U{i + 1}" for i in range(n))
        cap = fixed_part(self, "capacitor", DECOUPLING_F, "C", "supply decoupling at each counter")
        note = "ripple counter" + (f"s; stage {link} of each earlier one clocks the next" if cascade else "")
        return [BomLine(refs, counter.id, counter.description, n, counter.cost, note),
                dataclasses.replace(cap, refs=", ".join(f"C{i + 20}" for i in range(n)), quantity=n)]

    def bom(self, design: Design) -> list[BomLine]:
        """Oscillator parts, counters with decoupling, reset network, latch diode, PNP load switch; the coil is the load."""
        return [*self._osc_bom(design), *self._counter_bom(self._counter(design), self._chain(design)[1],
                                                           self._chain(design)[2]),
                *self._fixed_bom()]

    def _driver_currents(self) -> tuple[float, float]:
        """PNP base current during the timing and its off-state leakage after it [A] at nominal supply."""
        pnp, v = self._pnp(), self.brief.supply.nominal_v
        return (v - pnp.value("vbe_on_typ", "V")) / self._base_resistor_ohm(), pnp.value("iceo", "A")

    def _quiescent(self, counter: "Part") -> float:
        return on_supply(counter, "quiescent_supply", "quiescent_typ", "A", self.brief.supply.nominal_v)

    def standby(self, design: Design) -> Standby:
        """During: load, base drive, oscillator, counters; after: counters, latch current, PNP leakage (typical)."""
        counters = (1 + self._chain(design)[1]) * self._quiescent(self._counter(design))
        running, latched = self._osc_currents(design)
        base, leak = self._driver_currents()
        return Standby(self.brief.load.current_a + base + running + counters, counters + latched + leak)

    # -- design rules
    def _driver_problems(self, counter: "Part") -> list[str]:
        """Why the PNP load switch cannot work: current rating, coil voltage, counter output sink current."""
        pnp, s, load = self._pnp(), self.brief.supply, self.brief.load
        out = []
        if self._load_max_a() > pnp.value("ic_max", "A"):
            out.append(f"the load needs {fq(self._load_max_a(), 'A')}, above the {pnp.id} rating "
                       f"{fq(pnp.value('ic_max', 'A'), 'A')}")
        if load.kind == "relay" and s.min_v - pnp.value("vce_sat", "V") < load.must_operate_frac * load.coil_voltage_v:
            out.append(f"the coil gets {fq(s.min_v - pnp.value('vce_sat', 'V'), 'V')} at minimum supply; it needs "
                       f"{fq(load.must_operate_frac * load.coil_voltage_v, 'V')}")
        rb = self._base_resistor_ohm()
        for v in (s.min_v, s.max_v):
            base = (v - pnp.value("vbe_on_min", "V")) / rb
            sink = on_supply(counter, "output_supply", "output_sink", "A", v)
            if base > sink:
                out.append(f"the PNP base current {fq(base, 'A')} at {fq(v, 'V')} exceeds the {counter.id} output's "
                           f"{fq(sink, 'A')} sink current")
        return out

    def checks(self, design: Design) -> list[Finding]:
        """Supply rating, stage brought out, cascade length, load switch, latch, power-on reset, oscillator."""
        counter = self._counter(design)
        stage, cascade, link = self._chain(design)
        out = [Finding("violation", "supply-range", p) for p in [supply_problem(self, counter)] if p]
        outs = [int(v) for v in counter.values("stages_out", "")]
        for what, n in (("stage", stage), ("link_stage", link if cascade else stage)):
            if n not in outs:
                out.append(Finding("violation", what, f"{what} {n} is not brought out on {counter.id}; "
                                                      f"accepted: {', '.join(map(str, outs))}"))
        most = int(self.entry.value("max_counters", ""))
        if not 0 <= cascade < most:
            out.append(Finding("violation", "cascade", f"cascade {cascade} needs {cascade + 1} counters; "
                                                       f"accepted: 0 to {most - 1}"))
        out += [Finding("violation", "load-switch", p) for p in self._driver_problems(counter)]
        vt_max = counter.value("vt_max", "")
        s = self.brief.supply
        if s.min_v - self._vf() < vt_max * s.min_v:
            out.append(Finding("violation", "latch", f"the latch diode leaves the oscillator input at "
                                                     f"{fq(s.min_v - self._vf(), 'V')}, below the highest threshold "
                                                     f"{fq(vt_max * s.min_v, 'V')} at minimum supply"))
        out += start_checks(self, "reset", 1.0 - vt_max, counter.value("supply_min", "V"),
                            counter.value("reset_pulse_min", "s"))
        out += self._osc_checks(design)
        out.append(Finding("info", "quiescent", f"{counter.id}: standby uses the typical quiescent current "
                           f"{fq(self._quiescent(counter), 'A')} per counter; the datasheet maximum is "
                           f"{fq(on_supply(counter, 'quiescent_supply', 'quiescent_max', 'A', s.nominal_v), 'A')}"))
        return out

    # -- optimiser tables
    def _stage_block(self, counters: list["Part"], dropped: dict[str, int]) -> pd.DataFrame:
        """Every (counter class, output stage, cascade) with its factor 2^(N_total − 1)."""
        most = int(self.entry.value("max_counters", ""))
        rows = []
        for index, counter in enumerate(counters):
            outs = [int(v) for v in counter.values("stages_out", "")]
            lines = self._counter_bom(counter, 0)
            seen = set()
            for cascade in range(most):
                n = 1 + cascade
                for link in sorted(outs, reverse=True) if cascade else [max(outs)]:
                    for stage in outs:
                        n_total = stage + link * cascade
                        if n_total in seen:   # same delay as a row with no more counters: dominated
                            continue
                        seen.add(n_total)
                        factor = float(stage_factor(n_total))
                        rows.append(dict(delay_lo=factor, delay_nom=factor, delay_hi=factor,
                                         cost=n * sum(b.unit_cost for b in lines), placements=n * len(lines),
                                         lines=len(lines), during_a=n * self._quiescent(counter),
                                         after_a=n * self._quiescent(counter), counter=counter.id, stage=stage,
                                         cascade=cascade, link_stage=link, counter_index=float(index)))
        return pd.DataFrame(rows, columns=["delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines",
                                           "during_a", "after_a", "counter", "stage", "cascade", "link_stage",
                                           "counter_index"])

    def selection(self) -> SelectionModel:
        """Oscillator block (period [s]) times stage block (2^(N−1)): combine='product'.

        The stage factor has no spread, so the product of the blocks' extremes is the exact
        worst case of the design; counter classes the supply or the load switch rule out are
        dropped with the reason.
        """
        dropped: dict[str, int] = {}
        counters = []
        for counter in self.catalog.parts("counter"):
            problems = [p for p in [supply_problem(self, counter)] if p] + self._driver_problems(counter)
            for p in problems:
                drop_count(dropped, f"{counter.id}: {p}", 1)
            if not problems:
                counters.append(counter)
        osc = self._osc_block(counters, dropped)
        stages = self._stage_block(counters, dropped)
        osc, stages = self._prune(osc, stages, dropped)
        fixed = self._fixed_bom()
        running, latched = self._driver_currents()
        links = []
        if len(counters) > 1 and "counter_index" in osc.columns:
            for sense in ("<=", ">="):
                links.append(Link((("oscillator", "counter_index", 1.0), ("stages", "counter_index", -1.0)), sense,
                                  0.0, "the oscillator's constant belongs to the chosen counter class"))
        return SelectionModel(
            self.id, "product",
            [Block("oscillator", osc, roles=tuple(r.name for r in self.roles()), options=self._OSC_OPTIONS,
                   dropped=dropped),
             Block("stages", stages, options=("counter", "stage", "cascade", "link_stage"))],
            links=links, fixed_cost=sum(b.cost for b in fixed), fixed_placements=sum(b.quantity for b in fixed),
            fixed_lines=len(fixed), fixed_during_a=self.brief.load.current_a + running, fixed_after_a=latched,
            rails=1, effort=self.entry.value("effort", ""),
        )

    def _prune(self, osc: pd.DataFrame, stages: pd.DataFrame, dropped: dict[str, int]):
        """Remove oscillator rows no stage brings inside the band at every corner, and stage rows no oscillator row does."""
        band = self.brief.delay
        if osc.empty or stages.empty:
            return osc.iloc[0:0], stages.iloc[0:0]
        factor = stages["delay_nom"].to_numpy()
        lo, hi = osc["delay_lo"].to_numpy()[:, None] * factor, osc["delay_hi"].to_numpy()[:, None] * factor
        fits = (lo >= band.min_s) & (hi <= band.max_s)
        osc_ok, stage_ok = fits.any(axis=1), fits.any(axis=0)
        span = f"{fq(band.min_s, 's')} to {fq(band.max_s, 's')}"
        drop_count(dropped, f"oscillator: at no counter stage do 2^(N−1) worst-case periods stay inside {span}",
                   int((~osc_ok).sum()))
        drop_count(dropped, f"counter stage: no oscillator candidate keeps 2^(N−1) worst-case periods inside {span}"
                   + self._nearest_stages(osc, stages), int((~stage_ok).sum()))
        return osc[osc_ok], stages[stage_ok]

    def _nearest_stages(self, osc: pd.DataFrame, stages: pd.DataFrame) -> str:
        """For a fixed-period oscillator: the stage delays either side of the band (else empty)."""
        periods = np.unique(osc["delay_nom"].to_numpy())
        if len(periods) != 1:
            return ""
        delays = np.sort(periods[0] * stages["delay_nom"].to_numpy())
        band = self.brief.delay
        below, above = delays[delays < band.min_s], delays[delays > band.max_s]
        near = [fq(d, "s") for d in (below[-1:].tolist() + above[:1].tolist())]
        return f" (nearest nominal delays {' and '.join(near)})" if near else ""


# ---- RC oscillator ---------------------------------------------------------------------

class RCCounter(_CounterTimer):
    """Ripple counter clocked by its on-chip RC oscillator (Rt, Ct, Rs)."""

    id = "rc-counter"
    _OSC_OPTIONS = ("r_timing_part", "c_timing_part")
    option_parts = {**_CounterTimer.option_parts, "r_timing_part": "resistor", "c_timing_part": "capacitor"}

    def roles(self) -> list[Role]:
        """Rt [ohm] and Ct [F] of the oscillator (Ct non-polarised: its voltage reverses every half-period)."""
        return [_RT, _CT]

    def rs_ohm(self, rt_ohm):
        """Series resistor Rs: the brief's standard value nearest 2·Rt, at least 10 kohm [ohm]."""
        return eseries.nearest(self.brief.series.resistor, np.maximum(2.0 * np.asarray(rt_ohm, dtype=float), RS_MIN_OHM))

    def _threshold(self, counter: "Part") -> Uncertain:
        lo, typ, hi = counter.value("vt_min", ""), counter.value("vt_typ", ""), counter.value("vt_max", "")
        return Uncertain(typ, lo, hi, unit="fraction of VDD", critical=(0.5,),
                         note=f"{counter.id}: inverter threshold between {lo:g} and {hi:g} of VDD "
                              f"({counter.source('vt_min')}); F(v) is smallest at 1/2")

    def _osc_uncertain(self, design: Design) -> dict[str, Uncertain]:
        rt, ct = design.values["r_timing"], design.values["c_timing"]
        return {**value_spread("r_timing", rt, role_part(self, design, _RT), "ohm"),
                **value_spread("c_timing", ct, role_part(self, design, _CT), "F"),
                "vt_frac": self._threshold(self._counter(design))}

    def period_s(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """k·Rt·Ct·F(v)/F(v_typ) with Rt, Ct at the sample's ambient [s]."""
        counter = self._counter(design)
        return rc_period_s(at_temperature(x, "r_timing"), at_temperature(x, "c_timing"), counter.value("k", ""),
                           x["vt_frac"], counter.value("vt_typ", ""))

    def _osc_bom(self, design: Design) -> list[BomLine]:
        rs = self.rs_ohm(design.values["r_timing"])
        return [*role_bom(self, design, _RT, "R1", "oscillator timing resistor Rt"),
                *role_bom(self, design, _CT, "C1", "oscillator timing capacitor Ct"),
                fixed_part(self, "resistor", rs, "R2", "oscillator series resistor Rs (about 2·Rt)")]

    def _currents_of(self, rt, ct, period):
        """Supply current of the running oscillator, 2·Ct·VDD per period, and the latch current
        (VDD − Vf)/(Rs + Rt) after the timeout [A] at nominal supply (standard circuit analysis)."""
        v = self.brief.supply.nominal_v
        return 2.0 * ct * v / period, (v - self._vf()) / (self.rs_ohm(rt) + rt)

    def _osc_currents(self, design: Design) -> tuple[float, float]:
        rt, ct = design.values["r_timing"], design.values["c_timing"]
        period = self.period_s(design, {n: np.array([v]) for n, v in self.nominal_point(design).items()})[0]
        running, latched = self._currents_of(rt, ct, period)
        return float(running), float(latched)

    def _osc_checks(self, design: Design) -> list[Finding]:
        counter = self._counter(design)
        return [Finding("info", "oscillator-constant",
                        f"{counter.id}: k = {counter.value('k', ''):g} ({counter.source('k')})")]

    def _osc_block(self, counters: list["Part"], dropped: dict[str, int]) -> pd.DataFrame:
        """Every (counter class, Rt, Ct) with its period [s] at the worst corners.

        Within an ambient corner the period rises with Rt, Ct and |v − 1/2|; tempcos act with the
        sign of T − 25 degC, so the extremes are the 2 ambient corners × monotone choices, with
        the threshold at 1/2 (minimum of F) or at the limit farther from it (maximum)."""
        rs, cs = (drop_dominated(timing_candidates(self, role, dropped), ("value",),
                                 ("tolerance", "tempco", "cost", "placements"),
                                 f"{role.description}: another class of the same value is as good or better in "
                                 "tolerance, tempco, cost and parts", dropped) for role in (_RT, _CT))
        env = self.environment()
        tables = []
        for index, counter in enumerate(counters):
            vt = self._threshold(counter)
            vt_corners = np.array(vt.corner_values())
            f = threshold_factor(vt_corners) / threshold_factor(counter.value("vt_typ", ""))
            k = counter.value("k", "")
            for _, rg in rs.groupby("part", sort=False):
                for _, cg in cs.groupby("part", sort=False):
                    tables.append(self._rc_rows(index, counter, k, f, rg, cg, env))
        columns = ["delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines", "during_a", "after_a",
                   "r_timing", "c_timing", "r_timing_part", "c_timing_part", "r_timing_first", "r_timing_second",
                   "counter_index"]
        if not tables:
            return pd.DataFrame(columns=columns)
        return drop_dominated(pd.concat(tables, ignore_index=True)[columns], ("delay_nom", "counter_index"),
                              ("delay_hi", "cost", "placements", "lines", "during_a", "after_a"),
                              "oscillator: another Rt, Ct pair with the same nominal period is as good or better "
                              "in spread, cost, parts and current", dropped, higher=("delay_lo",))

    def _rc_rows(self, index, counter, k, f_corners, rg, cg, env) -> pd.DataFrame:
        ri, ci = (a.ravel() for a in np.meshgrid(np.arange(len(rg)), np.arange(len(cg)), indexing="ij"))
        rt, ct = rg["value"].to_numpy()[ri], cg["value"].to_numpy()[ci]
        r_tol, r_tc = rg["tolerance"].to_numpy()[ri], rg["tempco"].to_numpy()[ri]
        c_tol, c_tc = cg["tolerance"].to_numpy()[ci], cg["tempco"].to_numpy()[ci]
        base = k * rt * ct
        lo, hi = np.full(len(rt), np.inf), np.zeros(len(rt))
        for t in env["ambient_c"].corner_values():
            dt = abs(t - TEMPCO_REFERENCE_C)
            lo = np.minimum(lo, base * (1 - r_tol) * (1 - r_tc * dt) * (1 - c_tol) * (1 - c_tc * dt) * f_corners.min())
            hi = np.maximum(hi, base * (1 + r_tol) * (1 + r_tc * dt) * (1 + c_tol) * (1 + c_tc * dt) * f_corners.max())
        # nominal: tempcos at 0 and the threshold at its typical value, so F(v_typ)/F(v_typ) = 1
        nom = base
        running, latched = self._currents_of(rt, ct, nom)
        rs_part_cost = fixed_part(self, "resistor", RS_MIN_OHM, "R2", "Rs").unit_cost
        first, second = rg["first"].to_numpy()[ri], rg["second"].to_numpy()[ri]
        return pd.DataFrame({
            "delay_lo": lo, "delay_nom": nom, "delay_hi": hi,
            "cost": rg["cost"].to_numpy()[ri] + cg["cost"].to_numpy()[ci] + rs_part_cost,
            "placements": rg["placements"].to_numpy()[ri] + 2,
            "lines": np.where((second > 0) & (first != second), 2, 1) + 2,
            "during_a": running, "after_a": latched, "r_timing": rt, "c_timing": ct,
            "r_timing_part": rg["part"].iat[0], "c_timing_part": cg["part"].iat[0],
            "r_timing_first": first, "r_timing_second": second, "counter_index": float(index),
        })

    def waveform(self, design: Design, x: Mapping[str, float]) -> Waveform | None:
        """Voltage at the Rt–Ct junction over three periods (ideal inverters), with the threshold Vt."""
        point = {n: np.array([float(v)]) for n, v in x.items()}
        rt, ct = float(at_temperature(point, "r_timing")[0]), float(at_temperature(point, "c_timing")[0])
        vdd, v = float(x["supply_v"]), float(x["vt_frac"])
        tau, vt = rt * ct, v * vdd
        t1, t2 = tau * math.log((2 * vdd - vt) / (vdd - vt)), tau * math.log((vdd + vt) / vt)
        t = np.linspace(0.0, 3 * (t1 + t2), 600)
        phase = np.mod(t, t1 + t2)
        rising = phase < t1
        junction = np.where(rising, vdd - (2 * vdd - vt) * np.exp(-phase / tau),
                            (vdd + vt) * np.exp(-(phase - t1) / tau))
        return Waveform(t, junction, "Rt–Ct junction voltage (first 3 oscillator periods)", "V", vt,
                        "inverter threshold Vt")

    def spice(self, design: Design) -> str | None:
        """Behavioural two-inverter oscillator at nominal values; `delay` = period·2^(N_total − 1)."""
        counter = self._counter(design)
        rt, ct = design.values["r_timing"], design.values["c_timing"]
        return oscillator_netlist(rt, ct, self.rs_ohm(rt), self.brief.supply.nominal_v, counter.value("vt_typ", ""),
                                  f"{self.id}: {self.brief.title}", float(stage_factor(self.n_total(design))))


# ---- crystal oscillator ----------------------------------------------------------------

class CrystalCounter(_CounterTimer):
    """Ripple counter clocked by a 32.768 kHz crystal on its on-chip inverter (Pierce oscillator)."""

    id = "crystal-counter"
    _OSC_OPTIONS = ("crystal",)
    option_parts = {**_CounterTimer.option_parts, "crystal": "crystal"}

    def roles(self) -> list[Role]:
        """None: the crystal fixes the period; only the counter stages are chosen."""
        return []

    def _crystal(self, design: Design) -> "Part":
        chosen = design.options.get("crystal") or self.catalog.parts("crystal")[0].id
        return part_of(self, design, str(chosen))

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

    @staticmethod
    def _crystal_quantities(crystal: "Part") -> dict[str, Uncertain]:
        tol, aging = crystal.value("frequency_tolerance", ""), crystal.value("aging", "")
        t0, spread = crystal.value("turnover", "degC"), crystal.value("turnover_spread", "K")
        return {
            "crystal_tolerance": Uncertain(0.0, -tol, tol, note=f"{crystal.id}: ({crystal.source('frequency_tolerance')})"),
            "crystal_aging": Uncertain(0.0, -aging, aging, note=f"{crystal.id}: first year ({crystal.source('aging')})"),
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

    def _latch_current_a(self) -> float:
        """After the timeout the latch diode drives (VDD − Vf) through the bias resistor [A]."""
        return (self.brief.supply.nominal_v - self._vf()) / CRYSTAL_BIAS_OHM

    def _osc_currents(self, design: Design) -> tuple[float, float]:
        # the inverter's class-A bias current while oscillating is not in the catalog: left out (stated)
        return 0.0, self._latch_current_a()

    def _osc_checks(self, design: Design) -> list[Finding]:
        return [Finding("info", "crystal", "delays are 2^(N−1)/32768 s only; the running oscillator's inverter "
                                           "bias current is not modelled (no catalog figure)")]

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

    def _osc_block(self, counters: list["Part"], dropped: dict[str, int]) -> pd.DataFrame:
        rows = []
        latched = self._latch_current_a()
        for crystal in self.catalog.parts("crystal"):
            nom, lo, hi = self._extremes(crystal)
            lines = self._crystal_bom(crystal)
            rows.append(dict(delay_lo=lo, delay_nom=nom, delay_hi=hi, cost=sum(b.cost for b in lines),
                             placements=sum(b.quantity for b in lines), lines=len(lines), during_a=0.0,
                             after_a=latched, crystal=crystal.id))
        return pd.DataFrame(rows, columns=["delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines",
                                           "during_a", "after_a", "crystal"])
