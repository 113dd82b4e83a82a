"""Ranking: weighted sum and TOPSIS against pymcdm, Pareto flags against paretoset, weight
sensitivity by re-ranking either side of each reported crossing, reasons, ties and errors.

pymcdm is imported inside the tests only (it loads matplotlib). Synthetic Evaluations are built
straight from the dataclasses of base.py and analysis.py; no topology is needed.
"""
from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tradeoff.analysis import MonteCarlo, WorstCase
from tradeoff.errors import RankingError
from tradeoff.criteria import CRITERIA, HEADLINE, WEIGHT_NAMES, headline
from tradeoff.ranking import (
    _linear_crossings, _numeric_crossings, criteria_table, criterion_weights, order,
    pareto_flags, rank, scores,
)
from tradeoff.topologies.base import BomLine, Design, Evaluation, Standby

COLUMNS = [c.column for c in CRITERIA]
TYPES = np.array([1 if c.higher_is_better else -1 for c in CRITERIA])  # pymcdm: 1 profit, -1 cost
EVEN = dict.fromkeys(WEIGHT_NAMES, 1.0)


def random_table(rng: np.random.Generator, n: int, coarse: bool = False) -> pd.DataFrame:
    """Criteria of n made-up designs, every value > 0 (coarse: few distinct values, so ties and duplicates)."""
    if coarse:
        data = {c: rng.integers(1, 4, n).astype(float) for c in COLUMNS}
        data["yield_frac"] = data["yield_frac"] / 4
        data["delay_margin_frac"] = data["delay_margin_frac"] / 8
        data["effort"] = data["effort"] / 4
    else:
        data = {
            "delay_spread_frac": rng.uniform(0.01, 0.5, n), "delay_margin_frac": rng.uniform(0.05, 0.45, n),
            "yield_frac": rng.uniform(0.9, 1.0, n),
            "standby_after_a": rng.uniform(1e-7, 1e-4, n), "standby_during_a": rng.uniform(1e-6, 1e-2, n),
            "rails": rng.integers(1, 3, n).astype(float), "parts": rng.integers(4, 30, n).astype(float),
            "cost_eur": rng.uniform(0.3, 5.0, n), "effort": rng.uniform(0.05, 1.0, n),
        }
    return pd.DataFrame(data, index=[f"d{i:02d}" for i in range(n)], columns=COLUMNS)


def random_weights(rng: np.random.Generator) -> dict[str, float]:
    """Brief weights 1..5 each (all positive: pymcdm warns on zero weights)."""
    return {name: float(rng.integers(1, 6)) for name in WEIGHT_NAMES}


def evaluation(topology: str = "rc_hold", *, nominal_s: float = 30.0, min_s: float = 25.0, max_s: float = 36.0,
               band: tuple[float, float] = (20.0, 40.0), yield_frac: float = 1.0, after_a: float = 0.0,
               during_a: float = 1e-3, rails: int = 1, parts: int = 9, cost: float = 0.9, effort: float = 0.1,
               cold_c: float = 0.0, hot_c: float = 50.0, reasons: list[str] | None = None) -> Evaluation:
    """A synthetic feasible Evaluation: shortest delay at the cold corner, longest at the hot one, 12 V nominal."""
    worst = WorstCase(min_s=min_s, max_s=max_s, at_min={"ambient_c": cold_c, "supply_v": 13.2, "c_hold": 4.2e-4},
                      at_max={"ambient_c": hot_c, "supply_v": 10.8, "c_hold": 5.6e-4}, method="test", evaluated=8)
    mc = MonteCarlo(samples=1000, seed=1, mean_s=nominal_s, std_s=1.0, percentiles={0.005: min_s, 0.995: max_s},
                    yield_frac=yield_frac, yield_ci=(yield_frac, yield_frac), never_ends_frac=0.0,
                    delays=np.full(4, nominal_s))
    return Evaluation(
        topology=topology, design=Design(topology, {"r_hold": 1e6}), nominal_s=nominal_s, worst=worst, mc=mc,
        standby=Standby(during_a=during_a, after_a=after_a), rails=rails,
        bom=[BomLine("R1", "resistor-thick-film", "1 MΩ", parts - 1, 0.0), BomLine("Q1", "npn", "", 1, cost)],
        findings=[], band=band, coverage=0.99, supply_v=12.0, adapter_no_load_w=None, effort=effort,
        reasons=list(reasons or []),
    )


