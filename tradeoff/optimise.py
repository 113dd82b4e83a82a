"""Value selection: an integer program over a topology's `SelectionModel`, and its exhaustive twin.

The program picks exactly one row of every block table (binary x[b, i], sum_i x[b, i] = 1).
Every quantity it constrains or weighs is a sum over the chosen rows of a per-row amount plus
the model's fixed amount, so the formulation is linear and exact:

- delay band at the worst corners: combine='sum': sum x·delay_lo >= band_min and
  sum x·delay_hi <= band_max [s]; combine='product': the same on ln(delay_lo), ln(delay_hi)
  against ln(band_min), ln(band_max);
- hard limits when the brief gives them: standby after the timeout (fixed_after_a plus the
  rows' after_a) [A], parts (placements), cost [EUR], rails (the model's rails plus an optional
  `rails` column);
- every `Link` of the model.

Objective: sum over terms of weight · (total − origin) / span, with the brief's weights.
Each linear term is scaled by its range over the candidate tables (origin: the smallest
total the tables allow, span: largest minus smallest; span 1 when all totals are equal), so
every term runs from 0 (best the tables allow) to 1 (worst) and the weights compare like
with like:

| term | total |
| --- | --- |
| `parts` | placements |
| `cost` | indicative cost [EUR] |
| `standby` | 3/4 of the current after the timeout plus 1/4 of the current while timing, each scaled by its own range (the split the ranking uses) [A] |
| `effort` | the model's effort plus an optional `effort` column |
| `rails` | the model's rails plus an optional `rails` column |
| `accuracy` | distance of the nominal delay from the band's geometric centre t_c = sqrt(band_min·band_max) |

Accuracy, combine='product': |ln t_nom − ln t_c| (exact: ln t_nom is the sum of the rows'
ln(delay_nom)), divided by the band's half-width in log space, ln(band_max/band_min)/2.
combine='sum': the relative deviation |t_nom − t_c|/t_c stands in for the log distance (it is
linear in the rows; the two agree to first order and order designs alike on either side of
the centre), divided by sqrt(band_max/band_min) − 1, its value at the band's maximum. Either
way a nominal delay on the band's edge scores 1. The absolute value is exact with one
auxiliary variable a >= ±(deviation)/span.

`SelectionProblem` evaluates objective and requirements for chosen rows with the same array
arithmetic `exhaustive` uses, so both report identical numbers for the same rows. A solution
the solver accepts only within its tolerances is cut off and the program re-solved, so the
program's optimum is exactly the exhaustive one (ties aside).

Before the program is built, rows that cannot meet a requirement whatever the other blocks
choose are removed (bound tightening, exact); the tables themselves are not changed. Then an
incumbent is found by small programs over the rows with the smallest objective bounds, and every
row whose bound exceeds the incumbent's objective is removed too (exact: no better combination
uses it): first a quick bound (the other blocks at their extremes), then a tighter one (each row
against the best row of another block, accuracy included).
"""
from __future__ import annotations

import functools
import math
import os
import sys
import time
import warnings
from dataclasses import dataclass, field
from typing import Callable, Mapping, Sequence

import numpy as np
import pulp

from tradeoff.criteria import WEIGHT_NAMES, share
from tradeoff.errors import SolverError
from tradeoff.selection import SelectionModel
from tradeoff.topologies.base import Design
from tradeoff.units import format_quantity

__all__ = ["SOLVERS", "Scales", "SelectionProblem", "SelectionResult", "exhaustive"]

SOLVERS = ("highs", "cbc")
"""Solver names accepted: HiGHS in-process (default) or CBC as a subprocess."""

_TOLERANCE = 1e-9
"""Relative slack allowed on a requirement and on objective comparisons."""

_GAP_ABS = 1e-9
"""Absolute optimality gap asked of the solver (objective terms are of order 1)."""

_INCUMBENT_ROWS = 64
"""Rows per block, those with the smallest objective bounds, in the small program solved first for an incumbent."""

_CHUNK = 1 << 18
"""Combinations evaluated per vectorised step of exhaustive search."""

_LINEAR_TERMS = {
    # term: ((table column, model attribute holding the fixed amount, share of the term), ...); the
    # shares are the ranking's (criteria.CRITERIA), so optimiser and ranking split a weight alike
    "parts": (("placements", "fixed_placements", share("parts")),),
    "cost": (("cost", "fixed_cost", share("cost_eur")),),
    "standby": (("after_a", "fixed_after_a", share("standby_after_a")),
                ("during_a", "fixed_during_a", share("standby_during_a"))),
    "effort": (("effort", "effort", share("effort")),),
    "rails": (("rails", "rails", share("rails")),),
}


def _seconds(value: float) -> str:
    return format_quantity(value, "s")


def _euros(value: float) -> str:
    return f"{value:.2f} EUR"


def _count(value: float) -> str:
    return format_quantity(round(value, 9), "")


# ---- the tables as arrays ------------------------------------------------------------


def _column(model: SelectionModel, column: str) -> list[np.ndarray]:
    """`column` of every block as float arrays (zeros where an optional column is absent)."""
    return [b.table[column].to_numpy(dtype=float) if column in b.table.columns else np.zeros(len(b.table))
            for b in model.blocks]


