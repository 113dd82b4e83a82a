"""The counter frame shared by the CMOS 14-stage ripple-counter topologies: a chain of counters clocked
by an oscillator that a subclass supplies (RC in tradeoff.topologies.rc_counter, 32.768 kHz crystal in
tradeoff.topologies.crystal_counter).

Only the stages the class brings out can be used (4 to 10 and 12 to 14). For longer delays a stage L
(`link_stage`, normally 14) of each counter clocks the next one, so one output (the last counter's
stage N) ends the timing after 2^(N − 1 + L·cascade) periods; a diode-AND of two or three outputs
(option `decode`) ends it when all are high at once, first at count Σ 2^(bit), so delays between the
powers of two are reachable (divider and decode: tradeoff.topologies.counter_chain; the optimiser's
stage block and its product with the oscillator block: tradeoff.topologies.counter_tables).
A diode from that output (or the AND node) to the first counter's oscillator input stops the
oscillator at the timeout (the latch). After it the supply carries the counters' quiescent
current, the latch current the diode pushes through the oscillator's resistors (through the
pull-up too when decoded: all decoded outputs are high, their diodes block, so the pull-up
carries only the latch current; while timing a low output sinks the pull-up current), the
load switch's off-state leakage and the regulator's quiescent current. A power-on RC on the
reset pins (or a push-button) starts the count from zero.

Logic rail (tradeoff.topologies.logic): the counter runs from the supply when it is inside its
rating (regulated or not: the count does not depend on VDD); otherwise from a regulator rail
(two rails; its quiescent current stays after the timeout). Load switch, on while the output is
low (tradeoff.topologies.counter_switch): a small PNP or a P-MOSFET high side from the supply, or
from a lower rail a PNP at the rail driving a low-side N-MOSFET.
"""
from __future__ import annotations

import dataclasses
from abc import abstractmethod
from typing import TYPE_CHECKING, Mapping

import numpy as np
import pandas as pd

from tradeoff.analysis import Uncertain
from tradeoff.devices.supply_current import on_supply
from tradeoff.errors import DesignKeyError
from tradeoff.topologies import logic
from tradeoff.topologies.base import BomLine, Design, Finding, Standby, Topology
from tradeoff.topologies.counter_chain import (
    DECODE_MAX_OUTPUTS, NODE_DROP_V, decode_text, decoded_count, latch_path_min_ohm, output_bit, parse_decode,
    pullup_ohm,
)
from tradeoff.topologies.counter_switch import CounterPlan, plan_for, rail_text
from tradeoff.topologies.counter_tables import CounterTables
from tradeoff.topologies.ic_common import diode, fixed_part, start_bom, start_checks
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = ["CounterTimer", "DECOUPLING_F"]

DECOUPLING_F = 100e-9
"""Supply decoupling at each counter [F] (common practice)."""