def criterion_vector(weights: dict[str, float]) -> np.ndarray:
    cw = criterion_weights(weights)
    return np.array([cw[c] for c in COLUMNS])


def top_at(table: pd.DataFrame, weights: dict[str, float], method: str) -> str:
    """Top design at `weights`, by scoring and ordering afresh (no sensitivity search)."""
    names = list(table.index)
    return names[order(scores(table.to_numpy(), criterion_vector(weights), method), names)[0]]


# ---- scores against pymcdm ----------------------------------------------------------------------
@pytest.mark.parametrize("method", ["wsm", "topsis"])
def test_scores_match_pymcdm(method):
    from pymcdm.methods import TOPSIS, WSM
    from pymcdm.normalizations import minmax_normalization, vector_normalization

    reference = {
        # Reference: pymcdm 1.4 WSM (weighted sum, Fishburn 1967) with minmax_normalization, the
        # normalisation ranking.py documents; pymcdm also maps an all-equal column to 1.
        "wsm": WSM(normalization_function=minmax_normalization),
        # Reference: pymcdm 1.4 TOPSIS (Hwang and Yoon 1981) with vector_normalization, i.e. classical
        # TOPSIS; pymcdm's own default (min-max) is not the classical method.
        "topsis": TOPSIS(normalization_function=vector_normalization),
    }[method]
    rng = np.random.default_rng(20240601 if method == "wsm" else 7)
    for trial in range(40):
        table = random_table(rng, int(rng.integers(2, 12)), coarse=trial % 3 == 0)
        weights = random_weights(rng)
        ours = rank(table, weights, method=method).table.loc[table.index, "score"].to_numpy()
        expected = reference(table.to_numpy(), criterion_vector(weights), TYPES)
        if not np.isfinite(expected).all():  # TOPSIS, every design equal on every criterion: pymcdm gives 0/0
            assert method == "topsis" and (ours == 1.0).all()
            continue
        np.testing.assert_allclose(ours, expected, rtol=0, atol=1e-12)


def test_topsis_all_zero_column_counts_as_equal_like_dropping_it():
    # Reference: pymcdm 1.4 TOPSIS with vector_normalization on the matrix without the all-zero column
    # (pymcdm itself returns NaN for a zero column: 0 / 0 in the normalisation).
    from pymcdm.methods import TOPSIS
    from pymcdm.normalizations import vector_normalization

    rng = np.random.default_rng(3)
    table = random_table(rng, 6)
    table["standby_after_a"] = 0.0  # e.g. every design cuts its own supply after the timeout
    weights = random_weights(rng)
    ours = rank(table, weights, method="topsis").table.loc[table.index, "score"].to_numpy()
    keep = [i for i, c in enumerate(COLUMNS) if c != "standby_after_a"]
    cw = criterion_vector(weights)[keep]
    expected = TOPSIS(normalization_function=vector_normalization)(
        table.to_numpy()[:, keep], cw / cw.sum(), TYPES[keep])
    np.testing.assert_allclose(ours, expected, rtol=0, atol=1e-12)


@settings(max_examples=60, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), n=st.integers(1, 9), method=st.sampled_from(["wsm", "topsis"]),
       coarse=st.booleans())
def test_scores_lie_in_unit_interval_and_ranks_follow_scores(seed, n, method, coarse):
    # Property of both methods (scores in [0, 1], rank 1 best) from their definitions.
    rng = np.random.default_rng(seed)
    result = rank(random_table(rng, n, coarse), random_weights(rng), method=method)
    score = result.table["score"].to_numpy()
    assert ((0 <= score) & (score <= 1)).all()
    assert list(result.table["rank"]) == list(range(1, n + 1))
    assert (np.diff(np.round(score, 12)) <= 0).all()


def test_design_best_on_every_criterion_scores_one_and_wins_both_methods():
    # From the definitions: min-max puts the best at 1 everywhere; TOPSIS' ideal point has D+ = 0.
    rng = np.random.default_rng(11)
    table = random_table(rng, 5)
    best = {c.column: (table[c.column].max() if c.higher_is_better else table[c.column].min()) for c in CRITERIA}
    table.loc["champion"] = best
    for method in ("wsm", "topsis"):
        result = rank(table, random_weights(rng), method=method)
        assert result.top == "champion"
        assert result.table.loc["champion", "score"] == pytest.approx(1.0, abs=1e-12)


