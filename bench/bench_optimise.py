"""Integer program versus exhaustive search on Darlington-hold-shaped selection models.

Run: `PYTHONPATH=. python bench/bench_optimise.py`. Prints measured times and ratios from one run.

1. E24 resistors, E6 capacitors, no pairs: a registered RC hold with power-on start (four
   coupled value roles: hold R and C, start R and C), the first of REAL_CASES whose program is
   feasible (the Darlington's worst case is often infeasible at the datasheet leakage limit; the
   notes say why); and a synthetic model of the Darlington's shape and size (a hold block of
   R × C rows, a start block of R × C rows, delays adding, a log-space link that the start pulse
   outlasts the hold capacitor's charge). Same optimum, speed ratio.
2. E96 resistors with series pairs, on the synthetic model, where exhaustive search is out of
   reach: table-building time and the program's build and solve times, separately.
"""
from __future__ import annotations

import math
import sys
import time
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from tradeoff import eseries  # noqa: E402
from tradeoff.optimise import SelectionProblem, exhaustive  # noqa: E402
from tradeoff.selection import Block, Link, SelectionModel  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
BAND_S = (0.75 * 3600, 1.25 * 3600)
"""Synthetic brief: 1 h ± 25 % [s] (electrolytic hold capacitors at ±10 % leave room for that only)."""
NO_LIMITS = SimpleNamespace(standby_after_a=None, parts=None, cost=None, rails=None)
WEIGHTS = SimpleNamespace(accuracy=1.0, standby=1.0, rails=1.0, parts=1.0, cost=1.0, effort=1.0)
"""The brief's default weights (1 each)."""


def resistor_values(series: str, lo: float, hi: float, pairs: bool) -> tuple[np.ndarray, np.ndarray]:
    """Standard values in [lo, hi] [ohm] and their placements, plus series pairs filling the gaps
    (the enumeration candidates.py uses)."""
    singles = eseries.values(series, lo, hi)
    values, placements = [singles], [np.ones(len(singles))]
    if pairs:
        base = eseries.values(series, lo / 10, hi)
        a, b = np.meshgrid(base, base, indexing="ij")
        keep = (a >= b) & (a + b >= lo) & (a + b <= hi)
        totals = np.setdiff1d(np.unique(np.round(a[keep] + b[keep], 12)), singles)
        values.append(totals)
        placements.append(np.full(len(totals), 2.0))
    return np.concatenate(values), np.concatenate(placements)


RESISTOR_CLASSES = ((0.05, 0.01), (0.01, 0.02))
"""Synthetic resistor classes: (tolerance [fraction], unit cost [EUR])."""
CAPACITOR_CLASSES = ((0.20, 20.0, 1e-3), (0.20, 40.0, 2e-4), (0.10, 90.0, 1e-5))
"""Synthetic capacitor classes: (tolerance [fraction], cost per farad [EUR/F], leakage per farad [A/F])."""


def rc_block(name: str, r: np.ndarray, r_parts: np.ndarray, c: np.ndarray, factor: float) -> Block:
    """Every (R class, R, C class, C) row with delay factor·R·C at the tolerance corners, cost,
    placements and drain."""
    frames = []
    for r_tol, r_cost in RESISTOR_CLASSES:
        for c_tol, c_cost, c_leak in CAPACITOR_CLASSES:
            rr, cc = (m.ravel() for m in np.meshgrid(r, c, indexing="ij"))
            parts = np.meshgrid(r_parts, c, indexing="ij")[0].ravel()
            nominal = factor * rr * cc
            frames.append(pd.DataFrame({
                f"r_{name}": rr, f"c_{name}": cc, f"log_c_{name}": np.log(cc), f"log_tau_{name}": np.log(rr * cc),
                "delay_lo": nominal * (1 - r_tol) * (1 - c_tol), "delay_nom": nominal,
                "delay_hi": nominal * (1 + r_tol) * (1 + c_tol),
                "cost": r_cost * parts + 0.05 + c_cost * cc, "placements": parts + 1, "lines": 2.0,
                "during_a": 12.0 / rr, "after_a": c_leak * cc,
            }))
    return Block(name, pd.concat(frames, ignore_index=True), roles=(f"r_{name}", f"c_{name}"))


def synthetic(series: str, pairs: bool) -> SelectionModel:
    """Darlington hold with power-on start, synthetic numbers, real E-series enumeration, table
    sizes like rc-darlington's (about 12,000 hold and 18,000 start rows with E24 and E6)."""
    hold_r, hold_p = resistor_values(series, 10e3, 10e6, pairs)
    start_r, start_p = resistor_values(series, 100.0, 1e6, pairs)
    hold = rc_block("hold", hold_r, hold_p, eseries.values("E6", 1e-7, 4.7e-3), 1.6)
    start = rc_block("start", start_r, start_p, eseries.values("E6", 1e-8, 1e-3), 0.05)
    link = Link((("start", "log_tau_start", 1.0), ("hold", "log_c_hold", -1.0)), ">=", math.log(3 * 1e3),
                "start pulse outlasts 3 time constants of the 1 kΩ charge path into the hold capacitor")
    return SelectionModel("synthetic-darlington", "sum", [hold, start], links=[link], fixed_cost=0.6,
                          fixed_placements=5, fixed_lines=5, fixed_during_a=2e-3, fixed_after_a=1e-8, effort=0.1)


