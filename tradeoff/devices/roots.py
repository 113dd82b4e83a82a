"""Root finding shared by the device laws: bisection on arrays, a fixed number of steps so that every
element takes the same path (vectorised, deterministic, no tolerance to tune)."""
from __future__ import annotations

import numpy as np

__all__ = ["bisect_arrays"]


def bisect_arrays(rises, lo, hi, steps: int, geometric: bool = False):
    """Bisection where the boolean array rises(mid) says the root lies below mid (arrays or scalars).

    Returns the bracket (lo, hi) after `steps` halvings, of the arithmetic or (`geometric`, for positive
    brackets spanning decades) the geometric mean; the bracket's width falls by 2**steps."""
    for _ in range(steps):
        mid = np.sqrt(lo * hi) if geometric else 0.5 * (lo + hi)
        below = rises(mid)
        lo, hi = np.where(below, lo, mid), np.where(below, mid, hi)
    return lo, hi