def test_scaling_every_weight_alike_changes_nothing():
    # Renormalisation: only the ratios of the brief weights matter (documented in ranking.py).
    rng = np.random.default_rng(5)
    table = random_table(rng, 8)
    weights = random_weights(rng)
    for method in ("wsm", "topsis"):
        a = rank(table, weights, method=method).table
        b = rank(table, {k: 7.5 * v for k, v in weights.items()}, method=method).table
        assert list(a.index) == list(b.index)
        np.testing.assert_allclose(a["score"], b["score"], atol=1e-12)


def test_criterion_weights_split_accuracy_in_halves_and_quarters_and_standby_in_quarters():
    # The split documented in ranking.py: accuracy 1/2 spread + 1/4 margin + 1/4 yield, standby 3/4 after +
    # 1/4 during.
    cw = criterion_weights({"accuracy": 4, "standby": 4, "rails": 0, "parts": 0, "cost": 0, "effort": 0})
    assert cw == pytest.approx({"delay_spread_frac": 0.25, "delay_margin_frac": 0.125, "yield_frac": 0.125,
                                "standby_after_a": 0.375, "standby_during_a": 0.125, "rails": 0, "parts": 0,
                                "cost_eur": 0, "effort": 0})
    assert sum(criterion_weights({"accuracy": 3, "standby": 1, "rails": 2, "parts": 5, "cost": 1,
                                  "effort": 9}).values()) == pytest.approx(1.0)


# ---- Pareto flags against paretoset -----------------------------------------------------------------
def test_pareto_flags_match_paretoset_keeping_duplicates():
    # Reference: paretoset 1.2.5, paretoset(costs, sense=..., distinct=False, use_numba=False);
    # distinct=False because identical designs do not dominate each other (all are kept).
    from paretoset import paretoset

    rng = np.random.default_rng(99)
    sense = ["max" if c.higher_is_better else "min" for c in CRITERIA]
    for trial in range(60):
        table = random_table(rng, int(rng.integers(1, 25)), coarse=trial % 2 == 0)
        if trial % 5 == 0 and len(table) > 1:
            table.iloc[-1] = table.iloc[0].to_numpy()  # an exact duplicate
        expected = paretoset(table[COLUMNS], sense=sense, distinct=False, use_numba=False)
        np.testing.assert_array_equal(pareto_flags(table), expected)


def test_duplicate_designs_are_both_pareto_optimal_and_a_dominated_one_is_not():
    # From the definition of Pareto dominance: equal rows do not dominate each other.
    table = random_table(np.random.default_rng(1), 3)
    table.iloc[1] = table.iloc[0].to_numpy()
    worse = table.iloc[0].copy()
    worse["cost_eur"] += 1.0
    table.loc["worse"] = worse
    flags = dict(zip(table.index, pareto_flags(table)))
    assert flags["d00"] and flags["d01"]
    assert not flags["worse"]
    assert rank(table, EVEN).table.loc["worse", "pareto"] == False  # noqa: E712 (numpy bool)


# ---- weight sensitivity ---------------------------------------------------------------------------
def _check_crossings(table: pd.DataFrame, weights: dict[str, float], method: str) -> int:
    """Re-rank just short of and just past every reported crossing; return how many were checked."""
    result = rank(table, weights, method=method)
    checked = 0
    for s in result.sensitivity:
        eps = 1e-7 * (s.hi - s.lo)
        for crossing, sign in ((s.up, 1.0), (s.down, -1.0)):
            if crossing is None:
                continue
            assert s.lo <= crossing.at <= s.hi
            assert sign * (crossing.at - s.value) >= 0
            past = crossing.at + sign * eps
            if s.lo <= past <= s.hi:
                assert top_at(table, {**weights, s.weight: past}, method) == crossing.new_top != result.top
            short = crossing.at - sign * eps
            if sign * (short - s.value) > 0:
                assert top_at(table, {**weights, s.weight: short}, method) == result.top
            checked += 1
        if s.up is None:  # stable upwards: the top holds at the end of the range
            assert top_at(table, {**weights, s.weight: s.hi}, method) == result.top
        if s.down is None and sum(weights.values()) > s.value:
            assert top_at(table, {**weights, s.weight: s.lo}, method) == result.top
    return checked