REAL_CASES = (
    ("rc-darlington", "glue_pot_warmer.yaml", {}),
    ("rc-darlington", "fan_run_on.yaml", {"start": "power-on", "delay.nominal": "35 s", "delay.min": "10 s",
                                          "delay.max": "60 s"}),
    ("rc-mosfet", "fan_run_on.yaml", {"start": "power-on", "delay.nominal": "35 s", "delay.min": "10 s",
                                      "delay.max": "60 s"}),
)
"""Registered RC holds with power-on start (four coupled value roles: hold R and C, start R and C),
tried in order; the first with a feasible program is compared against exhaustive search."""


def real_hold():
    """(model, band, limits, weights, label) of the first feasible case in REAL_CASES, and notes on the others."""
    from tradeoff.brief import load_brief
    from tradeoff.catalog import load_catalog
    from tradeoff.topologies.registry import build_topology

    catalog = load_catalog()
    notes = []
    for topology_id, file, changes in REAL_CASES:
        brief = load_brief(ROOT / "examples" / file).replace(
            {"series.resistor": "E24", "series.electrolytic": "E6", "series.pairs": False, **changes})
        start = time.perf_counter()
        model = build_topology(topology_id, brief, catalog).selection()
        tables_s = time.perf_counter() - start
        band = (brief.delay.min_s, brief.delay.max_s)
        result = SelectionProblem(model, band, brief.limits, brief.weights).solve()
        label = f"{topology_id} with power-on start on '{brief.title}' with {changes or 'its own band'}"
        if result.feasible:
            return (model, band, brief.limits, brief.weights, f"{label} (tables {tables_s:.2f} s)"), notes
        notes.append(f"{label} is infeasible: {result.reasons[0]}")
    return None, notes


def timed_program(model, band, limits, weights):
    """(result, build [s], solve [s]) of a fresh SelectionProblem."""
    start = time.perf_counter()
    problem = SelectionProblem(model, band, limits, weights)
    build_s = time.perf_counter() - start
    result = problem.solve()
    return result, build_s, result.solve_s, problem


def compare(model, band, limits, weights, label: str) -> None:
    sizes = [len(b.table) for b in model.blocks]
    print(f"{label}: blocks {sizes} rows, {math.prod(sizes):,} combinations")
    start = time.perf_counter()
    found = exhaustive(model, band, limits, weights)
    exhaustive_s = time.perf_counter() - start
    result, build_s, solve_s, problem = timed_program(model, band, limits, weights)
    kept = [len(k) for k in problem.program.keep] if not problem.program.empty else "none"
    program_s = build_s + solve_s
    same = bool(found) and result.feasible and abs(found[0].objective - result.objective) <= 1e-9
    print(f"  exhaustive search: {exhaustive_s * 1e3:.1f} ms, objective {found[0].objective if found else None}")
    print(f"  integer program:   {program_s * 1e3:.1f} ms (prune and build {build_s * 1e3:.1f} ms, "
          f"solve {solve_s * 1e3:.1f} ms; rows after exact pruning {kept}), objective {result.objective}")
    print(f"  same optimum: {same}; speed ratio exhaustive / program: {exhaustive_s / program_s:.1f}x "
          f"(solve only: {exhaustive_s / solve_s:.1f}x)")


def large(series: str) -> None:
    start = time.perf_counter()
    model = synthetic(series, pairs=True)
    tables_s = time.perf_counter() - start
    sizes = [len(b.table) for b in model.blocks]
    result, build_s, solve_s, problem = timed_program(model, BAND_S, NO_LIMITS, WEIGHTS)
    kept = [len(k) for k in problem.program.keep] if not problem.program.empty else "none"
    print(f"synthetic Darlington hold, {series} resistors with series pairs, E6 capacitors: blocks {sizes} rows, "
          f"{math.prod(sizes):,} combinations (exhaustive search out of reach)")
    print(f"  table building {tables_s * 1e3:.0f} ms; program prune and build {build_s * 1e3:.0f} ms "
          f"(rows after exact pruning {kept}); solve {solve_s * 1e3:.0f} ms; status {result.status}, "
          f"objective {result.objective}")
    print(f"  program solve {solve_s:.3f} s (target < 1 s); with exact pruning and model build "
          f"{build_s + solve_s:.2f} s; with table building {tables_s + build_s + solve_s:.2f} s")


def main() -> None:
    real, notes = real_hold()
    for note in notes:
        print(f"note: {note}")
    if real is not None:
        compare(*real)
    else:
        print("note: no registered hold is feasible; the synthetic model of the same shape stands in")
    compare(synthetic("E24", pairs=False), BAND_S, NO_LIMITS, WEIGHTS,
            "synthetic Darlington hold with power-on start, E24 resistors, E6 capacitors")
    large("E96")


if __name__ == "__main__":
    main()
