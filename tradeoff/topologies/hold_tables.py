"""Optimiser blocks of the transistor RC holds: the hold block (every r_hold, c_hold candidate pair with
its hold time at the corners the topology's monotone `directions` select) and, for the power-on start,
the start block (r_start, c_start with the pulse length and the charge window) tied to the hold block
by the 95 % charge Link. Functions of the hold topology `topo` (an RcHoldTopology).
"""
from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from tradeoff.devices.start import CHARGE_FRACTION_MIN, CHARGE_TIME_CONSTANTS
from tradeoff.selection import Block, Link, SelectionModel
from tradeoff.candidates import EVALUATION_CHUNK, chunks
from tradeoff.topologies.bands import Dropped, hold_pairs, pair_rows, role_tables, window_pairs
from tradeoff.topologies.base import Design
from tradeoff.topologies.corners import corner_sets
from tradeoff.topologies.hold_start import (
    START_PNP_OFF_V, charge_window, pulse_length_s, start_leakage_a, start_voltage,
)
from tradeoff.topologies.hold_state import HoldState
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.topologies.base import Topology

__all__ = ["START_QUANTITIES", "ROW_QUANTITIES", "corner_arrays", "hold_rows", "hold_selection",
           "start_block", "load_max_a"]

START_QUANTITIES = ("r_start", "c_start", "start_hfe")
"""Quantities of the start network: the start block's, left out of the hold block's corners."""

ROW_QUANTITIES = {"r_hold": ("r_hold", "r_spread"), "c_hold": ("c_hold", "c_spread")}
"""Quantities each candidate row carries itself: name -> (value column, band-fraction column)."""


def corner_arrays(q, rows: pd.DataFrame, corners: list[dict], names) -> dict[str, np.ndarray]:
    """Quantity arrays (rows x corners) of `corners`; r_hold, c_hold from each row's own band."""
    x = {}
    for n in names:
        pick = [c.get(n, "nom") for c in corners]
        if n in ROW_QUANTITIES:
            col, spread = ROW_QUANTITIES[n]
            sign = np.array([{"lo": -1.0, "hi": 1.0, "nom": 0.0}[p] for p in pick])
            x[n] = rows[col].to_numpy(float)[:, None] * (1 + sign[None, :] * rows[spread].to_numpy(float)[:, None])
        else:
            vals = np.array([{"lo": q[n].lo, "hi": q[n].hi, "nom": q[n].nominal}[p] for p in pick])
            x[n] = np.broadcast_to(vals[None, :], (len(rows), len(corners)))
    return x


def hold_rows(topo: "Topology", design0: "Design", rows: pd.DataFrame,
              kinds: tuple[str, ...] = ("lo", "nom", "hi")) -> tuple[np.ndarray, ...]:
    """(delay_lo, delay_nom, delay_hi) [s] of the hold time of every candidate row (no start pulse), or
    only those `kinds` name.

    Button start: exactly evaluate()'s corners. Power-on start: from the final voltage V_f for the
    nominal and the maximum, from CHARGE_FRACTION_MIN·V_f for the minimum (the 95 % rule, kept by a Link).
    """
    q = topo.quantities(design0)
    names = [n for n in q if n not in START_QUANTITIES]
    mins, maxs = corner_sets(topo.directions, q, names)
    ways = {"lo": (mins, CHARGE_FRACTION_MIN, np.min), "nom": ([{}], 1.0, np.min), "hi": (maxs, 1.0, np.max)}
    out = np.zeros((len(kinds), len(rows)))
    for part_id, idx in rows.groupby("c_part").indices.items():
        sub = rows.iloc[idx]
        leak = topo.leakage(design0, sub["c_hold"].to_numpy(float)[:, None],
                            sub["c_rated_v"].to_numpy(float)[:, None], topo.catalog.part(part_id))
        for k, kind in enumerate(kinds):
            corners, scale, reduce = ways[kind]
            s = topo.state(design0, corner_arrays(q, sub, corners, names), leak)
            v0 = v0_without_pulse(topo, design0, s, scale)
            out[k, idx] = reduce(topo.hold_s(s, v0), axis=1)
    return tuple(out)


