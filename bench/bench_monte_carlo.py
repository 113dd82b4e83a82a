"""Monte Carlo throughput of every registered topology's delay model on one core.

Run: `PYTHONPATH=. python bench/bench_monte_carlo.py`. For each topology's example design in
examples/designs/, draws and evaluates one million samples (sampling included, as the study
does) and prints samples per second and the ratio to the 1,000,000 /s target, all measured
in this one run. Numbers vary with machine load; the ratios are what to compare.
"""
from __future__ import annotations

import os
import sys
import time
from pathlib import Path

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from tradeoff.analysis import monte_carlo  # noqa: E402
from tradeoff.design import load_design  # noqa: E402
from tradeoff.topologies.registry import topology_ids  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = 1_000_000
TARGET_PER_S = 1_000_000


def main() -> None:
    print(f"Monte Carlo throughput, {SAMPLES} samples per topology, one core")
    print(f"{'topology':18s} {'samples/s':>14s} {'vs target':>10s}")
    for topology_id in topology_ids():
        path = ROOT / "examples" / "designs" / f"{topology_id}.yaml"
        if not path.exists():
            print(f"{topology_id:18s} {'no example design':>14s}")
            continue
        brief, topology, design = load_design(path)
        quantities = topology.quantities(design)
        band = (brief.delay.min_s, brief.delay.max_s)
        monte_carlo(lambda x: topology.delay(design, x), quantities, 10_000, 1, band, 0.99)  # warm-up
        start = time.perf_counter()
        monte_carlo(lambda x: topology.delay(design, x), quantities, SAMPLES, 1, band, 0.99)
        rate = SAMPLES / (time.perf_counter() - start)
        print(f"{topology_id:18s} {rate:14,.0f} {rate / TARGET_PER_S:9.2f}x")


if __name__ == "__main__":
    main()
