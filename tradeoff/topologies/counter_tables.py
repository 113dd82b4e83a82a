"""Optimiser tables of the counter frame (`ripple_counter.CounterTimer` mixes this in): the stage block of
every counter class, output set, cascade and link with its exact count, the product with the oscillator
block a subclass supplies (`_osc_block`), the links between them, and the exact pruning of rows no
partner row brings inside the band.
"""
from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from tradeoff.selection import Block, Link, SelectionModel
from tradeoff.topologies.counter_chain import NODE_DROP_V, decode_text, latch_path_min_ohm, output_sets
from tradeoff.topologies.ic_common import drop_count, fixed_part
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.topologies.counter_switch import CounterPlan

__all__ = ["CounterTables"]


class CounterTables:
    """The counter frame's `selection()`: oscillator block times stage block, with its links and pruning."""

    def _stage_block(self, counters: list["Part"], plans: list[CounterPlan], factor_range: tuple[float, float],
                     period_s: float | None, dropped: dict[str, int]) -> pd.DataFrame:
        """Every (counter class, outputs, cascade, link) with its exact factor (periods to the timeout)
        inside `factor_range`, the only factors the oscillator block can bring into the band; for a
        fixed nominal period `period_s` [s] the reason for the others names the nearest delays."""
        rows = []
        lo, hi = factor_range
        diode_cost = self._latch_diode().unit_cost
        for index, (counter, plan) in enumerate(zip(counters, plans)):
            outs = [int(v) for v in counter.values("stages_out", "")]
            lines = self._counter_bom(counter, 0)
            pullup = self._pullup_ohm(counter, plan)
            if pullup is not None and self._sink_problems(counter, plan, pullup):
                pullup = None
            rp_cost = 0.0 if pullup is None else fixed_part(self, "resistor", pullup, "R12", "pull-up").unit_cost
            path_min = 0.0 if pullup is None else latch_path_min_ohm(plan, pullup, self._vf())
            v = plan.rail.nominal_v
            out_of_range = no_pullup = 0
            below, above = 0, math.inf
            currents: dict[tuple[int, bool], tuple[float, float]] = {}
            most = int(self.entry.value("max_counters", ""))
            for cascade, link, chosen, count in output_sets(outs, most, self._DECODE_MAX_CASCADE):
                if not lo <= count <= hi:
                    out_of_range += 1
                    below, above = (max(below, count), above) if count < lo else (below, min(above, count))
                    continue
                decoded = len(chosen) > 1
                if decoded and pullup is None:
                    no_pullup += 1
                    continue
                n = 1 + cascade
                if (n, decoded) not in currents:
                    during, after = self._output_currents(plan, n, counter, pullup if decoded else None)
                    currents[n, decoded] = during, after + self._stage_latch_a(v, pullup if decoded else 0.0)
                during, after = currents[n, decoded]
                extra_cost = len(chosen) * diode_cost + rp_cost if decoded else 0.0
                rows.append(dict(delay_lo=float(count), delay_nom=float(count), delay_hi=float(count),
                                 cost=n * sum(b.unit_cost for b in lines) + extra_cost,
                                 placements=n * len(lines) + (len(chosen) + 1 if decoded else 0),
                                 lines=len(lines) + (2 if decoded else 0), during_a=during, after_a=after,
                                 counter=counter.id, stage=0 if decoded else chosen[0][1], cascade=cascade,
                                 link_stage=link, decode=decode_text(chosen) if decoded else "",
                                 counter_index=float(index), latch_path_min_ohm=path_min if decoded else 0.0))
            near = [fq(c * period_s, "s") for c in (below, above) if period_s and 0 < c < math.inf]
            drop_count(dropped, f"{counter.id}: output sets whose count no oscillator candidate can bring into the "
                                "band" + (f" (nearest nominal delays {' and '.join(near)})" if near else ""),
                       out_of_range)
            drop_count(dropped, f"{counter.id}: diode-AND decoding: the switch's base current leaves the output no "
                                "sink current for the pull-up", no_pullup)
        return pd.DataFrame(rows, columns=["delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines",
                                           "during_a", "after_a", "counter", "stage", "cascade", "link_stage",
                                           "decode", "counter_index", "latch_path_min_ohm"])

    def selection(self) -> SelectionModel:
        """Oscillator block (period [s]) times stage block (periods to the timeout): combine='product'.

        The count has no spread, so the product of the blocks' extremes is the exact worst case of
        the design; counter classes no rail or load switch can serve are dropped with the reason. A
        decoded row needs a latch path of at least `latch_path_min_ohm` (a Link to the RC oscillator's
        Rs + Rt; the crystal's fixed bias resistor is checked here)."""
        dropped: dict[str, int] = {}
        counters, plans = [], []
        for counter in self.catalog.parts("counter"):
            plan = self.plan(counter)
            for p in plan.problems:
                drop_count(dropped, f"{counter.id}: {p}", 1)
            if not plan.problems:
                counters.append(counter)
                plans.append(plan)
        osc = self._osc_block(counters, plans, dropped)
        band = self.brief.delay
        factor_range = ((band.min_s / osc["delay_lo"].max(), band.max_s / osc["delay_hi"].min()) if len(osc)
                        else (np.inf, 0.0))
        periods = np.unique(osc["delay_nom"].to_numpy())
        stages = self._stage_block(counters, plans, factor_range, float(periods[0]) if len(periods) == 1 else None,
                                   dropped)
        osc, stages = self._prune(osc, stages, dropped)
        links = []
        if len(counters) > 1 and "counter_index" in osc.columns:
            for sense in ("<=", ">="):
                links.append(Link((("oscillator", "counter_index", 1.0), ("stages", "counter_index", -1.0)), sense,
                                  0.0, "the oscillator's constant belongs to the chosen counter class"))
        if "latch_path_ohm" in osc.columns and (stages["latch_path_min_ohm"] > 0).any():
            links.append(Link((("oscillator", "latch_path_ohm", 1.0), ("stages", "latch_path_min_ohm", -1.0)), ">=",
                              0.0, f"the diode-AND node stays within {fq(NODE_DROP_V, 'V')} of the rail while its "
                                   "pull-up carries the latch current through Rs + Rt"))
        plan = plans[0] if plans else self.plan(self.catalog.parts("counter")[0])
        fixed = self._fixed_bom(plan)
        rail_q = plan.rail.quiescent_typ_a
        return SelectionModel(
            self.id, "product",
            [Block("oscillator", osc, roles=tuple(r.name for r in self.roles()), options=self._OSC_OPTIONS,
                   dropped=dropped),
             Block("stages", stages, options=("counter", "stage", "cascade", "link_stage", "decode"))],
            links=links, fixed_cost=sum(b.cost for b in fixed), fixed_placements=sum(b.quantity for b in fixed),
            fixed_lines=len(fixed), fixed_during_a=self.brief.load.current_a + plan.switch.rail_a + rail_q,
            fixed_after_a=plan.switch.leak_a + rail_q, rails=plan.rail.rails, effort=self.entry.value("effort", ""),
            notes=["RC counter with a diode-AND: the tables bound the latch current by (V − Vf)/(Rs + Rt); the "
                   "pull-up in series lowers it by at most its share of the latch path"] if self.roles() else [],
        )

    def _no_output_reason(self) -> str:
        """Why an oscillator row is dropped when no counter output brings its worst-case periods into the band."""
        band = self.brief.delay
        return (f"oscillator: at no counter output do the worst-case periods stay inside {fq(band.min_s, 's')} to "
                f"{fq(band.max_s, 's')}")

    def _prune(self, osc: pd.DataFrame, stages: pd.DataFrame, dropped: dict[str, int]):
        """Remove oscillator rows no stage row brings inside the band at every corner, and stage rows no
        oscillator row does (exact: sorted searches, no pair matrix); a decoded row counts only the
        oscillator rows whose latch path its pull-up allows."""
        band = self.brief.delay
        if osc.empty or stages.empty:
            return osc.iloc[0:0], stages.iloc[0:0]
        f = stages["delay_nom"].to_numpy()
        need = stages["latch_path_min_ohm"].to_numpy()
        path = osc["latch_path_ohm"].to_numpy() if "latch_path_ohm" in osc.columns else np.full(len(osc), np.inf)
        lo, hi = osc["delay_lo"].to_numpy(), osc["delay_hi"].to_numpy()
        osc_ok, stage_ok = np.zeros(len(osc), dtype=bool), np.zeros(len(stages), dtype=bool)
        for limit in np.unique(need):
            rows, eligible = need == limit, path >= limit
            if not eligible.any():
                continue
            # stage f fits an oscillator row o when lo_o >= min/f and hi_o <= max/f
            order = np.argsort(-lo[eligible], kind="stable")
            lo_desc, hi_prefix_min = lo[eligible][order], np.minimum.accumulate(hi[eligible][order])
            reach = np.searchsorted(-lo_desc, -band.min_s / f[rows], side="right")
            fits = np.zeros(rows.sum(), dtype=bool)
            has = reach > 0
            fits[has] = hi_prefix_min[reach[has] - 1] <= band.max_s / f[rows][has]
            stage_ok[rows] |= fits
            # oscillator row o fits a factor in [min/lo_o, max/hi_o]
            factors = np.sort(f[rows])
            first = np.searchsorted(factors, band.min_s / lo[eligible], side="left")
            top = np.searchsorted(factors, band.max_s / hi[eligible], side="right")
            osc_ok[np.flatnonzero(eligible)[top > first]] = True
        span = f"{fq(band.min_s, 's')} to {fq(band.max_s, 's')}"
        drop_count(dropped, self._no_output_reason(), int((~osc_ok).sum()))
        drop_count(dropped, f"counter output: no oscillator candidate keeps its worst-case periods inside {span}",
                   int((~stage_ok).sum()))
        return osc[osc_ok], stages[stage_ok]