HOLD_CHUNK = EVALUATION_CHUNK // 4
"""Hold rows evaluated at once: the Darlington's quadrature keeps about 30 nodes per row and corner (at most
4 corners) in a few dozen float arrays, so one chunk needs about 16384 x 4 x 30 x 8 bytes x 30, some 470 MB."""


def chunked_hold_rows(topo: "Topology", design0: "Design", frame, count: int,
                      kinds: tuple[str, ...]) -> np.ndarray:
    """`hold_rows` (kinds x count) of the candidate rows frame(slice) builds, HOLD_CHUNK rows at a time."""
    out = np.empty((len(kinds), count))
    for part in chunks(count, HOLD_CHUNK):
        out[:, part] = hold_rows(topo, design0, frame(part), kinds)
    return out


def windowed_hold_rows(topo: "Topology", design0: "Design", r: pd.DataFrame, c: pd.DataFrame,
                       dropped: Dropped) -> pd.DataFrame:
    """Hold rows (`pair_rows` with delay_lo, delay_nom, delay_hi [s]) of every (r, c) candidate pair whose
    worst case lies in the band, in the order of the full (r, c) table, counting the others in `dropped`.

    The worst-case hold grows with the value of a role whose direction is +1, so `window_pairs` bisects along
    it (against the band's minimum only for the button start). The inner role is r_hold where its direction is +1 (few
    capacitor groups), else c_hold (tests check both directions exhaustively).
    """
    roles = {r_role.name: r_role for r_role in topo.roles()}

    def frame(ri, ci):
        return lambda part: pair_rows(roles["r_hold"], roles["c_hold"], r, c, ri[part], ci[part])

    def extreme(ri, ci, end):
        return chunked_hold_rows(topo, design0, frame(ri, ci), len(ri), (end,))[0]

    lo_band, hi_band = topo.brief.delay.min_s, topo.brief.delay.max_s
    ri, ci = window_pairs(r, c, topo.directions.get("r_hold", 0) > 0, extreme, (lo_band, hi_band), dropped,
                          f"worst-case longest hold above the band's maximum {fq(hi_band, 's')}",
                          None if topo.power_on else f"worst-case shortest hold below the band's minimum "
                                                     f"{fq(lo_band, 's')}")
    rows = pair_rows(roles["r_hold"], roles["c_hold"], r, c, ri, ci)
    lo, nom, hi = chunked_hold_rows(topo, design0, lambda part: rows.iloc[part], len(rows), ("lo", "nom", "hi"))
    return rows.assign(delay_lo=lo, delay_nom=nom, delay_hi=hi)


def v0_without_pulse(topo: "Topology", design: "Design", s: HoldState, scale: float) -> np.ndarray:
    """Start voltage [V]: the button's, or scale x the power-on final voltage V_f."""
    if not topo.power_on:
        return start_voltage(topo, design, s)[0]
    top = np.maximum(s.supply_v - topo.pnp(design).value("vce_sat", "V"), 0.0)
    return scale * np.maximum(top - topo.fixed_ohm(design, "r_charge") * topo.discharge_a(s, top), 0.0)


def example_design(topo: "Topology", rows: pd.DataFrame, start: pd.DataFrame | None = None) -> "Design":
    """A design built from the first row(s): carries the options the block evaluation needs."""
    first = rows.iloc[0]
    values = {"r_hold": float(first["r_hold"]), "c_hold": float(first["c_hold"])}
    options = {"r_hold_part": first["r_part"], "c_hold_part": first["c_part"],
               "c_hold_rated_v": float(first["c_rated_v"])}
    if topo.power_on:
        roles = {r.name: r for r in topo.roles()}
        if start is not None and len(start):
            s0 = start.iloc[0]
            values.update(r_start=float(s0["r_start"]), c_start=float(s0["c_start"]))
            options.update(r_start_part=s0["r_part"], c_start_part=s0["c_part"], c_start_rated_v=float(s0["c_rated_v"]))
        else:
            values.update(r_start=math.sqrt(roles["r_start"].lo * roles["r_start"].hi),
                          c_start=math.sqrt(roles["c_start"].lo * roles["c_start"].hi))
    return Design(topo.id, values, options)


