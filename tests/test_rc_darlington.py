"""rc-darlington: ngspice reference, physics identities, common practice, corners, selection tables."""
from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy.integrate import solve_ivp
from spice_measures import measures

from tradeoff.analysis import sample, worst_case
from tradeoff.topologies.base import Design
from tradeoff.devices.junction import base_current_a, darlington_hold_closed_s as hold_time_closed_s
from tradeoff.topologies.rc_darlington import RcDarlington

from hold_cases import BRIEF, CATALOG, WIDE, delay_at, make_design, make_topology, sweep_beats_corners


def topology(brief=BRIEF) -> RcDarlington:
    return make_topology(RcDarlington, brief)


def design(r, c, **options) -> Design:
    return make_design("rc-darlington", r, c, **options)


at = delay_at

SPICE_CASES = [  # (brief start, design, point): about 11 s to 9.4 h, with and without leakage and shunt
    ("button", design(10e3, 47e-6), {"leak_level": -1.0}),
    ("button", design(220e3, 470e-6), {}),
    ("button", design(1e6, 100e-6, shunt=10e6), {"leak_level": 1.0}),
    ("button", design(4.7e6, 2.2e-3), {"leak_level": 0.5, "ambient_c": 40.0}),
    ("button", design(4.7e6, 4.7e-3), {"leak_level": -1.0}),
    ("button", design(1e6, 220e-6, shunt=10e6), {"leak_level": -1.0, "hfe": 12000.0, "release_frac": 0.66}),
    ("power-on", design(220e3, 470e-6, r_start=10e3, c_start=100e-6), {}),
]


@pytest.mark.parametrize("start,d,point", SPICE_CASES)
def test_release_time_agrees_with_ngspice(ngspice, tmp_path, start, d, point):
    # reference: ngspice transient of the same circuit (Darlington of two NPNs with the model's IS, BF, NF,
    # coil R + L with flyback diode, leakage as a behavioural current source); within 5 %
    topo = topology(BRIEF.replace({"start": start}))
    model = at(topo, d, **point)
    sim = measures(ngspice, topo.spice(d, point), ("delay",), tmp_path)["delay"]
    assert model == pytest.approx(sim, rel=0.05)


def test_spice_cases_span_ten_seconds_to_ten_hours():
    delays = [at(topology(BRIEF.replace({"start": s})), d, **p) for s, d, p in SPICE_CASES]
    assert min(delays) < 12 and max(delays) > 9 * 3600


def test_fixed_drop_without_leakage_is_the_textbook_exponential():
    # physics identity: with n = 0 (fixed base drop VBE(on)) and no leakage, V - Vd = (V0 - Vd)·exp(-t/RC)
    topo = topology()
    d = design(470e3, 220e-6, overrides={"darlington-npn-small": {"ideality": 0.0}})
    s = topo.nominal_state(d, {"leak_level": -1.0})
    v0 = 12.0 - CATALOG.part("diode-small-signal").value("vf", "V")
    ib_end = float(s.release_a[0] / s.x["hfe"][0])
    expected = 470e3 * 220e-6 * np.log((v0 - 1.25) / (ib_end * 470e3))
    assert at(topo, d, leak_level=-1.0) == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("r,c,level", [(220e3, 470e-6, 0.0), (1e6, 100e-6, 1.0), (4.7e6, 1e-3, 0.3)])
