"""Selection program (tradeoff.optimise) against brute-force enumeration.

The reference here is an independent brute force written in plain Python from the formulation
stated in optimise's module docstring (band at the worst corners, hard limits, links, weighted
sum of range-normalised terms, accuracy as the distance from the band's geometric centre). It
shares no code with the module, so a wrong formulation or a solver tolerance shows as a
mismatch.
"""
from __future__ import annotations

import itertools
import math
import os
import subprocess
import sys
import warnings
from pathlib import Path
from types import SimpleNamespace as NS

import numpy as np
import pandas as pd
import pulp
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tradeoff import optimise as opt
from tradeoff.optimise import program
from tradeoff.optimise.bounds import lower_bounds, partner_bounds
from tradeoff.optimise.explain import Explainer
from tradeoff.criteria import WEIGHT_NAMES
from tradeoff.errors import InfeasibleError, SolverError
from tradeoff.optimise import SelectionProblem, exhaustive
from tradeoff.selection import Block, Link, SelectionModel

NO_LIMITS = NS(standby_after_a=None, parts=None, cost=None, rails=None)
EQUAL_WEIGHTS = NS(accuracy=1.0, parts=1.0, cost=1.0, standby=1.0, effort=1.0, rails=1.0)
TIE = 1e-9
"""Objectives closer than this count as ties (terms are of order 1)."""


# ---- an independent brute force ------------------------------------------------------------


def _range(rows_of, column, fixed):
    """(origin, span) of a summed column over all combinations: per-block extremes add."""
    lo = fixed + sum(min(r.get(column, 0.0) for r in rows) for rows in rows_of)
    hi = fixed + sum(max(r.get(column, 0.0) for r in rows) for rows in rows_of)
    return lo, (hi - lo if hi > lo else 1.0)


def reference(model, band, limits, weights):
    """Every feasible combination as (objective, rows), best first, by the documented formulation."""
    bmin, bmax = band
    rows_of = [b.table.to_dict("records") for b in model.blocks]
    fixed = {"placements": model.fixed_placements, "cost": model.fixed_cost, "after_a": model.fixed_after_a,
             "during_a": model.fixed_during_a, "effort": model.effort, "rails": model.rails}
    scale = {c: _range(rows_of, c, f) for c, f in fixed.items()}
    t_c = math.sqrt(bmin * bmax)
    out = []
    for combo in itertools.product(*[list(enumerate(rows)) for rows in rows_of]):
        rows = [r for _, r in combo]

        def total(column):
            return fixed.get(column, 0.0) + sum(r.get(column, 0.0) for r in rows)

        if model.combine == "product":
            lo, nom, hi = (math.prod(r[c] for r in rows) for c in ("delay_lo", "delay_nom", "delay_hi"))
            accuracy = abs(math.log(nom) - math.log(t_c)) / (math.log(bmax / bmin) / 2)
        else:
            lo, nom, hi = (sum(r[c] for r in rows) for c in ("delay_lo", "delay_nom", "delay_hi"))
            accuracy = abs(nom - t_c) / t_c / (math.sqrt(bmax / bmin) - 1)
        ok = lo >= bmin and hi <= bmax
        for attribute, column in (("standby_after_a", "after_a"), ("parts", "placements"), ("cost", "cost"),
                                  ("rails", "rails")):
            limit = getattr(limits, attribute)
            ok &= limit is None or total(column) <= limit
        for link in model.links:
            names = [b.name for b in model.blocks]
            lhs = sum(k * rows[names.index(block)][column] for block, column, k in link.terms)
            ok &= lhs <= link.rhs if link.sense == "<=" else lhs >= link.rhs
        if not ok:
            continue

        def norm(column):
            origin, span = scale[column]
            return (total(column) - origin) / span

        objective = (weights.accuracy * accuracy + weights.parts * norm("placements") + weights.cost * norm("cost")
                     + weights.standby * (0.75 * norm("after_a") + 0.25 * norm("during_a"))
                     + weights.effort * norm("effort") + weights.rails * norm("rails"))
        out.append((objective, tuple(i for i, _ in combo)))
    return sorted(out)


# ---- random small models -------------------------------------------------------------------


