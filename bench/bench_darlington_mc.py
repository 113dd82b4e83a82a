"""Darlington RC-hold Monte Carlo: the vectorised delay model against ngspice runs of the same hold.

Run: `PYTHONPATH=. python bench/bench_darlington_mc.py [RUNS]`. On the example design
examples/designs/rc-darlington.yaml (fan run-on brief), all measured in this one run:
1. model throughput on one core: samples per second of the delay model alone and with sampling,
   against the 1,000,000 /s target;
2. RUNS (default 200) Monte Carlo points simulated one after another by ngspice (the netlist
   `spice()` writes for each point: two NPNs with the model's junction law, coil R + L with flyback
   diode, leakage as a behavioural source): time per run, extrapolated to the model's sample count,
   and the speed ratio;
3. agreement at the same points: mean and 1st/99th percentiles of the model and of ngspice, and the
   largest relative difference of one point.
Numbers vary with machine load; the ratios are what to compare.
"""
from __future__ import annotations

import os
import shutil
import sys
import tempfile
import time
from pathlib import Path

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

import numpy as np  # noqa: E402

from spice_measures import measures  # noqa: E402
from tradeoff.analysis import sample  # noqa: E402
from tradeoff.design import load_design  # noqa: E402

SAMPLES = 1_000_000
TARGET_PER_S = 1_000_000
SEED = 11
MC_CHUNK = 250_000
"""Samples per call of the delay model, as tradeoff.analysis.monte_carlo uses by default."""


def main() -> None:
    runs = int(sys.argv[1]) if len(sys.argv) > 1 else 200
    ngspice = shutil.which("ngspice")
    _, topo, design = load_design(ROOT / "examples" / "designs" / "rc-darlington.yaml")
    q = topo.quantities(design)
    x = sample(q, SAMPLES, np.random.default_rng(SEED))
    topo.delay(design, {k: v[:1000] for k, v in x.items()})  # warm caches
    # The delay model is timed as the Monte Carlo engine calls it, in chunks of MC_CHUNK samples
    # (whole-million arrays spill out of the caches and run about half as fast here).
    t0 = time.perf_counter()
    delays = np.concatenate([topo.delay(design, {k: v[i:i + MC_CHUNK] for k, v in x.items()})
                             for i in range(0, SAMPLES, MC_CHUNK)])
    model_s = time.perf_counter() - t0
    t0 = time.perf_counter()
    sample(q, SAMPLES, np.random.default_rng(SEED + 1))
    draw_s = time.perf_counter() - t0
    print(f"rc-darlington, {design.values['r_hold'] / 1e3:g} kΩ / {design.values['c_hold'] * 1e6:g} µF, "
          f"{topo.brief.title}")
    print(f"model: {SAMPLES / model_s:,.0f} samples/s delay model alone, {SAMPLES / (model_s + draw_s):,.0f} "
          f"samples/s with sampling ({SAMPLES / (model_s + draw_s) / TARGET_PER_S:.2f} x the 1,000,000 /s target)")
    print(f"model Monte Carlo of {SAMPLES} samples [min]: mean {delays.mean() / 60:.3f}, 1 % {np.quantile(delays, 0.01) / 60:.3f}, "
          f"99 % {np.quantile(delays, 0.99) / 60:.3f}")
    if ngspice is None:
        print("ngspice not installed: the comparison is skipped (apt-get install -y ngspice)")
        return
    points = [{k: float(v[i]) for k, v in x.items()} for i in range(runs)]
    model = np.array([delays[i] for i in range(runs)])
    sim = np.empty(runs)
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as work:
        for i, point in enumerate(points):
            sim[i] = measures(ngspice, topo.spice(design, point), ("delay",), Path(work))["delay"]
    spice_s = time.perf_counter() - t0
    per_run = spice_s / runs
    print(f"ngspice: {runs} runs in {spice_s:.1f} s ({per_run * 1e3:.0f} ms a run); {SAMPLES} runs would take "
          f"{per_run * SAMPLES / 3600:.0f} h; the model is {per_run * SAMPLES / (model_s + draw_s):,.0f} x faster")
    print(f"{'same ' + str(runs) + ' points [min]':24s} {'model':>9s} {'ngspice':>9s} {'difference':>11s}")
    for label, f in (("mean", np.mean), ("1 % percentile", lambda d: np.quantile(d, 0.01)),
                     ("99 % percentile", lambda d: np.quantile(d, 0.99))):
        a, b = f(model), f(sim)
        print(f"{label:24s} {a / 60:9.3f} {b / 60:9.3f} {100 * (a / b - 1):+10.2f} %")
    print(f"largest difference at one point: {100 * np.max(np.abs(model / sim - 1)):.2f} %")


if __name__ == "__main__":
    main()
