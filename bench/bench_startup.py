"""Start-up cost as a user sees it: every shipped example brief studied end to end in a new process.

Run: `PYTHONPATH=. python bench/bench_startup.py`. Prints, measured in this one run, the import time
of the command shell (`import tradeoff.cli`) and of the study (`import tradeoff.trade_study`), then
for each examples/*.yaml the wall time of `python -m tradeoff study BRIEF` (imports, selection,
verification, default Monte Carlo and report included) and its ratio to the 1.5 s target.
"""
from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ENV = {**os.environ, "PYTHONPATH": str(ROOT)}
TARGET_S = 1.5
"""End-to-end wall time aimed at for one shipped example [s]."""


def wall(args: list[str]) -> tuple[float, int]:
    """Wall time [s] and exit code of `python ARGS` in a new process, output discarded."""
    start = time.perf_counter()
    done = subprocess.run([sys.executable, *args], cwd=ROOT, env=ENV, stdout=subprocess.DEVNULL,
                          stderr=subprocess.DEVNULL)
    return time.perf_counter() - start, done.returncode


def main() -> None:
    wall(["-c", "import tradeoff.trade_study"])  # fills the bytecode caches first
    for module in ("tradeoff.cli", "tradeoff.trade_study"):
        seconds, _ = wall(["-c", f"import {module}"])
        print(f"import {module}: {seconds:.2f} s (process start included)")
    for brief in sorted((ROOT / "examples").glob("*.yaml")):
        seconds, code = wall(["-m", "tradeoff", "study", str(brief.relative_to(ROOT))])
        print(f"tradeoff study {brief.name}: {seconds:.2f} s (exit {code}), {seconds / TARGET_S:.2f} x the "
              f"{TARGET_S} s target")


if __name__ == "__main__":
    main()