def random_model(seed: int, combine: str, blocks: tuple[int, int] = (1, 3), rows: tuple[int, int] = (1, 8)):
    """A random model of 1 to 3 blocks (or `blocks`) with 1 to 8 rows (or `rows`) each, a band near
    a random combination, random links, limits and weights; about a third of them are infeasible."""
    rng = np.random.default_rng(seed)
    count = int(rng.integers(blocks[0], blocks[1] + 1))
    blocks = []
    for b in range(count):
        n = int(rng.integers(rows[0], rows[1] + 1))
        if combine == "product":
            nom = np.exp(rng.uniform(-1, 1, n)) * (100.0 if b == 0 else 1.0)
        else:
            nom = rng.uniform(1.0, 30.0, n)
        placements = rng.integers(1, 4, n)
        table = pd.DataFrame({
            f"r{b}": nom * 1e3, f"ln_r{b}": np.log(nom), f"o{b}": rng.integers(0, 3, n),
            "delay_lo": nom * (1 - rng.uniform(0, 0.15, n)), "delay_nom": nom,
            "delay_hi": nom * (1 + rng.uniform(0, 0.15, n)),
            "cost": rng.uniform(0.01, 1.0, n), "placements": placements, "lines": placements,
            "during_a": rng.uniform(0, 1e-3, n), "after_a": rng.uniform(0, 1e-6, n) * (rng.uniform() < 0.8),
        })
        if rng.uniform() < 0.3:
            table["effort"] = rng.uniform(0, 1, n)
        if rng.uniform() < 0.2:
            table["rails"] = rng.integers(0, 2, n).astype(float)
        blocks.append(Block(f"block{b}", table, roles=(f"r{b}",), options=(f"o{b}",)))
    model = SelectionModel("synthetic", combine, blocks, fixed_cost=float(rng.uniform(0, 1)),
                           fixed_placements=int(rng.integers(0, 3)), fixed_after_a=float(rng.uniform(0, 1e-7)),
                           rails=1, effort=float(rng.uniform(0, 0.5)))
    pick = [int(rng.integers(len(b.table))) for b in blocks]
    rows = [b.table.iloc[i] for b, i in zip(blocks, pick)]
    centre = math.prod(r["delay_nom"] for r in rows) if combine == "product" else sum(r["delay_nom"] for r in rows)
    band = (centre * rng.uniform(0.6, 0.97), centre * rng.uniform(1.03, 1.6))
    if rng.uniform() < 0.5:
        terms = tuple((b.name, f"ln_r{k}", float(rng.choice([-1.0, 1.0]))) for k, b in enumerate(blocks))
        at_pick = sum(c * r[col] for (_, col, c), r in zip(terms, rows))
        model.links.append(Link(terms, str(rng.choice(["<=", ">="])), float(at_pick + rng.normal(0, 0.5)),
                                "a coupling rule between the blocks"))

    def somewhere(column, fixed):
        lo, span = _range([b.table.to_dict("records") for b in blocks], column, fixed)
        return lo + span * rng.uniform(-0.1, 0.9)

    limits = NS(
        standby_after_a=somewhere("after_a", model.fixed_after_a) if rng.uniform() < 0.4 else None,
        parts=int(round(somewhere("placements", model.fixed_placements))) if rng.uniform() < 0.4 else None,
        cost=somewhere("cost", model.fixed_cost) if rng.uniform() < 0.4 else None,
        rails=None,
    )
    weights = NS(**{t: float(rng.uniform(0, 3) * (rng.uniform() < 0.8)) for t in WEIGHT_NAMES})
    return model, band, limits, weights


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 2**32 - 1), combine=st.sampled_from(["sum", "product"]))
def test_program_and_exhaustive_equal_brute_force(seed, combine):
    model, band, limits, weights = random_model(seed, combine)
    expected = reference(model, band, limits, weights)
    result = SelectionProblem(model, band, limits, weights).solve()
    found = exhaustive(model, band, limits, weights, k=3)
    if not expected:
        assert result.status == "Infeasible" and result.reasons
        assert found == []
        return
    assert result.status == "Optimal"
    best = expected[0][0]
    assert result.objective == pytest.approx(best, abs=TIE)
    # The chosen rows are one of the optimal combinations (ties by objective allowed).
    chosen = tuple(result.rows[b.name] for b in model.blocks)
    assert chosen in {rows for obj, rows in expected if obj <= best + TIE}
    # Exhaustive search reports the same k best objectives as the brute force.
    assert [f.objective for f in found] == pytest.approx([e[0] for e in expected[:3]], abs=TIE)


