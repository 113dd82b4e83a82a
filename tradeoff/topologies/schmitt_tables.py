"""Optimiser table of the Schmitt-trigger hold (`rc-schmitt`): the (r_hold, c_hold) pairs whose nominal delay lies in
the band, found by bisection along r_hold (`bands.window_pairs`), with their delays at the corners `DIRECTION`
selects and the supply current long after the timeout, by the models evaluate() uses. Functions of the topology
`topo` (an RcSchmitt).
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from tradeoff.candidates import chunks
from tradeoff.devices.capacitor import LEAK_LEVEL
from tradeoff.devices.schmitt import charge_time_s
from tradeoff.selection import Block, SelectionModel
from tradeoff.topologies import bands
from tradeoff.topologies.base import Design
from tradeoff.topologies.corners import corner_values, extreme_corners
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    import pandas as pd

    from tradeoff.topologies.base import Topology

__all__ = ["DIRECTION", "SCHMITT_CHUNK", "schmitt_selection", "table_delays"]

DIRECTION = {"r_hold": 1, "c_hold": 1, LEAK_LEVEL: 1, "hfe_q1": -1, "hfe_q2": 1, "vbe_q1": 1, "vbe_q2": -1,
             "r_q1_collector": -1, "r_divider_top": -1, "r_divider_bottom": 1, "r_emitter": 0, "ambient_c": 0,
             "supply_v": 0, bands.BOARD_LEAK: 1}
"""Sign of d(delay)/d(quantity) used by the optimiser table (0: both ends tried); tests check it."""

SCHMITT_CHUNK = 1 << 13
"""Candidate pairs evaluated at once: the charge quadrature keeps (pairs x corners x nodes) arrays, some
8192 x 8 x 30 x 8 bytes (16 MB) each."""


def schmitt_selection(topo: "Topology") -> SelectionModel:
    """One block: the (r_hold, c_hold) pairs whose nominal delay lies in the band, with their delay at the corners
    `DIRECTION` selects (quantities of direction 0 at both ends), by the same model as evaluate(); standby after
    per row. The nominal delay grows with r_hold, so for every capacitor candidate and resistor class bisection
    over the ascending resistor values (`bands.window_pairs`) finds those pairs; only they are evaluated at the
    corners."""
    band = (topo.brief.delay.min_s, topo.brief.delay.max_s)
    r_role, c_role = topo.roles()
    r, c = bands.role_tables(r_role, c_role, topo.brief, topo.catalog)
    dropped = bands.Dropped()
    outside = (f"nominal delay outside the band {fq(band[0], 's')} to {fq(band[1], 's')} (time constant too "
               "short or too long)")
    trips: dict[bytes, dict[str, np.ndarray]] = {}
    ri, ci = bands.window_pairs(
        r, c, True, lambda ri, ci, end: table_delays(topo, bands.pair_rows(r_role, c_role, r, c, ri, ci), (0,),
                                                     trips=trips)[0],
        band, dropped, outside, outside, quote_nearest=False)
    rows = bands.pair_rows(r_role, c_role, r, c, ri, ci)
    lo, nom, hi, after = table_delays(topo, rows, (-1, 0, 1), with_after=True, trips=trips)
    keep = dropped.drop(~np.isfinite(hi), lambda m: "at the longest-delay corner the capacitor's leakage "
                        "and Q1's base current reach the charge current below the trip point: never times out")
    table = rows.assign(delay_lo=lo, delay_nom=nom, delay_hi=hi, after_a=after, during_a=0.0)
    table = table[keep].rename(columns={"r_part": "r_hold_part", "c_part": "c_hold_part",
                                        "c_rated_v": "c_hold_rated_v"})
    design0 = Design(topo.id, {"r_hold": 10e6, "c_hold": 1e-6})
    fixed = topo._fixed_bom(design0)
    return SelectionModel(topo.id, "sum", [Block("hold", table, roles=("r_hold", "c_hold"), dropped=dict(dropped),
                                                 options=("r_hold_part", "c_hold_part", "c_hold_rated_v"))],
                          fixed_cost=float(sum(b.cost for b in fixed)),
                          fixed_placements=sum(b.quantity for b in fixed),
                          fixed_lines=len(fixed), fixed_during_a=topo.standby(design0).during_a, rails=1,
                          effort=topo.effort(design0),
                          notes=["threshold network fixed; table delays at the corners of the model's directions"])


def table_delays(topo: "Topology", rows: "pd.DataFrame", signs: tuple[int, ...],
                 with_after: bool = False, trips: dict[bytes, dict[str, np.ndarray]] | None = None) -> list[np.ndarray]:
    """Per candidate pair of `rows` (`bands.pair_rows`): for each sign the shortest (-1), nominal (0) or longest
    (+1) delay over the corners `corners.extreme_corners` selects [s], and with `with_after` the supply current
    long after the timeout [A]; SCHMITT_CHUNK rows at a time. `trips` keeps the trip points already found
    (`_corner_trip`) from one call to the next."""
    trips = {} if trips is None else trips
    out = [np.full(len(rows), np.nan) for _ in range(len(signs) + with_after)]
    for (c_part, rated), index in rows.groupby(["c_part", "c_rated_v"], sort=False).indices.items():
        first = rows.iloc[index[0]]
        design = Design(topo.id, {"r_hold": float(first["r_hold"]), "c_hold": float(first["c_hold"])},
                        {"c_hold_part": c_part, "c_hold_rated_v": float(rated), "r_hold_part": first["r_part"]})
        q = topo.quantities(design)
        for part in chunks(len(index), SCHMITT_CHUNK):
            sub = rows.iloc[index[part]]
            values = {n: sub[n].to_numpy(float)[:, None] for n in ("r_hold", "c_hold")}
            spread = {n: sub[f"{n[0]}_spread"].to_numpy(float)[:, None] for n in values}
            leak = topo._leakage(design, values["c_hold"])
            for k, sign in enumerate(signs):
                corners = [corner_values(q, c) for c in extreme_corners(q, DIRECTION, sign)]
                x = {n: np.array([[c[n] for c in corners]]) for n in q}
                tr = _corner_trip(topo, design, x, trips)
                x.update({n: v * (1 + sign * spread[n]) + 0 * x[n] for n, v in values.items()})
                t = charge_time_s(x["c_hold"], x["r_hold"], x["supply_v"], tr["v_trip"], topo._extra(x, tr, leak, None))
                out[k][index[part]] = {-1: t.min(axis=1), 0: t[:, 0], 1: t.max(axis=1)}[sign]
            if with_after:
                nominal = {**{n: np.full(len(sub), u.nominal) for n, u in q.items()},
                           **{n: v[:, 0] for n, v in values.items()}}
                out[-1][index[part]] = topo.after_state(design, nominal,
                                                        topo._leakage(design, values["c_hold"][:, 0]))["supply_a"]
    return out


def _corner_trip(topo: "Topology", design: Design, x: dict[str, np.ndarray], trips: dict[bytes, dict[str, np.ndarray]]
                 ) -> dict[str, np.ndarray]:
    """`topo.trip` at the corners `x` (one row of corners), looked up in `trips` by the corner values: the trip
    point does not depend on the charge resistor or the capacitor, so the window search and the table's
    capacitor classes share one search per set of corners."""
    key = topo.part(design, "npn").id.encode() + b"".join(n.encode() + x[n].tobytes() for n in sorted(x)
                                                          if n not in ("r_hold", "c_hold"))
    if key not in trips:
        trips[key] = topo.trip(design, x)
    return trips[key]