class CounterTimer(CounterTables, Topology):
    """Common base of the counter topologies: counter chain, stage or decoded outputs, latch, reset,
    logic rail and load switch; its optimiser tables come from `CounterTables`.

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
    def _osc_running_a(self, design: Design, rail_v: float) -> float:
        """Oscillator supply current while running on a `rail_v` [V] rail [A]."""

    @abstractmethod
    def _latch_path_ohm(self, design: Design) -> float:
        """Resistance the latch current flows through from the oscillator input [ohm]."""

    @abstractmethod
    def _osc_checks(self, design: Design) -> list[Finding]:
        """Oscillator design rules."""

    @abstractmethod
    def _osc_block(self, counters: list["Part"], plans: list[CounterPlan], dropped: dict[str, int]) -> pd.DataFrame:
        """Oscillator block rows: period lo/nom/hi [s], cost, parts, currents, role and option columns."""

    def _stage_latch_a(self, rail_v: float, pullup_ohm: float) -> float:
        """Latch current the stage block carries [A] (the RC oscillator's depends on Rt: its block carries it)."""
        return 0.0

    _OSC_OPTIONS: tuple[str, ...] = ()
    _DECODE_MAX_CASCADE = 2
    """Longest chain (extra counters) whose outputs a diode-AND may decode in the optimiser's tables."""

    option_units = {"stage": None, "cascade": None, "link_stage": None, "decode": None}
    option_parts = {"counter": "counter"}

    # -- counter chain
    def _counter(self, design: Design) -> "Part":
        return self.option_part(design, "counter")

    def _chain(self, design: Design) -> tuple[int, int, int]:
        """(output stage N of the last counter, extra counters in cascade, stage L of each earlier
        counter that clocks the next; default its last stage)."""
        counter = self._counter(design)
        last, most = int(counter.value("stages", "")), int(self.entry.value("max_counters", ""))
        chain = (int(design.options.get("stage", last)), int(design.options.get("cascade", 0)),
                 int(design.options.get("link_stage", last)))
        limits = ((f"{counter.id} has {last} stages", last), (f"{self.id} chains at most {most} counters", most - 1),
                  (f"{counter.id} has {last} stages", last))
        for name, value, (why, high) in zip(("stage", "cascade", "link_stage"), chain, limits):
            if not 0 <= value <= high:  # a delay of 2^(stages) periods beyond the chain would be fiction
                raise DesignKeyError(("options", name), f"{value} is outside what this chain can "
                                     f"have ({why}); accepted: a whole number from 0 to {high}")
        return chain

    def outputs(self, design: Design) -> tuple[tuple[int, int], ...]:
        """(counter index from 0, stage) of each output ending the timing: the decoded outputs, else
        the last counter's output stage."""
        stage, cascade, _ = self._chain(design)
        decode = design.options.get("decode")
        return parse_decode(decode) if decode else ((cascade, stage),)

    def _decoded(self, design: Design) -> bool:
        return bool(design.options.get("decode"))

    def periods(self, design: Design) -> int:
        """Oscillator periods from reset to the timeout: Σ 2^(N − 1 + L·j) over the outputs."""
        link = self._chain(design)[2]
        return decoded_count(output_bit(n, j, link) for j, n in self.outputs(design))

    def delay(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """periods · oscillator period [s]."""
        return self.period_s(design, x) * float(self.periods(design))

    def uncertain(self, design: Design) -> dict[str, Uncertain]:
        """The oscillator's spread quantities (the counter itself divides exactly)."""
        return self._osc_uncertain(design)

    def _vf(self) -> float:
        return self.catalog.part(self._latch_diode().part).value("vf", "V")

    def _latch_diode(self) -> BomLine:
        return diode(self, "D2", "latch: the output holds the oscillator input high after the timeout")

    # -- logic rail, load switch and diode-AND decoding
    def plan(self, counter: "Part") -> CounterPlan:
        """Logic rail and load switch for `counter` (tradeoff.topologies.counter_switch)."""
        return plan_for(self, counter, self._vf())

    def _pullup_ohm(self, counter: "Part", plan: CounterPlan) -> float | None:
        """Pull-up of the diode-AND node on `plan`'s rail [ohm] (None: no room; counter_chain.pullup_ohm)."""
        return pullup_ohm(self.brief.series.resistor, counter, plan, self._vf())

    def _decode_bom(self, design: Design, pullup_ohm: float) -> list[BomLine]:
        outs = self.outputs(design)
        d = self._latch_diode()
        refs = ", ".join(f"D{11 + i}" for i in range(len(outs)))
        return [BomLine(refs, d.part, d.value, len(outs), d.unit_cost,
                        f"diode-AND of {decode_text(outs)}: the node goes high when all are high"),
                fixed_part(self, "resistor", pullup_ohm, "R12", "pull-up of the diode-AND node")]

    # -- parts and currents
    def _fixed_bom(self, plan: CounterPlan) -> list[BomLine]:
        """Parts that do not depend on the chosen values: reset network, latch diode, load switch, regulator."""
        return [*start_bom(self, "reset", "R10", "C10", "D3"), self._latch_diode(), *plan.switch.lines,
                *logic.regulator_bom(self.brief, self.catalog, plan.rail, "U9", "C30, C31")]

    def _counter_bom(self, counter: "Part", cascade: int, link: int = 0) -> list[BomLine]:
        n = 1 + cascade
        refs = ", ".join(f"U{i + 1}" for i in range(n))
        cap = fixed_part(self, "capacitor", DECOUPLING_F, "C", "supply decoupling at each counter")
        note = "ripple counter" + (f"s; stage {link} of each earlier one clocks the next" if cascade else "")
        return [BomLine(refs, counter.id, counter.description, n, counter.cost, note),
                dataclasses.replace(cap, refs=", ".join(f"C{i + 20}" for i in range(n)), quantity=n)]

    def _design_pullup(self, design: Design, counter: "Part", plan: CounterPlan) -> float | None:
        return self._pullup_ohm(counter, plan) if self._decoded(design) else None

    def bom(self, design: Design) -> list[BomLine]:
        """Oscillator parts, counters with decoupling, diode-AND (if decoded), reset network, latch diode,
        load switch, regulator (if any); the relay coil is the load."""
        counter = self._counter(design)
        plan = self.plan(counter)
        _, cascade, link = self._chain(design)
        pullup = self._design_pullup(design, counter, plan)
        decode = self._decode_bom(design, pullup) if pullup is not None else []
        return [*self._osc_bom(design), *self._counter_bom(counter, cascade, link), *decode, *self._fixed_bom(plan)]

    def _quiescent(self, counter: "Part", rail_v: float) -> float:
        return on_supply(counter, "quiescent_supply", "quiescent_typ", "A", rail_v)

    def _output_currents(self, plan: CounterPlan, counters: int, counter: "Part", pullup_ohm: float | None
                         ) -> tuple[float, float]:
        """Counters' quiescent current plus, during timing, the switch's base current and the diode-AND
        pull-up current (the node one diode drop above the low output) [A] at nominal rail."""
        v, vf = plan.rail.nominal_v, self._vf()
        q = counters * self._quiescent(counter, v)
        if pullup_ohm is None:
            return q + plan.switch.base_a(v, 0.0), q
        return q + plan.switch.base_a(v, vf) + (v - vf) / pullup_ohm, q

    def standby(self, design: Design) -> Standby:
        """During: load, switch drive, oscillator, counters, diode-AND pull-up, regulator; after: counters,
        latch current (through the pull-up when decoded: all outputs high, the AND diodes block), switch
        leakage, regulator (typical values)."""
        counter = self._counter(design)
        plan = self.plan(counter)
        pullup = self._design_pullup(design, counter, plan)
        during, after = self._output_currents(plan, 1 + self._chain(design)[1], counter, pullup)
        v = plan.rail.nominal_v
        latch = (v - self._vf()) / (self._latch_path_ohm(design) + (pullup or 0.0))
        rail_q = plan.rail.quiescent_typ_a
        return Standby(self.brief.load.current_a + plan.switch.rail_a + self._osc_running_a(design, v) + during
                       + rail_q, after + latch + plan.switch.leak_a + rail_q)

    def rails(self, design: Design) -> int:
        """1 when the counter runs from the supply, 2 with a regulator rail."""
        return self.plan(self._counter(design)).rail.rails

    # -- design rules
    def _sink_problems(self, counter: "Part", plan: CounterPlan, pullup_ohm: float | None) -> list[str]:
        """Why the counter output cannot sink the switch's base current (and the pull-up's) at the rail limits."""
        out, low = [], (0.0 if pullup_ohm is None else self._vf())
        for v in (plan.rail.min_v, plan.rail.max_v):
            draw = plan.switch.base_a(v, low, "vbe_on_min") + (0.0 if pullup_ohm is None else (v - low) / pullup_ohm)
            sink = on_supply(counter, "output_supply", "output_sink", "A", v)
            if draw > sink * (1 + 1e-9):
                out.append(f"the output must sink {fq(draw, 'A')} at {fq(v, 'V')} (switch base"
                           f"{'' if pullup_ohm is None else ' and diode-AND pull-up'}), above the {counter.id} "
                           f"output's {fq(sink, 'A')}")
        return out

    def _decode_checks(self, design: Design, counter: "Part", plan: CounterPlan) -> list[Finding]:
        outs, (_, cascade, link) = self.outputs(design), self._chain(design)
        out = []
        if len(outs) > DECODE_MAX_OUTPUTS:
            out.append(Finding("violation", "decode", f"{len(outs)} decoded outputs; accepted: 2 to "
                                                      f"{DECODE_MAX_OUTPUTS} (one diode each)"))
        for j, n in outs:
            if j > cascade:
                out.append(Finding("violation", "decode", f"U{j + 1}.Q{n}: the chain has {cascade + 1} counter(s); "
                                                          f"accepted: U1 to U{cascade + 1}"))
        pullup = self._pullup_ohm(counter, plan)
        if pullup is None:
            return out + [Finding("violation", "decode", "the switch's base current leaves the counter output no "
                                                         "sink current for a diode-AND pull-up")]
        v, vf = plan.rail.max_v, self._vf()
        drop = (v - vf) * pullup / (pullup + self._latch_path_ohm(design))
        if drop > NODE_DROP_V * (1 + 1e-9):
            out.append(Finding("violation", "decode-latch",
                               f"the latch current through the {fq(pullup, 'ohm')} pull-up drops the diode-AND node "
                               f"{fq(drop, 'V')} below the rail; the latch and the switch need it within "
                               f"{fq(NODE_DROP_V, 'V')} (latch path {fq(self._latch_path_ohm(design), 'ohm')}, needs "
                               f"{fq(latch_path_min_ohm(plan, pullup, self._vf()), 'ohm')})"))
        out.append(Finding("info", "decode", f"count {self.periods(design)} = Σ 2^(N−1+{link}·j) over "
                                             f"{decode_text(outs)}; pull-up {fq(pullup, 'ohm')}"))
        return out

    def checks(self, design: Design) -> list[Finding]:
        """Rail, stages brought out, decoding, load switch, output sink, latch, reset, oscillator."""
        counter = self._counter(design)
        plan = self.plan(counter)
        _, cascade, link = self._chain(design)
        out = [Finding("violation", "rail", p) for p in plan.rail_problems]
        out += [Finding("violation", "load-switch", p) for p in plan.switch_problems]
        outs = [int(v) for v in counter.values("stages_out", "")]
        used = [("stage", n) for _, n in self.outputs(design)] + ([("link_stage", link)] if cascade else [])
        for what, n in used:
            if n not in outs:
                out.append(Finding("violation", what, f"{what} {n} is not brought out on {counter.id}; "
                                                      f"accepted: {', '.join(map(str, outs))}"))
        pullup = self._design_pullup(design, counter, plan)
        if self._decoded(design):
            out += self._decode_checks(design, counter, plan)
        out += [Finding("violation", "output-sink", p) for p in self._sink_problems(counter, plan, pullup)]
        out += [Finding("info", "load-switch", n) for n in plan.switch.notes]
        if plan.rail.regulator is not None:
            out.append(Finding("info", "rail", f"{rail_text(plan.rail)}: the supply exceeds the counter's "
                                               f"rating; the regulator draws {fq(plan.rail.quiescent_typ_a, 'A')} "
                                               "after the timeout too"))
        vt_max, r = counter.value("vt_max", ""), plan.rail
        high = r.min_v - self._vf() - (NODE_DROP_V if pullup is not None else 0.0)
        if high < vt_max * r.min_v:
            out.append(Finding("violation", "latch", f"the latch diode leaves the oscillator input at "
                                                     f"{fq(high, 'V')}, below the highest threshold "
                                                     f"{fq(vt_max * r.min_v, 'V')} at minimum rail"))
        out += start_checks(self, "reset", 1.0 - vt_max, counter.value("supply_min", "V"),
                            counter.value("reset_pulse_min", "s"))
        out += self._osc_checks(design)
        out.append(Finding("info", "quiescent", f"{counter.id}: standby uses the typical quiescent current "
                           f"{fq(self._quiescent(counter, r.nominal_v), 'A')} per counter; the datasheet maximum is "
                           f"{fq(on_supply(counter, 'quiescent_supply', 'quiescent_max', 'A', r.nominal_v), 'A')}"))
        return out