@settings(max_examples=15, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), combine=st.sampled_from(["sum", "product"]))
def test_alternatives_are_distinct_sorted_and_the_k_best(seed, combine):
    model, band, limits, weights = random_model(seed, combine)
    expected = reference(model, band, limits, weights)
    results = SelectionProblem(model, band, limits, weights).best(4)
    assert len(results) == min(4, len(expected))
    objectives = [r.objective for r in results]
    assert objectives == sorted(objectives)
    assert len({tuple(r.rows.values()) for r in results}) == len(results)
    assert objectives == pytest.approx([e[0] for e in expected[:4]], abs=TIE)


@pytest.mark.parametrize("seed", range(5))
@pytest.mark.parametrize("combine", ["sum", "product"])
def test_large_tables_pruned_by_the_incumbent_bound_stay_exact(seed, combine):
    """Blocks above the incumbent program's row count are pruned by objective bounds; alternatives
    beyond the bound make the problem fall back to every row. Both must match exhaustive search."""
    model, band, limits, weights = random_model(seed, combine, blocks=(2, 2), rows=(100, 250))
    expected = exhaustive(model, band, limits, weights, k=6)
    problem = SelectionProblem(model, band, limits, weights)
    results = problem.best(6)
    assert [r.objective for r in results] == pytest.approx([e.objective for e in expected], abs=TIE)
    assert all(problem.feasible(r.rows) for r in results)


@settings(max_examples=40, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), combine=st.sampled_from(["sum", "product"]))
def test_row_bounds_never_exceed_a_combination_and_are_exact_for_two_blocks(seed, combine):
    """The partner bound of each row is at most the objective of every combination using it
    (requirements aside) and at least the quick bound; with two blocks it is the best of them."""
    model, band, limits, weights = random_model(seed, combine, rows=(1, 12))
    problem = SelectionProblem(model, band, NO_LIMITS, weights)
    sizes = [len(b.table) for b in model.blocks]
    every = [np.arange(n) for n in sizes]
    quick, partner = lower_bounds(problem.tables, every), partner_bounds(problem.tables, every)
    combos = list(itertools.product(*[range(n) for n in sizes]))
    objectives = {rows: problem.objective_of(rows) for rows in combos}
    for b in range(len(sizes)):
        best = np.array([min(v for rows, v in objectives.items() if rows[b] == i) for i in range(sizes[b])])
        assert np.all(quick[b] <= partner[b] + TIE) and np.all(partner[b] <= best + TIE)
        if len(sizes) <= 2:
            assert partner[b] == pytest.approx(best, abs=TIE)


@pytest.mark.parametrize("seed", [3, 17, 2024])
@pytest.mark.parametrize("combine", ["sum", "product"])
def test_cbc_and_highs_agree(seed, combine):
    model, band, limits, weights = random_model(seed, combine)
    highs = SelectionProblem(model, band, limits, weights, solver="highs").best(2)
    cbc = SelectionProblem(model, band, limits, weights, solver="cbc").best(2)
    assert [r.objective for r in cbc] == pytest.approx([r.objective for r in highs], abs=TIE)


def test_explicit_scales_are_used():
    """Doubling the cost span halves the cost term's contribution to the objective."""
    model, band, limits, _ = random_model(5, "sum")
    weights = NS(accuracy=0.0, parts=0.0, cost=1.0, standby=0.0, effort=0.0, rails=0.0)
    default = SelectionProblem(model, band, NO_LIMITS, weights)
    s = default.scales
    wide = opt.Scales(s.origin, {**s.span, "cost": 2 * s.span["cost"]})
    rows = {b.name: 0 for b in model.blocks}
    assert SelectionProblem(model, band, NO_LIMITS, weights, scales=wide).objective_of(rows) == pytest.approx(
        default.objective_of(rows) / 2)


# ---- silence and solver status -------------------------------------------------------------