@pytest.mark.parametrize("method", ["wsm", "topsis"])
def test_sensitivity_crossings_change_the_top_exactly_there(method):
    # Check by re-ranking at the reported weight +- a small step (independent of how it was found).
    rng = np.random.default_rng(2024 if method == "wsm" else 2025)
    checked = 0
    for _ in range(25):
        table = random_table(rng, int(rng.integers(2, 8)))
        checked += _check_crossings(table, random_weights(rng), method)
    assert checked > 20  # the random cases do produce crossings to check


def test_sensitivity_with_zero_weights_searches_up_to_ten_times_the_largest():
    rng = np.random.default_rng(8)
    table = random_table(rng, 6)
    weights = {"accuracy": 2.0, "standby": 0.0, "rails": 0.0, "parts": 1.0, "cost": 3.0, "effort": 0.0}
    result = rank(table, weights)
    for s in result.sensitivity:
        if s.value == 0:
            assert (s.lo, s.hi, s.down) == (0.0, 30.0, None)
    _check_crossings(table, weights, "wsm")
    _check_crossings(table, weights, "topsis")


def test_exact_weighted_sum_crossings_agree_with_the_numeric_search():
    # Two independent computations of the same quantity: closed-form line crossings and grid + subdivision.
    rng = np.random.default_rng(31)
    compared = 0
    for _ in range(20):
        table = random_table(rng, int(rng.integers(2, 8)))
        raw = np.array(list(random_weights(rng).values()))
        names = list(table.index)
        top = names.index(rank(table, dict(zip(WEIGHT_NAMES, raw))).top)
        for k in range(len(WEIGHT_NAMES)):
            exact = _linear_crossings(table.to_numpy(), raw, k, names, top)
            numeric = _numeric_crossings(table.to_numpy(), raw, k, names, top, "wsm")
            span = 10 * raw[k]
            for a, b in zip(exact, numeric):
                assert (a is None) == (b is None)
                if a is not None:
                    assert a.new_top == b.new_top
                    assert abs(a.at - b.at) <= 2e-9 * span  # the numeric bracket: 1 / 33**6 of the range
                    compared += 1
    assert compared > 10


def test_hand_built_crossing_for_two_designs():
    # By hand: A best on parts only, B best on cost only, everything else equal. With min-max
    # normalisation the score of A is w_parts / W and of B is w_cost / W: B takes over exactly when the
    # cost weight passes the parts weight (2), whether it is raised from 1 or parts lowered from 2.
    table = pd.DataFrame([[0.1, 0.2, 1.0, 0.0, 1e-3, 1, 8, 2.0, 0.1], [0.1, 0.2, 1.0, 0.0, 1e-3, 1, 12, 1.0, 0.1]],
                         columns=COLUMNS, index=["A", "B"])
    weights = {"accuracy": 1.0, "standby": 1.0, "rails": 1.0, "parts": 2.0, "cost": 1.0, "effort": 1.0}
    result = rank(table, weights)
    assert result.top == "A"
    by_weight = {s.weight: s for s in result.sensitivity}
    assert by_weight["cost"].up.at == pytest.approx(2.0) and by_weight["cost"].up.new_top == "B"
    assert by_weight["parts"].down.at == pytest.approx(1.0) and by_weight["parts"].down.new_top == "B"
    assert by_weight["cost"].down is None and by_weight["parts"].up is None
    assert by_weight["accuracy"].nearest is None
    assert "none within [0, 10x]" in by_weight["accuracy"].text
    assert "raising it from 1 to 2 (x2) makes B top" in by_weight["cost"].text
    # Equal weights on parts and cost: A and B tie, A leads by name, and any shift towards cost hands B the top.
    tied = {s.weight: s for s in rank(table, {**weights, "parts": 1.0}).sensitivity}
    assert (tied["cost"].up.at, tied["cost"].up.new_top) == (pytest.approx(1.0), "B")
    assert tied["cost"].text == "cost weight: tied at 1; any rise makes B top"
    assert tied["parts"].text == "parts weight: tied at 1; any fall makes B top"


