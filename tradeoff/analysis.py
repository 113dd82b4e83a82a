"""Worst-case corners and Monte Carlo, written once for every topology.

A topology describes each spread quantity of a design as an `Uncertain` (SI units) and
gives a vectorised delay function `delay(x) -> seconds`, where `x` maps every uncertain
name to an array. This module searches the corners for the extreme delays and samples
the stated distributions for the Monte Carlo distribution and yield.

Corner search: every non-fixed quantity takes its low and high limit plus any interior
`critical` points the topology declares (for example a crystal's turnover temperature).
Up to `EXHAUSTIVE_LIMIT` combinations are evaluated exhaustively; beyond that the
search starts from the corner that finite-difference slopes at the nominal point
predict, then flips one quantity at a time while that improves the extreme
(coordinate ascent over the corner lattice) and keeps the best of both.
"""
from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field
from typing import Callable, Literal, Mapping

import numpy as np
from scipy.special import ndtr, ndtri

__all__ = [
    "Uncertain",
    "WorstCase",
    "MonteCarlo",
    "EXHAUSTIVE_LIMIT",
    "worst_case",
    "exhaustive_corners",
    "sample",
    "monte_carlo",
    "wilson_interval",
]

DelayFunction = Callable[[Mapping[str, np.ndarray]], np.ndarray]
Distribution = Literal["uniform", "lognormal", "normal", "fixed"]

EXHAUSTIVE_LIMIT = 1 << 14
"""Largest number of corner combinations evaluated exhaustively (16384)."""

_SIGMA_AT_LIMIT = 3.0
"""Normal and log-normal spreads put their farther limit at 3 standard deviations (stated assumption)."""


@dataclass(frozen=True)
class Uncertain:
    """One spread quantity of a design.

    nominal, lo, hi: typical value and limits [SI unit of the quantity];
    dist: 'uniform' within [lo, hi] (default for tolerance bands); 'lognormal' with median
    `nominal` and the farther limit at 3 sigma, truncated to [lo, hi] (transistor gain);
    'normal' likewise on a linear scale; 'fixed' (no spread, always nominal).
    critical: interior values at which an extreme may sit (corner search includes them).
    typical: (low, high) inside [lo, hi] where the units of a real population lie, when that is
    narrower than the guaranteed limits (a relay's release point): the Monte Carlo draws over it
    (uniform) or puts its farther end at 3 sigma (normal, log-normal), still truncated to [lo, hi];
    the corners keep lo and hi.
    """

    nominal: float
    lo: float
    hi: float
    dist: Distribution = "uniform"
    unit: str = ""
    note: str = ""
    critical: tuple[float, ...] = ()
    typical: tuple[float, float] | None = None

    def __post_init__(self):
        values = (self.nominal, self.lo, self.hi, *self.critical, *(self.typical or ()))
        if not all(math.isfinite(v) for v in values):
            raise ValueError(f"uncertain quantity has a non-finite limit: {self}")
        if not self.lo <= self.nominal <= self.hi:
            raise ValueError(f"nominal {self.nominal} outside [{self.lo}, {self.hi}]")
        if self.typical is not None and not (self.lo <= self.typical[0] <= self.nominal <= self.typical[1] <= self.hi
                                             and self.typical[0] < self.typical[1]):
            raise ValueError(f"typical range {self.typical} must be wider than a point, hold the nominal "
                             f"{self.nominal} and lie in [{self.lo}, {self.hi}]")
        if self.dist == "lognormal" and self.lo <= 0:
            raise ValueError("a log-normal quantity needs positive limits")

    @property
    def spreads(self) -> bool:
        """True when the quantity varies at all."""
        return self.dist != "fixed" and self.hi > self.lo

    def corner_values(self) -> tuple[float, ...]:
        """Values the corner search tries: the limits and interior critical points."""
        if not self.spreads:
            return (self.nominal,)
        inner = tuple(c for c in self.critical if self.lo < c < self.hi)
        return (self.lo, *inner, self.hi)

    @staticmethod
    def band(nominal: float, tolerance_frac: float, **kw) -> "Uncertain":
        """A symmetric tolerance band nominal·(1 ± tolerance)."""
        return Uncertain(nominal, nominal * (1 - tolerance_frac), nominal * (1 + tolerance_frac), **kw)

    @staticmethod
    def fixed(value: float, **kw) -> "Uncertain":
        """A quantity without spread."""
        return Uncertain(value, value, value, dist="fixed", **kw)


@dataclass(frozen=True)
class WorstCase:
    """Extreme delays over the corners [s] and the corners where they occur."""

    min_s: float
    max_s: float
    at_min: dict[str, float]
    at_max: dict[str, float]
    method: str
    evaluated: int