def _gather(amounts: Sequence[np.ndarray], idx: Sequence[np.ndarray]) -> np.ndarray:
    """Sum over blocks of each block's amount at the chosen rows (one array of rows per block)."""
    total = np.zeros(np.shape(idx[0]))
    for a, i in zip(amounts, idx):
        total = total + a[i]
    return total


def _extreme(amounts: Sequence[np.ndarray], largest: bool) -> float:
    """Largest (or smallest) sum over blocks the tables allow: each block at its own extreme."""
    pick = np.max if largest else np.min
    return float(sum(pick(a) for a in amounts if a.size))


@dataclass(frozen=True)
class _Requirement:
    """A linear requirement on the chosen rows: constant + sum of per-row amounts (sense) rhs.

    group: requirements that stand or fall together in explanations ('band' for both band rows);
    log: amounts and rhs are natural logarithms (band rows when combine='product');
    template: designer's-terms sentence with {best} and {limit}; fmt shows a value with its unit.
    """

    key: str
    group: str
    label: str
    amounts: tuple[np.ndarray, ...]
    constant: float
    sense: str
    rhs: float
    template: str
    fmt: Callable[[float], str]
    log: bool = False

    def value(self, idx: Sequence[np.ndarray]) -> np.ndarray:
        """The requirement's left-hand side at the chosen rows."""
        return self.constant + _gather(self.amounts, idx)

    @functools.cached_property
    def slack(self) -> float:
        """Tolerance on the requirement: _TOLERANCE times the magnitude of its sides."""
        size = abs(self.constant) + sum(float(np.max(np.abs(a))) for a in self.amounts if a.size)
        return _TOLERANCE * max(abs(self.rhs), size)

    def holds(self, value: np.ndarray | float) -> np.ndarray | bool:
        """True where `value` meets the requirement (within the relative tolerance)."""
        return value <= self.rhs + self.slack if self.sense == "<=" else value >= self.rhs - self.slack

    def best(self) -> float:
        """Best left-hand side the tables allow, ignoring every other requirement."""
        return self.constant + _extreme(self.amounts, largest=self.sense == ">=")

    def show(self, value: float) -> str:
        """`value` as the designer reads it (seconds for log rows)."""
        return self.fmt(math.exp(value) if self.log else value)

    def sentence(self, best: float) -> str:
        """What the tables achieve against this requirement, in the designer's terms."""
        return self.template.format(best=self.show(best), limit=self.show(self.rhs))


@dataclass(frozen=True)
class Scales:
    """Origin and span of every objective term: normalised term = (total − origin) / span.

    Build with `Scales.of(model, band)` (ranges over the candidate tables, see the module
    docstring); pass one explicitly to put several models on a common scale.
    """

    origin: Mapping[str, float]
    span: Mapping[str, float]

    @classmethod
    def of(cls, model: SelectionModel, band: tuple[float, float]) -> "Scales":
        """Scales from the ranges of each term's total over `model`'s tables."""
        origin, span = {}, {}
        for term, parts in _LINEAR_TERMS.items():
            for column, fixed, _share in parts:
                amounts = _column(model, column)
                lo = _extreme(amounts, largest=False)
                hi = _extreme(amounts, largest=True)
                origin[column] = getattr(model, fixed) + lo
                span[column] = hi - lo if hi > lo else 1.0
        lo, hi = band
        origin["accuracy"] = 0.0
        span["accuracy"] = math.log(hi / lo) / 2 if model.combine == "product" else math.sqrt(hi / lo) - 1
        return cls(origin, span)


