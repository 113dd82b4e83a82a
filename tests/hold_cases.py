"""Test helpers shared by the RC-hold topology tests: briefs, designs, point delays, dense corner sweeps."""
from __future__ import annotations

import numpy as np

from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.topologies.base import Design

from conftest import EXAMPLES

CATALOG = load_catalog()
BRIEF = load_brief(EXAMPLES / "fan_run_on.yaml")
WIDE = BRIEF.replace({"delay.nominal": "10 min", "delay.min": "1 s", "delay.max": "20 h"})
"""The fan brief with a band wide enough that the selection tables keep thousands of rows."""


def make_topology(cls, brief=BRIEF):
    """Topology `cls` on `brief` with the shipped catalog and its own catalog entry."""
    return cls(brief, CATALOG, CATALOG.part(cls.id))


def make_design(topology_id: str, r: float, c: float, **options) -> Design:
    """Design with r_hold [ohm], c_hold [F]; r_start/c_start and overrides taken out of the options."""
    values = {"r_hold": r, "c_hold": c}
    if "r_start" in options:
        values.update(r_start=options.pop("r_start"), c_start=options.pop("c_start"))
    overrides = options.pop("overrides", {})
    return Design(topology_id, values, options, overrides)


def delay_at(topo, design: Design, **point) -> float:
    """Delay [s] at the nominal point with `point`'s quantities replaced."""
    x = {k: np.array([v]) for k, v in {**topo.nominal_point(design), **point}.items()}
    return float(topo.delay(design, x)[0])


def sweep_beats_corners(topo, design, free: list[str], points: int = 201, grid: int = 41) -> list[str]:
    """Where a dense sweep finds a delay beyond evaluate()'s corner extremes; empty when none does.

    At each extreme corner: every spread quantity alone over `points` values between its limits,
    then the `free` (non-monotone) quantities jointly on a `grid`^len(free) lattice, the others
    staying at the corner.
    """
    q, w = topo.quantities(design), topo.worst_case(design)
    sweeps = [{n: np.linspace(q[n].lo, q[n].hi, points)} for n in q if q[n].spreads]
    mesh = np.meshgrid(*(np.linspace(q[n].lo, q[n].hi, grid) for n in free), indexing="ij")
    sweeps.append({n: m.ravel() for n, m in zip(free, mesh)})
    found = []
    for corner, sign, extreme in ((w.at_min, -1.0, w.min_s), (w.at_max, 1.0, w.max_s)):
        for varied in sweeps:
            size = len(next(iter(varied.values())))
            x = {**{k: np.full(size, v) for k, v in corner.items()}, **varied}
            d = sign * topo.delay(design, x)
            if d.max() > sign * extreme + 1e-12 * abs(extreme):
                found.append(f"{'/'.join(varied)} beyond the {'max' if sign > 0 else 'min'} corner {extreme:.6g} s")
    return found
