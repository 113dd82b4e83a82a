"""End-to-end command times, as a user sees them (a fresh process, imports included).

Run: `PYTHONPATH=. python bench/bench_cli.py`. Times `tradeoff --help` (target 0.3 s) and
`tradeoff study BRIEF --samples 20000` on every example brief (target 5 s), each as a new
Python process, and prints each time with its ratio to the target, measured in this one run.
"""
from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ENV = {**os.environ, "PYTHONPATH": str(ROOT)}


def timed(args: list[str]) -> tuple[float, int]:
    """Wall time [s] and exit code of `python -m tradeoff ARGS` in a new process."""
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "tradeoff", *args], cwd=ROOT, env=ENV,
                          stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - start, done.returncode


def main() -> None:
    timed(["--help"])  # first run fills caches (bytecode, pint definitions)
    best = min(timed(["--help"])[0] for _ in range(3))
    print(f"tradeoff --help: {best:.3f} s (best of 3), {best / 0.3:.2f} x the 0.3 s target")
    for brief in sorted((ROOT / "examples").glob("*.yaml")):
        seconds, code = timed(["study", str(brief.relative_to(ROOT)), "--samples", "20000"])
        print(f"tradeoff study {brief.name}: {seconds:.2f} s (exit {code}), {seconds / 5:.2f} x the 5 s target")


if __name__ == "__main__":
    main()
