"""Optimiser table of the comparator hold (`rc-comparator`): the (r_hold, c_hold) pairs of every logic rail whose
nominal delay lies in the band, found by bisection along r_hold (`bands.window_pairs`), with their delays at the
two extreme corners by the delay model evaluate() uses. Functions of the topology `topo` (an RcComparator).
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from tradeoff.candidates import chunks
from tradeoff.devices import capacitor
from tradeoff.devices.quadrature import DELAY_CHUNK
from tradeoff.selection import Block, SelectionModel
from tradeoff.topologies import bands, hold_state, logic
from tradeoff.topologies.base import Design
from tradeoff.topologies.corners import corner_arrays, extreme_corners, role_end
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.topologies.base import Topology

__all__ = ["DIRECTION", "comparator_selection", "pair_delays"]

# Sign of each quantity's effect on the delay: +1 lengthens it when the quantity rises, -1 shortens it.
DIRECTION = {"r_hold": 1, "c_hold": 1, "rail_v": 1, capacitor.LEAK_LEVEL: -1, "bias_frac": -1, "ref_bias_frac": 1,
             "v_ref": -1, "r_top": 1, "r_bottom": -1, "r_hyst": -1, "offset_v": -1, "drain_v": -1,
             bands.BOARD_LEAK: -1}
"""Sign of each quantity's effect on the delay; the ambient has none (both ends are tried, see rc_comparator)."""

_MOVING = (*DIRECTION, "ambient_c")
"""The quantities that move the delay: the supply does not (the comparator runs from its logic rail, rail_v)."""


