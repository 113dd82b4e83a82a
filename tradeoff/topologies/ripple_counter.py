"""CMOS 14-stage ripple counters clocked by an oscillator: an RC oscillator built from the
counter's two on-chip inverters (`rc-counter`), or a 32.768 kHz crystal (`crystal-counter`).

The output of stage N goes high after 2^(N−1) oscillator periods (4060-type datasheets); only
the stages the class brings out can be used (4 to 10 and 12 to 14). For longer delays a stage L
(`link_stage`, normally 14) of each counter clocks the next one on its falling edge, so counter
j (0 the first) counts floor(count/2^(L·j)) and its stage N shows bit N − 1 + L·j of the period
count. One output (the last counter's stage N) ends the timing after 2^(N − 1 + L·cascade)
periods; a diode-AND of two or three outputs (option `decode`, one small diode per output and a
pull-up; common practice) ends it when all are high at once, first at count Σ 2^(bit) (binary
counting), so delays between the powers of two are reachable.
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
low: a small PNP high side, or a P-MOSFET high side for loads above the PNP's rating (gate and
drain ratings, I²·R_DS(on) against its derated dissipation); from a rail below the supply the
output's high level cannot turn a high-side switch off, so a PNP at the rail drives a low-side
N-MOSFET (logic.py's driver).

RC oscillator (two inverters with threshold Vt, Rt, Ct and series resistor Rs ≈ 2·Rt; standard
circuit analysis): T = Rt·Ct·F(Vt/VDD), F(v) = ln((1+v)/v) + ln((2−v)/(1−v)), F(1/2) = 2.197.
The class's datasheet constant k (f = 1/(k·Rt·Ct)) fixes the period at the typical threshold;
the threshold's spread scales it by F(v)/F(v_typ). F is smallest at v = 1/2, an interior point
the corner search is told about.

Crystal: f = 32768 Hz·(1 + tolerance + aging + β·(T − T0)²) with β < 0 about the turnover T0
(crystal datasheets); T0 and T0 ± its spread are interior corner points of the ambient so the
corner search finds the frequency peak. Delays are whole counts of 1/32768 s.
"""
from __future__ import annotations

import dataclasses
import itertools
import math
import re
from abc import abstractmethod
from typing import TYPE_CHECKING, Mapping

import numpy as np
import pandas as pd

from tradeoff import eseries
from tradeoff.analysis import Uncertain
from tradeoff.devices.supply_current import on_supply
from tradeoff.devices.oscillator import crystal_period_s, rc_period_s, threshold_factor
from tradeoff.errors import CatalogError, DesignError
from tradeoff.selection import Block, Link, SelectionModel
from tradeoff.topologies.base import BomLine, Design, Finding, Role, Standby, Topology, Waveform
from tradeoff.topologies.ic_common import (
    at_temperature, diode, drop_count, drop_dominated, fixed_part, part_of, role_bom, role_part, start_bom,
    start_checks, supply_problem, timing_candidates, value_spread, TEMPCO_REFERENCE_C,
)
from tradeoff.topologies import logic
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part

__all__ = [
    "stage_factor", "oscillator_netlist",
    "RCCounter", "CrystalCounter", "RS_MIN_OHM", "RT_RANGE_OHM", "CT_MIN_F", "output_bit", "decoded_count",
    "parse_decode", "decode_text", "LoadSwitch", "NODE_DROP_V", "DECODE_MAX_OUTPUTS",
]

RT_RANGE_OHM = (10e3, 1e6)
"""Timing resistor range of the RC oscillator [ohm] (4060-type datasheets, docs/references.md)."""

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

INVERTER_BASE_OHM = 100e3
"""Base resistor of the PNP that inverts the counter output to drive a low-side MOSFET gate [ohm] (common
practice: it only has to supply the gate pull-down's microamperes)."""

DECODE_MAX_OUTPUTS = 3
"""Counter outputs a diode-AND decodes at most (common practice: two or three diodes and a pull-up)."""

NODE_DROP_V = 0.2
"""Largest drop of the diode-AND node below the rail while its pull-up carries the latch current [V]
(common practice: keeps the latch input and the load switch's input clearly high)."""