class _Tables:
    """The model's tables as arrays: requirements and objective, with the one arithmetic that
    the integer program's checks and exhaustive search share."""

    def __init__(self, model: SelectionModel, band: tuple[float, float], limits, weights,
                 scales: Scales | None):
        lo, hi = (float(v) for v in band)
        if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
            raise ValueError(f"delay band must satisfy 0 < min < max [s], got {band!r}")
        if model.combine not in ("sum", "product"):
            raise ValueError(f"combine must be 'sum' or 'product', got {model.combine!r}")
        if not model.blocks:
            raise ValueError(f"selection model of {model.topology!r} has no blocks")
        self.model, self.band = model, (lo, hi)
        self._columns: dict[str, list[np.ndarray]] = {}
        self.product = model.combine == "product"
        self.sizes = [len(b.table) for b in model.blocks]
        self._check_finite()
        self.scales = scales or Scales.of(model, self.band)
        w = {t: float(getattr(weights, t)) for t in WEIGHT_NAMES}
        if any(v < 0 or not math.isfinite(v) for v in w.values()):
            raise ValueError(f"weights must be finite and >= 0, got {w}")
        self.weights = w
        self.delay = {c: self._delay_amounts(c) for c in ("delay_lo", "delay_nom", "delay_hi")}
        self.requirements = self._band(lo, hi) + self._limits(limits) + self._links()
        self._objective_arrays()

    # -- construction
    def column(self, name: str) -> list[np.ndarray]:
        """`name` of every block as float arrays, converted once (zeros where an optional column is absent)."""
        if name not in self._columns:
            self._columns[name] = _column(self.model, name)
        return self._columns[name]

    def _check_finite(self) -> None:
        for b in self.model.blocks:
            for c in (*_DELAYS, *(c for parts in _LINEAR_TERMS.values() for c, _, _ in parts)):
                if c not in b.table.columns:
                    continue
                v = b.table[c].to_numpy(dtype=float)
                bad = ~np.isfinite(v) | ((v <= 0) if (self.product and c in _DELAYS) else False)
                if bad.any():
                    need = "positive finite factors" if self.product and c in _DELAYS else "finite numbers"
                    raise ValueError(f"block {b.name!r} column {c!r}: {int(bad.sum())} rows are not {need}")

    def _delay_amounts(self, column: str) -> tuple[np.ndarray, ...]:
        values = self.column(column)
        return tuple(np.log(v) if self.product else v for v in values)

    def _band(self, lo: float, hi: float) -> list[_Requirement]:
        f = math.log if self.product else float
        common = dict(group="band", label="the delay band", constant=0.0, fmt=_seconds, log=self.product)
        return [
            _Requirement("band_min", amounts=self.delay["delay_lo"], sense=">=", rhs=f(lo),
                         template="even the longest-delay candidates time out too early: the worst-case shortest "
                                  "delay reaches at most {best}; the band's minimum is {limit}", **common),
            _Requirement("band_max", amounts=self.delay["delay_hi"], sense="<=", rhs=f(hi),
                         template="even the shortest-delay candidates time out too late: the worst-case longest "
                                  "delay is at least {best}; the band's maximum is {limit}", **common),
        ]

    def _limits(self, limits) -> list[_Requirement]:
        m = self.model
        table = (
            ("standby", "standby_after_a", "after_a", m.fixed_after_a, "the standby limit",
             "the smallest standby current after the timeout reachable is {best}; the limit is {limit}",
             lambda v: format_quantity(v, "A")),
            ("parts", "parts", "placements", m.fixed_placements, "the part-count limit",
             "the fewest parts reachable is {best}; the limit is {limit}", _count),
            ("cost", "cost", "cost", m.fixed_cost, "the cost limit",
             "the lowest indicative cost reachable is {best}; the limit is {limit}", _euros),
            ("rails", "rails", "rails", m.rails, "the rails limit",
             "the fewest supply rails reachable is {best}; the limit is {limit}", _count),
        )
        out = []
        for key, attribute, column, fixed, label, template, fmt in table:
            limit = getattr(limits, attribute)
            if limit is not None:
                out.append(_Requirement(key, key, label, tuple(self.column(column)), float(fixed), "<=",
                                        float(limit), template, fmt))
        return out

    def _links(self) -> list[_Requirement]:
        out = []
        names = [b.name for b in self.model.blocks]
        for n, link in enumerate(self.model.links):
            amounts = [np.zeros(s) for s in self.sizes]
            for block, column, coefficient in link.terms:
                if block not in names or column not in self.model.block(block).table.columns:
                    raise ValueError(f"link {link.reason!r} names {block}.{column}, which no block table has")
                b = names.index(block)
                amounts[b] = amounts[b] + coefficient * self.model.blocks[b].table[column].to_numpy(dtype=float)
            out.append(_Requirement(
                f"link{n}", f"link{n}", link.reason, tuple(amounts), 0.0, link.sense, float(link.rhs),
                f"{link.reason}: the linked sum reaches at best {{best}}; it must be {link.sense} {{limit}}",
                _count))
        return out

    def _objective_arrays(self) -> None:
        """Per-row weighted, normalised objective coefficients, the constant, and the accuracy pieces."""
        s, w = self.scales, self.weights
        self.linear = [np.zeros(n) for n in self.sizes]
        self.linear_constant = 0.0
        for term, parts in _LINEAR_TERMS.items():
            for column, fixed, share in parts:
                k = w[term] * share / s.span[column]
                for b, a in enumerate(self.column(column)):
                    self.linear[b] = self.linear[b] + k * a
                self.linear_constant += k * (getattr(self.model, fixed) - s.origin[column])
        lo, hi = self.band
        if self.product:
            self.nominal, self.centre = self.delay["delay_nom"], (math.log(lo) + math.log(hi)) / 2
        else:
            t_c = math.sqrt(lo * hi)
            self.nominal, self.centre = tuple(a / t_c for a in self.delay["delay_nom"]), 1.0
        self.accuracy_k = w["accuracy"] / s.span["accuracy"]

    # -- evaluation shared by the program and exhaustive search
    def deviation(self, idx: Sequence[np.ndarray]) -> np.ndarray:
        """Accuracy term before scaling: |ln t_nom − ln t_c| or |t_nom − t_c|/t_c."""
        return np.abs(_gather(self.nominal, idx) - self.centre)

    def objective(self, idx: Sequence[np.ndarray]) -> np.ndarray:
        """Weighted sum of normalised terms at the chosen rows."""
        return self.linear_constant + _gather(self.linear, idx) + self.accuracy_k * self.deviation(idx)

    def feasible(self, idx: Sequence[np.ndarray], requirements: Sequence[_Requirement] | None = None) -> np.ndarray:
        """True where the chosen rows meet every requirement (or those given)."""
        ok = np.ones(np.shape(idx[0]), dtype=bool)
        for r in self.requirements if requirements is None else requirements:
            ok &= r.holds(r.value(idx))
        return ok

    def index(self, rows: Sequence[int]) -> list[np.ndarray]:
        """One-combination index arrays for `rows` (one row number per block)."""
        return [np.array([r]) for r in rows]

    def combined(self, column: str, idx: Sequence[np.ndarray]) -> float:
        """Delay of the chosen rows at one corner [s]: the sum, or the product of the factors."""
        total = float(_gather(self.delay[column], idx)[0])
        return math.exp(total) if self.product else total

    def terms(self, rows: Sequence[int]) -> dict[str, float]:
        """Normalised objective terms (before weights) of the chosen rows."""
        idx, s = self.index(rows), self.scales
        out = {"accuracy": float(self.deviation(idx)[0]) / s.span["accuracy"]}
        for term, parts in _LINEAR_TERMS.items():
            out[term] = sum(share * (getattr(self.model, fixed) + float(_gather(self.column(c), idx)[0])
                                     - s.origin[c]) / s.span[c] for c, fixed, share in parts)
        return out

    def totals(self, rows: Sequence[int]) -> dict[str, float]:
        """Delays at the corners [s] and the summed attributes of the chosen rows (fixed amounts included)."""
        idx, m = self.index(rows), self.model
        fixed = {"cost": m.fixed_cost, "placements": m.fixed_placements, "lines": m.fixed_lines,
                 "during_a": m.fixed_during_a, "after_a": m.fixed_after_a, "effort": m.effort, "rails": m.rails}
        out = {f"{c}_s": self.combined(c, idx) for c in _DELAYS}
        out.update({c: v + float(_gather(self.column(c), idx)[0]) for c, v in fixed.items()})
        return out

    def design(self, rows: Sequence[int]) -> Design:
        """The Design the chosen rows describe (see selection.py for the column convention)."""
        values, options, pairs = {}, {}, {}
        for block, r in zip(self.model.blocks, rows):
            row = block.table.iloc[int(r)]
            for role in block.roles:
                values[role] = float(row[role])
                first, second = f"{role}_first", f"{role}_second"
                if first in row.index and second in row.index and float(row[second]) > 0:
                    pairs[role] = (float(row[first]), float(row[second]))
            for option in block.options:
                v = row[option]
                options[option] = v.item() if isinstance(v, np.generic) else v
        return Design(self.model.topology, values=values, options=options, pairs=pairs)

    def prune(self, requirements: Sequence[_Requirement], rows: Sequence[np.ndarray] | None = None
              ) -> list[np.ndarray]:
        """Rows of each block (among `rows`, default all) that can still meet every requirement
        given the other blocks' extremes.

        Exact: a removed row breaks a requirement whatever the other blocks choose (by more than
        twice the tolerance, so rounding never removes a row exhaustive search would accept).
        """
        keep = [np.arange(n) for n in self.sizes] if rows is None else list(rows)
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

    def lower_bounds(self, keep: Sequence[np.ndarray]) -> list[np.ndarray]:
        """For each kept row, a quick lower bound of the objective of every combination of kept rows using it.

        Linear part: the row's coefficient plus the other blocks' smallest; accuracy: the
        distance from the centre to the interval the nominal delay can still reach.
        """
        lin = [c[k] for c, k in zip(self.linear, keep)]
        nom = [n[k] for n, k in zip(self.nominal, keep)]
        lin_min = sum(float(a.min()) for a in lin)
        n_min, n_max = (sum(float(f(a)) for a in nom) for f in (np.min, np.max))
        out = []
        for a, n in zip(lin, nom):
            lo = n + (n_min - float(n.min()))
            hi = n + (n_max - float(n.max()))
            gap = np.maximum(0.0, np.maximum(lo - self.centre, self.centre - hi))
            out.append(self.linear_constant + a + (lin_min - float(a.min())) + self.accuracy_k * gap)
        return out

    def partner_bounds(self, keep: Sequence[np.ndarray]) -> list[np.ndarray]:
        """For each kept row, a tighter lower bound of the objective of every combination of kept rows using it.

        The row's block against each other block in turn, the rest at their extremes: the row's
        coefficient, the rest's smallest coefficients, and the best the other block's rows reach
        on their coefficient plus the accuracy distance left (the nominal delay the rest can add
        is an interval); the largest of these bounds. Requirements are ignored, so the bound is
        valid whichever rows they allow. With two blocks it is the row's best combination.
        """
        if len(keep) == 1:
            return self.lower_bounds(keep)
        lin = [c[k] for c, k in zip(self.linear, keep)]
        nom = [n[k] for n, k in zip(self.nominal, keep)]
        envelopes = [_Envelope(a, n, self.accuracy_k) for a, n in zip(lin, nom)]
        out = []
        for b in range(len(keep)):
            bound = np.full(len(lin[b]), -np.inf)
            for o in (o for o in range(len(keep)) if o != b):
                rest = [r for r in range(len(keep)) if r not in (b, o)]
                rest_lin = sum(float(lin[r].min()) for r in rest)
                rest_lo, rest_hi = (sum(float(f(nom[r])) for r in rest) for f in (np.min, np.max))
                left = self.centre - nom[b]
                bound = np.maximum(bound, lin[b] + rest_lin + envelopes[o].least(left - rest_hi, left - rest_lo))
            out.append(self.linear_constant + bound)
        return out


