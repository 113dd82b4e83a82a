"""Ranking of feasible designs across topologies: weighted sum or TOPSIS, Pareto flags,
weight sensitivity and a one-line reason per design.

Criteria (`tradeoff.criteria.CRITERIA`, one column each in the criteria table, one row per
design): the worst-case delay spread, the margin inside the band at its nearer edge and the
Monte Carlo yield share the accuracy weight (1/2, 1/4, 1/4); standby after and during the
timeout share the standby weight (3/4, 1/4); rails, parts, cost and effort take their own
weights whole. Every column is a headline figure of the design.

Yield is a criterion of its own sharing the accuracy weight: the worst-case spread says how
tight the delay is by guarantee, the yield how often a built unit lands in the band (for
designs proven at every corner it is usually 1 for all, a column that then decides nothing). The
standby weight goes 3/4 to the current after the timeout, which flows for as long as the
product sits switched off, and 1/4 to the current while timing, which flows for the delay
only. Criterion weight = brief weight x share / sum of brief weights, so the nine sum to 1.

Methods (scores in [0, 1], higher is better, rank 1 is best):
- `'wsm'` (default), weighted sum of min-max normalised criteria: each column is mapped so
  the best design gets 1 and the worst 0 (lower-better columns inverted); a column where all
  designs are equal gives every design 1. Equals pymcdm's `WSM` with `minmax_normalization`.
- `'topsis'`, classical TOPSIS (Hwang and Yoon 1981) with vector normalisation x / ||x||:
  score = D- / (D+ + D-), distances to the anti-ideal and the ideal of the weighted matrix.
  An all-zero column (e.g. no design draws current after the timeout) counts as equal for
  all; when every design coincides on every weighted criterion, each is the ideal: score 1.

Ties: scores equal to 12 decimals are ordered by the margin inside the band (wider first), then
by design name, then by input position.

Pareto flags use every criterion, whatever its weight (yield sign-flipped so all are
lower-better): a design is Pareto-optimal when no other design is at least as good on every
criterion and strictly better on one. Identical designs do not dominate each other, so
duplicates of an optimal design are all flagged (paretoset's `distinct=False`).

Weight sensitivity, for each brief weight alone, the others fixed: the weight is moved up
to 10 times its value and down to 0 (a zero weight is moved up to 10 times the largest brief
weight), and the first value at which another design becomes top is reported in each
direction, as the new brief weight (an absolute value; the factor new / current is given
too). The nearest crossing is the one with the smaller absolute change. Renormalising the
weights scales every score alike (weighted sum) or both distances alike (TOPSIS), so only
the brief weights' ratios matter: with one weight above 0, moving it changes nothing. The
weighted sum is linear in each brief weight, so its crossings are solved exactly; TOPSIS
crossings are found on a grid of about 190 points per direction (denser near the current
value) and refined by repeated subdivision of the bracket, so a top change that reverts
between two grid points is missed.

Reasons, the same whichever method ranks, count only weighted criteria on which the designs
differ: "wins on" lists where the design is best (sole bests first, by weighted lead over the
runner-up, at most three; a shared best says so), "loses on" where it is worst (at most two);
failing those, where it is strongest and where it gives up most (weight x min-max shortfall).
For an Evaluation, "binds" names the edge of the delay band with the smaller margin (in % of the band),
the worst-case delay there and the ambient and supply of that corner.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal, Mapping, Sequence

import numpy as np
import pandas as pd

from tradeoff.criteria import CRITERIA, WEIGHT_NAMES, headline
from tradeoff.errors import RankingError
from tradeoff.units import format_quantity

if TYPE_CHECKING:  # pragma: no cover - typing only
    from tradeoff.topologies.base import Evaluation

__all__ = [
    "METHODS", "Crossing", "Sensitivity", "Ranking",
    "design_names", "criteria_table", "criterion_weights", "normalise", "scores", "order",
    "pareto_flags", "rank",
]

METHODS = ("wsm", "topsis")
"""Ranking methods: weighted sum (min-max normalised) and classical TOPSIS (vector normalised)."""

SEARCH_FACTOR = 10.0
"""Weight sensitivity looks for a crossing between 0 and this many times the current weight."""

TIE_DECIMALS = 12
"""Scores equal to this many decimals are a tie, broken by design name then input position."""

_GRID = np.unique(np.concatenate([np.geomspace(1e-4, 1.0, 64), np.linspace(0.0, 1.0, 129)[1:]]))
"""Fractions of the search range tried by the TOPSIS crossing search (denser near the current weight)."""

_STEPS = np.linspace(0.0, 1.0, 34)[1:]
"""Fractions of the bracket tried in each refinement round of the TOPSIS crossing search (33 points)."""

_REFINEMENTS = 6
"""Refinement rounds: the bracket shrinks 33**6 (about 1.3e9) fold; finer would reach the band of
about 1e-12 in score where `TIE_DECIMALS` calls two designs equal."""


_COLUMNS = tuple(c.column for c in CRITERIA)
_MARGIN = _COLUMNS.index("delay_margin_frac")
"""Column of the margin inside the band, which breaks ties of score."""
_BENEFIT = np.array([c.higher_is_better for c in CRITERIA])
_SHARES = np.array([[c.share if c.weight == w else 0.0 for w in WEIGHT_NAMES] for c in CRITERIA])
"""Share of each brief weight (columns) going to each criterion (rows); every column sums to 1."""


# ---- criteria and weights ------------------------------------------------------------------------
def design_names(evaluations: Sequence["Evaluation"]) -> list[str]:
    """Display names: the topology id, with ' #2', ' #3' ... on its later alternatives."""
    seen: dict[str, int] = {}
    names = []
    for ev in evaluations:
        seen[ev.topology] = seen.get(ev.topology, 0) + 1
        names.append(ev.topology if seen[ev.topology] == 1 else f"{ev.topology} #{seen[ev.topology]}")
    return names


def criteria_table(evaluations: Sequence["Evaluation"], names: Sequence[str] | None = None) -> pd.DataFrame:
    """Criteria of feasible designs, one row per design (index: name), columns as in `CRITERIA`.

    Raises RankingError for an infeasible design: ranking it beside designs that meet the brief would mislead.
    """
    names = list(design_names(evaluations) if names is None else names)
    if len(names) != len(evaluations):
        raise RankingError(f"{len(names)} names given for {len(evaluations)} designs; give one name per design")
    for name, ev in zip(names, evaluations):
        if not ev.feasible:
            raise RankingError(f"design '{name}' does not meet the brief ({ev.reasons[0]}); "
                               f"only feasible designs are ranked")
    rows = [{c: figures[c] for c in _COLUMNS} for figures in map(headline, evaluations)]
    return _checked(pd.DataFrame(rows, index=pd.Index(names, name="design"), columns=list(_COLUMNS)))


def _checked(table: pd.DataFrame) -> pd.DataFrame:
    """The criteria columns of `table` as floats, after checking names and values; RankingError otherwise."""
    missing = [c for c in _COLUMNS if c not in table.columns]
    if missing:
        raise RankingError(f"criteria table lacks column(s) {', '.join(missing)}; needed: {', '.join(_COLUMNS)}")
    if len(table) == 0:
        raise RankingError("no design to rank; give at least one feasible design")
    names = [str(n) for n in table.index]
    if len(set(names)) != len(names):
        twice = sorted({n for n in names if names.count(n) > 1})
        raise RankingError(f"design name(s) {', '.join(twice)} appear more than once; names must be unique")
    try:
        values = table[list(_COLUMNS)].astype(float)
    except (TypeError, ValueError) as exc:
        raise RankingError(f"criteria table holds a non-numeric value ({exc}); every criterion is a number") from None
    for column in _COLUMNS:
        for name, v in zip(names, map(float, values[column])):
            if not math.isfinite(v) or v < 0:
                raise RankingError(f"design '{name}': {column} is {v!r}; accepted: a finite number >= 0")
            if column in ("yield_frac", "effort") and v > 1:
                raise RankingError(f"design '{name}': {column} is {v!r}; accepted: a fraction from 0 to 1")
    values.index = pd.Index(names, name="design")
    return values


def _brief_weights(weights: Any) -> dict[str, float]:
    """The six brief weights from `brief.weights` or a mapping, checked (finite, >= 0, one above 0)."""
    if isinstance(weights, Mapping):
        unknown = sorted(set(weights) - set(WEIGHT_NAMES))
        if unknown:
            raise RankingError(f"unknown weight(s) {', '.join(unknown)}; accepted: {', '.join(WEIGHT_NAMES)}")
        raw = {name: weights.get(name) for name in WEIGHT_NAMES}
    else:
        raw = {name: getattr(weights, name, None) for name in WEIGHT_NAMES}
    out = {}
    for name, value in raw.items():
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value) or value < 0:
            raise RankingError(f"weight {name} is {value!r}; accepted: a finite number >= 0")
        out[name] = float(value)
    if not any(out.values()):
        raise RankingError(f"every weight is 0; accepted: at least one of {', '.join(WEIGHT_NAMES)} above 0")
    return out


def _normalised_weights(raw: np.ndarray) -> np.ndarray:
    """Criterion weights (sum 1) from brief weights in `WEIGHT_NAMES` order; rows broadcast."""
    return (raw @ _SHARES.T) / raw.sum(axis=-1, keepdims=True)


def criterion_weights(weights: Any) -> dict[str, float]:
    """Criterion weights summing to 1 from the brief's weights (`brief.weights` or a mapping)."""
    raw = _brief_weights(weights)
    cw = _normalised_weights(np.array([raw[n] for n in WEIGHT_NAMES]))
    return {c: float(v) for c, v in zip(_COLUMNS, cw)}