def test_closed_form_equals_quadrature_equals_solve_ivp(r, c, level):
    # constant leakage (voltage exponents 0): closed form, the model's quadrature and scipy solve_ivp agree
    topo = topology()
    d = design(r, c, overrides={"cap-electrolytic-85c": {"leakage_voltage_exponent": 0,
                                                         "leakage_voltage_exponent_limit": 0}})
    s = topo.nominal_state(d, {"leak_level": level})
    j = topo.junction(s)
    leak = float(s.leakage_a(1.0)[0])
    v0 = 12.0 - 0.72
    ib0 = float(base_current_a(np.array([v0]), **j)[0])
    ib1 = float(s.release_a[0] / j["hfe"][0])
    closed = float(hold_time_closed_s(c, r, ib0, ib1, float(j["sat_a"][0] / j["hfe"][0]), j["n"],
                                      float(j["vt_v"][0]), leak))
    quad = at(topo, d, leak_level=level)

    def rhs(t, v):
        return [-(float(base_current_a(np.array([v[0]]), **j)[0]) + leak) / c]

    event = lambda t, v: float(base_current_a(np.array([v[0]]), **j)[0]) - ib1  # noqa: E731
    event.terminal, event.direction = True, -1
    ode = solve_ivp(rhs, (0, 1e7), [v0], events=event, rtol=1e-10, atol=1e-12).t_events[0][0]
    assert quad == pytest.approx(closed, rel=1e-6)
    assert quad == pytest.approx(ode, rel=1e-3)


def test_releases_after_five_to_eight_time_constants_at_moderate_resistors():
    # common practice (no source): RC hold into a small-signal Darlington driving a 12 V PCB relay
    # releases after about 5 to 8 time constants at moderate resistor values (100 to 330 kohm; below that the
    # factor grows as the drop across r at the release base current shrinks)
    topo = topology()
    factors = [at(topo, design(r, 220e-6)) / (r * 220e-6) for r in (330e3, 220e3, 100e3)]
    assert all(5 <= f <= 8 for f in factors)
    # the factor is not a constant: larger resistors leave more drop across r at the release base current
    assert at(topo, design(1e6, 220e-6)) / (1e6 * 220e-6) < factors[-1]


def test_ten_megohm_meter_visibly_shortens_the_hold():
    # common practice (no source): a 10 Mohm meter across the hold capacitor visibly shortens the hold
    topo = topology()
    assert at(topo, design(1e6, 220e-6, shunt="10 Mohm")) < 0.9 * at(topo, design(1e6, 220e-6))


MARGINAL = design(2.2e6, 47e-6)
"""Hold resistor near the largest the start drive allows: at the weakest corner the release voltage
IB_end·r is a large part of the start voltage, so the delay falls as r_hold grows."""


def test_delay_is_not_monotone_in_the_hold_resistor_with_marginal_drive():
    # why r_hold has direction 0 (both corners tried): t ≈ R·C·ln((V0 - VBE)/(IB_end·R)) falls with R
    # once the log term drops below 1; at strong drive (the maximum corner) it rises with R as usual
    topo = topology(WIDE)
    q = topo.quantities(MARGINAL)
    weak = {**topo.worst_case(MARGINAL).at_min}
    assert at(topo, MARGINAL, **{**weak, "r_hold": q["r_hold"].hi}) < at(topo, MARGINAL, **{**weak, "r_hold": q["r_hold"].lo})
    strong = {**topo.worst_case(MARGINAL).at_max}
    assert at(topo, MARGINAL, **{**strong, "r_hold": q["r_hold"].hi}) > at(topo, MARGINAL, **{**strong, "r_hold": q["r_hold"].lo})
    assert RcDarlington.directions["r_hold"] == 0


@pytest.mark.parametrize("start", ["button", "power-on"])
@pytest.mark.parametrize("d", [MARGINAL, design(220e3, 470e-6), design(4.7e6, 1e-3), design(1e6, 1e-3, shunt=10e6)])
def test_corners_hold_the_extremes_of_a_dense_sweep(start, d):
    # every quantity swept alone, and the non-monotone ones (directions 0: r_hold, ambient) jointly, the
    # others at evaluate()'s extreme corner: no point beats the corner extremes
    topo = topology(WIDE.replace({"start": start}))
    if start == "power-on":
        d = design(d.values["r_hold"], d.values["c_hold"], r_start=10e3, c_start=100e-6, **d.options)
    assert sweep_beats_corners(topo, d, [n for n, sign in RcDarlington.directions.items() if sign == 0]) == []


@pytest.mark.parametrize("d", [design(220e3, 470e-6), design(2.2e6, 100e-6, c_hold_part="cap-film-pet-10pct"),
                               design(1e6, 1e-3, shunt=10e6), MARGINAL])
