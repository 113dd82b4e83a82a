"""Load switch of the counter topologies: how the counter output, low while timing, switches the load,
and the logic rail each counter class runs from (the pair is a `CounterPlan`).

High side from the supply: a small PNP (base resistor for BASE_OVERDRIVE times the base current its
minimum hFE needs), or a P-MOSFET for loads above the PNP's rating (gate and drain ratings,
I²·R_DS(on) against its derated dissipation). From a rail below the supply the output's high level
cannot turn a high-side switch off, so a PNP at the rail drives logic.py's low-side N-MOSFET.
"""
from __future__ import annotations

import dataclasses
from typing import TYPE_CHECKING

from tradeoff import eseries
from tradeoff.devices.mosfet import rds_on_at_ohm
from tradeoff.errors import CatalogError
from tradeoff.topologies import logic
from tradeoff.topologies.base import BomLine
from tradeoff.topologies.ic_common import TEMPCO_REFERENCE_C, diode, fixed_part, supply_problem
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.topologies.base import Topology

__all__ = ["LoadSwitch", "CounterPlan", "BASE_OVERDRIVE", "INVERTER_BASE_OHM", "flyback", "pnp_switch",
           "pmos_switch", "inverted_switch", "switch_for", "rail_text", "plan_for"]

BASE_OVERDRIVE = 3.0
"""Base current of the PNP load switch over the minimum its hFE needs (common practice)."""

INVERTER_BASE_OHM = 100e3
"""Base resistor of the PNP that inverts the counter output to drive a low-side MOSFET gate [ohm] (common
practice: it only has to supply the gate pull-down's microamperes)."""


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


@dataclasses.dataclass(frozen=True)
class CounterPlan:
    """A counter class's logic rail and load switch, and why the counter cannot be built (empty: it can)."""

    rail: logic.LogicRail
    switch: LoadSwitch
    rail_problems: tuple[str, ...] = ()
    switch_problems: tuple[str, ...] = ()

    @property
    def problems(self) -> tuple[str, ...]:
        """Every reason the counter cannot be built with this plan."""
        return self.rail_problems + self.switch_problems


def flyback(topo: "Topology") -> list[BomLine]:
    """The flyback diode across a relay coil (none for other loads)."""
    if topo.brief.load.kind != "relay":
        return []
    return [diode(topo, "D1", "flyback diode across the coil", logic.DIODE_REVERSE_FACTOR)]


def pnp_switch(topo: "Topology", vf_v: float) -> LoadSwitch:
    """Small PNP high side: base resistor for BASE_OVERDRIVE times the base current hFE_min needs at
    minimum supply with the output, or a diode-AND node, one diode drop above ground."""
    s, load, load_max_a = topo.brief.supply, topo.brief.load, logic.load_current_max(topo.brief)
    try:
        pnp = logic.cheapest(topo.catalog, "pnp", lambda p: p.value("vceo_max", "V") >= s.max_v,
                             f"a PNP rated {fq(s.max_v, 'V')} to switch the load")
    except CatalogError as exc:
        return LoadSwitch("pnp", (), 1.0, None, 0.0, 0.0, (exc.reason,))
    need_a = BASE_OVERDRIVE * load_max_a / pnp.value("hfe_min", "")
    target = (s.min_v - pnp.value("vbe_on_max", "V") - vf_v) / need_a
    if not target > 0:  # the supply minimum is below the base-emitter and diode drops
        return LoadSwitch("pnp", (), 1.0, None, 0.0, 0.0, (
            f"the supply minimum {fq(s.min_v, 'V')} is below the {pnp.id} base-emitter and diode drops, so "
            "no base resistor can drive the load switch",))
    rb = float(eseries.values(topo.brief.series.resistor, target / 10, target)[-1])
    problems = []
    if load_max_a > pnp.value("ic_max", "A"):
        problems.append(f"the load needs {fq(load_max_a, 'A')}, above the {pnp.id} rating "
                        f"{fq(pnp.value('ic_max', 'A'), 'A')}")
    if load.kind == "relay" and s.min_v - pnp.value("vce_sat", "V") < load.must_operate_frac * load.coil_voltage_v:
        problems.append(f"the coil gets {fq(s.min_v - pnp.value('vce_sat', 'V'), 'V')} at minimum supply; it "
                        f"needs {fq(load.must_operate_frac * load.coil_voltage_v, 'V')}")
    lines = (BomLine("Q1", pnp.id, pnp.description, 1, pnp.cost,
                     "high-side load switch, on while the counter output is low (timing)"),
             fixed_part(topo, "resistor", rb, "R11", "PNP base resistor from the counter output"),
             *flyback(topo))
    return LoadSwitch("pnp", lines, rb, pnp, 0.0, pnp.value("iceo", "A"), tuple(problems))