# ---- methods --------------------------------------------------------------------------------------
def _check_method(method: str) -> None:
    """RankingError unless `method` is one of `METHODS`."""
    if method not in METHODS:
        raise RankingError(f"unknown ranking method {method!r}; accepted: {', '.join(METHODS)}")


def normalise(matrix: np.ndarray, method: str) -> np.ndarray:
    """Column-normalised criteria matrix (rows: designs, columns: `CRITERIA`).

    'wsm': min-max, best 1 and worst 0, an all-equal column 1; 'topsis': x / ||x||, an all-zero column 0.
    """
    _check_method(method)
    x = np.asarray(matrix, dtype=float)
    if method == "wsm":
        lo, hi = x.min(axis=0), x.max(axis=0)
        span = np.where(hi > lo, hi - lo, 1.0)
        n = np.where(_BENEFIT, (x - lo) / span, (hi - x) / span)
        return np.where(hi > lo, n, 1.0)
    norm = np.sqrt((x * x).sum(axis=0))
    return np.where(norm > 0, x / np.where(norm > 0, norm, 1.0), 0.0)


def scores(matrix: np.ndarray, weights: np.ndarray, method: str) -> np.ndarray:
    """Scores in [0, 1] (higher better) of each design under criterion weights `weights` (sum 1).

    `weights` may be one vector (result: one score per design) or a stack of them (result: one row of
    scores per weight vector), so the sensitivity search can score many weightings at once.
    """
    n = normalise(matrix, method)
    w = np.asarray(weights, dtype=float)
    if method == "wsm":
        return np.clip(w @ n.T, 0.0, 1.0)
    v = n * w[..., None, :]
    ideal = np.where(_BENEFIT, v.max(axis=-2, keepdims=True), v.min(axis=-2, keepdims=True))
    anti = np.where(_BENEFIT, v.min(axis=-2, keepdims=True), v.max(axis=-2, keepdims=True))
    d_ideal = np.sqrt(((v - ideal) ** 2).sum(axis=-1))
    d_anti = np.sqrt(((v - anti) ** 2).sum(axis=-1))
    total = d_ideal + d_anti
    return np.where(total > 0, d_anti / np.where(total > 0, total, 1.0), 1.0)


