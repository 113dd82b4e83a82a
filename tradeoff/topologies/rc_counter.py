"""Ripple counter clocked by its on-chip RC oscillator (`rc-counter`): two inverters with threshold
Vt, timing resistor Rt, timing capacitor Ct and series resistor Rs ≥ 2·Rt (4060-type datasheets: Rs
about 2·Rt; "at least" is common practice).

T = k·Rt·Ct·[F(v)/F(v_typ)]·[N/N_ref]·[S/S_ref] (tradeoff.devices.oscillator): k is the datasheet
constant, anywhere in the band the class's makers state (f = 1/(k·Rt·Ct), k 2.2 to 2.5); F(v) the
threshold's spread (F is smallest at v = 1/2, an interior point the corner search is told about); N the
input network (clamp diodes behind Rs, pin and stray capacitance Cp: `clamped_period_factor`) over its
value at the datasheet's Rs = 2·Rt without Cp at the reference supply; S the inverters (output
resistance and square-law excess: `inverter_factor`) over their value at the reference supply, so the
transistor threshold's band spreads only the supply dependence (the k band holds the makers' spread at
the reference). N and S are tabulated per class and interpolated (tradeoff.devices.oscillator_tables). The counter chain, decode, latch, rail and load switch are the shared counter
frame (tradeoff.topologies.ripple_counter).
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Mapping

import numpy as np
import pandas as pd

from tradeoff import eseries
from tradeoff.candidates import EVALUATION_CHUNK, bom_lines, pair_columns
from tradeoff.analysis import Uncertain
from tradeoff.devices.roots import bisect_arrays
from tradeoff.devices.oscillator import rc_half_periods_s, rc_junction_v, rc_running_current_a, threshold_factor
from tradeoff.devices.oscillator_tables import RS_RATIO, OscillatorTables, oscillator_tables, rc_extremes
from tradeoff.topologies.base import BomLine, Design, Finding, Role, Waveform
from tradeoff.topologies.corners import product_ends
from tradeoff.topologies.counter_switch import CounterPlan
from tradeoff.topologies.ic_common import (
    at_temperature, drop_count, drop_dominated, fixed_part, role_bom, role_part, timing_candidates, value_spread,
)
from tradeoff.topologies.ripple_counter import CounterTimer
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = ["RCCounter", "oscillator_netlist", "RS_MIN_OHM", "RT_RANGE_OHM", "CT_MIN_F"]

RT_RANGE_OHM = (10e3, 1e6)
"""Timing resistor range of the RC oscillator [ohm] (4060-type datasheets, docs/references.md)."""

CT_MIN_F = 100e-12
"""Smallest timing capacitor of the RC oscillator [F] (4060-type datasheets: at least 50 to 100 pF)."""

RS_MIN_OHM = 10e3
"""Smallest series resistor at the oscillator input [ohm] (4060-type datasheets: Rs about 2·Rt, at least 10 kohm)."""

_ENDS_SLACK = 1.1
"""Widening of the counts' range the stage block is built for (N·S is not monotone in Rt and Ct)."""

RO_LIMIT = 0.03
"""Largest inverter output resistance over Rt for which the period law is used: up to it the law agrees
with transistor-level ngspice within 2 % (tests/test_oscillator_clamp.py); beyond it the weak inverters
slow the oscillator markedly (-19 % at 3.3 V, 10 kohm, 0.4 mA/V^2 in the same simulation)."""

_RT = Role("r_timing", "resistor", "oscillator timing resistor Rt", lo=RT_RANGE_OHM[0], hi=RT_RANGE_OHM[1],
           limit="the counter's datasheets give Rt 10 kΩ to 1 MΩ (datasheet limit)")
_CT = Role("c_timing", "capacitor", "oscillator timing capacitor Ct", ("film", "ceramic"), lo=CT_MIN_F,
           limit="the counter's datasheets ask for Ct of at least 50 to 100 pF (datasheet limit)")
"""Ct is non-polarised (its voltage reverses each half period): film or ceramic classes only."""


