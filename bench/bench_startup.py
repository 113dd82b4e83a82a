"""Start-up cost as a user sees it: every shipped example brief studied end to end in a new process.

Run: `PYTHONPATH=. python bench/bench_startup.py [REPEATS] [--before REV]`. Prints, measured in this one
run, the import time of the command shell (`import tradeoff.cli`) and of the study (`import
tradeoff.trade_study`), then for each examples/*.yaml the wall time of `python -m tradeoff study BRIEF`
(imports, selection, verification, default Monte Carlo and report included), the median of REPEATS runs
(default 3) with their spread, the processor time (user + system) of the median run, and the wall and
processor times' ratio to the 1.5 s target. With `--before REV` the same figures are measured first on
the git revision REV (checked out in a temporary worktree, removed afterwards) and printed as
before -> after. On a shared machine the processor time is the steadier figure: the wall time also
counts the time the process waited for a core.
"""
from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
TARGET_S = 1.5
"""End-to-end time aimed at for one shipped example [s]."""


def environment(root: Path) -> dict[str, str]:
    """The environment of every run of the tree at `root`: bytecode is written and read as on a user's machine
    (an environment that forbids writing it would have every run compile the package's modules again, some
    0.2 s here)."""
    return {**{k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}, "PYTHONPATH": str(root)}


def run(root: Path, args: list[str]) -> tuple[float, float, int]:
    """Wall time [s], processor time (user + system) [s] and exit code of `python ARGS` in a new process in
    the tree at `root`, output discarded."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run([sys.executable, *args], cwd=root, env=environment(root), stdout=subprocess.DEVNULL,
                          stderr=subprocess.DEVNULL)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu, done.returncode


def median_run(root: Path, args: list[str], repeats: int) -> tuple[float, float, float, float, int]:
    """Median wall time [s], fastest and slowest wall time [s], processor time of the median run [s] and
    the exit code, over `repeats` runs of `python ARGS`."""
    runs = sorted(run(root, args) for _ in range(repeats))
    wall, cpu, code = runs[len(runs) // 2]
    return wall, runs[0][0], runs[-1][0], cpu, code


def commands() -> list[tuple[str, list[str]]]:
    """(label, python arguments) of every measurement: the two imports, then each shipped example's study."""
    out = [(f"import {m}", ["-c", f"import {m}"]) for m in ("tradeoff.cli", "tradeoff.trade_study")]
    out += [(f"tradeoff study {brief.name}", ["-m", "tradeoff", "study", str(brief.relative_to(ROOT))])
            for brief in sorted((ROOT / "examples").glob("*.yaml"))]
    return out


def measure(root: Path, repeats: int) -> dict[str, tuple[float, float, float, float, int]]:
    """Every measurement of `commands` on the tree at `root`, after one run that writes its bytecode and the
    pint cache."""
    run(root, ["-c", "import tradeoff.trade_study, tradeoff.cli, tradeoff.report.study_text; "
                     "tradeoff.units.parse_quantity('1 s', 's')"])
    return {label: median_run(root, args, repeats) for label, args in commands()}


def revision_tree(rev: str, folder: Path) -> str:
    """Check out `rev` in a detached worktree at `folder`; returns its short id and commit date."""
    subprocess.run(["git", "-C", str(ROOT), "worktree", "add", "--detach", "--quiet", str(folder), rev], check=True)
    return subprocess.run(["git", "-C", str(folder), "log", "-1", "--format=%h of %cd", "--date=format:%Y-%m-%d %H:%M"],
                          capture_output=True, text=True, check=True).stdout.strip()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("repeats", nargs="?", type=int, default=3, help="runs of each command (median shown)")
    parser.add_argument("--before", metavar="REV", help="git revision measured first, shown as before -> after")
    options = parser.parse_args()
    before = None
    if options.before:
        with tempfile.TemporaryDirectory(prefix="bench-startup-") as tmp:
            folder = Path(tmp) / "before"
            name = revision_tree(options.before, folder)
            try:
                before = measure(folder, options.repeats)
            finally:
                subprocess.run(["git", "-C", str(ROOT), "worktree", "remove", "--force", str(folder)], check=True)
        print(f"before: {options.before} ({name}); after: this tree")
    after = measure(ROOT, options.repeats)
    print(f"median of {options.repeats} runs each; cpu = user + system time of the median run; process start "
          f"included; ratios to the {TARGET_S} s target")
    for label, (wall, lo, hi, cpu, code) in after.items():
        was = ""
        if before is not None:
            b_wall, _, _, b_cpu, _ = before[label]
            was = f"  (before: {b_wall:.2f} s wall, {b_cpu:.2f} s cpu)"
        status = f", exit {code}" if label.startswith("tradeoff study") else ""
        print(f"{label}: {wall:.2f} s wall ({lo:.2f} to {hi:.2f}) = {wall / TARGET_S:.2f} x, "
              f"{cpu:.2f} s cpu = {cpu / TARGET_S:.2f} x{status}{was}")
    if before is not None:
        studies = [k for k in after if k.startswith("tradeoff study")]
        print("all studies, cpu: " + " -> ".join(f"{statistics.fmean(m[k][3] for k in studies):.2f} s mean"
                                                for m in (before, after)))


if __name__ == "__main__":
    main()