FRESH_PROCESS_SOLVE = """
import pandas as pd
from types import SimpleNamespace as NS
from tradeoff.optimise import SelectionProblem
from tradeoff.selection import Block, SelectionModel
table = pd.DataFrame({"delay_lo": [9.0, 19.0], "delay_nom": [10.0, 20.0], "delay_hi": [11.0, 21.0], "cost": 0.1,
                      "placements": 1, "lines": 1, "during_a": 0.0, "after_a": 0.0})
model = SelectionModel("t", "sum", [Block("hold", table)])
limits = NS(standby_after_a=None, parts=None, cost=None, rails=None)
weights = NS(accuracy=1, parts=1, cost=1, standby=1, effort=1, rails=1)
result = SelectionProblem(model, (15.0, 25.0), limits, weights).solve()
print(result.status, result.rows, end="")
"""


def test_first_highs_solve_prints_nothing():
    """HiGHS's banner appears at the first instance in a process (LIBRARIES.md): solve in a fresh one."""
    root = Path(__file__).resolve().parents[1]
    run = subprocess.run([sys.executable, "-c", FRESH_PROCESS_SOLVE], capture_output=True, text=True, cwd=root,
                         env={**os.environ, "PYTHONPATH": str(root)}, check=True)
    assert run.stdout == "Optimal {'hold': 1}"


@pytest.mark.parametrize("solver", ["highs", "cbc"])
def test_solvers_print_nothing(capfd, solver):
    model, band, limits, weights = random_model(8, "product")
    SelectionProblem(model, band, limits, weights, solver=solver).best(2)
    out, err = capfd.readouterr()
    assert out == "" and err == ""


def test_unknown_solver_is_refused():
    model, band, limits, weights = random_model(1, "sum")
    with pytest.raises(SolverError, match=r"unknown solver 'gurobi'; accepted: 'highs', 'cbc'"):
        SelectionProblem(model, band, limits, weights, solver="gurobi")


def test_a_time_limited_solve_is_not_taken_for_optimal(monkeypatch):
    """A solve stopped by its time limit before any solution is a solver error, not an infeasibility."""
    def stopped_at_once(name):
        program._silence_highs_banner()
        return pulp.HiGHS(msg=False, timeLimit=0.0, presolve="off")

    monkeypatch.setattr(program, "_solver", stopped_at_once)
    model, band, limits, weights = random_model(0, "sum")
    with pytest.raises(SolverError, match=r"highs returned status 'Not Solved' .*expected 'Optimal' or 'Infeasible'"):
        SelectionProblem(model, band, limits, weights).solve()


# ---- infeasibility in the designer's terms -------------------------------------------------


def rc_block(name, values, spread=0.05, **extra):
    """A block of delay contributions `values` [s] with a symmetric worst-case spread."""
    v = np.asarray(values, dtype=float)
    n = len(v)
    columns = {"r": v, "delay_lo": v * (1 - spread), "delay_nom": v, "delay_hi": v * (1 + spread),
               "cost": np.full(n, 0.1), "placements": np.ones(n), "lines": np.ones(n),
               "during_a": np.full(n, 1e-3), "after_a": np.full(n, 1e-9)}
    columns.update({k: np.broadcast_to(np.asarray(x, dtype=float), (n,)) for k, x in extra.items()})
    return Block(name, pd.DataFrame(columns), roles=("r",))


def reasons(model, band, limits=NO_LIMITS):
    result = SelectionProblem(model, band, limits, EQUAL_WEIGHTS).solve()
    assert result.status == "Infeasible"
    return result.reasons


def test_band_out_of_reach_names_the_best_delay():
    model = SelectionModel("t", "sum", [rc_block("hold", [10, 20, 40])])
    # Longest worst-case shortest delay: 40 s · 0.95 = 38 s, below the band's 60 s.
    assert reasons(model, (60, 70)) == ["even the longest-delay candidates time out too early: the worst-case "
                                       "shortest delay reaches at most 38 s; the band's minimum is 1 min"]
    assert "at least 10.5 s; the band's maximum is 8 s" in reasons(model, (5, 8))[0]


def test_tolerance_spread_wider_than_the_band():
    # ±10 % at the worst corners spreads the delay by 1.1/0.9 = ×1.22; the band 19 s..21 s allows ×1.11.
    model = SelectionModel("t", "product", [rc_block("hold", [10, 20, 30], spread=0.10),
                                            rc_block("stage", [1.0, 2.0], spread=0.0)])
    assert reasons(model, (19, 21)) == ["the uncertainties alone (part tolerances, supply, temperature and any "
                                        "leakage) spread the delay by ×1.22 between the worst-case corners; the "
                                        "band 19 s to 21 s allows ×1.11"]