_RT = Role("r_timing", "resistor", *RT_RANGE_OHM, "oscillator timing resistor Rt")
_CT = Role("c_timing", "capacitor", CT_MIN_F, CT_MAX_F, "oscillator timing capacitor Ct", ("film", "ceramic"))


# ---- divider and oscillator netlist ---------------------------------------------------------------------------

def stage_factor(n_total):
    """Oscillator periods until counter stage N goes high: 2^(N−1) (4060-type datasheets)."""
    return np.power(2.0, np.asarray(n_total, dtype=float) - 1.0)


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


# ---- decoded count ------------------------------------------------------------------------

def output_bit(stage: int, counter_index: int, link_stage: int) -> int:
    """Bit of the oscillator-period count that output `stage` of counter `counter_index` (0: the first)
    shows: counter j counts floor(count / 2^(L·j)) (each earlier counter's stage L clocks it on its
    falling edge), and its stage N is that count's bit N − 1, so bit N − 1 + L·j of the count."""
    return stage - 1 + link_stage * counter_index


def decoded_count(bits) -> int:
    """Oscillator periods until every output showing one of `bits` is high at once for the first
    time: the smallest count with those bits set, Σ 2^b (binary counting)."""
    return sum(1 << int(b) for b in set(bits))


def parse_decode(text: str) -> tuple[tuple[int, int], ...]:
    """Option `decode` ('U1.Q4+U2.Q12': counter U1 output Q4 and counter U2 output Q12) as
    (counter index from 0, stage) pairs; DesignError naming the option when malformed."""
    out = []
    for item in str(text).split("+"):
        match = re.fullmatch(r"\s*U(\d+)\.Q(\d+)\s*", item)
        if not match or int(match.group(1)) < 1:
            raise DesignError.single("design", "options.decode", f"got {text!r}; accepted: outputs joined by '+', "
                                     "each 'U<counter from 1>.Q<stage>', e.g. 'U2.Q12+U2.Q13'")
        out.append((int(match.group(1)) - 1, int(match.group(2))))
    return tuple(out)


def decode_text(outputs) -> str:
    """The `decode` option naming (counter index from 0, stage) pairs."""
    return "+".join(f"U{j + 1}.Q{n}" for j, n in outputs)


# ---- load switch -------------------------------------------------------------------------

@dataclasses.dataclass(frozen=True)
class LoadSwitch:
    """How the counter output, low while timing, switches the load.

    kind: 'pnp' (PNP high side from the supply), 'p-mosfet' (P-MOSFET high side) or 'inverted-n-mosfet'
    (a PNP whose emitter sits at the logic rail turns a low-side N-MOSFET on: needed when the counter
    runs from a rail below the supply, whose high level cannot turn a high-side switch off);
    lines: its parts; base_ohm: resistor from the counter output (or diode-AND node) to the PNP base
    [ohm], base_pnp: that PNP (None: a MOSFET gate, no DC drive current); rail_a: current it draws
    from the logic rail while on besides the base current (the gate pull-down) [A]; leak_a: its
    off-state leakage after the timeout [A]; problems: why it cannot work; notes: info findings.
    """

    kind: str
    lines: tuple[BomLine, ...]
    base_ohm: float
    base_pnp: "Part | None"
    rail_a: float
    leak_a: float
    problems: tuple[str, ...]
    notes: tuple[str, ...] = ()

    @property
    def cost(self) -> float:
        """Indicative cost of its parts [EUR]."""
        return sum(b.cost for b in self.lines)

    def base_a(self, rail_v: float, low_v: float, vbe: str = "vbe_on_typ") -> float:
        """Base current the counter output (or node) at `low_v` [V] sinks from a `rail_v` [V] rail [A]."""
        if self.base_pnp is None:
            return 0.0
        return max(rail_v - self.base_pnp.value(vbe, "V") - low_v, 0.0) / self.base_ohm


# ---- shared counter logic -----------------------------------------------------------------