def test_slope_guided_search_finds_the_exhaustive_extremes(d):
    # the corner search of tradeoff.analysis, forced to its slope-guided mode, equals exhaustive corners
    topo = topology()
    q = topo.quantities(d)
    exhaustive = topo.worst_case(d)
    guided = worst_case(lambda x: topo.delay(d, x), q, exhaustive_limit=0)
    assert exhaustive.method.startswith("exhaustive")
    assert guided.min_s == pytest.approx(exhaustive.min_s, rel=1e-12)
    assert guided.max_s == pytest.approx(exhaustive.max_s, rel=1e-12)


@pytest.mark.parametrize("d", [design(470e3, 470e-6), MARGINAL])
def test_corners_bound_interior_points(d):
    # no random interior point falls outside the corner extremes
    topo = topology(WIDE)
    w = topo.worst_case(d)
    from tradeoff.analysis import sample
    delays = topo.delay(d, sample(topo.quantities(d), 20000, np.random.default_rng(7)))
    assert w.min_s <= delays.min() and delays.max() <= w.max_s


def test_monte_carlo_reproducible_by_seed():
    topo = topology()
    d = design(220e3, 470e-6)
    a, b, c = (topo.monte_carlo(d, samples=5000, seed=s) for s in (3, 3, 4))
    assert np.array_equal(a.delays, b.delays)
    assert not np.array_equal(a.delays, c.delays)
    assert 0 < a.percentiles[0.5] < np.inf


def test_selection_table_equals_evaluate_worst_case():
    # guarantee of the optimiser blocks: for the same design, table delay_lo/hi == evaluate()'s corners
    topo = topology(WIDE)
    model = topo.selection()
    block = model.block("hold")
    assert len(block.table) > 100
    table = block.table
    # random rows plus the largest hold resistor of a few capacitors (marginal base drive, where the
    # delay is not monotone in r_hold)
    largest_r = table.loc[table.groupby("c_hold")["r_hold"].idxmax()].iloc[::7]
    rows = pd.concat([table.sample(6, random_state=1), largest_r.head(4)])
    for _, row in rows.iterrows():
        d = Design("rc-darlington", {"r_hold": row["r_hold"], "c_hold": row["c_hold"]},
                   {k: row[k] for k in block.options})
        ev = topo.evaluate(d, samples=200)
        assert row["delay_lo"] == pytest.approx(ev.worst.min_s, rel=1e-9)
        assert row["delay_hi"] == pytest.approx(ev.worst.max_s, rel=1e-9)
        assert row["delay_nom"] == pytest.approx(ev.nominal_s, rel=1e-9)
        assert model.fixed_cost + row["cost"] == pytest.approx(ev.cost)


def test_selection_table_equals_exhaustive_corners_on_many_rows():
    # every 40th row of the hold block against tradeoff.analysis's exhaustive corner search of the same design
    topo = topology(WIDE)
    block = topo.selection().block("hold")
    for _, row in block.table.iloc[::40].iterrows():
        d = Design("rc-darlington", {"r_hold": row["r_hold"], "c_hold": row["c_hold"]},
                   {k: row[k] for k in block.options})
        w = topo.worst_case(d)
        assert w.method.startswith("exhaustive")
        assert (row["delay_lo"], row["delay_hi"]) == pytest.approx((w.min_s, w.max_s), rel=1e-9)