def test_single_design_ranks_first_and_no_weight_moves_it():
    table = random_table(np.random.default_rng(2), 1)
    for method in ("wsm", "topsis"):
        result = rank(table, EVEN, method=method)
        assert result.top == "d00"
        assert result.table.loc["d00", "rank"] == 1
        assert result.table.loc["d00", "score"] == pytest.approx(1.0, abs=1e-12)
        assert bool(result.table.loc["d00", "pareto"])
        assert all(s.up is None and s.down is None for s in result.sensitivity)
        assert all("none within [0, 10x]" in s.text for s in result.sensitivity)
        assert "only design" in result.reasons["d00"]


def test_only_one_weight_above_zero_is_stable_in_that_weight():
    # With one weight above 0 every criterion weight is fixed whatever its size (renormalisation).
    table = random_table(np.random.default_rng(4), 5)
    weights = {**dict.fromkeys(WEIGHT_NAMES, 0.0), "cost": 2.0}
    result = rank(table, weights)
    cost = next(s for s in result.sensitivity if s.weight == "cost")
    assert cost.up is None and cost.down is None
    assert result.top == table["cost_eur"].idxmin()


# ---- ties -------------------------------------------------------------------------------------------
@pytest.mark.parametrize("method", ["wsm", "topsis"])
def test_equal_scores_are_ordered_by_name_whatever_the_input_order(method):
    rng = np.random.default_rng(12)
    table = random_table(rng, 5)
    twin = table.iloc[2].to_numpy()
    table.loc["alpha"] = twin
    table = table.rename(index={"d02": "zulu"})
    first = rank(table, EVEN, method=method).table
    shuffled = rank(table.iloc[rng.permutation(len(table))], EVEN, method=method).table
    assert list(first.index) == list(shuffled.index)
    assert first.loc["alpha", "rank"] + 1 == first.loc["zulu", "rank"]
    assert first.loc["alpha", "score"] == first.loc["zulu", "score"]


def test_order_breaks_exact_ties_by_name_then_position():
    assert list(order(np.array([0.5, 0.7, 0.5, 0.5]), ["b", "z", "a", "b"])) == [1, 2, 0, 3]


# ---- reasons --------------------------------------------------------------------------------------
def test_reasons_name_what_each_design_wins_loses_and_what_binds():
    hold = evaluation("rc_hold", min_s=26.0, max_s=39.0, after_a=0.0, parts=9, cost=0.80, effort=0.1)
    timer = evaluation("timer555", min_s=27.0, max_s=33.0, after_a=2e-6, parts=14, cost=1.10, effort=0.3,
                       cold_c=-10.0)
    counter = evaluation("counter", nominal_s=30.0, min_s=29.0, max_s=31.0, after_a=5e-6, during_a=2e-3,
                         parts=16, cost=2.40, effort=0.5)
    result = rank([hold, timer, counter], EVEN)
    hold_reason = result.reasons["rc_hold"]
    assert "lowest standby after timeout (0 A)" in hold_reason
    assert "fewest parts (9 parts)" in hold_reason
    assert "widest worst-case delay spread (43.3 % of nominal)" in hold_reason  # (39 - 26) / 30
    # rc_hold's longest delay 39 s is 1 s, 5 % of the 20 s wide band, under the 40 s band maximum, at the hot corner.
    assert ("binds: longest delay 39 s at 50 °C, 10.8 V against the band maximum 40 s (5 % of the band to spare)"
            in hold_reason)
    assert "tightest worst-case delay spread (6.67 % of nominal)" in result.reasons["counter"]
    assert "highest cost per unit (2.40 EUR)" in result.reasons["counter"]
    # timer555 and rc_hold both draw 1 mA while timing, the least: a shared best.
    assert "wins on lowest current while timing (1 mA, shared)" in result.reasons["timer555"]
    # timer555: 7 s, 35 % of the band, from either edge: the tie names the band minimum.
    assert "band minimum 20 s (35 % of the band to spare)" in result.reasons["timer555"]