def order(score: np.ndarray, names: Sequence[str], margins: Sequence[float] | None = None) -> np.ndarray:
    """Design indices best first: score (to `TIE_DECIMALS`) descending, then margin inside the band
    (fraction of its width, wider first; none given: equal), then name, then input position."""
    rounded = np.round(np.asarray(score, dtype=float), TIE_DECIMALS)
    tie = _tie_rank(names, margins)
    return np.array(sorted(range(len(names)), key=lambda i: (-rounded[i], tie[i])), dtype=int)


def _tops(score_rows: np.ndarray, names: Sequence[str], margins: Sequence[float] | None = None) -> np.ndarray:
    """Index of the top design for each row of scores, with the tie-break of `order`."""
    rounded = np.round(np.atleast_2d(score_rows), TIE_DECIMALS)
    best = rounded == rounded.max(axis=1, keepdims=True)
    return np.argmin(np.where(best, _tie_rank(names, margins), len(names)), axis=1)


def pareto_flags(table: pd.DataFrame) -> np.ndarray:
    """True for each design no other design dominates over every criterion (duplicates all kept)."""
    x = np.where(_BENEFIT, -1.0, 1.0) * _checked(table).to_numpy()
    no_worse = (x[:, None, :] <= x[None, :, :]).all(axis=2)  # [j, i]: j at least as good as i everywhere
    better = (x[:, None, :] < x[None, :, :]).any(axis=2)
    return ~(no_worse & better).any(axis=0)