def hold_selection(topo: "Topology") -> SelectionModel:
    """Hold block (r_hold, c_hold and their classes); power-on: start block and the 95 % charge Link."""
    roles = {r.name: r for r in topo.roles()}
    r, c = role_tables(roles["r_hold"], roles["c_hold"], topo.brief, topo.catalog)
    dropped = Dropped()
    design0 = example_design(topo, pair_rows(roles["r_hold"], roles["c_hold"], r, c, [0], [0]))
    ok, reason = topo.start_drive(r["value"].to_numpy(float) * (1 + r["spread"].to_numpy(float)), design0)
    dropped.count(reason, int((~ok).sum()) * len(c))
    rows = windowed_hold_rows(topo, design0, r[ok].reset_index(drop=True), c, dropped)
    rows = rows.rename(columns={"r_part": "r_hold_part", "c_part": "c_hold_part", "c_rated_v": "c_hold_rated_v"})
    rows = rows.assign(during_a=0.0, after_a=0.0,
                       log_need=np.log(CHARGE_TIME_CONSTANTS * topo.fixed_ohm(design0, "r_charge")
                                       * rows["c_hold"] * (1 + rows["c_spread"])) if topo.power_on else 0.0)
    blocks = [Block("hold", rows, roles=("r_hold", "c_hold"),
                    options=("r_hold_part", "c_hold_part", "c_hold_rated_v"), dropped=dict(dropped))]
    links = []
    if topo.power_on:
        blocks.append(start_block(topo, design0, rows))
        links.append(Link((("start", "log_window", 1.0), ("hold", "log_need", -1.0)), ">=", 0.0,
                          f"start pulse keeps the PNP saturated for {CHARGE_TIME_CONSTANTS:.0f} time constants "
                          f"of r_charge·c_hold (hold capacitor charged to {CHARGE_FRACTION_MIN:.0%})"))
    fixed = [line for line in topo.bom(design0) if line.role not in roles]  # the parts no block chooses
    standby = topo.standby(design0)
    return SelectionModel(
        topology=topo.id, combine="sum", blocks=blocks, links=links,
        fixed_cost=float(sum(line.cost for line in fixed)), fixed_placements=sum(line.quantity for line in fixed),
        fixed_lines=len(fixed), fixed_during_a=standby.during_a,
        fixed_after_a=standby.after_a - (float(start_leakage_a(topo, design0, typical=True)) if topo.power_on else 0.0),
        rails=1, effort=topo.effort(design0),
        notes=["hold block delays at the corners the model's monotone directions select (tests check them "
               "against exhaustive corners)"] + (["power-on: hold minimum from 95 % charge; the start block adds "
                                                  "the pulse length to the nominal and maximum only"]
                                                 if topo.power_on else []))


