"""Sweep speed-up on local cores: a 200-point grid run with jobs=1, then jobs=2; prints the
ratio measured in this one run (target on a 2-core machine: at least 1.6) and checks that
both runs give the same table.

Run from the repository root: `python bench/bench_sweep.py` (a few minutes).
"""
from __future__ import annotations

import time
from pathlib import Path

import pandas as pd

from tradeoff.brief import load_brief
from tradeoff.grid_sweep import sweep

ROOT = Path(__file__).resolve().parents[1]
GRID = {"delay.nominal": "10min..4h:20:log", "weights.effort": "0..4.5:10"}  # 20 x 10 = 200 points
FAST = ["mcu", "rc-counter", "crystal-counter"]
SAMPLES = 200


def main() -> None:
    brief = load_brief(ROOT / "examples" / "fan_run_on.yaml").replace(
        {"delay.min": None, "delay.max": None, "delay.tolerance": "10 %"})
    frames, seconds = {}, {}
    for jobs in (1, 2):
        start = time.perf_counter()
        result = sweep(brief, GRID, jobs=jobs, only=FAST, samples=SAMPLES)
        seconds[jobs] = time.perf_counter() - start
        frames[jobs] = result.to_frame()
        print(f"jobs={jobs}: {len(result.points)} points in {seconds[jobs]:.1f} s")
    pd.testing.assert_frame_equal(frames[1], frames[2])
    print(f"same table from both runs; speed-up jobs=2 over jobs=1: {seconds[1] / seconds[2]:.2f}x (target >= 1.6x)")


if __name__ == "__main__":  # worker processes import this file; only the parent runs the benchmark
    main()