@dataclass(frozen=True)
class MonteCarlo:
    """Monte Carlo summary of the delay [s]."""

    samples: int
    seed: int
    mean_s: float
    std_s: float
    percentiles: dict[float, float]
    yield_frac: float
    yield_ci: tuple[float, float]
    never_ends_frac: float
    delays: np.ndarray = field(repr=False, compare=False)


def _evaluate(delay: DelayFunction, x: Mapping[str, np.ndarray], out: np.ndarray | None = None) -> np.ndarray:
    """Call the delay model and copy its output (into `out` when given, shape checked); NaN is a model bug,
    inf means 'never ends'."""
    n = len(next(iter(x.values())))
    result = np.asarray(delay(x), dtype=float)
    if out is None:
        out = np.empty(n)
    out[...] = np.broadcast_to(result, (n,))
    if np.isnan(out).any():
        raise FloatingPointError("delay model returned NaN; models must return inf for 'never times out'")
    return out


def exhaustive_corners(params: Mapping[str, Uncertain]) -> dict[str, np.ndarray]:
    """Every combination of corner values of every quantity, as arrays."""
    names = sorted(params)
    grids = [params[n].corner_values() for n in names]
    combos = np.array(list(itertools.product(*grids)), dtype=float).reshape(-1, len(names))
    return {n: combos[:, i].copy() for i, n in enumerate(names)}


def _corner_count(params: Mapping[str, Uncertain]) -> int:
    return math.prod(len(p.corner_values()) for p in params.values())


def _point(params: Mapping[str, Uncertain], choice: Mapping[str, float]) -> dict[str, np.ndarray]:
    return {n: np.array([choice.get(n, p.nominal)], dtype=float) for n, p in params.items()}


def _coordinate_search(delay: DelayFunction, params: Mapping[str, Uncertain], sign: float) -> tuple[float, dict, int]:
    """Extreme of sign·delay over the corner lattice by slope-guided start and one-at-a-time flips."""
    names = sorted(params)
    nominal = {n: params[n].nominal for n in names}
    base = float(_evaluate(delay, _point(params, nominal))[0])
    evaluated = 1
    start = {}
    for n in names:
        options = params[n].corner_values()
        trial = [{**nominal, n: v} for v in options]
        x = {m: np.array([t[m] for t in trial]) for m in names}
        d = sign * _evaluate(delay, x)
        evaluated += len(options)
        start[n] = options[int(np.argmax(d))] if np.max(d) > sign * base else options[0]
    current = dict(start)
    best = float(sign * _evaluate(delay, _point(params, current))[0])
    improved = True
    while improved:
        improved = False
        trials = [{**current, n: v} for n in names for v in params[n].corner_values() if v != current[n]]
        if not trials:
            break
        x = {m: np.array([t[m] for t in trials]) for m in names}
        d = sign * _evaluate(delay, x)
        evaluated += len(trials)
        k = int(np.argmax(d))
        if d[k] > best + 1e-12 * abs(best):
            best, current, improved = float(d[k]), trials[k], True
    return sign * best, current, evaluated


def worst_case(delay: DelayFunction, params: Mapping[str, Uncertain],
               exhaustive_limit: int = EXHAUSTIVE_LIMIT) -> WorstCase:
    """Smallest and largest delay [s] over the corners of every spread quantity."""
    spread = {n: p for n, p in params.items() if p.spreads}
    fixed = {n: p.nominal for n, p in params.items() if not p.spreads}
    if _corner_count(spread) <= exhaustive_limit:
        corners = exhaustive_corners(spread) if spread else {}
        n = len(next(iter(corners.values()))) if corners else 1
        x = {**corners, **{k: np.full(n, v) for k, v in fixed.items()}}
        d = _evaluate(delay, x)
        i_min, i_max = int(np.argmin(d)), int(np.argmax(d))
        return WorstCase(
            min_s=float(d[i_min]), max_s=float(d[i_max]),
            at_min={k: float(v[i_min]) for k, v in x.items()},
            at_max={k: float(v[i_max]) for k, v in x.items()},
            method=f"exhaustive over {n} corners", evaluated=n,
        )
    lo, at_lo, n_lo = _coordinate_search(delay, params, -1.0)
    hi, at_hi, n_hi = _coordinate_search(delay, params, +1.0)
    return WorstCase(
        min_s=lo, max_s=hi, at_min={**fixed, **at_lo}, at_max={**fixed, **at_hi},
        method=f"slope-guided corner search with single flips ({_corner_count(spread)} corners, "
               f"{n_lo + n_hi} evaluated)",
        evaluated=n_lo + n_hi,
    )


def _uniform(rng: np.random.Generator, lo: float, hi: float, out: np.ndarray) -> np.ndarray:
    """Fill `out` with uniform samples in [lo, hi): the same numbers as rng.uniform(lo, hi, len(out))
    (lo + (hi - lo)·U, U from rng.random), computed in place, which is faster."""
    rng.random(out=out)
    out *= hi - lo
    out += lo
    return out