def test_selection_power_on_bounds_evaluate():
    # several blocks: table sums bound evaluate()'s corners for pairs that satisfy the 95 % charge Link
    topo = topology(WIDE.replace({"start": "power-on"}))
    model = topo.selection()
    hold, start = model.block("hold").table, model.block("start").table
    (block, column, _), (_, need, _) = model.links[0].terms
    assert (block, column, need) == ("start", "log_window", "log_need")
    s = start.iloc[int(start["log_window"].idxmax())]
    ok = hold[hold["log_need"] <= s["log_window"]]
    for h in (ok.iloc[0], ok.iloc[len(ok) // 3], ok.iloc[2 * len(ok) // 3], ok.iloc[-1]):
        d = Design("rc-darlington", {"r_hold": h["r_hold"], "c_hold": h["c_hold"], "r_start": s["r_start"],
                                     "c_start": s["c_start"]},
                   {**{k: h[k] for k in model.block("hold").options},
                    **{k: s[k] for k in model.block("start").options}})
        ev = topo.evaluate(d, samples=200)
        assert not [f for f in ev.findings if f.code == "start-charge"]
        assert h["delay_lo"] + s["delay_lo"] <= ev.worst.min_s * (1 + 1e-9)
        assert h["delay_hi"] + s["delay_hi"] >= ev.worst.max_s * (1 - 1e-9)


def test_selection_counts_pruned_candidates_by_reason():
    block = topology().selection().block("hold")
    assert any("base drive" in reason and n > 0 for reason, n in block.dropped.items())
    assert sum(block.dropped.values()) > 0


def test_design_rules():
    topo = topology()
    codes = {f.code: f for f in topo.checks(design(220e3, 470e-6))}
    assert codes["chatter-band"].severity == "warning" and " s" in codes["chatter-band"].message
    assert codes["leakage-model"].severity == "info"
    weak = {f.code: f for f in topo.checks(design(10e6, 470e-6))}
    assert weak["start-drive"].severity == "violation"
    assert "start-drive" not in codes


def test_waveform_release_point_is_the_delay():
    topo = topology()
    d = design(220e3, 470e-6)
    w = topo.waveform(d)
    assert w.release_s == pytest.approx(topo.nominal_delay(d), rel=1e-9)
    assert np.all(np.diff(w.time_s) > 0) and np.all(np.diff(w.output_a) <= 1e-15)
    k = np.searchsorted(w.time_s, w.release_s)
    assert w.output_a[k - 1] >= w.release_a >= w.output_a[k]


HIGH_GAIN = {"darlington-npn-small": {"hfe_min": 30000, "hfe_typ": 90000, "hfe_max": 300000}}
"""A high-gain Darlington: hFE at least 30,000 (the upper end of the Darlington datasheets' 10,000 to 30,000,
docs/references.md), typical and high units at the shipped class's 3 and 10 times its minimum (from memory)."""


def test_bench_release_of_a_330k_47u_hold_lies_in_the_monte_carlo():
    # common practice (a fact of the trade, no source): 330 kohm and 47 uF into a high-gain Darlington driving a
    # 12 V PCB relay release after about 94 s, about 6 time constants. At the bench's 12 V and room temperature
    # it must lie inside the Monte Carlo's central 99 % and within 20 % of its median.
    bench = BRIEF.replace({"supply.min": "12 V", "supply.max": "12 V", "ambient.min": "20 degC",
                           "ambient.max": "25 degC"})
    topo = topology(bench)
    d = design(330e3, 47e-6, overrides=HIGH_GAIN)
    low, median, high = np.quantile(topo.monte_carlo(d, 20000, 1).delays, [0.005, 0.5, 0.995])
    assert low < 94.0 < high
    assert 94.0 == pytest.approx(median, rel=0.20)


def test_relay_release_worst_case_keeps_the_guarantees_and_the_spread_the_typical_band():
    # relay datasheets guarantee release between must-release (10 %) and must-operate (75 %): the corners keep
    # them; the nominal sits in the class's typical band and the Monte Carlo draws within it
    topo = topology()
    d = design(330e3, 47e-6)
    q = topo.quantities(d)["release_frac"]
    typ_lo, typ_hi = (CATALOG.part("relay-pcb-12v").value(n, "") for n in ("release_typ_min", "release_typ_max"))
    assert (q.lo, q.hi) == (0.10, 0.75) and q.nominal == pytest.approx((typ_lo + typ_hi) / 2)
    wc = topo.worst_case(d)
    assert wc.at_min["release_frac"] == 0.75 and wc.at_max["release_frac"] == 0.10
    drawn = sample(topo.quantities(d), 5000, np.random.default_rng(3))["release_frac"]
    assert typ_lo <= drawn.min() and drawn.max() <= typ_hi