def _class_spreads(counter: "Part") -> dict[str, Uncertain]:
    """The counter class's oscillator spreads: the constant k over the makers' band, the input pin plus
    stray capacitance, and the inverter transistors' threshold (sources in the catalog)."""
    vt_lo, vt_typ, vt_hi = (counter.value(n, "V") for n in ("mos_vt_min", "mos_vt_typ", "mos_vt_max"))
    return {
        "k": Uncertain(counter.value("k", ""), counter.value("k_min", ""), counter.value("k_max", ""),
                       note=f"{counter.id}: oscillator constant k between {counter.value('k_min', ''):g} and "
                            f"{counter.value('k_max', ''):g} ({counter.source('k_min')})"),
        "pin_cap_f": Uncertain(counter.value("pin_c_typ", "F"), counter.value("pin_c_min", "F"),
                             counter.value("pin_c_max", "F"), unit="F",
                             note=f"{counter.id}: input pin plus stray capacitance ({counter.source('pin_c_max')})"),
        "mos_vt_v": Uncertain(vt_typ, vt_lo, vt_hi, unit="V", critical=(vt_typ,),
                              note=f"{counter.id}: inverter transistor threshold; spreads the supply dependence "
                                   f"({counter.source('mos_vt_max')})"),
    }


def _terms(counter: "Part") -> OscillatorTables:
    """The tables of `counter`'s class (built once per process for each set of class figures)."""
    if 2 * counter.value("mos_vt_max", "V") >= counter.value("supply_min", "V"):
        raise counter.param_error("mos_vt_max", "must be below half of supply_min: both transistors of an inverter "
                                                "conduct at its switching point over the whole supply range")
    return oscillator_tables(counter.value("clamp_v", "V"), counter.value("mos_kp", "A/V**2"),
                     (counter.value("supply_min", "V"), counter.value("supply_max", "V")),
                     counter.value("k_supply", "V"), (counter.value("mos_vt_min", "V"), counter.value("mos_vt_max", "V")))


def _rt_min_ohm(counter: "Part", vdd_v: float) -> float:
    """Smallest Rt [ohm] whose inverters' output resistance 1/(KP·(VDD − Vt)) at the highest transistor
    threshold stays within RO_LIMIT of it on a vdd_v [V] supply."""
    headroom = max(vdd_v - counter.value("mos_vt_max", "V"), 1e-3)
    return 1.0 / (counter.value("mos_kp", "A/V**2") * headroom * RO_LIMIT)


def _rail_spread(rail) -> Uncertain:
    """The logic rail's voltage [V] with interior corner points: the period is not monotone in it."""
    return Uncertain(rail.nominal_v, rail.min_v, rail.max_v, unit="V",
                     critical=tuple(np.linspace(rail.min_v, rail.max_v, 5)[1:-1]),
                     note="logic rail range: the oscillator's period depends on its supply")


def _network_and_inverters(counter: "Part", rs_ratio, cp_ratio, rt_ohm, vdd_v, mos_vt_v) -> np.ndarray:
    """N·S of `counter`'s class (module docstring) at the given ratios, Rt [ohm], supply [V], threshold [V]."""
    terms = _terms(counter)
    return terms.network(rs_ratio, cp_ratio, vdd_v) * terms.inverters(rt_ohm, vdd_v, mos_vt_v)


def _threshold_for(factor: float) -> float:
    """Threshold v in [1/2, 0.95] with F(v) = factor (F rises from 2·ln 3 at 1/2); 1/2 below 2·ln 3."""
    lo, hi = bisect_arrays(lambda v: threshold_factor(v) >= factor, 0.5, 0.95, 60)
    return float(0.5 * (lo + hi))


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


