"""Row pruning and objective bounds over a selection problem's tables, all exact: a row is
removed only when no combination meeting the requirements (or no combination better than a
known objective) can use it.
"""
from __future__ import annotations

from typing import Sequence

import numpy as np

from tradeoff.optimise.formulation import Requirement, Tables

__all__ = ["prune", "lower_bounds", "partner_bounds", "Envelope"]


def prune(tables: Tables, requirements: Sequence[Requirement], rows: Sequence[np.ndarray] | None = None
          ) -> list[np.ndarray]:
    """Rows of each block (among `rows`, default all) that can still meet every requirement
    given the other blocks' extremes.

    Exact: a removed row breaks a requirement whatever the other blocks choose (by more than
    twice the tolerance, so rounding never removes a row exhaustive search would accept).
    """
    keep = [np.arange(n) for n in tables.sizes] if rows is None else list(rows)
    changed = True
    while changed and all(k.size for k in keep):
        changed = False
        for r in requirements:
            largest = r.sense == ">="
            kept = [a[k] for a, k in zip(r.amounts, keep)]
            ends = [float(a.max() if largest else a.min()) for a in kept]
            total = r.constant + sum(ends)
            slack = 2 * r.slack
            for b, a in enumerate(kept):
                rest = total - ends[b]
                ok = a + rest >= r.rhs - slack if largest else a + rest <= r.rhs + slack
                if not ok.all():
                    keep[b], changed = keep[b][ok], True
                    if not keep[b].size:
                        return keep
    return keep

def lower_bounds(tables: Tables, keep: Sequence[np.ndarray]) -> list[np.ndarray]:
    """For each kept row, a quick lower bound of the objective of every combination of kept rows using it.

    Linear part: the row's coefficient plus the other blocks' smallest; accuracy: the
    distance from the centre to the interval the nominal delay can still reach.
    """
    lin = [c[k] for c, k in zip(tables.linear, keep)]
    nom = [n[k] for n, k in zip(tables.nominal, keep)]
    lin_min = sum(float(a.min()) for a in lin)
    n_min, n_max = (sum(float(f(a)) for a in nom) for f in (np.min, np.max))
    out = []
    for a, n in zip(lin, nom):
        lo = n + (n_min - float(n.min()))
        hi = n + (n_max - float(n.max()))
        gap = np.maximum(0.0, np.maximum(lo - tables.centre, tables.centre - hi))
        out.append(tables.linear_constant + a + (lin_min - float(a.min())) + tables.accuracy_k * gap)
    return out

def partner_bounds(tables: Tables, keep: Sequence[np.ndarray]) -> list[np.ndarray]:
    """For each kept row, a tighter lower bound of the objective of every combination of kept rows using it.

    The row's block against each other block in turn, the rest at their extremes: the row's
    coefficient, the rest's smallest coefficients, and the best the other block's rows reach
    on their coefficient plus the accuracy distance left (the nominal delay the rest can add
    is an interval); the largest of these bounds. Requirements are ignored, so the bound is
    valid whichever rows they allow. With two blocks it is the row's best combination.
    """
    if len(keep) == 1:
        return lower_bounds(tables, keep)
    lin = [c[k] for c, k in zip(tables.linear, keep)]
    nom = [n[k] for n, k in zip(tables.nominal, keep)]
    envelopes = [Envelope(a, n, tables.accuracy_k) for a, n in zip(lin, nom)]
    out = []
    for b in range(len(keep)):
        bound = np.full(len(lin[b]), -np.inf)
        for o in (o for o in range(len(keep)) if o != b):
            rest = [r for r in range(len(keep)) if r not in (b, o)]
            rest_lin = sum(float(lin[r].min()) for r in rest)
            rest_lo, rest_hi = (sum(float(f(nom[r])) for r in rest) for f in (np.min, np.max))
            left = tables.centre - nom[b]
            bound = np.maximum(bound, lin[b] + rest_lin + envelopes[o].least(left - rest_hi, left - rest_lo))
        out.append(tables.linear_constant + bound)
    return out


class Envelope:
    """min over rows j of lin[j] + k·dist(nom[j], [lo, hi]) for many intervals [lo, hi] at once.

    Rows sorted by nom: rows below the interval by a prefix minimum of lin − k·nom, rows above
    by a suffix minimum of lin + k·nom, rows inside by a range minimum of lin (a sparse table,
    its levels built as far as the widest interval needs).
    """

    def __init__(self, lin: np.ndarray, nom: np.ndarray, k: float):
        order = np.argsort(nom, kind="stable")
        self.nom, self.k = nom[order], k
        lin = lin[order]
        self.below = np.minimum.accumulate(lin - k * self.nom)
        self.above = np.minimum.accumulate((lin + k * self.nom)[::-1])[::-1]
        self.levels = [lin]

    def _level(self, n: int) -> np.ndarray:
        """Minimum of lin over the 2**n rows starting at each row."""
        while len(self.levels) <= n:
            prev, width = self.levels[-1], 1 << (len(self.levels) - 1)
            self.levels.append(np.minimum(prev[:-width], prev[width:]))
        return self.levels[n]

    def least(self, lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
        """The minimum for each interval [lo[i], hi[i]] (lo <= hi)."""
        first = np.searchsorted(self.nom, lo, side="left")
        end = np.searchsorted(self.nom, hi, side="right")
        out = np.full(len(lo), np.inf)
        has = first > 0
        out[has] = self.below[first[has] - 1] + self.k * lo[has]
        has = end < len(self.nom)
        out[has] = np.minimum(out[has], self.above[end[has]] - self.k * hi[has])
        inside = np.flatnonzero(end > first)
        level = np.floor(np.log2(end[inside] - first[inside])).astype(int)
        for n in np.unique(level):
            at = inside[level == n]
            table = self._level(n)
            out[at] = np.minimum(out[at], np.minimum(table[first[at]], table[end[at] - (1 << n)]))
        return out