def start_block(topo: "Topology", design0: "Design", hold_table: pd.DataFrame) -> Block:
    """Start block: (r_start, c_start) rows with the pulse length over its corners and the charge window."""
    roles = {r.name: r for r in topo.roles()}
    rows = hold_pairs(roles["r_start"], roles["c_start"], topo.brief, topo.catalog)
    dropped = Dropped()
    pnp, amb, sup = topo.pnp(design0), topo.brief.ambient, topo.brief.supply
    r_be = topo.fixed_ohm(design0, "r_be")
    r_lo = rows["r_start"].to_numpy(float) * (1 - rows["r_spread"].to_numpy(float))
    r_hi = rows["r_start"].to_numpy(float) * (1 + rows["r_spread"].to_numpy(float))
    c_lo = rows["c_start"].to_numpy(float) * (1 - rows["c_spread"].to_numpy(float))
    c_hi = rows["c_start"].to_numpy(float) * (1 + rows["c_spread"].to_numpy(float))
    load_max = load_max_a(topo, design0, hold_table)
    window = charge_window(topo, design0, r_lo, r_hi, c_lo, load_max)
    keep = dropped.drop(window <= 0, lambda m: f"start PNP base current (hFE min {pnp.value('hfe_min', ''):g} at "
                        f"{amb.min_c:g} °C, largest r_start) cannot saturate it against the charge current at "
                        f"power-on {fq(sup.max_v / topo.fixed_ohm(design0, 'r_charge'), 'A')}")
    leak = np.zeros(len(rows))
    for part_id, idx in rows.groupby("c_part").indices.items():
        sub = rows.iloc[idx]
        leak[idx] = start_leakage_a(topo, design0, typical=False, temp_c=amb.max_c, c_f=sub["c_start"].to_numpy(float),
                                         part=topo.catalog.part(part_id), rated_v=sub["c_rated_v"].to_numpy(float))
    keep &= dropped.drop(keep & (leak * r_be > START_PNP_OFF_V), lambda m: f"start capacitor leakage at "
                         f"{amb.max_c:g} °C (limit, largest {fq(float(leak[m].max()), 'A')}) across r_be "
                         f"{fq(r_be, 'Ω')} exceeds {fq(START_PNP_OFF_V, 'V')}: the start PNP would stay on")
    pulses = []
    for r in (r_lo, r_hi):
        for c in (c_lo, c_hi):
            for v in (sup.min_v, sup.max_v):
                for t in (amb.min_c, amb.max_c):
                    pulses.append(pulse_length_s(topo, design0, v, r, c, t))
    pulses = np.array(pulses)
    t_nom = topo.environment()["ambient_c"].nominal
    nom = pulse_length_s(topo, design0, sup.nominal_v, rows["r_start"].to_numpy(float),
                              rows["c_start"].to_numpy(float), t_nom)
    typical_leak = np.zeros(len(rows))
    for part_id, idx in rows.groupby("c_part").indices.items():
        sub = rows.iloc[idx]
        typical_leak[idx] = start_leakage_a(topo, design0, typical=True, c_f=sub["c_start"].to_numpy(float),
                                                 part=topo.catalog.part(part_id),
                                                 rated_v=sub["c_rated_v"].to_numpy(float))
    # delay_lo takes no credit for the pulse: while the PNP fades its tail may already drain a small hold
    # capacitor, so only the hold block's own minimum (from 95 % charge) is a guaranteed lower bound
    table = rows.assign(delay_lo=0.0, delay_nom=nom, delay_hi=pulses.max(axis=0),
                        during_a=0.0, after_a=typical_leak,
                        log_window=np.log(np.maximum(window, 1e-300)))[keep]
    table = table.rename(columns={"r_part": "r_start_part", "c_part": "c_start_part", "c_rated_v": "c_start_rated_v"})
    return Block("start", table, roles=("r_start", "c_start"),
                 options=("r_start_part", "c_start_part", "c_start_rated_v"), dropped=dict(dropped))


def load_max_a(topo: "Topology", design0: "Design", rows: pd.DataFrame) -> float:
    """Largest discharge current near full charge over the hold rows [A] (hottest, highest supply,
    every quantity at its shortest-delay end)."""
    if not len(rows):
        return 0.0
    q = topo.quantities(design0)
    names = [n for n in q if n not in START_QUANTITIES]
    corner = {n: ("hi" if topo.directions.get(n, 1) < 0 else "lo") for n in names if q[n].spreads}
    corner.update(ambient_c="hi", supply_v="hi")
    rows = rows.rename(columns={"r_hold_part": "r_part", "c_hold_part": "c_part", "c_hold_rated_v": "c_rated_v"})
    best = 0.0
    for part_id, idx in rows.groupby("c_part").indices.items():
        sub = rows.iloc[idx]
        leak = topo.leakage(design0, sub["c_hold"].to_numpy(float)[:, None],
                            sub["c_rated_v"].to_numpy(float)[:, None], topo.catalog.part(part_id))
        st = topo.state(design0, corner_arrays(q, sub, [corner], names), leak)
        best = max(best, float(np.max(topo.discharge_a(st, st.supply_v))))
    return best
