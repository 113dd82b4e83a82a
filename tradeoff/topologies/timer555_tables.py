"""Optimiser table of the 555-class monostable: one block of every (timer class, R, C) with its exact
worst-case delays over the corners, its cost, parts and currents; the rows whose nominal delay lies
outside the band are found by bisection and only counted. Functions of the topology `topo` (a timer555.Timer555).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Mapping

import numpy as np
import pandas as pd

from tradeoff.analysis import Uncertain
from tradeoff.candidates import bom_lines, chunks, leading_below, pair_columns, window_rows
from tradeoff.errors import CatalogError
from tradeoff.selection import Block, SelectionModel
from tradeoff.topologies.bands import BOARD_LEAK
from tradeoff.topologies.base import BomLine
from tradeoff.topologies.corners import corner_values, extreme_corners
from tradeoff.topologies.ic_common import TEMPCO_REFERENCE_C, drop_count, supply_problem, timing_candidates
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.topologies.base import Topology

__all__ = ["TimerClass", "timer_selection", "INCREASING", "WITH_TEMPERATURE", "WITH_SUPPLY"]

INCREASING = ("r_timing", "c_timing", "c_timing_leakage", "threshold_a", "discharge_a", "timer_error",
              BOARD_LEAK)
"""Quantities that lengthen the pulse at every corner."""
WITH_TEMPERATURE = ("r_timing_tempco", "c_timing_tempco", "timer_tempco")
"""Quantities that lengthen it with the sign of T − 25 degC."""
WITH_SUPPLY = ("timer_supply_coef",)
"""Quantities that lengthen it with the sign of V − nominal supply."""


@dataclass(frozen=True)
class TimerClass:
    """Per-class quantities of one 555-class timer at the brief's supply."""

    part: "Part"
    direct: bool            # the output drives the load itself
    quiescent_typ_a: float  # at the nominal supply
    quiescent_max_a: float
    r_max_ohm: float        # largest practical timing resistance at the minimum supply


_PROBES = 7
"""Rows of each capacitor's resistor window probed per search call: 3 calls for a hundred resistor values
instead of bisection's 7, each call's fixed cost (the capacitor's leakage model) paid fewer times."""


def timer_selection(topo: "Topology") -> SelectionModel:
    """One block: every (timer class, R, C) with its exact worst-case delay over the corners.

    Within an (ambient, supply) corner every other quantity moves the delay one way only
    (R, C, leakage, threshold current and initial error lengthen it; tempcos act with the
    sign of T − 25 degC, the supply drift with the sign of V − nominal), so the extremes over
    the 2^11 corner lattice are the extremes of 4 environment corners × 2 monotone choices:
    equal to the exhaustive search evaluate() runs.
    """
    dropped: dict[str, int] = {}
    leak_hits: dict[str, list[float]] = {}
    rs = timing_candidates(topo, topo.roles()[0], dropped)
    cs = timing_candidates(topo, topo.roles()[1], dropped)
    tables = []
    r_groups = [g for _, g in rs.groupby("part", sort=False)]
    c_groups = [g for _, g in cs.groupby("part", sort=False)]
    for timer_id in topo.timer_ids():
        timer = topo.timer_class(topo.catalog.part(timer_id))
        problem = supply_problem(topo, timer.part)
        if problem:
            drop_count(dropped, f"{timer_id}: {problem}", len(rs) * len(cs))
            continue
        try:
            support = topo.support_bom(timer)
        except CatalogError as exc:
            drop_count(dropped, f"{timer_id}: {exc.reason}", len(rs) * len(cs))
            continue
        for rg in r_groups:
            fits = rg["value"].to_numpy() <= timer.r_max_ohm * (1 + 1e-9)
            drop_count(dropped, topo.r_max_reason(timer), int((~fits).sum()) * len(cs))
            if fits.any():
                tables += [_rows(topo, timer, support, rg[fits], cg, dropped, leak_hits) for cg in c_groups]
    for c_id, (count, c_min) in leak_hits.items():
        drop_count(dropped, f"{c_id}: leakage plus threshold current times R reaches Vcc/3 at the worst corner "
                            f"(the capacitor never reaches 2/3 Vcc; smallest such capacitance {fq(c_min, 'F')})", count)
    table = pd.concat(tables, ignore_index=True) if tables else pd.DataFrame(columns=_columns())
    return SelectionModel(topo.id, "sum", [Block("timing", table, roles=("r_timing", "c_timing"),
                                                 options=("timer", "r_timing_part", "c_timing_part"),
                                                 dropped=dropped)],
                          rails=1, effort=topo.entry.value("effort", ""))


def _columns() -> list[str]:
    """Columns of the timing block, in order."""
    return ["delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines", "during_a", "after_a",
            "r_timing", "c_timing", "timer", "r_timing_part", "c_timing_part", "r_timing_first",
            "r_timing_second", "r_timing_pairing", "c_timing_first", "c_timing_second", "c_timing_pairing"]


