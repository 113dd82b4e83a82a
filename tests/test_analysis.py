"""Worst-case corner search and Monte Carlo engine (tradeoff.analysis)."""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from tradeoff.analysis import Uncertain, monte_carlo, sample, wilson_interval, worst_case


def rc_delay(x):
    """Textbook RC discharge to a fixed fraction: t = R·C·ln(V0/Vth)."""
    return x["r"] * x["c"] * np.log(x["v0"] / x["vth"])


RC_PARAMS = {
    "r": Uncertain.band(100e3, 0.05),
    "c": Uncertain.band(100e-6, 0.2),
    "v0": Uncertain.band(12.0, 0.1),
    "vth": Uncertain.band(1.2, 0.05),
}


def test_exhaustive_corners_find_monotone_extremes():
    wc = worst_case(rc_delay, RC_PARAMS)
    r, c, v0, vth = (RC_PARAMS[k] for k in ("r", "c", "v0", "vth"))
    # Monotone model: the extremes are at the obvious corners (physics identity).
    assert wc.min_s == pytest.approx(r.lo * c.lo * np.log(v0.lo / vth.hi))
    assert wc.max_s == pytest.approx(r.hi * c.hi * np.log(v0.hi / vth.lo))
    assert wc.at_min["vth"] == vth.hi and wc.at_max["c"] == c.hi
    assert wc.evaluated == 16


def test_interior_critical_point_is_searched():
    """A parabolic temperature law peaks inside the range: the declared turnover must be tried."""
    params = {"t": Uncertain(25.0, 0.0, 50.0, critical=(25.0,))}

    def parabola(x):
        return 100.0 * (1 - 0.034e-6 * (x["t"] - 25.0) ** 2)

    wc = worst_case(parabola, params)
    assert wc.max_s == pytest.approx(100.0)
    assert wc.at_max["t"] == 25.0


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(-2, 2), min_size=6, max_size=6), st.integers(0, 2**31 - 1))
def test_coordinate_search_equals_exhaustive_on_monotone_products(exponents, seed):
    """For products of powers (every delay law here is monotone per quantity), the slope-guided
    search over corners must reach the same extremes as exhaustive enumeration."""
    rng = np.random.default_rng(seed)
    params = {f"q{i}": Uncertain.band(float(rng.uniform(1, 10)), float(rng.uniform(0.01, 0.3)))
              for i in range(6)}

    def model(x):
        out = np.ones_like(x["q0"])
        for i, e in enumerate(exponents):
            out = out * x[f"q{i}"] ** e
        return out

    full = worst_case(model, params)
    guided = worst_case(model, params, exhaustive_limit=1)
    assert guided.min_s == pytest.approx(full.min_s, rel=1e-12)
    assert guided.max_s == pytest.approx(full.max_s, rel=1e-12)
    assert "slope-guided" in guided.method


def test_monte_carlo_is_reproducible_and_inside_corners():
    band = (5.0, 50.0)
    a = monte_carlo(rc_delay, RC_PARAMS, 20_000, seed=7, band=band, coverage=0.99)
    b = monte_carlo(rc_delay, RC_PARAMS, 20_000, seed=7, band=band, coverage=0.99)
    c = monte_carlo(rc_delay, RC_PARAMS, 20_000, seed=8, band=band, coverage=0.99)
    assert np.array_equal(a.delays, b.delays)
    assert not np.array_equal(a.delays, c.delays)
    wc = worst_case(rc_delay, RC_PARAMS)
    assert wc.min_s <= a.delays.min() and a.delays.max() <= wc.max_s
    assert a.percentiles[0.005] < a.percentiles[0.5] < a.percentiles[0.995]


def test_chunked_monte_carlo_equals_one_chunk():
    band = (20.0, 30.0)
    whole = monte_carlo(rc_delay, RC_PARAMS, 10_000, seed=3, band=band, coverage=0.9, chunk=10_000)
    split = monte_carlo(rc_delay, RC_PARAMS, 10_000, seed=3, band=band, coverage=0.9, chunk=10_000)
    assert whole.yield_frac == split.yield_frac


def test_uniform_sampling_matches_its_distribution():
    rng = np.random.default_rng(1)
    x = sample({"u": Uncertain(1.0, 0.0, 2.0)}, 50_000, rng)["u"]
    # Kolmogorov-Smirnov test against scipy's uniform distribution (independent reference).
    assert stats.kstest(x, stats.uniform(loc=0, scale=2).cdf).pvalue > 1e-3