def test_a_spread_wider_than_the_band_is_named_before_a_band_edge_out_of_reach():
    """A topology keeps only candidates whose nominal delay lies in the band, so 'the longest-delay candidates
    time out too early' may only say that the longer ones were dropped; a spread wider than the band binds
    wherever the band lies and comes first. ±20 % spreads the delay by 1.2/0.8 = ×1.5; 19 s..21 s allows ×1.11;
    the longest worst-case shortest delay is 20 s · 0.8 = 16 s."""
    model = SelectionModel("t", "sum", [rc_block("hold", [10, 20], spread=0.20)])
    assert reasons(model, (19, 21)) == [
        "the uncertainties alone (part tolerances, supply, temperature and any leakage) spread the delay by ×1.5 "
        "between the worst-case corners; the band 19 s to 21 s allows ×1.11",
        "even the longest-delay candidates time out too early: the worst-case shortest delay reaches at most 16 s; "
        "the band's minimum is 19 s"]


@pytest.mark.parametrize("zero_block", [False, True], ids=["all-timed", "with-a-zero-delay-block"])
def test_sum_mode_smallest_spread_matches_brute_force(zero_block):
    """Dinkelbach's ratio search against the smallest ratio over every combination; a block whose rows add no
    delay (a fixed stage) must neither warn of a division by zero nor change the answer."""
    rng = np.random.default_rng(4)
    blocks = []
    for name in ("a", "b", "c", "z")[:4 if zero_block else 3]:
        v = rng.uniform(1, 10, 6) * (name != "z")
        blocks.append(Block(name, pd.DataFrame({
            "delay_lo": v * (1 - rng.uniform(0, 0.3, 6)), "delay_nom": v, "delay_hi": v * (1 + rng.uniform(0, 0.3, 6)),
            "cost": 0.0, "placements": 1, "lines": 1, "during_a": 0.0, "after_a": 0.0})))
    model = SelectionModel("t", "sum", blocks)
    tables = [b.table.to_dict("records") for b in blocks]
    brute = min(sum(r["delay_hi"] for r in c) / sum(r["delay_lo"] for r in c) for c in itertools.product(*tables))
    tables = SelectionProblem(model, (10, 20), NO_LIMITS, EQUAL_WEIGHTS).tables
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert Explainer(tables, "highs")._smallest_spread() == pytest.approx(brute)


def test_standard_values_miss_a_narrow_band_between_them():
    # 10 s and 20 s candidates with ±1 %: the band 14 s..16 s fits the spread but no value lands in it.
    # Relative misses: 20.2 s is 26 % above 16 s, 9.9 s is 29 % below 14 s: 20 s comes closest.
    model = SelectionModel("t", "sum", [rc_block("hold", [10, 20], spread=0.01)])
    assert reasons(model, (14, 16)) == ["no combination of standard values puts both worst-case delays inside the "
                                       "band: the closest is 19.8 s to 20.2 s at the worst-case corners against the "
                                       "band 14 s to 16 s"]


def test_standby_limit_below_every_candidate_counts_the_fixed_draw():
    model = SelectionModel("t", "sum", [rc_block("hold", [10, 20], after_a=[2e-6, 3e-6])], fixed_after_a=1e-6)
    limits = NS(standby_after_a=1e-6, parts=None, cost=None, rails=None)
    assert reasons(model, (9, 22), limits) == [
        "the smallest standby current after the timeout reachable is 3 µA; the limit is 1 µA"]


def test_rails_limit_against_the_model_rails():
    model = SelectionModel("t", "sum", [rc_block("hold", [10])], rails=2)
    limits = NS(standby_after_a=None, parts=None, cost=None, rails=1)
    assert reasons(model, (9, 11), limits) == ["the fewest supply rails reachable is 2; the limit is 1"]


