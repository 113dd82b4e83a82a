"""A selection problem's tables as arrays: the requirements (delay band, the brief's limits,
the model's links), the weighted, normalised objective, and the one arithmetic that the integer
program's checks and exhaustive search share, so both report identical numbers for the same rows.
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from typing import Callable, Mapping, Sequence

import numpy as np

from tradeoff.criteria import WEIGHT_NAMES, share
from tradeoff.selection import SelectionModel
from tradeoff.topologies.base import Design, Pair
from tradeoff.units import format_quantity

__all__ = ["Requirement", "Scales", "Tables", "TOLERANCE", "LINEAR_TERMS", "DELAYS", "seconds", "gather", "extreme"]

TOLERANCE = 1e-9
"""Relative slack allowed on a requirement and on objective comparisons."""

DELAYS = ("delay_lo", "delay_nom", "delay_hi")
"""Delay columns of every block table: worst-case low corner, nominal, worst-case high corner."""

LINEAR_TERMS = {
    # term: ((table column, model attribute holding the fixed amount, share of the term), ...); the
    # shares are the ranking's (criteria.CRITERIA), so optimiser and ranking split a weight alike
    "parts": (("placements", "fixed_placements", share("parts")),),
    "cost": (("cost", "fixed_cost", share("cost_eur")),),
    "standby": (("after_a", "fixed_after_a", share("standby_after_a")),
                ("during_a", "fixed_during_a", share("standby_during_a"))),
    "effort": (("effort", "effort", share("effort")),),
    "rails": (("rails", "rails", share("rails")),),
}
"""Linear objective terms by brief weight."""


def seconds(value: float) -> str:
    """A duration [s] as the designer reads it."""
    return format_quantity(value, "s")


def _euros(value: float) -> str:
    return f"{value:.2f} EUR"


def _count(value: float) -> str:
    return format_quantity(round(value, 9), "")


def block_column(model: SelectionModel, column: str) -> list[np.ndarray]:
    """`column` of every block as float arrays (zeros where an optional column is absent)."""
    return [b.table[column].to_numpy(dtype=float) if column in b.table.columns else np.zeros(len(b.table))
            for b in model.blocks]


def gather(amounts: Sequence[np.ndarray], idx: Sequence[np.ndarray]) -> np.ndarray:
    """Sum over blocks of each block's amount at the chosen rows (one array of rows per block)."""
    total = np.zeros(np.shape(idx[0]))
    for a, i in zip(amounts, idx):
        total = total + a[i]
    return total


def extreme(amounts: Sequence[np.ndarray], largest: bool) -> float:
    """Largest (or smallest) sum over blocks the tables allow: each block at its own extreme."""
    pick = np.max if largest else np.min
    return float(sum(pick(a) for a in amounts if a.size))


@dataclass(frozen=True)
class Requirement:
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
        return self.constant + gather(self.amounts, idx)

    @functools.cached_property
    def slack(self) -> float:
        """Tolerance on the requirement: TOLERANCE times the magnitude of its sides."""
        size = abs(self.constant) + sum(float(np.max(np.abs(a))) for a in self.amounts if a.size)
        return TOLERANCE * max(abs(self.rhs), size)

    def holds(self, value: np.ndarray | float) -> np.ndarray | bool:
        """True where `value` meets the requirement (within the relative tolerance)."""
        return value <= self.rhs + self.slack if self.sense == "<=" else value >= self.rhs - self.slack

    def best(self) -> float:
        """Best left-hand side the tables allow, ignoring every other requirement."""
        return self.constant + extreme(self.amounts, largest=self.sense == ">=")

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
        for term, parts in LINEAR_TERMS.items():
            for column, fixed, _share in parts:
                amounts = block_column(model, column)
                lo = extreme(amounts, largest=False)
                hi = extreme(amounts, largest=True)
                origin[column] = getattr(model, fixed) + lo
                span[column] = hi - lo if hi > lo else 1.0
        lo, hi = band
        origin["accuracy"] = 0.0
        span["accuracy"] = math.log(hi / lo) / 2 if model.combine == "product" else math.sqrt(hi / lo) - 1
        return cls(origin, span)