def test_reason_names_the_cold_corner_when_the_band_minimum_binds():
    short = evaluation("rc_hold", min_s=20.5, max_s=31.0, cold_c=-20.0)
    other = evaluation("timer555", min_s=28.0, max_s=32.0, parts=12)
    reason = rank([short, other], EVEN).reasons["rc_hold"]
    # 0.5 s above the 20 s minimum is 2.5 % of the 20 s wide band.
    assert ("binds: shortest delay 20.5 s at -20 °C, 13.2 V against the band minimum 20 s (2.5 % of the band "
            "to spare)") in reason


def test_reasons_skip_unweighted_and_all_equal_criteria():
    table = random_table(np.random.default_rng(6), 3)
    table["rails"] = 1.0  # all equal: nobody wins on rails
    weights = {**EVEN, "cost": 0.0}
    reasons = rank(table, weights).reasons
    assert not any("rail" in r for r in reasons.values())
    assert not any("cost" in r for r in reasons.values())


def test_design_best_on_nothing_says_where_it_is_strongest_and_what_costs_it_most():
    # C sits between A and B: 3/4 of the way to the best part count, halfway on spread and cost.
    table = pd.DataFrame([[0.1, 0.2, 1.0, 0.0, 1e-3, 1, 8, 2.0, 0.1], [0.3, 0.2, 1.0, 0.0, 1e-3, 1, 12, 1.0, 0.1],
                          [0.2, 0.2, 1.0, 0.0, 1e-3, 1, 9, 1.5, 0.1]], columns=COLUMNS, index=["A", "B", "C"])
    reason = rank(table, {**EVEN, "accuracy": 3.0}).reasons["C"]
    assert reason.startswith("no outright best; strongest on part count (9 parts)")
    # Shortfalls weight x share x (1 - normalised): spread 3/8 x 1/2 x 0.5 beats cost 1/8 x 0.5 and parts
    # 1/8 x 0.25 (the margin is equal for all, so it decides nothing).
    assert reason.endswith("gives up most on delay spread (20 % of nominal)")


# ---- criteria from Evaluations, result object, errors ----------------------------------------------
def test_criteria_table_reads_the_evaluation_fields():
    ev = evaluation(nominal_s=100.0, min_s=90.0, max_s=120.0, band=(80.0, 130.0), yield_frac=0.97,
                    after_a=1e-6, during_a=3e-3, rails=2, parts=11, cost=1.25, effort=0.4)
    row = criteria_table([ev, evaluation()]).iloc[0]
    assert row["delay_spread_frac"] == pytest.approx(0.3)
    # margin at the nearer edge: (90 - 80) / 50 = 0.2 above the minimum, (130 - 120) / 50 = 0.2 below the maximum
    assert row["delay_margin_frac"] == pytest.approx(0.2)
    assert (row["yield_frac"], row["standby_after_a"], row["standby_during_a"]) == (0.97, 1e-6, 3e-3)
    assert (row["rails"], row["parts"], row["cost_eur"], row["effort"]) == (2, 11, 1.25, 0.4)
    assert list(criteria_table([ev, evaluation(), evaluation("mcu"), evaluation()]).index) == [
        "rc_hold", "rc_hold #2", "mcu", "rc_hold #3"]


def test_headline_figures_are_one_row_the_criteria_are_drawn_from():
    ev = evaluation(nominal_s=100.0, min_s=90.0, max_s=120.0, band=(80.0, 130.0), yield_frac=0.97,
                    after_a=1e-6, during_a=3e-3, rails=2, parts=11, cost=1.25, effort=0.4)
    row = headline(ev)
    assert tuple(row) == HEADLINE
    assert {c.column for c in CRITERIA} <= set(HEADLINE)  # every criterion is a headline figure
    assert (row["delay_nominal_s"], row["delay_worst_min_s"], row["delay_worst_max_s"]) == (100.0, 90.0, 120.0)
    assert row["delay_spread_frac"] == pytest.approx(0.3) and row["standby_after_w"] == pytest.approx(ev.after_w)
    assert (row["parts"], row["bom_lines"], row["cost_eur"]) == (11, ev.lines, 1.25)
    # The shares of each brief weight sum to 1, so criterion weights sum to 1 (module docstring).
    for weight in WEIGHT_NAMES:
        assert sum(c.share for c in CRITERIA if c.weight == weight) == pytest.approx(1.0)