_DELAYS = ("delay_lo", "delay_nom", "delay_hi")


class _Envelope:
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


# ---- the PuLP program --------------------------------------------------------------------


@functools.cache
def _silence_highs_banner() -> None:
    """HiGHS prints a banner on C-level stdout at its first instance; send that one to /dev/null."""
    import highspy

    sys.stdout.flush()
    saved = os.dup(1)
    try:
        with open(os.devnull, "w") as null:
            os.dup2(null.fileno(), 1)
            highspy.Highs()
    finally:
        os.dup2(saved, 1)
        os.close(saved)


def _solver(name: str) -> pulp.LpSolver:
    """A silent solver with a tight optimality gap."""
    if name == "highs":
        _silence_highs_banner()
        return pulp.HiGHS(msg=False, gapRel=0.0, gapAbs=_GAP_ABS)
    if name == "cbc":
        with warnings.catch_warnings():  # the CBC bundled with pulp is the one installed; pulp 3.3 flags it
            warnings.simplefilter("ignore", DeprecationWarning)
            return pulp.PULP_CBC_CMD(msg=False, gapRel=0.0, gapAbs=_GAP_ABS)
    raise SolverError(f"unknown solver {name!r}; accepted: {', '.join(map(repr, SOLVERS))}")


class _Program:
    """One PuLP model over the rows of the tables (or of `rows`) that survive pruning by `requirements`."""

    def __init__(self, tables: _Tables, requirements: Sequence[_Requirement], solver: str,
                 rows: Sequence[np.ndarray] | None = None):
        self.tables, self.requirements, self.solver_name = tables, list(requirements), solver
        self.solver = _solver(solver)
        self.keep = tables.prune(self.requirements, rows)
        self.empty = not all(k.size for k in self.keep)
        self.lp = pulp.LpProblem("selection", pulp.LpMinimize)
        self.cuts = 0
        if self.empty:
            return
        self.x = [[self.lp.add_variable(f"x_{b}_{i}", cat=pulp.LpBinary) for i in k] for b, k in enumerate(self.keep)]
        for b, xs in enumerate(self.x):
            self.lp += pulp.LpAffineExpression([(v, 1.0) for v in xs]) == 1, f"one_{b}"
        for r in self.requirements:
            self._require(r)

    def expression(self, amounts: Sequence[np.ndarray], scale: float = 1.0) -> pulp.LpAffineExpression:
        """sum over kept rows of x · amount / scale."""
        return pulp.LpAffineExpression([(v, float(c) / scale) for xs, a, k in zip(self.x, amounts, self.keep)
                                        for v, c in zip(xs, a[k]) if c != 0])

    def _extremes(self, amounts: Sequence[np.ndarray]) -> tuple[float, float]:
        kept = [a[k] for a, k in zip(amounts, self.keep)]
        return _extreme(kept, largest=False), _extreme(kept, largest=True)

    @staticmethod
    def _scale(r: _Requirement) -> float:
        """Row scaling so the solver's absolute tolerances act relatively (logs are left as they are)."""
        return 1.0 if r.log or r.rhs == 0 else abs(r.rhs)

    def _require(self, r: _Requirement) -> None:
        """Add `r` unless the kept rows meet it whatever is chosen."""
        lo, hi = self._extremes(r.amounts)
        if (r.sense == "<=" and r.constant + hi <= r.rhs) or (r.sense == ">=" and r.constant + lo >= r.rhs):
            return
        f = self._scale(r)
        e, rhs = self.expression(r.amounts, f), (r.rhs - r.constant) / f
        self.lp += (e <= rhs) if r.sense == "<=" else (e >= rhs), r.key

    def minimise(self, expression: pulp.LpAffineExpression) -> None:
        """Set the objective."""
        self.lp.setObjective(expression)

    def absolute(self, amounts: Sequence[np.ndarray], centre: float, scale: float, name: str) -> pulp.LpVariable:
        """An auxiliary variable a >= |sum x·amount − centre| / scale (exact when a is minimised)."""
        a = self.lp.add_variable(name, lowBound=0)
        e = self.expression(amounts, scale)
        self.lp += a >= e - centre / scale, f"{name}_above"
        self.lp += a >= centre / scale - e, f"{name}_below"
        return a

    def worst_violation(self, requirements: Sequence[_Requirement]) -> pulp.LpVariable:
        """An auxiliary variable z >= each requirement's violation (relative, or in log units)."""
        z = self.lp.add_variable("violation")
        for r in requirements:
            f = self._scale(r)
            e, rhs = self.expression(r.amounts, f), (r.rhs - r.constant) / f
            self.lp += (z >= e - rhs) if r.sense == "<=" else (z >= rhs - e), f"{r.key}_violation"
        return z

    def cut(self, rows: Sequence[int]) -> None:
        """Exclude this combination of rows (a no-good cut)."""
        self.cuts += 1
        if self.empty:
            return
        chosen = []
        for xs, k, r in zip(self.x, self.keep, rows):
            where = np.flatnonzero(k == r)
            if not where.size:
                return  # a pruned row: the combination is already excluded
            chosen.append((xs[int(where[0])], 1.0))
        self.lp += pulp.LpAffineExpression(chosen) <= len(rows) - 1, f"cut_{self.cuts}"

    def run(self) -> list[int] | None:
        """Rows of an optimal combination meeting every requirement exactly, or None when there is none."""
        if self.empty:
            return None
        while True:
            try:
                self.lp.solve(self.solver)
            except (pulp.PulpSolverError, KeyError) as exc:  # KeyError: a HiGHS status pulp cannot map
                raise SolverError(f"{self.solver_name} failed: {exc!r}; expected 'Optimal' or 'Infeasible'") from None
            status = pulp.LpStatus[self.lp.status]
            if status == "Infeasible":
                return None
            if status != "Optimal" or self.lp.sol_status != pulp.LpSolutionOptimal:
                raise SolverError(f"{self.solver_name} returned status {status!r} "
                                  f"({pulp.LpSolution.get(self.lp.sol_status, self.lp.sol_status)}); "
                                  "expected 'Optimal' or 'Infeasible'")
            rows = [int(k[int(np.argmax([v.varValue or 0.0 for v in xs]))]) for xs, k in zip(self.x, self.keep)]
            if self.tables.feasible(self.tables.index(rows), self.requirements)[0]:
                return rows
            self.cut(rows)  # accepted only within the solver's tolerances