class RCCounter(CounterTimer):
    """Ripple counter clocked by its on-chip RC oscillator (Rt, Ct, Rs)."""

    id = "rc-counter"
    _OSC_OPTIONS = ("r_timing_part", "c_timing_part")
    _DECODE_MAX_CASCADE = 0
    """Decoding within one counter only: Rt and Ct already tune the delay finely, so decoded counts of a
    cascade add thousands of table rows (and minutes of solver time) for little (a modelling choice)."""
    option_parts = {**CounterTimer.option_parts, "r_timing_part": "resistor", "c_timing_part": "capacitor"}

    def roles(self) -> list[Role]:
        """Rt [ohm] and Ct [F] of the oscillator (Ct non-polarised: its voltage reverses every half-period)."""
        return [_RT, _CT]

    def rs_ohm(self, rt_ohm):
        """Series resistor Rs: the brief's smallest standard value at or above 2·Rt, at least 10 kohm [ohm]."""
        return eseries.at_least(self.brief.series.resistor,
                                np.maximum(RS_RATIO * np.asarray(rt_ohm, dtype=float), RS_MIN_OHM))

    def _threshold(self, counter: "Part") -> Uncertain:
        lo, typ, hi = counter.value("vt_min", ""), counter.value("vt_typ", ""), counter.value("vt_max", "")
        return Uncertain(typ, lo, hi, unit="fraction of VDD", critical=(0.5,),
                         note=f"{counter.id}: inverter threshold between {lo:g} and {hi:g} of VDD "
                              f"({counter.source('vt_min')}); F(v) is smallest at 1/2")

    def _osc_uncertain(self, design: Design) -> dict[str, Uncertain]:
        rt, ct = design.values["r_timing"], design.values["c_timing"]
        counter = self._counter(design)
        rail = self.plan(counter).rail
        volts = self.brief.supply.max_v   # a bound: Rt never sees more than the supply
        return {**value_spread("r_timing", rt, role_part(self, design, _RT), "ohm", volts),
                **value_spread("c_timing", ct, role_part(self, design, _CT), "F", volts),
                "vt_frac": self._threshold(counter), **_class_spreads(counter),
                "rail_v": _rail_spread(rail)}

    def period_s(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """k·Rt·Ct·F(v)/F(v_typ)·N·S with Rt, Ct at the sample's ambient [s] (module docstring); N and S
        at the design's nominal Rt and Ct (their spread moves Rs/Rt and Cp/Ct by a few % of terms of a few %)."""
        counter = self._counter(design)
        rt, ct = design.values["r_timing"], design.values["c_timing"]
        return (x["k"] * at_temperature(x, "r_timing") * at_temperature(x, "c_timing")
                * threshold_factor(x["vt_frac"]) / threshold_factor(counter.value("vt_typ", ""))
                * _network_and_inverters(counter, self.rs_ohm(rt) / rt, x["pin_cap_f"] / ct, rt, x["rail_v"], x["mos_vt_v"]))

    def _osc_bom(self, design: Design) -> list[BomLine]:
        rs = self.rs_ohm(design.values["r_timing"])
        return [*role_bom(self, design, _RT, "R1", "oscillator timing resistor Rt"),
                *role_bom(self, design, _CT, "C1", "oscillator timing capacitor Ct"),
                fixed_part(self, "resistor", rs, "R2", "oscillator series resistor Rs (about 2·Rt)")]

    def _currents_of(self, latch_path_ohm, ct, period, rail_v: float):
        """Supply current of the running oscillator, 2·Ct·VDD per period, and the latch current
        (VDD − Vf)/(Rs + Rt) after the timeout through `latch_path_ohm` = Rs + Rt [A] on a `rail_v` [V] rail
        (standard circuit analysis)."""
        return rc_running_current_a(ct, rail_v, period), (rail_v - self._vf()) / latch_path_ohm

    def _osc_running_a(self, design: Design, rail_v: float) -> float:
        ct = design.values["c_timing"]
        period = self.period_s(design, {n: np.array([v]) for n, v in self.nominal_point(design).items()})[0]
        return float(self._currents_of(self._latch_path_ohm(design), ct, period, rail_v)[0])

    def _latch_path_ohm(self, design: Design) -> float:
        """Rs + Rt: the latched input drives DC through them into the first inverter's low output [ohm]."""
        rt = design.values["r_timing"]
        return float(self.rs_ohm(rt) + rt)

    def _osc_checks(self, design: Design) -> list[Finding]:
        counter = self._counter(design)
        rt = design.values["r_timing"]
        rs = float(self.rs_ohm(rt))
        return [Finding("info", "oscillator-constant",
                        f"{counter.id}: k = {counter.value('k', ''):g} typical, {counter.value('k_min', ''):g} to "
                        f"{counter.value('k_max', ''):g} by maker ({counter.source('k_min')}), stated at "
                        f"{fq(counter.value('k_supply', 'V'), 'V')} and Rs = 2·Rt; the clamp behind Rs, the pin "
                        "capacitance and the supply move the period from there (modelled)"),
                Finding("info", "series-resistor",
                        f"Rs = {fq(rs, 'ohm')}, {rs / rt:.2f}·Rt: at least 2·Rt (common practice: a smaller Rs "
                        "lets the input clamp diodes shorten the period more) and at least "
                        f"{fq(RS_MIN_OHM, 'ohm')} (14-stage ripple counter datasheets)"),
                *self._drive_findings(design, counter)]

    def _drive_findings(self, design: Design, counter: "Part") -> list[Finding]:
        """A warning when Rt is so low that the inverters' output resistance passes RO_LIMIT of it."""
        rail = self.plan(counter).rail
        rt_min = _rt_min_ohm(counter, rail.min_v)
        if design.values["r_timing"] >= rt_min:
            return []
        return [Finding("warning", "oscillator-drive",
                        f"Rt = {fq(design.values['r_timing'], 'ohm')} is below {fq(rt_min, 'ohm')}: on the "
                        f"{fq(rail.min_v, 'V')} rail the inverters' output resistance (from memory: "
                        f"{counter.source('mos_kp')}) exceeds {100 * RO_LIMIT:g} % of Rt, and the period may be "
                        "markedly longer than modelled")]

    def _osc_block(self, counters: list["Part"], plans: list[CounterPlan], dropped: dict[str, int]) -> pd.DataFrame:
        """Every (counter class, Rt, Ct) that some counter output can bring into the band, with its period [s] at
        the worst corners and its currents on the counter's rail; `latch_path_ohm` = Rs + Rt for the diode-AND link.

        The period is a product of positive factors in separate quantities (k; F of the threshold; Rt and Ct
        with their tempcos; N·S of Cp, the rail and the transistor threshold), so its extremes over the corner
        lattice are the products of the factors' extremes: the values the corner search of the design finds.
        Rt below the class's floor on the rail (`_rt_min_ohm`) is dropped with the reason.

        The (Rt, Ct) pairs are evaluated EVALUATION_CHUNK at a time and a pair is kept only where the counter
        frame's pruning (`_prune`) keeps it against the stage block of the periods' whole range: exact, since
        the stage block of the kept rows' narrower range differs only by outputs no oscillator row fits, and a
        row that dominates a kept row is kept too (as long a latch path, no wider a spread)."""
        rs, cs = (drop_dominated(timing_candidates(self, role, dropped), ("value",),
                                 ("tolerance", "tempco", "cost", "placements"),
                                 f"{role.description}: another class of the same value is as good or better in "
                                 "tolerance, tempco, cost and parts", dropped) for role in (_RT, _CT))
        env = self.environment()
        groups = []
        for index, (counter, plan) in enumerate(zip(counters, plans)):
            vt_corners = np.array(self._threshold(counter).corner_values())
            f = threshold_factor(vt_corners) / threshold_factor(counter.value("vt_typ", ""))
            rt_min = _rt_min_ohm(counter, plan.rail.min_v)
            weak = rs["value"] < rt_min
            drop_count(dropped, f"{counter.id}: Rt below {fq(rt_min, 'ohm')}: on a {fq(plan.rail.min_v, 'V')} rail the "
                                f"inverters' output resistance exceeds {100 * RO_LIMIT:g} % of Rt, beyond the range "
                                "where the period law is checked against transistor-level simulation", int(weak.sum()))
            for _, rg in rs[~weak].groupby("part", sort=False):
                for _, cg in cs.groupby("part", sort=False):
                    groups.append((index, counter, plan.rail, f, rg, cg))
        columns = ["delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines", "during_a", "after_a",
                   "r_timing", "c_timing", "r_timing_part", "c_timing_part", "r_timing_first", "r_timing_second",
                   "r_timing_pairing", "c_timing_first", "c_timing_second", "c_timing_pairing", "counter_index",
                   "latch_path_ohm"]
        if not groups:
            return pd.DataFrame(columns=columns)
        # the period's extremes grow with Rt·Ct: the longest shortest period at each group's largest pair, the
        # shortest longest period at its smallest; N·S (within a few % over the grid) is not monotone in Rt and
        # Ct, so the range of counts is widened by _ENDS_SLACK (the frame's pruning drops counts no row fits)
        ends = [(self._extremes(c, rail, f, rg, cg, env, [len(rg) - 1], [len(cg) - 1])[0][0],
                 self._extremes(c, rail, f, rg, cg, env, [0], [0])[1][0]) for _, c, rail, f, rg, cg in groups]
        band = self.brief.delay
        stages = self._stage_block(counters, plans, (band.min_s / max(lo for lo, _ in ends) / _ENDS_SLACK,
                                                     band.max_s / min(hi for _, hi in ends) * _ENDS_SLACK), None, {})
        tables, outside = [], 0
        for index, counter, rail, f, rg, cg in groups:
            latch_path = self.rs_ohm(rg["value"].to_numpy()) + rg["value"].to_numpy()   # Rs + Rt of each Rt
            step = max(1, EVALUATION_CHUNK // len(cg))
            for first in range(0, len(rg), step):
                ri, ci = (a.ravel() for a in np.meshgrid(np.arange(first, min(first + step, len(rg))),
                                                         np.arange(len(cg)), indexing="ij"))
                count = len(ri)
                ri, ci = self._spread_fits(counter, f, rg, cg, env, ri, ci)
                lo, hi = self._extremes(counter, rail, f, rg, cg, env, ri, ci)
                path = latch_path[ri]
                at = self._reachable(lo, hi, path, stages)
                outside += count - len(at)
                tables.append(self._rc_rows(index, counter, rail, rg, cg, ri[at], ci[at], lo[at], hi[at], path[at]))
        drop_count(dropped, self._no_output_reason(), outside)
        return drop_dominated(pd.concat(tables, ignore_index=True)[columns], ("delay_nom", "counter_index"),
                              ("delay_hi", "cost", "placements", "lines", "during_a", "after_a"),
                              "oscillator: another Rt, Ct pair with the same nominal period is as good or better "
                              "in spread, cost, parts, current and latch path", dropped,
                              higher=("delay_lo", "latch_path_ohm"))

    def _reachable(self, lo: np.ndarray, hi: np.ndarray, path: np.ndarray, stages: pd.DataFrame) -> np.ndarray:
        """Positions of the oscillator rows (shortest and longest period lo, hi [s], latch path Rs + Rt [ohm]) that
        the counter frame's pruning (`_prune`) keeps against the stage block `stages`: some stage row whose latch
        path the row's allows has a count f with lo·f at least the band's minimum and hi·f at most its maximum."""
        band, f, need = self.brief.delay, stages["delay_nom"].to_numpy(), stages["latch_path_min_ohm"].to_numpy()
        ok = np.zeros(len(lo), dtype=bool)
        for limit in np.unique(need):
            factors, eligible = np.sort(f[need == limit]), path >= limit
            first = np.searchsorted(factors, band.min_s / lo[eligible], side="left")
            top = np.searchsorted(factors, band.max_s / hi[eligible], side="right")
            ok[np.flatnonzero(eligible)[top > first]] = True
        return np.flatnonzero(ok)

    def _spread_fits(self, counter, f_corners, rg, cg, env, ri, ci) -> tuple[np.ndarray, np.ndarray]:
        """The pairs (ri, ci) whose longest over shortest period may stay within the band's max/min, the rest
        dropped before N·S is interpolated: where N rises with Cp (checked on the table) the pair's N·S at its
        longest corner is at least that at its shortest, so the ratio is at least that of the other factors, and
        a ratio above max/min (by more than rounding) leaves no count that `_reachable` could keep."""
        if not _terms(counter).network_rises_with_cp:
            return ri, ci
        lo, hi = rc_extremes(rg, cg, ri, ci, env["ambient_c"].corner_values())
        k, band = _class_spreads(counter)["k"], self.brief.delay
        ratio = hi / lo * (k.hi / k.lo) * (f_corners.max() / f_corners.min())
        fits = ratio <= band.max_s / band.min_s * (1 + 1e-9)
        return ri[fits], ci[fits]

    def _extremes(self, counter, rail, f_corners, rg, cg, env, ri, ci) -> tuple[np.ndarray, np.ndarray]:
        """Shortest and longest period [s] of the pairs (rg.iloc[ri], cg.iloc[ci]) of one Rt class and one Ct
        class over the corners: k's band, the threshold factors `f_corners`, the ambient with the parts'
        tolerances and tempcos, and N·S over the rail's corner values (N rises with Cp, so its extremes take
        Cp's limits; S takes each transistor-threshold corner value). S and Rs/Rt depend on Rt alone, so they are
        evaluated once per Rt, not per pair."""
        ct = cg["value"].to_numpy()[ci]
        spreads = _class_spreads(counter)
        vdd = np.array(_rail_spread(rail).corner_values())[:, None, None]
        vt = np.array(spreads["mos_vt_v"].corner_values())[None, :, None]
        terms, cp = _terms(counter), spreads["pin_cap_f"]
        each_rt, of_pair = np.unique(np.asarray(ri), return_inverse=True)
        rt_once = rg["value"].to_numpy()[each_rt]
        s = terms.inverters(rt_once, vdd, vt)[..., of_pair]
        rs_ratio = (self.rs_ohm(rt_once) / rt_once)[of_pair]
        n_lo = (terms.network(rs_ratio, cp.lo / ct, vdd) * s).min(axis=(0, 1))
        n_hi = (terms.network(rs_ratio, cp.hi / ct, vdd) * s).max(axis=(0, 1))
        lo, hi = rc_extremes(rg, cg, ri, ci, env["ambient_c"].corner_values())
        return product_ends([(lo, hi), (spreads["k"].lo, spreads["k"].hi), (f_corners.min(), f_corners.max()),
                             (n_lo, n_hi)])

    def _rc_rows(self, index, counter, rail, rg, cg, ri, ci, lo, hi, latch_path) -> pd.DataFrame:
        """Block rows of the pairs (rg.iloc[ri], cg.iloc[ci]) with their shortest and longest periods lo, hi [s] and
        latch paths Rs + Rt [ohm]."""
        rt, ct = rg["value"].to_numpy()[ri], cg["value"].to_numpy()[ci]
        # nominal: tempcos at 0, the threshold at its typical value (F(v_typ)/F(v_typ) = 1), the class's
        # typical k, pin capacitance and transistor threshold on the rail's nominal voltage
        spreads = _class_spreads(counter)
        nom = spreads["k"].nominal * rt * ct * _network_and_inverters(
            counter, self.rs_ohm(rt) / rt, spreads["pin_cap_f"].nominal / ct, rt, rail.nominal_v,
            spreads["mos_vt_v"].nominal)
        running, latched = self._currents_of(latch_path, ct, nom, rail.nominal_v)
        rs_part_cost = fixed_part(self, "resistor", RS_MIN_OHM, "R2", "Rs").unit_cost
        return pd.DataFrame({
            "delay_lo": lo, "delay_nom": nom, "delay_hi": hi,
            "cost": rg["cost"].to_numpy()[ri] + cg["cost"].to_numpy()[ci] + rs_part_cost,
            "placements": rg["placements"].to_numpy()[ri] + cg["placements"].to_numpy()[ci] + 1,
            "lines": bom_lines(rg, ri) + bom_lines(cg, ci) + 1,
            "during_a": running, "after_a": latched, "r_timing": rt, "c_timing": ct,
            "r_timing_part": rg["part"].iat[0], "c_timing_part": cg["part"].iat[0],
            **pair_columns("r_timing", rg, ri), **pair_columns("c_timing", cg, ci), "counter_index": float(index),
            "latch_path_ohm": latch_path,
        })

    def waveform(self, design: Design, x: Mapping[str, float]) -> Waveform | None:
        """Voltage at the Rt–Ct junction over three periods (ideal inverters), with the threshold Vt."""
        point = {n: np.array([float(v)]) for n, v in x.items()}
        rt, ct = float(at_temperature(point, "r_timing")[0]), float(at_temperature(point, "c_timing")[0])
        vdd, v = float(x["supply_v"]), float(x["vt_frac"])
        tau, vt = rt * ct, v * vdd
        t = np.linspace(0.0, 3 * sum(rc_half_periods_s(tau, vdd, vt)), 600)
        return Waveform(t, rc_junction_v(t, tau, vdd, vt), "Rt–Ct junction voltage (first 3 oscillator periods)", "V", vt,
                        "inverter threshold Vt")

    def spice(self, design: Design) -> str | None:
        """Behavioural two-inverter oscillator at nominal values; `delay` = period·(periods to the timeout).
        Its inverters share the threshold at which the ideal law F gives the model's nominal period (the
        class's k and its supply and input-network terms have no behavioural counterpart; the netlist
        checks the oscillator's wiring, the count and the latch timing), VDD/2 when that period is below
        2·ln 3·Rt·Ct."""
        counter = self._counter(design)
        rt, ct = design.values["r_timing"], design.values["c_timing"]
        period = self.period_s(design, {n: np.array([v]) for n, v in self.nominal_point(design).items()})[0]
        return oscillator_netlist(rt, ct, self.rs_ohm(rt), self.plan(counter).rail.nominal_v,
                                  _threshold_for(period / (rt * ct)), f"{self.id}: {self.brief.title}",
                                  float(self.periods(design)))