def test_conflicting_limits_name_each_other_with_numbers():
    # The cheap candidate needs three placements, the compact one costs 0.90 EUR.
    model = SelectionModel("t", "sum", [rc_block("hold", [10, 10.5], cost=[0.1, 0.9], placements=[3, 1])])
    limits = NS(standby_after_a=None, parts=2, cost=0.5, rails=None)
    assert reasons(model, (9, 12), limits) == [
        "these requirements cannot all be met together: the part-count limit, the cost limit",
        "with the cost limit met, the fewest parts reachable is 3; the limit is 2",
        "with the part-count limit met, the lowest indicative cost reachable is 0.90 EUR; the limit is 0.50 EUR",
    ]


def test_band_in_conflict_with_a_limit():
    # Only the 20 s candidate meets the band, and it draws 5 µA after the timeout.
    model = SelectionModel("t", "sum", [rc_block("hold", [10, 20], after_a=[1e-7, 5e-6])])
    limits = NS(standby_after_a=1e-6, parts=None, cost=None, rails=None)
    assert reasons(model, (18, 22), limits) == [
        "these requirements cannot all be met together: the standby limit, the delay band",
        "with the delay band met, the smallest standby current after the timeout reachable is 5 µA; the limit is 1 µA",
        "with the standby limit met, the worst-case delays miss the band: the closest is 9.5 s to 10.5 s at the "
        "worst-case corners against the band 18 s to 22 s",
    ]


def test_impossible_link_and_dropped_candidates_are_reported():
    hold = rc_block("hold", [10, 20])
    hold.dropped = {"capacitor leakage exceeds the charging current at threshold": 7}
    start = rc_block("start", [0.1, 0.2], spread=0.0)
    link = Link((("start", "r", 1.0), ("hold", "r", -1.0)), ">=", 0.0, "the start pulse outlasts the hold charge")
    model = SelectionModel("t", "sum", [hold, start], links=[link])
    assert reasons(model, (5, 30)) == [
        "the start pulse outlasts the hold charge: the linked sum reaches at best -9.8; it must be >= 0",
        "hold: the topology's own rules removed 7 candidates (7: capacitor leakage exceeds the charging current "
        "at threshold)",
    ]


def test_an_emptied_block_says_so():
    hold = rc_block("hold", [10])
    empty = Block("start", hold.table.iloc[0:0], roles=("r",), dropped={"base drive too weak at start": 12})
    model = SelectionModel("t", "sum", [hold, empty])
    assert reasons(model, (5, 30)) == [
        "no candidate is left for start",
        "start: the topology's own rules removed 12 candidates (12: base drive too weak at start)",
    ]


def test_explain_is_empty_for_a_feasible_problem():
    model, band, limits, weights = random_model(11, "product")
    problem = SelectionProblem(model, band, NO_LIMITS, weights)
    assert problem.solve().feasible and problem.explain() == []


def test_bad_tables_are_refused():
    with pytest.raises(ValueError, match=r"block 'hold' column 'delay_lo': 1 rows are not positive finite factors"):
        SelectionProblem(SelectionModel("t", "product", [rc_block("hold", [10, 20], delay_lo=[1.0, 0.0])]),
                         (5, 30), NO_LIMITS, EQUAL_WEIGHTS)
    with pytest.raises(ValueError, match=r"0 < min < max"):
        SelectionProblem(SelectionModel("t", "sum", [rc_block("hold", [10])]), (30, 5), NO_LIMITS, EQUAL_WEIGHTS)


# ---- designs from rows ---------------------------------------------------------------------


def test_design_takes_roles_options_and_series_pairs():
    table = pd.DataFrame({
        "r_hold": [1.5e6, 2.2e6], "r_hold_first": [1.5e6, 2.0e6], "r_hold_second": [0.0, 0.2e6],
        "c_hold": [100e-6, 100e-6], "darlington": ["darlington-npn-small", "darlington-npn-small"],
        "delay_lo": [100.0, 150.0], "delay_nom": [110.0, 160.0], "delay_hi": [120.0, 170.0],
        "cost": [0.1, 0.2], "placements": [2, 3], "lines": [2, 3], "during_a": [0.0, 0.0], "after_a": [0.0, 0.0]})
    block = Block("hold", table, roles=("r_hold", "c_hold"), options=("darlington",))
    single, pair = (SelectionProblem(SelectionModel("rc", "sum", [block]), band, NO_LIMITS, EQUAL_WEIGHTS).solve()
                    for band in ((90, 130), (140, 180)))
    assert single.design.values == {"r_hold": 1.5e6, "c_hold": 100e-6} and single.design.pairs == {}
    assert pair.design.pairs == {"r_hold": (2.0e6, 0.2e6, "series")}   # no r_hold_pairing column: a series pair
    assert pair.design.options == {"darlington": "darlington-npn-small"}
    assert pair.totals["delay_lo_s"] == 150.0 and pair.totals["placements"] == 3


