"""Start-up cost as a user sees it: every shipped example brief studied end to end in a new process.

Run: `PYTHONPATH=. python bench/bench_startup.py [REPEATS]`. Prints, measured in this one run, the
import time of the command shell (`import tradeoff.cli`) and of the study (`import tradeoff.trade_study`),
then for each examples/*.yaml the wall time of `python -m tradeoff study BRIEF` (imports, selection,
verification, default Monte Carlo and report included), the median of REPEATS runs (default 3) with
their spread, the processor time (user + system) of the median run, and the wall time's ratio to the
1.5 s target. On a shared machine the processor time is the steadier figure: the wall time also
counts the time the process waited for a core.
"""
from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ENV = {**{k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}, "PYTHONPATH": str(ROOT)}
"""The environment of every run: bytecode is written and read as on a user's machine (an environment
that forbids writing it would have every run compile the package's modules again, some 0.2 s here)."""
TARGET_S = 1.5
"""End-to-end wall time aimed at for one shipped example [s]."""


def run(args: list[str]) -> tuple[float, float, int]:
    """Wall time [s], processor time (user + system) [s] and exit code of `python ARGS` in a new process,
    output discarded."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run([sys.executable, *args], cwd=ROOT, env=ENV, stdout=subprocess.DEVNULL,
                          stderr=subprocess.DEVNULL)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu, done.returncode


def median_run(args: list[str], repeats: int) -> tuple[float, float, float, float, int]:
    """Median wall time [s], fastest and slowest wall time [s], processor time of the median run [s] and
    the exit code, over `repeats` runs of `python ARGS`."""
    runs = sorted(run(args) for _ in range(repeats))
    wall, cpu, code = runs[len(runs) // 2]
    return wall, runs[0][0], runs[-1][0], cpu, code


def main() -> None:
    repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 3
    run(["-c", "import tradeoff.trade_study; tradeoff.units.parse_quantity('1 s', 's')"])  # writes the bytecode and pint caches
    print(f"median of {repeats} runs each; cpu = user + system time of the median run")
    for module in ("tradeoff.cli", "tradeoff.trade_study"):
        wall, lo, hi, cpu, _ = median_run(["-c", f"import {module}"], repeats)
        print(f"import {module}: {wall:.2f} s ({lo:.2f} to {hi:.2f}), cpu {cpu:.2f} s (process start included)")
    for brief in sorted((ROOT / "examples").glob("*.yaml")):
        wall, lo, hi, cpu, code = median_run(["-m", "tradeoff", "study", str(brief.relative_to(ROOT))], repeats)
        print(f"tradeoff study {brief.name}: {wall:.2f} s ({lo:.2f} to {hi:.2f}), cpu {cpu:.2f} s (exit {code}), "
              f"{wall / TARGET_S:.2f} x the {TARGET_S} s target")


if __name__ == "__main__":
    main()