# ---- weight sensitivity ---------------------------------------------------------------------------
@dataclass(frozen=True)
class Crossing:
    """The brief weight value `at` where design `new_top` takes over the top (just past `at`)."""

    at: float
    new_top: str


@dataclass(frozen=True)
class Sensitivity:
    """How far one brief weight may move, the others fixed, before the top design changes.

    value: current brief weight; lo, hi: searched range; up, down: first crossing in each direction, or None.
    """

    weight: str
    value: float
    lo: float
    hi: float
    up: Crossing | None
    down: Crossing | None

    @property
    def nearest(self) -> Crossing | None:
        """The crossing with the smaller absolute change of the weight (up on a tie), or None when stable."""
        found = [c for c in (self.up, self.down) if c is not None]
        return min(found, key=lambda c: abs(c.at - self.value)) if found else None

    @property
    def text(self) -> str:
        """One line for the designer."""
        near = self.nearest
        if near is None:
            span = f"{self.lo:g} to {self.hi:g}"
            return f"{self.weight} weight: top unchanged, none within [0, 10x] ({span})"
        up = near is self.up
        if near.at == self.value:
            return (f"{self.weight} weight: tied at {self.value:g}; any {'rise' if up else 'fall'} "
                    f"makes {near.new_top} top")
        factor = f" (x{near.at / self.value:.3g})" if self.value > 0 else ""
        return (f"{self.weight} weight: {'raising' if up else 'lowering'} it from {self.value:g} to {near.at:.4g}"
                f"{factor} makes {near.new_top} top")

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready form (null where no crossing)."""
        def crossing(c: Crossing | None) -> dict[str, Any] | None:
            if c is None:
                return None
            factor = c.at / self.value if self.value > 0 else None
            return {"at": c.at, "change": c.at - self.value, "factor": factor, "new_top": c.new_top}
        return {"weight": self.weight, "value": self.value, "range": [self.lo, self.hi],
                "up": crossing(self.up), "down": crossing(self.down), "text": self.text}


def _search_range(raw: np.ndarray, k: int) -> tuple[float, float]:
    """Values brief weight k may take in the search: 0 to 10x its value (10x the largest weight when 0)."""
    return 0.0, SEARCH_FACTOR * (raw[k] if raw[k] > 0 else raw.max())



def _linear_crossings(matrix: np.ndarray, raw: np.ndarray, k: int, names: Sequence[str],
                      top: int) -> list[Crossing | None]:
    """Exact first crossings [up, down] of the weighted sum when brief weight k moves alone.

    Each design's score times the weight total is `offset + t slope` in the weight t, so the top
    changes where the top's line meets another's; just past the first meeting point, the steepest
    (going up) or flattest (going down) of the lines meeting there leads.
    """
    per_weight = normalise(matrix, "wsm") @ _SHARES  # [design, brief weight]
    slope = per_weight[:, k]
    offset = per_weight @ raw - slope * raw[k]
    lo, hi = _search_range(raw, k)
    tie_rank = _tie_rank(names, matrix[:, _MARGIN])
    found: list[Crossing | None] = []
    for sign, bound in ((1.0, hi), (-1.0, lo)):
        gain = sign * (slope - slope[top])
        rivals = np.flatnonzero(gain > 1e-12) if bound != raw[k] else np.array([], dtype=int)
        meet = (offset[top] - offset[rivals]) / (slope[rivals] - slope[top])
        meet = np.maximum(meet, raw[k]) if sign > 0 else np.minimum(meet, raw[k])
        inside = sign * (bound - meet) >= 0
        rivals, meet = rivals[inside], meet[inside]
        if len(rivals) == 0:
            found.append(None)
            continue
        first = meet.min() if sign > 0 else meet.max()
        there = rivals[np.abs(meet - first) <= 1e-9 * max(1.0, abs(first))]
        leader = min(there, key=lambda j: (-gain[j], tie_rank[j]))
        found.append(Crossing(float(first), names[leader]))
    return found


def _numeric_crossings(matrix: np.ndarray, raw: np.ndarray, k: int, names: Sequence[str], top: int,
                       method: str) -> list[Crossing | None]:
    """First crossings [up, down] when brief weight k moves alone: grid scan, then subdivision of the bracket."""
    def tops(values: np.ndarray) -> np.ndarray:
        trial = np.tile(raw, (len(values), 1))
        trial[:, k] = values
        return _tops(scores(matrix, _normalised_weights(trial), method), names, matrix[:, _MARGIN])

    found: list[Crossing | None] = []
    for bound in reversed(_search_range(raw, k)):
        grid = raw[k] + (bound - raw[k]) * _GRID
        changed = np.flatnonzero(tops(grid) != top) if bound != raw[k] else np.array([], dtype=int)
        if len(changed) == 0:
            found.append(None)
            continue
        near, far = (raw[k] if changed[0] == 0 else grid[changed[0] - 1]), grid[changed[0]]
        leader = int(tops(grid[changed[:1]])[0])
        for _ in range(_REFINEMENTS):  # each round narrows the bracket 33-fold
            inner = near + (far - near) * _STEPS
            inner_tops = tops(inner)
            moved = np.flatnonzero(inner_tops != top)
            near, far, leader = (near if moved[0] == 0 else inner[moved[0] - 1]), inner[moved[0]], inner_tops[moved[0]]
        found.append(Crossing(float(far), names[int(leader)]))
    return found


def _sensitivity(matrix: np.ndarray, raw: np.ndarray, names: Sequence[str], top: int,
                 method: str) -> list[Sensitivity]:
    """For each brief weight, the nearest values up and down at which another design becomes top."""
    out = []
    for k, weight in enumerate(WEIGHT_NAMES):
        lo, hi = _search_range(raw, k)
        if raw.sum() - raw[k] == 0:  # the only weight above 0: its size changes no ratio
            up, down = None, None
        elif method == "wsm":
            up, down = _linear_crossings(matrix, raw, k, names, top)
        else:
            up, down = _numeric_crossings(matrix, raw, k, names, top, method)
        out.append(Sensitivity(weight, float(raw[k]), lo, float(hi), up, down))
    return out


def _tie_rank(names: Sequence[str], margins: Sequence[float] | None = None) -> np.ndarray:
    """Position of each design in the tie-break order (margin descending, name, then input position)."""
    wide = np.zeros(len(names)) if margins is None else -np.round(np.asarray(margins, dtype=float), TIE_DECIMALS)
    ranks = np.empty(len(names), dtype=int)
    ranks[sorted(range(len(names)), key=lambda i: (wide[i], names[i], i))] = np.arange(len(names))
    return ranks


# ---- reasons ------------------------------------------------------------------------------------
def _corner(point: Mapping[str, float]) -> str:
    """The environment of a corner, e.g. 'at 50 °C, 10.8 V'."""
    parts = []
    if "ambient_c" in point:
        parts.append(format_quantity(point["ambient_c"], "degC"))
    if "supply_v" in point:
        parts.append(format_quantity(point["supply_v"], "V"))
    return f"at {', '.join(parts)}" if parts else "at the worst corner"


def _binding(ev: "Evaluation") -> str:
    """Which edge of the delay band is nearest (margin in % of the band's width), and at which corner."""
    lo, hi = ev.band
    if ev.margin_short_frac <= ev.margin_long_frac:
        return (f"binds: shortest delay {format_quantity(ev.worst.min_s, 's')} {_corner(ev.worst.at_min)} "
                f"against the band minimum {format_quantity(lo, 's')} "
                f"({format_quantity(ev.margin_short_frac, '%')} of the band to spare)")
    return (f"binds: longest delay {format_quantity(ev.worst.max_s, 's')} {_corner(ev.worst.at_max)} "
            f"against the band maximum {format_quantity(hi, 's')} "
            f"({format_quantity(ev.margin_long_frac, '%')} of the band to spare)")


def _reason(i: int, matrix: np.ndarray, weights: np.ndarray, ev: "Evaluation | None") -> str:
    """What design i wins on, what it loses on (weighted criteria only) and what binds it."""
    def said(j: int, phrase: str, shared: bool = False) -> str:
        return f"{phrase} ({CRITERIA[j].show(matrix[i, j])}{', shared' if shared else ''})"

    n = normalise(matrix, "wsm")
    varies = matrix.max(axis=0) > matrix.min(axis=0)
    counted = sorted(np.flatnonzero(varies & (weights > 0)), key=lambda j: (-weights[j], j))
    if len(matrix) == 1:
        parts = ["only design ranked, nothing to compare against"]
    elif not counted:
        parts = ["level with every other design on each weighted criterion"]
    else:
        others = np.delete(n, i, axis=0)
        lead = {j: weights[j] * (n[i, j] - others[:, j].max()) for j in counted}  # > 0: sole best
        trail = {j: weights[j] * (others[:, j].min() - n[i, j]) for j in counted}  # > 0: sole worst
        wins = [said(j, CRITERIA[j].best, lead[j] <= 0)
                for j in sorted(counted, key=lambda j: -lead[j]) if n[i, j] >= 1 - 1e-12]
        losses = [said(j, CRITERIA[j].worst, trail[j] <= 0)
                  for j in sorted(counted, key=lambda j: -trail[j]) if n[i, j] <= 1e-12]
        strongest = max(counted, key=lambda j: n[i, j])
        parts = ["wins on " + ", ".join(wins[:3]) if wins else
                 f"no outright best; strongest on {said(strongest, CRITERIA[strongest].noun)}"]
        shortfall = {j: weights[j] * (1 - n[i, j]) for j in counted if wins or j != strongest}
        weakest = max(shortfall, key=lambda j: shortfall[j], default=None)
        if losses:
            parts.append("loses on " + ", ".join(losses[:2]))
        elif weakest is not None and shortfall[weakest] > 1e-12:
            parts.append(f"gives up most on {said(weakest, CRITERIA[weakest].noun)}")
        else:
            parts.append("loses on no weighted criterion")
    if ev is not None:
        parts.append(_binding(ev))
    return "; ".join(parts)


# ---- result -------------------------------------------------------------------------------------
@dataclass
class Ranking:
    """Ranked designs with the method, the weights, Pareto flags, weight sensitivity and reasons.

    table: one row per design in rank order (index: design name) with `rank`, `score` [0..1],
    `pareto`, `position` (index in the input) and the criteria columns; reasons: name -> one line.
    """

    method: Literal["wsm", "topsis"]
    weights: dict[str, float]
    criterion_weights: dict[str, float]
    table: pd.DataFrame
    sensitivity: list[Sensitivity]
    reasons: dict[str, str]

    @property
    def top(self) -> str:
        """Name of the rank-1 design."""
        return str(self.table.index[0])

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready result (plain floats, ints, bools and strings; no NaN or infinity)."""
        designs = [{
            "name": str(name), "position": int(row["position"]), "rank": int(row["rank"]),
            "score": float(row["score"]), "pareto": bool(row["pareto"]),
            "criteria": {c: float(row[c]) for c in _COLUMNS}, "reason": self.reasons[str(name)],
        } for name, row in self.table.iterrows()]
        return {
            "method": self.method,
            "normalisation": "min-max" if self.method == "wsm" else "vector",
            "weights": dict(self.weights), "criterion_weights": dict(self.criterion_weights),
            "top": self.top, "designs": designs, "sensitivity": [s.to_dict() for s in self.sensitivity],
        }


def rank(designs: Sequence["Evaluation"] | pd.DataFrame, weights: Any, method: str = "wsm",
         names: Sequence[str] | None = None) -> Ranking:
    """Rank feasible designs (Evaluations, or a criteria table with the `CRITERIA` columns) by the brief's weights.

    weights: `brief.weights` or a mapping of `WEIGHT_NAMES` to numbers >= 0, one above 0;
    method: 'wsm' (weighted sum, min-max normalised) or 'topsis' (classical, vector normalised);
    names: design names for Evaluations (default `design_names`). Raises RankingError.
    """
    _check_method(method)
    if isinstance(designs, pd.DataFrame):
        if names is not None:
            raise RankingError("names are taken from the criteria table's index; do not pass names with a table")
        evaluations, table = None, _checked(designs)
    else:
        evaluations = list(designs)
        table = criteria_table(evaluations, names)
    raw = _brief_weights(weights)
    w = np.array([raw[n] for n in WEIGHT_NAMES])
    cw = _normalised_weights(w)
    matrix = table.to_numpy()
    labels = [str(n) for n in table.index]
    score = scores(matrix, cw, method)
    best_first = order(score, labels, matrix[:, _MARGIN])
    ranks = np.empty(len(labels), dtype=int)
    ranks[best_first] = np.arange(1, len(labels) + 1)
    out = table.copy()
    out.insert(0, "position", np.arange(len(labels)))
    out.insert(0, "pareto", pareto_flags(table))
    out.insert(0, "score", score)
    out.insert(0, "rank", ranks)
    reasons = {labels[i]: _reason(i, matrix, cw, None if evaluations is None else evaluations[i]) for i in best_first}
    return Ranking(
        method=method, weights=raw, criterion_weights={c: float(v) for c, v in zip(_COLUMNS, cw)},
        table=out.iloc[best_first], sensitivity=_sensitivity(matrix, w, labels, int(best_first[0]), method),
        reasons=reasons,
    )