def pmos_switch(topo: "Topology", vf_v: float) -> LoadSwitch:
    """P-MOSFET high side, gate driven from the counter output through a gate resistor: on while the
    output is low. Rules: drain and gate ratings over the supply maximum, |VGS| at the minimum supply
    at least the R_DS(on) rating condition, I²·R_DS(on) at the maximum junction temperature within
    the dissipation rating derated linearly from 25 degC to Tj max at the maximum ambient
    (datasheets' derating curve), and for a relay the coil's must-operate voltage."""
    s, load, i = topo.brief.supply, topo.brief.load, logic.load_current_max(topo.brief)
    try:
        fet = logic.cheapest(topo.catalog, "mosfet", lambda p: logic.p_channel(p)
                             and p.value("vds_max", "V") >= s.max_v and p.value("vgs_max", "V") >= s.max_v
                             and p.value("id_max", "A") >= i,
                             f"a P-channel MOSFET for {fq(i, 'A')} with drain and gate rated {fq(s.max_v, 'V')}")
    except CatalogError as exc:
        return LoadSwitch("p-mosfet", (), 1.0, None, 0.0, 0.0, (exc.reason,))
    problems = []
    vgs = s.min_v - vf_v
    if vgs < fet.value("vgs_on", "V"):
        problems.append(f"the {fet.id} gate gets {fq(vgs, 'V')} at minimum supply, below the "
                        f"{fq(fet.value('vgs_on', 'V'), 'V')} its R_DS(on) is rated at")
    tj = fet.value("tj_max", "degC")
    r_hot = float(rds_on_at_ohm(fet.value("rds_on", "ohm"), fet.value("rds_on_tempco", "1/K"), tj))
    loss = i * i * r_hot
    allowed = fet.value("p_tot", "W") * max(tj - topo.brief.ambient.max_c, 0.0) / (tj - TEMPCO_REFERENCE_C)
    if loss > allowed:
        problems.append(f"the {fet.id} dissipates {fq(loss, 'W')} (I²·R_DS(on) at {fq(i, 'A')}, R_DS(on) "
                        f"{fq(r_hot, 'ohm')} at {fq(tj, 'degC')}), above its {fq(allowed, 'W')} rating at "
                        f"{fq(topo.brief.ambient.max_c, 'degC')} ambient")
    if load.kind == "relay" and s.min_v - i * r_hot < load.must_operate_frac * load.coil_voltage_v:
        problems.append(f"the coil gets {fq(s.min_v - i * r_hot, 'V')} at minimum supply; it needs "
                        f"{fq(load.must_operate_frac * load.coil_voltage_v, 'V')}")
    lines = (BomLine("Q1", fet.id, fet.description, 1, fet.cost,
                     "high-side load switch, on while the counter output is low (timing)"),
             fixed_part(topo, "resistor", logic.GATE_RESISTOR_OHM, "R11", "gate resistor from the counter output"),
             *flyback(topo))
    note = (f"{fet.id} dissipates at most {fq(loss, 'W')} (I²·R_DS(on) with R_DS(on) at {fq(tj, 'degC')}); "
            f"allowed {fq(allowed, 'W')} at {fq(topo.brief.ambient.max_c, 'degC')} ambient")
    return LoadSwitch("p-mosfet", lines, 1.0, None, 0.0, fet.value("idss", "A"), tuple(problems), (note,))