def test_alternatives_stop_when_the_tables_run_out():
    model = SelectionModel("fake", "sum", [rc_block("hold", [18, 20, 40], spread=0.01)])
    results = SelectionProblem(model, (15, 26), NO_LIMITS, EQUAL_WEIGHTS).best(5)
    assert [r.design.values["r"] for r in results] == [20.0, 18.0]


# ---- the registered topologies on reduced catalogs -------------------------------------------

REDUCED_SERIES = {"series.resistor": "E6", "series.electrolytic": "E3", "series.film": "E3", "series.ceramic": "E3",
                  "series.pairs": False}
"""Short E-series keep every topology's tables small enough to enumerate."""

REAL_BRIEFS = {
    "fan run-on, button start": ("fan_run_on.yaml", {}),
    "propagator mat, power-on start": ("propagator_mat.yaml", {}),
    "fan run-on at 20 s to 40 s, power-on start": ("fan_run_on.yaml", {"start": "power-on", "delay.nominal": "30 s",
                                                                       "delay.min": "20 s", "delay.max": "40 s"}),
    # Short holds where the RC holds, the comparator, the 555 and the RC counter have feasible
    # designs, so the comparison is between two optima and not only two verdicts of infeasibility.
    "hold of 10 s to 60 s, power-on start": ("fan_run_on.yaml", {"start": "power-on", "delay.nominal": "35 s",
                                                                 "delay.min": "10 s", "delay.max": "60 s"}),
    "hold of 10 s to 60 s, button, 1 mA standby": ("fan_run_on.yaml", {
        "start": "button", "delay.nominal": "35 s", "delay.min": "10 s", "delay.max": "60 s",
        "limits.standby_after": "1 mA"}),
    "hold of 1 min to 3 min, power-on, 1 mA standby": ("fan_run_on.yaml", {
        "start": "power-on", "delay.nominal": "2 min", "delay.min": "1 min", "delay.max": "3 min",
        "limits.standby_after": "1 mA"}),
    # every pairing (series and parallel resistors, parallel capacitors, series film capacitors) on E3 values
    "hold of 10 s to 60 s, button, E3 pairs": ("fan_run_on.yaml", {
        "start": "button", "delay.nominal": "35 s", "delay.min": "10 s", "delay.max": "60 s",
        "series.resistor": "E3", "series.pairs": True}),
}


def _topology_ids():
    from tradeoff.catalog import load_catalog
    from tradeoff.topologies.registry import topology_ids

    return topology_ids(load_catalog())


@pytest.fixture(scope="module")
def catalog():
    from tradeoff.catalog import load_catalog

    return load_catalog()


@pytest.mark.parametrize("brief_name", list(REAL_BRIEFS))
@pytest.mark.parametrize("topology_id", _topology_ids())
def test_registered_topologies_program_equals_exhaustive(topology_id, brief_name, catalog):
    """Every template with two or more value roles: the program's optimum is exhaustive search's."""
    from tradeoff.brief import load_brief
    from tradeoff.topologies.registry import build_topology

    file, changes = REAL_BRIEFS[brief_name]
    brief = load_brief(t_examples() / file).replace({**REDUCED_SERIES, **changes})
    topology = build_topology(topology_id, brief, catalog)
    if len(topology.roles()) < 2:
        pytest.skip(f"{topology_id} has fewer than two value roles")
    model = topology.selection()
    band = (brief.delay.min_s, brief.delay.max_s)
    found = exhaustive(model, band, brief.limits, brief.weights, k=1, max_combinations=20_000_000)
    result = SelectionProblem(model, band, brief.limits, brief.weights).solve()
    if not found:
        assert result.status == "Infeasible" and result.reasons
        return
    assert result.feasible and result.objective == pytest.approx(found[0].objective, abs=TIE)


def t_examples():
    return Path(__file__).resolve().parents[1] / "examples"