# ---- results -------------------------------------------------------------------------------


@dataclass
class SelectionResult:
    """One outcome of the selection program (or of exhaustive search).

    status: 'Optimal' or 'Infeasible'; objective: weighted sum of normalised terms (None when
    infeasible); rows: block name -> chosen row of its table; design: the Design those rows
    describe; terms: normalised objective terms before weights; totals: corner delays [s] and
    summed attributes (cost [EUR], placements, lines, during_a/after_a [A], effort, rails);
    solve_s: solver wall time [s]; problem: the SelectionProblem (None for exhaustive search);
    reasons: why infeasible, in the designer's terms.
    """

    status: str
    objective: float | None
    rows: dict[str, int] = field(default_factory=dict)
    design: Design | None = None
    terms: dict[str, float] = field(default_factory=dict)
    totals: dict[str, float] = field(default_factory=dict)
    solve_s: float = 0.0
    problem: "SelectionProblem | None" = None
    reasons: list[str] = field(default_factory=list)

    @property
    def feasible(self) -> bool:
        """True when the program found a combination meeting every requirement."""
        return self.status == "Optimal"


def _result(tables: _Tables, rows: Sequence[int], solve_s: float, problem: "SelectionProblem | None"
            ) -> SelectionResult:
    """Result for chosen rows, every number recomputed from the tables."""
    return SelectionResult(
        status="Optimal", objective=float(tables.objective(tables.index(rows))[0]),
        rows={b.name: int(r) for b, r in zip(tables.model.blocks, rows)}, design=tables.design(rows),
        terms=tables.terms(rows), totals=tables.totals(rows), solve_s=solve_s, problem=problem,
    )