def test_the_brief_the_optimiser_and_the_ranking_name_the_same_weights():
    from tradeoff.brief import Weights
    from tradeoff.optimise.formulation import LINEAR_TERMS

    assert tuple(Weights.model_fields) == WEIGHT_NAMES
    assert set(LINEAR_TERMS) | {"accuracy"} == set(WEIGHT_NAMES) == {c.weight for c in CRITERIA}
    # The optimiser splits the standby weight as the ranking does (3/4 after the timeout, 1/4 while timing).
    shares = {column: part_share for parts in LINEAR_TERMS.values() for column, _, part_share in parts}
    assert (shares["after_a"], shares["during_a"]) == (0.75, 0.25)


def test_to_dict_is_json_ready_and_complete():
    result = rank([evaluation(), evaluation("timer555", parts=12, min_s=28.0, max_s=32.0)], EVEN, method="topsis")
    data = json.loads(json.dumps(result.to_dict(), allow_nan=False))
    assert data["method"] == "topsis" and data["normalisation"] == "vector"
    assert [d["rank"] for d in data["designs"]] == [1, 2]
    assert data["top"] == data["designs"][0]["name"]
    assert {d["name"] for d in data["designs"]} == {"rc_hold", "timer555"}
    assert all(d["reason"] and set(d["criteria"]) == set(COLUMNS) for d in data["designs"])
    assert [s["weight"] for s in data["sensitivity"]] == list(WEIGHT_NAMES)
    assert sum(data["criterion_weights"].values()) == pytest.approx(1.0)
    positions = {d["name"]: d["position"] for d in data["designs"]}
    assert positions == {"rc_hold": 0, "timer555": 1}


@pytest.mark.parametrize("weights, message", [
    (dict.fromkeys(WEIGHT_NAMES, 0.0), "every weight is 0; accepted: at least one of accuracy"),
    ({**EVEN, "cost": -1.0}, "weight cost is -1.0; accepted: a finite number >= 0"),
    ({**EVEN, "parts": math.nan}, "weight parts is nan"),
    ({**EVEN, "price": 1.0}, "unknown weight.s. price; accepted: accuracy, standby"),
])
def test_bad_weights_raise_a_clear_error(weights, message):
    with pytest.raises(RankingError, match=message):
        rank(random_table(np.random.default_rng(0), 3), weights)


def test_bad_designs_raise_a_clear_error():
    table = random_table(np.random.default_rng(0), 3)
    with pytest.raises(RankingError, match="unknown ranking method 'ahp'; accepted: wsm, topsis"):
        rank(table, EVEN, method="ahp")
    with pytest.raises(RankingError, match="lacks column.s. cost_eur"):
        rank(table.drop(columns="cost_eur"), EVEN)
    with pytest.raises(RankingError, match="design 'd01': delay_spread_frac is inf"):
        rank(table.assign(delay_spread_frac=[0.1, math.inf, 0.2]), EVEN)
    with pytest.raises(RankingError, match="design 'd00': yield_frac is 1.5; accepted: a fraction from 0 to 1"):
        rank(table.assign(yield_frac=[1.5, 1.0, 1.0]), EVEN)
    with pytest.raises(RankingError, match="no design to rank"):
        rank([], EVEN)
    with pytest.raises(RankingError, match="design 'rc_hold' does not meet the brief .worst-case"):
        rank([evaluation(reasons=["worst-case longest delay 45 s exceeds the band's maximum 40 s"])], EVEN)
    with pytest.raises(RankingError, match="name.s. d00 appear more than once"):
        rank(table.rename(index={"d01": "d00"}), EVEN)


def test_equal_scores_are_ordered_by_the_wider_margin_before_the_name():
    # Two designs equal on every weighted criterion: the one with more room inside the band leads,
    # whatever their names; margin unweighted (accuracy 0) so it cannot move the scores themselves.
    weights = {**EVEN, "accuracy": 0.0}
    narrow = evaluation("a_narrow", min_s=21.0, max_s=39.0)  # 5 % of the 20 s band at each end
    wide = evaluation("z_wide", min_s=26.0, max_s=34.0)  # 30 % at each end
    result = rank([narrow, wide], weights)
    assert result.table.loc["a_narrow", "score"] == pytest.approx(result.table.loc["z_wide", "score"])
    assert result.top == "z_wide"
    assert list(order(np.array([0.5, 0.5]), ["a", "z"], [0.05, 0.3])) == [1, 0]