def inverted_switch(topo: "Topology", rail: logic.LogicRail) -> LoadSwitch:
    """A small PNP with its emitter at the logic rail, on while the counter output is low, drives the
    gate of logic.py's low-side N-MOSFET driver (gate drive: the rail less the PNP's VCE(sat))."""
    try:
        pnp = logic.cheapest(topo.catalog, "pnp", lambda p: p.value("vceo_max", "V") >= rail.max_v,
                             f"a PNP rated {fq(rail.max_v, 'V')} for the gate drive")
    except CatalogError as exc:
        return LoadSwitch("inverted-n-mosfet", (), 1.0, None, 0.0, 0.0, (exc.reason,))
    drop = pnp.value("vce_sat", "V")
    gate = dataclasses.replace(rail, nominal_v=rail.nominal_v - drop, min_v=rail.min_v - drop,
                               max_v=rail.max_v - drop)
    problems = tuple(f.message for f in logic.output_driver_checks(topo.brief, topo.catalog, gate)
                     if f.severity == "violation")
    if problems:
        return LoadSwitch("inverted-n-mosfet", (), INVERTER_BASE_OHM, pnp, 0.0, 0.0, problems)
    fet = logic.output_mosfet(topo.brief, topo.catalog, gate)
    lines = (BomLine("Q2", pnp.id, pnp.description, 1, pnp.cost,
                     "inverter at the logic rail: on while the counter output is low, drives Q1's gate"),
             fixed_part(topo, "resistor", INVERTER_BASE_OHM, "R11", "inverter base resistor from the counter output"),
             *logic.output_driver_bom(topo.brief, topo.catalog, gate, first_r=13))
    return LoadSwitch("inverted-n-mosfet", lines, INVERTER_BASE_OHM, pnp, gate.nominal_v / logic.GATE_PULLDOWN_OHM,
                      pnp.value("iceo", "A") + fet.value("idss", "A"), ())


def switch_for(topo: "Topology", rail: logic.LogicRail, vf_v: float) -> LoadSwitch:
    """The cheapest load switch that works from `rail`: high side (PNP, else P-MOSFET) when the counter
    runs from the supply, the inverted N-MOSFET when it runs from a lower rail; else one with every reason."""
    if rail.regulator is not None:
        return inverted_switch(topo, rail)
    options = [pnp_switch(topo, vf_v), pmos_switch(topo, vf_v)]
    working = [o for o in options if not o.problems]
    if working:
        return min(working, key=lambda o: o.cost)
    return dataclasses.replace(options[0], problems=tuple(p for o in options for p in o.problems))


def rail_text(rail: logic.LogicRail) -> str:
    """Where the counter's rail comes from, for findings."""
    return "counter on the supply" if rail.regulator is None else \
        f"{fq(rail.nominal_v, 'V')} rail from {rail.regulator.id}"


def plan_for(topo: "Topology", counter: "Part", vf_v: float) -> CounterPlan:
    """Rail and switch for `counter`: the supply itself when inside the counter's rating (a CMOS counter
    needs no regulation); else the regulator rail, among those whose switch works, with the lowest
    quiescent current, then the lowest voltage (least latch and oscillator current), then cost."""
    rails, reasons = logic.rail_options(topo.brief, topo.catalog, counter.value("supply_min", "V"),
                                        counter.value("supply_max", "V"), regulated_only=False, every_output=True)
    direct = [r for r in rails if r.regulator is None]
    planned = [(r, switch_for(topo, r, vf_v)) for r in direct or rails]
    working = [(r, sw) for r, sw in planned if not sw.problems]
    if working:
        rail, switch = min(working, key=lambda p: (p[0].quiescent_typ_a, p[0].nominal_v, p[0].regulator.cost
                                                   if p[0].regulator else 0.0))
        return CounterPlan(rail, switch)
    if not planned:
        s = topo.brief.supply
        rail = logic.LogicRail(None, s.nominal_v, s.min_v, s.max_v, 0.0, 0.0)
        return CounterPlan(rail, pnp_switch(topo, vf_v), (supply_problem(topo, counter) or "no logic rail fits",
                                                          *(f"logic rail: {r}" for r in reasons)))
    return CounterPlan(planned[0][0], planned[0][1],
                       switch_problems=tuple(f"{rail_text(r)}: {p}" for r, sw in planned for p in sw.problems))