class SelectionProblem:
    """The integer program for one SelectionModel, built once; solve, exclude, solve again.

    band: (min, max) delay [s]; limits: object with standby_after_a [A], parts, cost [EUR],
    rails (None where not limited), e.g. `brief.limits`; weights: object with the attributes in
    criteria.WEIGHT_NAMES (>= 0), e.g. `brief.weights`; scales: objective normalisation (default `Scales.of`);
    solver: 'highs' or 'cbc'.
    """

    def __init__(self, model: SelectionModel, band: tuple[float, float], limits, weights,
                 scales: Scales | None = None, solver: str = "highs"):
        start = time.perf_counter()
        self.model = model
        self.tables = _Tables(model, band, limits, weights, scales)
        self.solver = solver
        self.excluded: list[tuple[int, ...]] = []
        self._rows_meeting = self.tables.prune(self.tables.requirements)
        self.bound, kept = self._incumbent()
        self.program = self._build(self._within(kept, self.bound))
        self.build_s = time.perf_counter() - start
        """Time to prune and build the program [s]."""

    def _build(self, rows: Sequence[np.ndarray]) -> _Program:
        """The program over `rows` with the weighted objective and every cut made so far."""
        t = self.tables
        p = _Program(t, t.requirements, self.solver, rows)
        if not p.empty:
            objective = p.expression(t.linear) + t.linear_constant
            if t.accuracy_k > 0:
                objective += t.accuracy_k * p.absolute(t.nominal, t.centre, 1.0, "accuracy")
            p.minimise(objective)
        for rows_cut in self.excluded:
            p.cut(rows_cut)
        return p

    def _incumbent(self) -> tuple[float, list[np.ndarray]]:
        """Objective of a good feasible combination not yet excluded (inf when the tables are small
        enough or none is found), and the rows that can still be in a combination no worse.

        Small programs over the rows with the smallest objective bounds (the quick bounds while the
        tables are whole, the partner bounds once pruned); after a combination is found, the rows
        its objective bounds out are dropped and the next program tried. The row count grows
        fourfold whenever a program finds nothing better, until it takes every row left.
        """
        rows, bound, count = self._rows_meeting, math.inf, _INCUMBENT_ROWS
        if not all(k.size for k in rows) or max(k.size for k in rows) <= count:
            return bound, rows
        while all(k.size for k in rows):
            # The quick bounds until an incumbent has pruned the tables, the tighter ones then.
            bounds = (self.tables.lower_bounds if math.isinf(bound) else self.tables.partner_bounds)(rows)
            best = [k[np.sort(np.argpartition(b, count)[:count])] if b.size > count else k
                    for k, b in zip(rows, bounds)]
            found = self._build(best).run()
            objective = math.inf if found is None else self.objective_of(found)
            if all(k.size <= count for k in rows):
                return min(bound, objective), rows
            if objective < bound:
                bound = objective
                rows = self._within(rows, bound)
            else:
                count *= 4
        return bound, rows

    def _within(self, rows: Sequence[np.ndarray], bound: float) -> list[np.ndarray]:
        """Rows whose objective bound does not exceed `bound` (exact: no combination within it uses
        the others), alternating with requirement pruning until no bound removes a row (the quick
        bounds first, the tighter partner bounds when those remove nothing more)."""
        tables = self.tables
        while not math.isinf(bound) and all(k.size for k in rows):
            within = rows
            for bounds in (tables.lower_bounds, tables.partner_bounds):
                within = [k[b <= bound + self._slack(bound)] for k, b in zip(rows, bounds(rows))]
                within = tables.prune(tables.requirements, within)
                if sum(map(len, within)) < sum(map(len, rows)):
                    break
            if sum(map(len, within)) == sum(map(len, rows)):
                break
            rows = within
        return rows

    @staticmethod
    def _slack(bound: float) -> float:
        """Tolerance on objective comparisons against `bound`."""
        return _TOLERANCE * max(1.0, abs(bound))

    @property
    def scales(self) -> Scales:
        """The objective's normalisation."""
        return self.tables.scales

    def objective_of(self, rows: Mapping[str, int] | Sequence[int]) -> float:
        """Objective of a combination of rows (block name -> row, or one row per block in order)."""
        return float(self.tables.objective(self.tables.index(self._rows(rows)))[0])

    def feasible(self, rows: Mapping[str, int] | Sequence[int]) -> bool:
        """True when the combination meets every requirement."""
        return bool(self.tables.feasible(self.tables.index(self._rows(rows)))[0])

    def _rows(self, rows: Mapping[str, int] | Sequence[int]) -> list[int]:
        if isinstance(rows, Mapping):
            return [int(rows[b.name]) for b in self.model.blocks]
        return [int(r) for r in rows]

    def exclude(self, rows: Mapping[str, int] | Sequence[int]) -> None:
        """Exclude a combination from later solves (no-good cut)."""
        rows = self._rows(rows)
        self.excluded.append(tuple(rows))
        self.program.cut(rows)

    def solve(self) -> SelectionResult:
        """The best combination not yet excluded; status 'Infeasible' with reasons when there is none."""
        start = time.perf_counter()
        rows = self.program.run()
        beyond = rows is None or self.objective_of(rows) > self.bound + self._slack(self.bound)
        if not math.isinf(self.bound) and beyond:
            # The best left lies beyond the incumbent's bound (earlier designs were excluded): a new
            # incumbent among the combinations left, and the rows within its bound.
            self.bound, kept = self._incumbent()
            self.program = self._build(self._within(kept, self.bound))
            rows = self.program.run()
        elapsed = time.perf_counter() - start
        if rows is not None:
            return _result(self.tables, rows, elapsed, self)
        if self.excluded:
            reasons = [f"no combination of the candidate tables is left after excluding {len(self.excluded)} "
                       "earlier designs"]
        else:
            reasons = self.explain()
        return SelectionResult(status="Infeasible", objective=None, solve_s=elapsed, problem=self, reasons=reasons)

    def best(self, k: int) -> list[SelectionResult]:
        """The k best distinct combinations, best first (fewer when the tables hold fewer feasible ones)."""
        out = []
        while len(out) < k:
            result = self.solve()
            if not result.feasible:
                break
            out.append(result)
            self.exclude(result.rows)
        return out

    # -- infeasibility in the designer's terms
    def explain(self) -> list[str]:
        """Why no combination meets the requirements, with numbers; empty when one does."""
        t = self.tables
        reasons = [f"no candidate is left for {b.name}" for b in self.model.blocks if b.table.empty]
        if not reasons:
            reasons = [r.sentence(r.best()) for r in t.requirements if not r.holds(r.best())]
        if not reasons:
            reasons = self._band_reasons()
        if not reasons and _Program(t, t.requirements, self.solver).run() is None:
            reasons = self._conflict()
        return reasons + self._dropped()

    def _dropped(self) -> list[str]:
        out = []
        for b in self.model.blocks:
            if b.dropped:
                counts = "; ".join(f"{n}: {why}" for why, n in b.dropped.items())
                out.append(f"{b.name}: the topology's own rules removed {sum(b.dropped.values())} candidates ({counts})")
        return out

    def _band(self) -> list[_Requirement]:
        return [r for r in self.tables.requirements if r.group == "band"]

    def _band_reasons(self) -> list[str]:
        """The band alone: tolerance spread against the band's ratio, or the closest standard values come."""
        t = self.tables
        lo, hi = t.band
        ratio = self._smallest_spread()
        if ratio > (hi / lo) * (1 + _TOLERANCE):
            return [f"the tolerances alone spread the delay by ×{ratio:.3g} between the worst-case corners; "
                    f"the band {_seconds(lo)} to {_seconds(hi)} allows ×{hi / lo:.3g}"]
        if _Program(t, self._band(), self.solver).run() is not None:
            return []
        return [self._closest(others=[], prefix="no combination of standard values puts both worst-case delays "
                                               "inside the band")]

    def _smallest_spread(self) -> float:
        """Smallest ratio of worst-case longest to shortest delay any combination reaches."""
        t = self.tables
        lo, hi = t.delay["delay_lo"], t.delay["delay_hi"]
        if t.product:
            return math.exp(sum(float(np.min(h - l)) for l, h in zip(lo, hi)))
        # Dinkelbach's method for min sum(hi)/sum(lo): each step minimises sum(hi − λ·lo), separable by block.
        rows = [int(np.argmin(h / l)) for l, h in zip(lo, hi)]
        ratio = math.inf
        while True:
            new = sum(h[r] for h, r in zip(hi, rows)) / sum(l[r] for l, r in zip(lo, rows))
            if new >= ratio * (1 - 1e-15):
                return ratio
            ratio = new
            rows = [int(np.argmin(h - ratio * l)) for l, h in zip(lo, hi)]

    def _closest(self, others: Sequence[_Requirement], prefix: str) -> str:
        """How close the worst-case delays come to the band while `others` hold."""
        t = self.tables
        program = _Program(t, others, self.solver)
        if not program.empty:
            program.minimise(pulp.LpAffineExpression(program.worst_violation(self._band())))
        rows = program.run()
        lo, hi = t.band
        if rows is None:
            return f"{prefix} (the other requirements leave no candidate)"
        idx = t.index(rows)
        return (f"{prefix}: the closest is {_seconds(t.combined('delay_lo', idx))} to "
                f"{_seconds(t.combined('delay_hi', idx))} at the worst-case corners against the band "
                f"{_seconds(lo)} to {_seconds(hi)}")

    def _conflict(self) -> list[str]:
        """A smallest set of requirement groups that cannot hold together, each with the best it reaches."""
        groups: dict[str, list[_Requirement]] = {}
        for r in self.tables.requirements:
            groups.setdefault(r.group, []).append(r)
        order = [g for g in groups if g != "band"] + (["band"] if "band" in groups else [])
        conflict = list(order)
        for g in order:
            trial = [h for h in conflict if h != g]
            if _Program(self.tables, [r for h in trial for r in groups[h]], self.solver).run() is None:
                conflict = trial
        names = {g: groups[g][0].label for g in conflict}
        out = [f"these requirements cannot all be met together: {', '.join(names.values())}"]
        for g in conflict:
            others = [r for h in conflict if h != g for r in groups[h]]
            with_text = "with " + " and ".join(names[h] for h in conflict if h != g) + " met"
            if g == "band":
                out.append(self._closest(others, f"{with_text}, the worst-case delays miss the band"))
                continue
            for r in groups[g]:
                out.append(f"{with_text}, {self._best_under(r, others)}")
        return out

    def _best_under(self, r: _Requirement, others: Sequence[_Requirement]) -> str:
        """The best `r` reaches while `others` hold, as a sentence."""
        program = _Program(self.tables, others, self.solver)
        if not program.empty:
            e = program.expression(r.amounts)
            program.minimise(e if r.sense == "<=" else -e)
        rows = program.run()
        if rows is None:
            return f"no candidate is left for {r.label}"
        return r.sentence(float(r.value(self.tables.index(rows))[0]))