def comparator_selection(topo: "Topology") -> SelectionModel:
    """One block: the (r_hold, c_hold) pairs of every logic rail whose nominal delay lies in the band, with the
    delay at the two extreme corners.

    The delay is monotone in each quantity but the ambient (`DIRECTION`), so the shortest delay sits at the
    corner where every other quantity takes its shortening end, at the ambient end that gives the shorter
    delay, and the longest at the opposite corner and the ambient end that gives the longer (`pair_delays`).
    The nominal delay grows with r_hold, so for every capacitor candidate, resistor class and logic rail
    bisection over the ascending resistor values (`bands.window_pairs`) finds the rows whose nominal delay
    lies in the band; only those are evaluated at the corners. (Rows whose worst case misses the band stay:
    their spread against the band's is what an infeasibility explanation names.)
    """
    band = (topo.brief.delay.min_s, topo.brief.delay.max_s)
    r_role, c_role = topo.roles()
    r, c = bands.role_tables(r_role, c_role, topo.brief, topo.catalog)
    every = len(r) * len(c)
    dropped = bands.Dropped()
    comp, ref = topo.catalog.parts("comparator")[0], topo.catalog.parts("reference")[0]
    rails, reasons = logic.rail_options(topo.brief, topo.catalog, *topo._ic_range(comp, ref))
    for reason in reasons:
        dropped[f"logic rail: {reason}"] = every
    for rail in list(rails):
        for finding in logic.output_driver_checks(topo.brief, topo.catalog, rail):
            if finding.severity == "violation" and rail in rails:
                dropped[f"logic rail {rail.option}: {finding.message}"] = every
                rails.remove(rail)
    # one window over every rail: capacitor candidate k of rail i is row i·len(c) + k of `c_rails`
    c_rails = pd.concat([c] * len(rails), ignore_index=True)

    quantities: dict[tuple[int, str], dict] = {}

    def delays(ri, at, kind):
        return pair_delays(topo, rails, comp, ref, r, c, ri, at, kind, quantities)

    outside = (f"nominal delay outside the band {fq(band[0], 's')} to {fq(band[1], 's')} (time constant too "
               "short or too long)")
    ri, at = bands.window_pairs(r, c_rails, True, lambda ri, at, end: delays(ri, at, "nom"), band, dropped,
                                outside, outside, quote_nearest=False)
    order = np.lexsort((at, ri, at // max(len(c), 1)))   # rail-major, then the (r, c) table's order
    ri, at = ri[order], at[order]
    lo, nom, hi = (delays(ri, at, kind) for kind in ("lo", "nom", "hi"))
    keep = dropped.drop(~np.isfinite(hi), lambda m: "at the longest-delay corner the comparator's bias current "
                        "into the capacitor exceeds the hold resistor's current at the trip voltage: never times out")
    index = pd.RangeIndex(len(keep))[keep]   # the rows' positions before the never-ending ones left
    ri, at, lo, nom, hi = (column[keep] for column in (ri, at, lo, nom, hi))
    table = pd.DataFrame(_rail_table(topo, rails, r, c, ri, at, (lo, nom, hi), comp, ref), index=index, copy=False)
    block = Block("hold", table, roles=("r_hold", "c_hold"),
                  options=("r_hold_part", "c_hold_part", "c_rated_v", "regulator", "comparator", "reference"),
                  dropped=dict(dropped))
    return SelectionModel(topo.id, "sum", [block], rails=1, effort=topo.effort(Design(topo.id)),
                          notes=["threshold divider fixed; the delay is monotone in each spread quantity but the "
                                 "ambient, so the table's extremes are the two extreme corners, each at the worse "
                                 "ambient end"])


def _rail_table(topo: "Topology", rails: list[logic.LogicRail], r: pd.DataFrame, c: pd.DataFrame, ri: np.ndarray,
                at: np.ndarray, delays: tuple[np.ndarray, np.ndarray, np.ndarray], comp, ref) -> dict[str, object]:
    """Columns of the hold block's rows (r.iloc[ri], c.iloc[at % len(c)]) on the rail rails[at // len(c)]: the
    pair's columns (`bands.pair_columns_of`) with each rail's fixed parts added to cost, placements and lines,
    the delays (lo, nom, hi) [s], the rail's options and its currents during and after the hold [A]."""
    rail_of = at // max(len(c), 1)
    fixed = [topo._fixed_bom(Design(topo.id, {}, {"regulator": rail.option}), rail) for rail in rails]
    currents = np.array([topo._currents(Design(topo.id), rail) for rail in rails], dtype=float).reshape(-1, 2)
    pairs = bands.pair_columns_of(*topo.roles(), r, c, ri, at % max(len(c), 1))
    pairs["cost"] += np.array([sum(b.cost for b in f) for f in fixed], dtype=float)[rail_of]
    pairs["placements"] += np.array([sum(b.quantity for b in f) for f in fixed], dtype=np.int64)[rail_of]
    pairs["lines"] += np.array([len(f) for f in fixed], dtype=np.int64)[rail_of]
    renamed = {"r_part": "r_hold_part", "c_part": "c_hold_part"}
    return {**{renamed.get(name, name): column for name, column in pairs.items()},
            "delay_lo": delays[0], "delay_nom": delays[1], "delay_hi": delays[2],
            "regulator": pd.array([rail.option for rail in rails], dtype="str").take(rail_of),
            **{role: pd.array([part.id], dtype="str").take(np.zeros(len(at), dtype=np.int64))
               for role, part in (("comparator", comp), ("reference", ref))},
            "during_a": currents[rail_of, 0], "after_a": currents[rail_of, 1],
            "rails": np.array([rail.rails - 1 for rail in rails], dtype=np.int64)[rail_of]}


def pair_delays(topo: "Topology", rails: list[logic.LogicRail], comp, ref, r: pd.DataFrame, c: pd.DataFrame,
                ri: np.ndarray, at: np.ndarray, kind: str, quantities: dict[tuple[int, str], dict] | None = None
                ) -> np.ndarray:
    """Delay [s] of the candidate pairs (r.iloc[ri], c.iloc[at % len(c)]) of two `bands.role_tables` on the
    rail rails[at // len(c)]: 'nom' with every quantity nominal, 'lo' ('hi') the shortest (longest) over both
    ambient ends at the corner where every other quantity shortens (lengthens) it; the same delay model
    evaluate() uses, DELAY_CHUNK rows at a time with the leakage law of each chunk's capacitors.
    `quantities` keeps each (rail, capacitor class)'s spread quantities from one call to the next (the
    candidates' own r_hold and c_hold replace theirs)."""
    quantities = {} if quantities is None else quantities
    out = np.empty(len(ri))
    ci, rail_of = at % max(len(c), 1), at // max(len(c), 1)
    r_value, r_spread = r["value"].to_numpy(float)[ri], r["spread"].to_numpy(float)[ri]
    c_value, c_spread = c["value"].to_numpy(float)[ci], c["spread"].to_numpy(float)[ci]
    rated = c["rated_v"].to_numpy(float)[ci]
    part_code, part_ids = pd.factorize(c["part"])
    group = rail_of * max(len(part_ids), 1) + part_code[ci]   # one group per (rail, capacitor class)
    by_group = np.argsort(group, kind="stable")
    for rows in np.split(by_group, np.flatnonzero(np.diff(group[by_group])) + 1) if len(by_group) else []:
        first = rows[0]
        rail_index, part_id = int(rail_of[first]), part_ids[part_code[ci[first]]]
        design = Design(topo.id, {"r_hold": float(r_value[first]), "c_hold": float(c_value[first])},
                        {"regulator": rails[rail_index].option, "c_hold_part": part_id,
                         "c_rated_v": float(rated[first]), "r_hold_part": r["part"].iat[int(ri[first])],
                         "comparator": comp.id, "reference": ref.id})
        if (rail_index, part_id) not in quantities:
            quantities[rail_index, part_id] = topo.quantities(design)
        q, shunt, part = quantities[rail_index, part_id], hold_state.shunt_ohm(design), topo.catalog.part(part_id)
        for chunk in chunks(len(rows), DELAY_CHUNK):
            rows_at = rows[chunk]
            leak = capacitor.CapacitorLeakage(part, c_value[rows_at], rated[rows_at])

            def delay(x):
                return topo._delay(topo._with_bias(design, x), leak, shunt)

            if kind == "nom":
                x = {n: np.full(len(rows_at), u.nominal) for n, u in q.items()}
                out[rows_at] = delay({**x, "r_hold": r_value[rows_at], "c_hold": c_value[rows_at]})
                continue
            sign = 1 if kind == "hi" else -1
            ends = [delay({**corner_arrays(q, corner, len(rows_at)),
                           "r_hold": role_end(r_value[rows_at], r_spread[rows_at], DIRECTION["r_hold"], sign),
                           "c_hold": role_end(c_value[rows_at], c_spread[rows_at], DIRECTION["c_hold"], sign)})
                    for corner in extreme_corners(q, DIRECTION, sign, [n for n in _MOVING if n in q])]
            out[rows_at] = np.maximum.reduce(ends) if sign > 0 else np.minimum.reduce(ends)
    return out