@dataclasses.dataclass(frozen=True)
class _Plan:
    """A counter class's logic rail and load switch, and why the counter cannot be built (empty: it can)."""

    rail: logic.LogicRail
    switch: LoadSwitch
    rail_problems: tuple[str, ...] = ()
    switch_problems: tuple[str, ...] = ()

    @property
    def problems(self) -> tuple[str, ...]:
        """Every reason the counter cannot be built with this plan."""
        return self.rail_problems + self.switch_problems


_CHAIN_LIMITS = ((0, 64), (0, 16), (0, 64))
"""Evaluable (stage, cascade, link_stage) ranges: up to 64 stages per counter, 16 counters in cascade."""


class _CounterTimer(Topology):
    """Common base of the counter topologies: counter chain, stage or decoded outputs, latch, reset,
    logic rail and load switch.

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
    def _osc_block(self, counters: list["Part"], plans: list[_Plan], dropped: dict[str, int]) -> pd.DataFrame:
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
        chosen = design.options.get("counter") or self.catalog.parts("counter")[0].id
        return part_of(self, design, str(chosen))

    def _chain(self, design: Design) -> tuple[int, int, int]:
        """(output stage N of the last counter, extra counters in cascade, stage L of each earlier
        counter that clocks the next; default its last stage)."""
        last = int(self._counter(design).value("stages", ""))
        chain = (int(design.options.get("stage", last)), int(design.options.get("cascade", 0)),
                 int(design.options.get("link_stage", last)))
        for name, value, (low, high) in zip(("stage", "cascade", "link_stage"), chain, _CHAIN_LIMITS):
            if not low <= value <= high:  # beyond any counter chain (the class's own limits are findings)
                raise DesignError.single("design", f"options.{name}", f"{value} is outside what any counter chain "
                                         f"has; accepted: a whole number from {low} to {high}")
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

    # -- logic rail and load switch
    def _load_max_a(self) -> float:
        return logic.load_current_max(self.brief)

    def _flyback(self) -> list[BomLine]:
        if self.brief.load.kind != "relay":
            return []
        return [diode(self, "D1", "flyback diode across the coil", logic.DIODE_REVERSE_FACTOR)]

    def _pnp_switch(self) -> LoadSwitch:
        """Small PNP high side: base resistor for BASE_OVERDRIVE times the base current hFE_min needs at
        minimum supply with the output, or a diode-AND node, one diode drop above ground."""
        s, load = self.brief.supply, self.brief.load
        try:
            pnp = logic.cheapest(self.catalog, "pnp", lambda p: p.value("vceo_max", "V") >= s.max_v,
                                 f"a PNP rated {fq(s.max_v, 'V')} to switch the load")
        except CatalogError as exc:
            return LoadSwitch("pnp", (), 1.0, None, 0.0, 0.0, (str(exc).split(": ", 2)[-1],))
        need_a = BASE_OVERDRIVE * self._load_max_a() / pnp.value("hfe_min", "")
        target = (s.min_v - pnp.value("vbe_on_max", "V") - self._vf()) / need_a
        if not target > 0:  # the supply minimum is below the base-emitter and diode drops
            return LoadSwitch("pnp", (), 1.0, None, 0.0, 0.0, (
                f"the supply minimum {fq(s.min_v, 'V')} is below the {pnp.id} base-emitter and diode drops, so "
                "no base resistor can drive the load switch",))
        rb = float(eseries.values(self.brief.series.resistor, target / 10, target)[-1])
        problems = []
        if self._load_max_a() > pnp.value("ic_max", "A"):
            problems.append(f"the load needs {fq(self._load_max_a(), 'A')}, above the {pnp.id} rating "
                            f"{fq(pnp.value('ic_max', 'A'), 'A')}")
        if load.kind == "relay" and s.min_v - pnp.value("vce_sat", "V") < load.must_operate_frac * load.coil_voltage_v:
            problems.append(f"the coil gets {fq(s.min_v - pnp.value('vce_sat', 'V'), 'V')} at minimum supply; it "
                            f"needs {fq(load.must_operate_frac * load.coil_voltage_v, 'V')}")
        lines = (BomLine("Q1", pnp.id, pnp.description, 1, pnp.cost,
                         "high-side load switch, on while the counter output is low (timing)"),
                 fixed_part(self, "resistor", rb, "R11", "PNP base resistor from the counter output"),
                 *self._flyback())
        return LoadSwitch("pnp", lines, rb, pnp, 0.0, pnp.value("iceo", "A"), tuple(problems))

    def _pmos_switch(self) -> LoadSwitch:
        """P-MOSFET high side, gate driven from the counter output through a gate resistor: on while the
        output is low. Rules: drain and gate ratings over the supply maximum, |VGS| at the minimum supply
        at least the R_DS(on) rating condition, I²·R_DS(on) at the maximum junction temperature within
        the dissipation rating derated linearly from 25 degC to Tj max at the maximum ambient
        (datasheets' derating curve), and for a relay the coil's must-operate voltage."""
        s, load, i = self.brief.supply, self.brief.load, self._load_max_a()
        try:
            fet = logic.cheapest(self.catalog, "mosfet", lambda p: logic.p_channel(p)
                                 and p.value("vds_max", "V") >= s.max_v and p.value("vgs_max", "V") >= s.max_v
                                 and p.value("id_max", "A") >= i,
                                 f"a P-channel MOSFET for {fq(i, 'A')} with drain and gate rated {fq(s.max_v, 'V')}")
        except CatalogError as exc:
            return LoadSwitch("p-mosfet", (), 1.0, None, 0.0, 0.0, (str(exc).split(": ", 2)[-1],))
        problems = []
        vgs = s.min_v - self._vf()
        if vgs < fet.value("vgs_on", "V"):
            problems.append(f"the {fet.id} gate gets {fq(vgs, 'V')} at minimum supply, below the "
                            f"{fq(fet.value('vgs_on', 'V'), 'V')} its R_DS(on) is rated at")
        tj = fet.value("tj_max", "degC")
        r_hot = fet.value("rds_on", "ohm") * (1.0 + fet.value("rds_on_tempco", "1/K") * (tj - TEMPCO_REFERENCE_C))
        loss = i * i * r_hot
        allowed = fet.value("p_tot", "W") * max(tj - self.brief.ambient.max_c, 0.0) / (tj - TEMPCO_REFERENCE_C)
        if loss > allowed:
            problems.append(f"the {fet.id} dissipates {fq(loss, 'W')} (I²·R_DS(on) at {fq(i, 'A')}, R_DS(on) "
                            f"{fq(r_hot, 'ohm')} at {fq(tj, 'degC')}), above its {fq(allowed, 'W')} rating at "
                            f"{fq(self.brief.ambient.max_c, 'degC')} ambient")
        if load.kind == "relay" and s.min_v - i * r_hot < load.must_operate_frac * load.coil_voltage_v:
            problems.append(f"the coil gets {fq(s.min_v - i * r_hot, 'V')} at minimum supply; it needs "
                            f"{fq(load.must_operate_frac * load.coil_voltage_v, 'V')}")
        lines = (BomLine("Q1", fet.id, fet.description, 1, fet.cost,
                         "high-side load switch, on while the counter output is low (timing)"),
                 fixed_part(self, "resistor", logic.GATE_RESISTOR_OHM, "R11", "gate resistor from the counter output"),
                 *self._flyback())
        note = (f"{fet.id} dissipates at most {fq(loss, 'W')} (I²·R_DS(on) with R_DS(on) at {fq(tj, 'degC')}); "
                f"allowed {fq(allowed, 'W')} at {fq(self.brief.ambient.max_c, 'degC')} ambient")
        return LoadSwitch("p-mosfet", lines, 1.0, None, 0.0, fet.value("idss", "A"), tuple(problems), (note,))

    def _inverted_switch(self, rail: logic.LogicRail) -> LoadSwitch:
        """A small PNP with its emitter at the logic rail, on while the counter output is low, drives the
        gate of logic.py's low-side N-MOSFET driver (gate drive: the rail less the PNP's VCE(sat))."""
        try:
            pnp = logic.cheapest(self.catalog, "pnp", lambda p: p.value("vceo_max", "V") >= rail.max_v,
                                 f"a PNP rated {fq(rail.max_v, 'V')} for the gate drive")
        except CatalogError as exc:
            return LoadSwitch("inverted-n-mosfet", (), 1.0, None, 0.0, 0.0, (str(exc).split(": ", 2)[-1],))
        drop = pnp.value("vce_sat", "V")
        gate = dataclasses.replace(rail, nominal_v=rail.nominal_v - drop, min_v=rail.min_v - drop,
                                   max_v=rail.max_v - drop)
        problems = tuple(f.message for f in logic.output_driver_checks(self.brief, self.catalog, gate)
                         if f.severity == "violation")
        if problems:
            return LoadSwitch("inverted-n-mosfet", (), INVERTER_BASE_OHM, pnp, 0.0, 0.0, problems)
        fet = logic.output_mosfet(self.brief, self.catalog, gate)
        lines = (BomLine("Q2", pnp.id, pnp.description, 1, pnp.cost,
                         "inverter at the logic rail: on while the counter output is low, drives Q1's gate"),
                 fixed_part(self, "resistor", INVERTER_BASE_OHM, "R11", "inverter base resistor from the counter output"),
                 *logic.output_driver_bom(self.brief, self.catalog, gate, first_r=13))
        return LoadSwitch("inverted-n-mosfet", lines, INVERTER_BASE_OHM, pnp, gate.nominal_v / logic.GATE_PULLDOWN_OHM,
                          pnp.value("iceo", "A") + fet.value("idss", "A"), ())

    def _switch_for(self, rail: logic.LogicRail) -> LoadSwitch:
        """The cheapest load switch that works from `rail`: high side (PNP, else P-MOSFET) when the counter
        runs from the supply, the inverted N-MOSFET when it runs from a lower rail; else one with every reason."""
        if rail.regulator is not None:
            return self._inverted_switch(rail)
        options = [self._pnp_switch(), self._pmos_switch()]
        working = [o for o in options if not o.problems]
        if working:
            return min(working, key=lambda o: o.cost)
        return dataclasses.replace(options[0], problems=tuple(p for o in options for p in o.problems))

    @staticmethod
    def _rail_text(rail: logic.LogicRail) -> str:
        return "counter on the supply" if rail.regulator is None else \
            f"{fq(rail.nominal_v, 'V')} rail from {rail.regulator.id}"

    def _plan(self, counter: "Part") -> _Plan:
        """Rail and switch for `counter`: the supply itself when inside the counter's rating (a CMOS counter
        needs no regulation); else the regulator rail, among those whose switch works, with the lowest
        quiescent current, then the lowest voltage (least latch and oscillator current), then cost."""
        rails, reasons = logic.rail_options(self.brief, self.catalog, counter.value("supply_min", "V"),
                                            counter.value("supply_max", "V"), regulated_only=False, every_output=True)
        direct = [r for r in rails if r.regulator is None]
        planned = [(r, self._switch_for(r)) for r in direct or rails]
        working = [(r, sw) for r, sw in planned if not sw.problems]
        if working:
            rail, switch = min(working, key=lambda p: (p[0].quiescent_typ_a, p[0].nominal_v, p[0].regulator.cost
                                                       if p[0].regulator else 0.0))
            return _Plan(rail, switch)
        if not planned:
            s = self.brief.supply
            rail = logic.LogicRail(None, s.nominal_v, s.min_v, s.max_v, 0.0, 0.0)
            return _Plan(rail, self._pnp_switch(), (supply_problem(self, counter) or "no logic rail fits",
                                                    *(f"logic rail: {r}" for r in reasons)))
        return _Plan(planned[0][0], planned[0][1],
                     switch_problems=tuple(f"{self._rail_text(r)}: {p}" for r, sw in planned for p in sw.problems))

    # -- diode-AND decoding
    def _pullup_ohm(self, counter: "Part", plan: _Plan) -> float | None:
        """Pull-up of the diode-AND node [ohm]: the smallest standard value whose current (V − Vf)/Rp plus the
        switch's base current stays within the counter output's sink current at both rail limits (one
        output may sink it all); None when the base current alone leaves no room."""
        vf, need = self._vf(), 0.0
        for v in (plan.rail.min_v, plan.rail.max_v):
            room = on_supply(counter, "output_supply", "output_sink", "A", v) - plan.switch.base_a(v, vf, "vbe_on_min")
            if room <= 0:
                return None
            need = max(need, (v - vf) / room)
        return float(eseries.values(self.brief.series.resistor, need, need * 10)[0])

    def _latch_path_min_ohm(self, plan: _Plan, pullup_ohm: float) -> float:
        """Smallest latch-path resistance that keeps the node within NODE_DROP_V of the rail maximum while
        the pull-up carries the latch current: (Vmax − Vf)·Rp/(Rp + R) <= NODE_DROP_V [ohm]."""
        return pullup_ohm * (plan.rail.max_v - self._vf() - NODE_DROP_V) / NODE_DROP_V

    def _decode_bom(self, design: Design, pullup_ohm: float) -> list[BomLine]:
        outs = self.outputs(design)
        d = self._latch_diode()
        refs = ", ".join(f"D{11 + i}" for i in range(len(outs)))
        return [BomLine(refs, d.part, d.value, len(outs), d.unit_cost,
                        f"diode-AND of {decode_text(outs)}: the node goes high when all are high"),
                fixed_part(self, "resistor", pullup_ohm, "R12", "pull-up of the diode-AND node")]

    # -- parts and currents
    def _fixed_bom(self, plan: _Plan) -> list[BomLine]:
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

    def _design_pullup(self, design: Design, counter: "Part", plan: _Plan) -> float | None:
        return self._pullup_ohm(counter, plan) if self._decoded(design) else None

    def bom(self, design: Design) -> list[BomLine]:
        """Oscillator parts, counters with decoupling, diode-AND (if decoded), reset network, latch diode,
        load switch, regulator (if any); the relay coil is the load."""
        counter = self._counter(design)
        plan = self._plan(counter)
        _, cascade, link = self._chain(design)
        pullup = self._design_pullup(design, counter, plan)
        decode = self._decode_bom(design, pullup) if pullup is not None else []
        return [*self._osc_bom(design), *self._counter_bom(counter, cascade, link), *decode, *self._fixed_bom(plan)]

    def _quiescent(self, counter: "Part", rail_v: float) -> float:
        return on_supply(counter, "quiescent_supply", "quiescent_typ", "A", rail_v)

    def _output_currents(self, plan: _Plan, counters: int, counter: "Part", pullup_ohm: float | None
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
        plan = self._plan(counter)
        pullup = self._design_pullup(design, counter, plan)
        during, after = self._output_currents(plan, 1 + self._chain(design)[1], counter, pullup)
        v = plan.rail.nominal_v
        latch = (v - self._vf()) / (self._latch_path_ohm(design) + (pullup or 0.0))
        rail_q = plan.rail.quiescent_typ_a
        return Standby(self.brief.load.current_a + plan.switch.rail_a + self._osc_running_a(design, v) + during
                       + rail_q, after + latch + plan.switch.leak_a + rail_q)

    def rails(self, design: Design) -> int:
        """1 when the counter runs from the supply, 2 with a regulator rail."""
        return self._plan(self._counter(design)).rail.rails

    # -- design rules
    def _sink_problems(self, counter: "Part", plan: _Plan, pullup_ohm: float | None) -> list[str]:
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

    def _decode_checks(self, design: Design, counter: "Part", plan: _Plan) -> list[Finding]:
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
                               f"{fq(self._latch_path_min_ohm(plan, pullup), 'ohm')})"))
        out.append(Finding("info", "decode", f"count {self.periods(design)} = Σ 2^(N−1+{link}·j) over "
                                             f"{decode_text(outs)}; pull-up {fq(pullup, 'ohm')}"))
        return out

    def checks(self, design: Design) -> list[Finding]:
        """Rail, stages brought out, cascade length, decoding, load switch, output sink, latch, reset, oscillator."""
        counter = self._counter(design)
        plan = self._plan(counter)
        stage, cascade, link = self._chain(design)
        out = [Finding("violation", "rail", p) for p in plan.rail_problems]
        out += [Finding("violation", "load-switch", p) for p in plan.switch_problems]
        outs = [int(v) for v in counter.values("stages_out", "")]
        used = [("stage", n) for _, n in self.outputs(design)] + ([("link_stage", link)] if cascade else [])
        for what, n in used:
            if n not in outs:
                out.append(Finding("violation", what, f"{what} {n} is not brought out on {counter.id}; "
                                                      f"accepted: {', '.join(map(str, outs))}"))
        most = int(self.entry.value("max_counters", ""))
        if not 0 <= cascade < most:
            out.append(Finding("violation", "cascade", f"cascade {cascade} needs {cascade + 1} counters; "
                                                       f"accepted: 0 to {most - 1}"))
        pullup = self._design_pullup(design, counter, plan)
        if self._decoded(design):
            out += self._decode_checks(design, counter, plan)
        out += [Finding("violation", "output-sink", p) for p in self._sink_problems(counter, plan, pullup)]
        out += [Finding("info", "load-switch", n) for n in plan.switch.notes]
        if plan.rail.regulator is not None:
            out.append(Finding("info", "rail", f"{self._rail_text(plan.rail)}: the supply exceeds the counter's "
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

    # -- optimiser tables
    def _chains(self, outs: list[int]):
        """Every (cascade, link stage, bit set) the chain can decode, each bit set once, first with the
        fewest counters (the same count with more counters only adds parts): a single bit is a plain
        output stage; two or three bits a diode-AND (for chains up to _DECODE_MAX_CASCADE extra counters).
        Yields (cascade, link, [(counter index, stage) per bit], count)."""
        most = int(self.entry.value("max_counters", ""))
        seen: set[tuple[int, ...]] = set()
        for cascade in range(most):
            for link in sorted(outs, reverse=True) if cascade else [max(outs)]:
                avail: dict[int, tuple[int, int]] = {}
                for j in range(cascade + 1):
                    for n in outs:
                        avail.setdefault(output_bit(n, j, link), (j, n))
                bits = sorted(avail)
                for size in range(1, DECODE_MAX_OUTPUTS + 1 if cascade <= self._DECODE_MAX_CASCADE else 2):
                    for combo in itertools.combinations(bits, size):
                        if combo not in seen:
                            seen.add(combo)
                            yield cascade, link, [avail[b] for b in combo], decoded_count(combo)

    def _stage_block(self, counters: list["Part"], plans: list[_Plan], factor_range: tuple[float, float],
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
            path_min = 0.0 if pullup is None else self._latch_path_min_ohm(plan, pullup)
            v = plan.rail.nominal_v
            out_of_range = no_pullup = 0
            below, above = 0, math.inf
            currents: dict[tuple[int, bool], tuple[float, float]] = {}
            for cascade, link, chosen, count in self._chains(outs):
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
            plan = self._plan(counter)
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
        plan = plans[0] if plans else self._plan(self.catalog.parts("counter")[0])
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
        drop_count(dropped, f"oscillator: at no counter output do the worst-case periods stay inside {span}",
                   int((~osc_ok).sum()))
        drop_count(dropped, f"counter output: no oscillator candidate keeps its worst-case periods inside {span}",
                   int((~stage_ok).sum()))
        return osc[osc_ok], stages[stage_ok]


# ---- RC oscillator ---------------------------------------------------------------------

class RCCounter(_CounterTimer):
    """Ripple counter clocked by its on-chip RC oscillator (Rt, Ct, Rs)."""

    id = "rc-counter"
    _OSC_OPTIONS = ("r_timing_part", "c_timing_part")
    _DECODE_MAX_CASCADE = 0
    """Decoding within one counter only: Rt and Ct already tune the delay finely, so decoded counts of a
    cascade add thousands of table rows (and minutes of solver time) for little (a modelling choice)."""
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

    def _currents_of(self, rt, ct, period, rail_v: float):
        """Supply current of the running oscillator, 2·Ct·VDD per period, and the latch current
        (VDD − Vf)/(Rs + Rt) after the timeout [A] on a `rail_v` [V] rail (standard circuit analysis)."""
        return 2.0 * ct * rail_v / period, (rail_v - self._vf()) / (self.rs_ohm(rt) + rt)

    def _osc_running_a(self, design: Design, rail_v: float) -> float:
        rt, ct = design.values["r_timing"], design.values["c_timing"]
        period = self.period_s(design, {n: np.array([v]) for n, v in self.nominal_point(design).items()})[0]
        return float(self._currents_of(rt, ct, period, rail_v)[0])

    def _latch_path_ohm(self, design: Design) -> float:
        """Rs + Rt: the latched input drives DC through them into the first inverter's low output [ohm]."""
        rt = design.values["r_timing"]
        return float(self.rs_ohm(rt) + rt)

    def _osc_checks(self, design: Design) -> list[Finding]:
        counter = self._counter(design)
        return [Finding("info", "oscillator-constant",
                        f"{counter.id}: k = {counter.value('k', ''):g} ({counter.source('k')})")]

    def _osc_block(self, counters: list["Part"], plans: list[_Plan], dropped: dict[str, int]) -> pd.DataFrame:
        """Every (counter class, Rt, Ct) with its period [s] at the worst corners and its currents on the
        counter's rail; `latch_path_ohm` = Rs + Rt for the diode-AND link.

        Within an ambient corner the period rises with Rt, Ct and |v − 1/2|; tempcos act with the
        sign of T − 25 degC, so the extremes are the 2 ambient corners × monotone choices, with
        the threshold at 1/2 (minimum of F) or at the limit farther from it (maximum)."""
        rs, cs = (drop_dominated(timing_candidates(self, role, dropped), ("value",),
                                 ("tolerance", "tempco", "cost", "placements"),
                                 f"{role.description}: another class of the same value is as good or better in "
                                 "tolerance, tempco, cost and parts", dropped) for role in (_RT, _CT))
        env = self.environment()
        tables = []
        for index, (counter, plan) in enumerate(zip(counters, plans)):
            vt = self._threshold(counter)
            vt_corners = np.array(vt.corner_values())
            f = threshold_factor(vt_corners) / threshold_factor(counter.value("vt_typ", ""))
            k = counter.value("k", "")
            for _, rg in rs.groupby("part", sort=False):
                for _, cg in cs.groupby("part", sort=False):
                    tables.append(self._rc_rows(index, plan.rail.nominal_v, k, f, rg, cg, env))
        columns = ["delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines", "during_a", "after_a",
                   "r_timing", "c_timing", "r_timing_part", "c_timing_part", "r_timing_first", "r_timing_second",
                   "counter_index", "latch_path_ohm"]
        if not tables:
            return pd.DataFrame(columns=columns)
        return drop_dominated(pd.concat(tables, ignore_index=True)[columns], ("delay_nom", "counter_index"),
                              ("delay_hi", "cost", "placements", "lines", "during_a", "after_a"),
                              "oscillator: another Rt, Ct pair with the same nominal period is as good or better "
                              "in spread, cost, parts, current and latch path", dropped,
                              higher=("delay_lo", "latch_path_ohm"))

    def _rc_rows(self, index, rail_v, k, f_corners, rg, cg, env) -> pd.DataFrame:
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
        running, latched = self._currents_of(rt, ct, nom, rail_v)
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
            "latch_path_ohm": self.rs_ohm(rt) + rt,
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
        """Behavioural two-inverter oscillator at nominal values; `delay` = period·(periods to the timeout)."""
        counter = self._counter(design)
        rt, ct = design.values["r_timing"], design.values["c_timing"]
        return oscillator_netlist(rt, ct, self.rs_ohm(rt), self.brief.supply.nominal_v, counter.value("vt_typ", ""),
                                  f"{self.id}: {self.brief.title}", float(self.periods(design)))


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

    def _osc_block(self, counters: list["Part"], plans: list[_Plan], dropped: dict[str, int]) -> pd.DataFrame:
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
