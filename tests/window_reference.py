"""Reference for the windowed candidate evaluation: a linear scan in place of bisection.

`full_scan` stands in for tradeoff.candidates.leading_below: it evaluates every row of every
group, fails when a value decreases along a group (the monotonicity bisection relies on), and
counts the rows below the threshold. A topology's table built with it equals the dense
evaluation of every candidate combination.
"""
from __future__ import annotations

import numpy as np


def full_scan(evaluate, sizes, threshold, inclusive=False, probes=1, last_first=False, edges=False):
    """How many rows of each group lie below `threshold`, evaluating all of them (`probes`, `last_first` ignored);
    `edges`: also the values at the last row below and the first not below (NaN where there is none)."""
    counts, before, after = [], [], []
    for g, n in enumerate(np.asarray(sizes)):
        values = np.asarray(evaluate(np.full(int(n), g), np.arange(int(n))), dtype=float)
        finite = np.where(np.isnan(values), np.inf, values)
        rising = (finite[1:] >= finite[:-1]) | np.isclose(finite[1:], finite[:-1], rtol=1e-9, atol=0.0)
        assert rising.all(), f"group {g}: values decrease"
        count = int(np.sum(values <= threshold if inclusive else values < threshold))
        counts.append(count)
        before.append(values[count - 1] if count > 0 else np.nan)
        after.append(values[count] if count < n else np.nan)
    counts = np.array(counts, dtype=np.int64)
    return (counts, np.array(before, dtype=float), np.array(after, dtype=float)) if edges else counts