def _corners(topo: "Topology", q: Mapping[str, Uncertain], r, c, ambient_c: float, supply_v: float,
             sign: float) -> list[dict]:
    """The corners that push the delay furthest in direction `sign` at a given ambient and supply
    (`corners.extreme_corners`; at 25 degC a tempco, at the nominal supply the supply drift moves
    nothing, so both of its ends are tried); R and C scaled to the candidates' values."""
    directions = {**dict.fromkeys(INCREASING, 1.0), **dict.fromkeys(WITH_TEMPERATURE, ambient_c - TEMPCO_REFERENCE_C),
                  **dict.fromkeys(WITH_SUPPLY, supply_v - topo.brief.supply.nominal_v)}
    out = []
    for corner in extreme_corners(q, directions, sign):
        x = corner_values(q, corner)
        x["r_timing"], x["c_timing"] = x["r_timing"] * r, x["c_timing"] * c
        out.append({**x, "ambient_c": ambient_c, "supply_v": supply_v})
    return out


def _rows(topo: "Topology", timer: TimerClass, support: list[BomLine], rs: pd.DataFrame, cs: pd.DataFrame,
          dropped: dict[str, int], leak_hits: dict[str, list[float]]) -> pd.DataFrame:
    """Block rows for every (R, C) of one R class and one C class with `timer`: nominal and
    worst-case delays [s], cost, parts and currents; rows that cannot meet the band are counted.

    The nominal delay grows with R (R·C·ln((Vcc − Ix·R)/(Vcc/3 − Ix·R)), inf once Ix·R reaches
    Vcc/3), so for each C bisection over the class's ascending R values finds the window whose
    nominal delay lies in the band; only the rows inside it are evaluated at the corners, in chunks."""
    r_part, c_part = topo.catalog.part(rs["part"].iat[0]), topo.catalog.part(cs["part"].iat[0])
    r_values, c_values = rs["value"].to_numpy(float), cs["value"].to_numpy(float)
    _, frac, note = topo.cap_model(c_part, c_values)
    q = topo.spread_quantities(timer.part, r_part, c_part, 1.0, 1.0, frac, note)   # R, C relative: scaled below
    env = topo.environment()
    nominal = {n: u.nominal for n, u in {**q, **env}.items()}

    def nominal_s(ci, ri):
        limit, _, _ = topo.cap_model(c_part, c_values[ci])
        return topo.width_s(limit, {**nominal, "r_timing": r_values[ri], "c_timing": c_values[ci]})

    band = topo.brief.delay
    sizes = np.full(len(cs), len(rs))
    start = leading_below(nominal_s, sizes, band.min_s, probes=_PROBES)
    stop = leading_below(nominal_s, sizes, band.max_s, inclusive=True, probes=_PROBES)
    finite = leading_below(nominal_s, sizes, np.inf, probes=_PROBES)
    drop_count(dropped, f"nominal delay outside the band {fq(band.min_s, 's')} to {fq(band.max_s, 's')}",
               int((start + finite - stop).sum()))
    ci, ri = window_rows(start, stop)
    order = np.lexsort((ci, ri))   # R-major, C-minor: the order of the full (R, C) table
    ci, ri = ci[order], ri[order]
    r, c = r_values[ri], c_values[ci]
    nom, lo, hi = np.empty(len(r)), np.full(len(r), np.inf), np.zeros(len(r))
    for part in chunks(len(r)):
        limit, _, _ = topo.cap_model(c_part, c[part])
        nom[part] = topo.width_s(limit, {**nominal, "r_timing": r[part], "c_timing": c[part]})
        for t in env["ambient_c"].corner_values():
            for v in env["supply_v"].corner_values():
                for x in _corners(topo, q, r[part], c[part], t, v, -1.0):
                    lo[part] = np.minimum(lo[part], topo.width_s(limit, x))
                for x in _corners(topo, q, r[part], c[part], t, v, +1.0):
                    hi[part] = np.maximum(hi[part], topo.width_s(limit, x))
    stuck = ~np.isfinite(hi)
    stuck_c = np.concatenate([c_values[finite < len(rs)], c[stuck]])
    if len(stuck_c):
        hit = leak_hits.setdefault(c_part.id, [0, np.inf])
        hit[0] += int((len(rs) - finite).sum()) + int(stuck.sum())
        hit[1] = min(hit[1], float(stuck_c.min()))
    ok = ~stuck
    r, ri, ci = r[ok], ri[ok], ci[ok]
    during, after = topo.currents_a(timer, r)
    return pd.DataFrame({
        "delay_lo": lo[ok], "delay_nom": nom[ok], "delay_hi": hi[ok],
        "cost": rs["cost"].to_numpy()[ri] + cs["cost"].to_numpy()[ci] + sum(b.cost for b in support),
        "placements": rs["placements"].to_numpy()[ri] + cs["placements"].to_numpy()[ci] + sum(b.quantity for b in support),
        "lines": bom_lines(rs, ri) + bom_lines(cs, ci) + len(support),
        "during_a": during, "after_a": after,
        "r_timing": r, "c_timing": c[ok],
        "timer": timer.part.id, "r_timing_part": r_part.id, "c_timing_part": c_part.id,
        **pair_columns("r_timing", rs, ri), **pair_columns("c_timing", cs, ci),
    }, columns=_columns())