def _scaled_normal(rng: np.random.Generator, centre: float, sigma: float, lo: float, hi: float,
                   out: np.ndarray) -> np.ndarray:
    """Fill `out` with centre + sigma·Z, Z standard normal truncated so the result lies in [lo, hi]
    (inverse transform of a uniform between the limits' probabilities: no rejection loop)."""
    _uniform(rng, float(ndtr((lo - centre) / sigma)), float(ndtr((hi - centre) / sigma)), out)
    ndtri(out, out=out)
    out *= sigma
    out += centre
    return out


def sample(params: Mapping[str, Uncertain], n: int, rng: np.random.Generator,
           out: Mapping[str, np.ndarray] | None = None) -> dict[str, np.ndarray]:
    """Draw n samples of every quantity from its stated distribution (names in sorted order).

    out: arrays of length n (one per name) to fill instead of new ones; `monte_carlo` reuses them
    from chunk to chunk so no fresh memory is touched per chunk.
    """
    drawn: dict[str, np.ndarray] = {}
    for name in sorted(params):
        p = params[name]
        x = np.empty(n) if out is None else out[name]
        low, high = p.typical or (p.lo, p.hi)  # the ends of the population's spread
        if not p.spreads:
            x.fill(p.nominal)
        elif p.dist == "uniform":
            _uniform(rng, low, high, x)
        elif p.dist == "lognormal":
            mu = math.log(p.nominal)
            sigma = max(mu - math.log(low), math.log(high) - mu) / _SIGMA_AT_LIMIT
            _scaled_normal(rng, mu, sigma, math.log(p.lo), math.log(p.hi), x)
            np.clip(np.exp(x, out=x), p.lo, p.hi, out=x)
        elif p.dist == "normal":
            sigma = max(p.nominal - low, high - p.nominal) / _SIGMA_AT_LIMIT
            np.clip(_scaled_normal(rng, p.nominal, sigma, p.lo, p.hi, x), p.lo, p.hi, out=x)
        else:
            raise ValueError(f"unknown distribution {p.dist!r} for {name}")
        drawn[name] = x
    return drawn


def wilson_interval(successes: int, n: int, confidence: float = 0.95) -> tuple[float, float]:
    """Wilson score interval for a binomial proportion (Wilson 1927)."""
    if n == 0:
        return (0.0, 1.0)
    z = float(ndtri(0.5 + confidence / 2))
    p = successes / n
    denom = 1 + z * z / n
    centre = (p + z * z / (2 * n)) / denom
    half = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / denom
    return (max(0.0, centre - half), min(1.0, centre + half))


def monte_carlo(delay: DelayFunction, params: Mapping[str, Uncertain], samples: int, seed: int,
                band: tuple[float, float], coverage: float, chunk: int = 250_000) -> MonteCarlo:
    """Monte Carlo of the delay: mean, spread, percentiles at the coverage, yield inside `band` [s].

    Samples are drawn and evaluated in chunks so memory stays bounded (the chunk's sample arrays
    are reused); the draw order is fixed by the seed, so results are reproducible.
    """
    rng = np.random.default_rng(seed)
    d = np.empty(samples)
    buffers = {name: np.empty(min(chunk, samples)) for name in params}
    for start in range(0, samples, chunk):
        n = min(chunk, samples - start)
        _evaluate(delay, sample(params, n, rng, {k: b[:n] for k, b in buffers.items()}), out=d[start:start + n])
    finite = np.isfinite(d)
    inside = int(np.count_nonzero((d >= band[0]) & (d <= band[1])))
    tail = (1 - coverage) / 2
    levels = (round(tail, 12), 0.5, round(1 - tail, 12))
    if finite.all():
        pct = dict(zip(levels, (float(v) for v in np.quantile(d, levels))))  # one partition for all levels
        mean, std = float(d.mean()), float(d.std())
    else:
        # Units that never time out sit above every finite delay; quantiles are taken with them
        # ranked last, and a quantile that falls among them is reported as infinite (shown as 'never').
        ranked = np.sort(np.where(finite, d, np.inf))
        pct = {q: float(ranked[min(len(ranked) - 1, int(q * len(ranked)))]) for q in levels}
        mean = float(d[finite].mean()) if finite.any() else math.inf
        std = float(d[finite].std()) if finite.any() else math.inf
    return MonteCarlo(
        samples=samples, seed=seed, mean_s=mean, std_s=std, percentiles=pct,
        yield_frac=inside / samples, yield_ci=wilson_interval(inside, samples),
        never_ends_frac=float(np.count_nonzero(~finite)) / samples, delays=d,
    )