# ---- exhaustive search ---------------------------------------------------------------------


def exhaustive(model: SelectionModel, band: tuple[float, float], limits, weights, scales: Scales | None = None,
               k: int = 1, max_combinations: int = 10**9) -> list[SelectionResult]:
    """The k best feasible combinations by brute force over every combination of block rows.

    Same requirements, objective and arithmetic as SelectionProblem; ties are ordered by row
    numbers. Empty when no combination is feasible. For tests and benchmarks.
    """
    start = time.perf_counter()
    tables = _Tables(model, band, limits, weights, scales)
    total = math.prod(tables.sizes)
    if total > max_combinations:
        raise ValueError(f"{total} combinations exceed max_combinations={max_combinations}")
    best_obj, best_flat = np.empty(0), np.empty(0, dtype=np.int64)
    for first in range(0, total, _CHUNK):
        flat = np.arange(first, min(total, first + _CHUNK), dtype=np.int64)
        idx = np.unravel_index(flat, tables.sizes)
        ok = tables.feasible(idx)
        obj = np.concatenate([best_obj, tables.objective([i[ok] for i in idx])])
        flat = np.concatenate([best_flat, flat[ok]])
        order = np.lexsort((flat, obj))[:k]
        best_obj, best_flat = obj[order], flat[order]
    elapsed = time.perf_counter() - start
    combos = np.stack(np.unravel_index(best_flat, tables.sizes), axis=-1) if best_flat.size else []
    return [_result(tables, [int(r) for r in rows], elapsed, None) for rows in combos]
