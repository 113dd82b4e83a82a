"""The corner shortcut of the optimiser tables, written once: from the sign of d(delay)/d(quantity) each
topology declares, the corners that hold the shortest and the longest delay, so a table evaluates a few
corners per candidate instead of every one, and the closed forms of a delay that is a product of positive
factors (`product_ends`). `tests/test_table_directions.py` checks every topology's
tables against an exhaustive search over all corners.
"""
from __future__ import annotations

import functools
import itertools
import operator
from typing import Iterable, Mapping

import numpy as np

from tradeoff.analysis import Uncertain

__all__ = ["extreme_corners", "corner_sets", "corner_values", "corner_arrays", "role_end", "product_ends"]


def extreme_corners(q: Mapping[str, Uncertain], directions: Mapping[str, float], sign: int,
                    names: Iterable[str] | None = None) -> list[dict[str, str]]:
    """Corners (name -> 'lo' | 'hi') among which the delay is smallest (sign -1) or largest (sign +1).

    A quantity whose direction d is positive sits at 'hi' where sign·d > 0 and at 'lo' otherwise;
    direction 0 (or none declared) means it can go either way, so both ends are tried (every
    combination of such quantities is one corner). Quantities without spread, and all of them for
    sign 0, are left out: they stay nominal. `names` (default: all of `q`) limits the quantities.
    """
    fixed, either = {}, []
    for n in q if names is None else names:
        if not sign or not q[n].spreads:
            continue
        d = directions.get(n, 0)
        if d == 0:
            either.append(n)
        else:
            fixed[n] = "hi" if sign * d > 0 else "lo"
    return [{**fixed, **dict(zip(either, ends))} for ends in itertools.product(("lo", "hi"), repeat=len(either))]


def corner_sets(directions: Mapping[str, float], q: Mapping[str, Uncertain],
                names: Iterable[str]) -> tuple[list[dict[str, str]], list[dict[str, str]]]:
    """(corners of the smallest delay, corners of the largest) under `directions` (`extreme_corners`)."""
    names = list(names)
    return extreme_corners(q, directions, -1, names), extreme_corners(q, directions, 1, names)


def corner_values(q: Mapping[str, Uncertain], corner: Mapping[str, str]) -> dict[str, float]:
    """Every quantity of `q` at the end `corner` names for it ('lo' | 'hi'), else at its nominal value."""
    return {n: {"lo": u.lo, "hi": u.hi}[corner[n]] if n in corner else u.nominal for n, u in q.items()}


def corner_arrays(q: Mapping[str, Uncertain], corner: Mapping[str, str], size: int) -> dict[str, np.ndarray]:
    """`corner_values` as arrays of `size` equal entries, for a delay model vectorised over candidates."""
    return {n: np.full(size, v) for n, v in corner_values(q, corner).items()}


def role_end(value, spread_frac, direction: float, sign: int) -> np.ndarray:
    """Candidate values [ohm or F] at the end of their band value·(1 ± spread_frac) that moves the delay in
    `sign`'s direction (-1 shortest, +1 longest), for a value whose d(delay)/d(value) has the sign of `direction`."""
    return np.asarray(value, dtype=float) * (1 + sign * np.sign(direction) * np.asarray(spread_frac, dtype=float))


def product_ends(factors: Iterable[tuple]) -> tuple[np.ndarray, np.ndarray]:
    """(smallest, largest) of a product of positive factors of separate quantities, each given as its
    (smallest, largest): the product rises with every factor, so its ends are the products of theirs."""
    los, his = zip(*factors)
    return functools.reduce(operator.mul, los), functools.reduce(operator.mul, his)