class Tables:
    """The model's tables as arrays: requirements and objective, with the one arithmetic that
    the integer program's checks and exhaustive search share."""

    def __init__(self, model: SelectionModel, band: tuple[float, float], limits, weights,
                 scales: Scales | None, margin: float = 0.0):
        lo, hi = (float(v) for v in band)
        if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo < hi):
            raise ValueError(f"delay band must satisfy 0 < min < max [s], got {band!r}")
        if not 0 <= margin < 0.5:
            raise ValueError(f"margin must be a fraction of the band from 0 to below 0.5, got {margin!r}")
        if model.combine not in ("sum", "product"):
            raise ValueError(f"combine must be 'sum' or 'product', got {model.combine!r}")
        if not model.blocks:
            raise ValueError(f"selection model of {model.topology!r} has no blocks")
        self.model, self.band, self.margin = model, (lo, hi), float(margin)
        self.required = (lo + margin * (hi - lo), hi - margin * (hi - lo))
        """The worst-case delays' range: the band less the margin at each end [s]."""
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
        self.requirements = self._band(*self.required) + self._limits(limits) + self._links()
        self._objective_arrays()

    # -- construction
    def column(self, name: str) -> list[np.ndarray]:
        """`name` of every block as float arrays, converted once (zeros where an optional column is absent)."""
        if name not in self._columns:
            self._columns[name] = block_column(self.model, name)
        return self._columns[name]

    def _check_finite(self) -> None:
        for b in self.model.blocks:
            for c in (*DELAYS, *(c for parts in LINEAR_TERMS.values() for c, _, _ in parts)):
                if c not in b.table.columns:
                    continue
                v = b.table[c].to_numpy(dtype=float)
                bad = ~np.isfinite(v) | ((v <= 0) if (self.product and c in DELAYS) else False)
                if bad.any():
                    need = "positive finite factors" if self.product and c in DELAYS else "finite numbers"
                    raise ValueError(f"block {b.name!r} column {c!r}: {int(bad.sum())} rows are not {need}")

    def _delay_amounts(self, column: str) -> tuple[np.ndarray, ...]:
        values = self.column(column)
        return tuple(np.log(v) if self.product else v for v in values)

    def band_text(self) -> str:
        """The range the worst-case delays must keep, in words: the band, less the margin when there is one."""
        lo, hi = self.band
        text = f"the band {seconds(lo)} to {seconds(hi)}"
        if self.margin > 0:
            text += (f" less the {format_quantity(self.margin, '%')} margin ({seconds(self.required[0])} to "
                     f"{seconds(self.required[1])})")
        return text

    def _band(self, lo: float, hi: float) -> list[Requirement]:
        """Worst-case delays inside [lo, hi] (the band less the margin) [s]."""
        f = math.log if self.product else float
        common = dict(group="band", label="the delay band", constant=0.0, fmt=seconds, log=self.product)
        kept = f" plus the {format_quantity(self.margin, '%')} margin" if self.margin > 0 else ""
        return [
            Requirement("band_min", amounts=self.delay["delay_lo"], sense=">=", rhs=f(lo),
                         template="even the longest-delay candidates time out too early: the worst-case shortest "
                                  f"delay reaches at most {{best}}; the band's minimum{kept} is {{limit}}", **common),
            Requirement("band_max", amounts=self.delay["delay_hi"], sense="<=", rhs=f(hi),
                         template="even the shortest-delay candidates time out too late: the worst-case longest "
                                  f"delay is at least {{best}}; the band's maximum{kept.replace('plus', 'less')} "
                                  "is {limit}", **common),
        ]

    def _limits(self, limits) -> list[Requirement]:
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
                out.append(Requirement(key, key, label, tuple(self.column(column)), float(fixed), "<=",
                                        float(limit), template, fmt))
        return out

    def _links(self) -> list[Requirement]:
        out = []
        names = [b.name for b in self.model.blocks]
        for n, link in enumerate(self.model.links):
            amounts = [np.zeros(s) for s in self.sizes]
            for block, column, coefficient in link.terms:
                if block not in names or column not in self.model.block(block).table.columns:
                    raise ValueError(f"link {link.reason!r} names {block}.{column}, which no block table has")
                b = names.index(block)
                amounts[b] = amounts[b] + coefficient * self.model.blocks[b].table[column].to_numpy(dtype=float)
            out.append(Requirement(
                f"link{n}", f"link{n}", link.reason, tuple(amounts), 0.0, link.sense, float(link.rhs),
                f"{link.reason}: the linked sum reaches at best {{best}}; it must be {link.sense} {{limit}}",
                _count))
        return out

    def _objective_arrays(self) -> None:
        """Per-row weighted, normalised objective coefficients, the constant, and the accuracy pieces."""
        s, w = self.scales, self.weights
        self.linear = [np.zeros(n) for n in self.sizes]
        self.linear_constant = 0.0
        for term, parts in LINEAR_TERMS.items():
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
        return np.abs(gather(self.nominal, idx) - self.centre)

    def objective(self, idx: Sequence[np.ndarray]) -> np.ndarray:
        """Weighted sum of normalised terms at the chosen rows."""
        return self.linear_constant + gather(self.linear, idx) + self.accuracy_k * self.deviation(idx)

    def feasible(self, idx: Sequence[np.ndarray], requirements: Sequence[Requirement] | None = None) -> np.ndarray:
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
        total = float(gather(self.delay[column], idx)[0])
        return math.exp(total) if self.product else total

    def terms(self, rows: Sequence[int]) -> dict[str, float]:
        """Normalised objective terms (before weights) of the chosen rows."""
        idx, s = self.index(rows), self.scales
        out = {"accuracy": float(self.deviation(idx)[0]) / s.span["accuracy"]}
        for term, parts in LINEAR_TERMS.items():
            out[term] = sum(share * (getattr(self.model, fixed) + float(gather(self.column(c), idx)[0])
                                     - s.origin[c]) / s.span[c] for c, fixed, share in parts)
        return out

    def totals(self, rows: Sequence[int]) -> dict[str, float]:
        """Delays at the corners [s] and the summed attributes of the chosen rows (fixed amounts included)."""
        idx, m = self.index(rows), self.model
        fixed = {"cost": m.fixed_cost, "placements": m.fixed_placements, "lines": m.fixed_lines,
                 "during_a": m.fixed_during_a, "after_a": m.fixed_after_a, "effort": m.effort, "rails": m.rails}
        out = {f"{c}_s": self.combined(c, idx) for c in DELAYS}
        out.update({c: v + float(gather(self.column(c), idx)[0]) for c, v in fixed.items()})
        return out

    def design(self, rows: Sequence[int]) -> Design:
        """The Design the chosen rows describe (see selection.py for the column convention)."""
        values, options, pairs = {}, {}, {}
        for block, r in zip(self.model.blocks, rows):
            row = block.table.iloc[int(r)]
            for role in block.roles:
                values[role] = float(row[role])
                first, second, pairing = f"{role}_first", f"{role}_second", f"{role}_pairing"
                if first in row.index and second in row.index and float(row[second]) > 0:
                    pairs[role] = Pair(float(row[first]), float(row[second]),
                                       str(row[pairing]) if pairing in row.index else "series")
            for option in block.options:
                v = row[option]
                options[option] = v.item() if isinstance(v, np.generic) else v
        return Design(self.model.topology, values=values, options=options, pairs=pairs)