def test_lognormal_sampling_is_a_truncated_lognormal():
    rng = np.random.default_rng(2)
    hfe = Uncertain(30_000.0, 10_000.0, 60_000.0, dist="lognormal")
    x = sample({"hfe": hfe}, 100_000, rng)["hfe"]
    assert x.min() >= hfe.lo and x.max() <= hfe.hi
    # ln(hFE) must follow a normal with median ln(typ), farther limit at 3 sigma, truncated to the
    # limits: scipy.stats.truncnorm is the independent reference (Kolmogorov-Smirnov test).
    mu = np.log(30_000.0)
    sigma = np.log(3.0) / 3
    a, b = (np.log(10_000.0) - mu) / sigma, (np.log(60_000.0) - mu) / sigma
    assert stats.kstest(np.log(x), stats.truncnorm(a, b, loc=mu, scale=sigma).cdf).pvalue > 1e-3


def test_never_ending_units_are_counted_not_nan():
    params = {"a": Uncertain(1.0, 0.0, 2.0)}

    def model(x):
        return np.where(x["a"] > 1.5, np.inf, 10 * x["a"])

    mc = monte_carlo(model, params, 10_000, seed=1, band=(0.0, 100.0), coverage=0.99)
    assert mc.never_ends_frac == pytest.approx(0.25, abs=0.02)
    assert np.isinf(mc.percentiles[0.995]) and np.isfinite(mc.percentiles[0.005])
    assert mc.yield_frac == pytest.approx(0.75, abs=0.02)


def test_nan_from_a_model_is_an_error():
    with pytest.raises(FloatingPointError):
        worst_case(lambda x: np.full_like(x["a"], np.nan), {"a": Uncertain(1.0, 0.0, 2.0)})


@pytest.mark.parametrize("k,n", [(0, 10), (7, 10), (950, 1000), (1000, 1000), (12, 20_000)])
def test_wilson_interval_matches_scipy(k, n):
    # scipy.stats.binomtest(...).proportion_ci(method='wilson') is the independent reference.
    ref = stats.binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    lo, hi = wilson_interval(k, n)
    assert lo == pytest.approx(ref.low, abs=1e-12)
    assert hi == pytest.approx(ref.high, abs=1e-12)


def test_uncertain_rejects_nominal_outside_limits():
    with pytest.raises(ValueError):
        Uncertain(3.0, 0.0, 2.0)
    with pytest.raises(ValueError):
        Uncertain(float("nan"), 0.0, 2.0)


def test_typical_range_sets_the_monte_carlo_and_the_limits_the_corners():
    # a relay's release point: guaranteed 10 % to 75 %, typical units 15 % to 35 %. Kolmogorov-Smirnov against
    # scipy's uniform over the typical range and a normal with the typical range's farther end at 3 sigma,
    # truncated to the limits (scipy.stats.truncnorm); the corner search still goes to the limits.
    rng = np.random.default_rng(4)
    flat = Uncertain(0.25, 0.10, 0.75, typical=(0.15, 0.35))
    x = sample({"r": flat}, 50_000, rng)["r"]
    assert stats.kstest(x, stats.uniform(loc=0.15, scale=0.20).cdf).pvalue > 1e-3
    bell = Uncertain(0.20, 0.10, 0.75, dist="normal", typical=(0.15, 0.35))
    x = sample({"r": bell}, 50_000, rng)["r"]
    sigma = 0.15 / 3
    ref = stats.truncnorm((0.10 - 0.20) / sigma, (0.75 - 0.20) / sigma, loc=0.20, scale=sigma)
    assert stats.kstest(x, ref.cdf).pvalue > 1e-3
    wc = worst_case(lambda p: 1 / p["r"], {"r": flat})
    assert (wc.min_s, wc.max_s) == (pytest.approx(1 / 0.75), pytest.approx(1 / 0.10))


@pytest.mark.parametrize("typical", [(0.05, 0.35), (0.30, 0.35), (0.25, 0.25), (0.15, 0.80)])
def test_uncertain_rejects_a_typical_range_outside_its_limits_or_without_the_nominal(typical):
    with pytest.raises(ValueError):
        Uncertain(0.25, 0.10, 0.75, typical=typical)
