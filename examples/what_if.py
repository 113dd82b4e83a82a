"""What-if runs from Python: vary the bathroom fan run-on brief in code, study it, then sweep it.

Run from the repository root: `python examples/what_if.py` (about a minute on two cores).
"""
from pathlib import Path

import pandas as pd

import tradeoff

FAST = ["mcu", "rc-counter", "crystal-counter"]  # a few quick topologies keep the demo short


def main() -> None:
    brief = tradeoff.load_brief(Path(__file__).with_name("fan_run_on.yaml"))
    # a 30 min run-on within ±10 % instead of 10 to 20 min (None removes the brief's min and max)
    changed = brief.replace({"delay.nominal": "30 min", "delay.min": None, "delay.max": None,
                             "delay.tolerance": "10 %"})
    result = tradeoff.study(changed, only=FAST, samples=2000)
    pd.set_option("display.width", 160)
    print(result.to_frame()[["design", "rank", "delay_worst_min_s", "delay_worst_max_s", "cost_eur", "score"]])

    grid = tradeoff.sweep(changed, {"delay.nominal": ["30 min", "2 h"], "weights.effort": [0, 3]},
                          only=FAST, samples=1000, jobs=2)
    print(grid.to_frame()[["delay_nominal_s", "weights_effort", "winner", "winner_score", "runner_up"]])


if __name__ == "__main__":  # worker processes import this file; only the parent runs the demo
    main()
