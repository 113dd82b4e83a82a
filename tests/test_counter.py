"""Ripple counters with RC or crystal oscillator: threshold formula, datasheet k, ngspice,
stage delays, crystal corner search against a dense sweep, selection tables against evaluate()."""
from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from spice_measures import measures
from tradeoff.analysis import worst_case
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.topologies.base import Design
from tradeoff.topologies.registry import build_topology
from tradeoff.topologies.ripple_counter import (
    RS_MIN_OHM, crystal_period_s, oscillator_netlist, rc_period_s, stage_factor, threshold_factor,
)

from conftest import EXAMPLES

COUNTER = "counter-cmos-14stage"


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


@pytest.fixture(scope="module")
def fan_brief():
    """Fan run-on brief (10 to 20 min) with the supply maximum inside the counter's 15 V rating."""
    return load_brief(EXAMPLES / "fan_run_on.yaml").replace({"supply.max": "14 V"})


@pytest.fixture(scope="module")
def rc(fan_brief, catalog):
    return build_topology("rc-counter", fan_brief, catalog)


@pytest.fixture(scope="module")
def xtal(fan_brief, catalog):
    return build_topology("crystal-counter", fan_brief, catalog)


def _rc_design(rt=100e3, ct=1.5e-6, stage=12, cascade=0, link=14):
    return Design("rc-counter", values={"r_timing": rt, "c_timing": ct},
                  options={"r_timing_part": "res-metal-film-1pct", "c_timing_part": "cap-film-pet-5pct",
                           "counter": COUNTER, "stage": stage, "cascade": cascade, "link_stage": link})


def _xtal_design(stage=12, cascade=1, crystal="crystal-32k-20ppm"):
    return Design("crystal-counter", options={"crystal": crystal, "counter": COUNTER, "stage": stage,
                                              "cascade": cascade, "link_stage": 14})


def test_threshold_formula_at_half_supply():
    # standard circuit analysis: T = RC·[ln((Vdd+Vt)/Vt) + ln((2Vdd−Vt)/(Vdd−Vt))] = 2·ln 3·RC = 2.197·RC at Vt = Vdd/2
    assert float(threshold_factor(0.5)) == pytest.approx(2 * math.log(3), rel=1e-12)
    assert float(threshold_factor(0.5)) == pytest.approx(2.197, abs=5e-4)
    v = np.array([0.2, 0.3, 0.4, 0.6, 0.7, 0.8])
    assert np.allclose(threshold_factor(v), threshold_factor(1 - v)) and np.all(threshold_factor(v) > 2.197)


def test_class_constant_against_its_own_datasheet(rc, catalog):
    # CD4060B datasheet (the one the class cites): f = 1/(2.2·Rt·Ct) at the typical threshold
    part = catalog.part(COUNTER)
    assert part.value("k", "") == 2.2 and "CD4060B" in part.source("k")
    d = _rc_design(rt=47e3, ct=22e-9, stage=4)
    period = rc.nominal_delay(d) / float(stage_factor(4))
    assert period == pytest.approx(2.2 * 47e3 * 22e-9, rel=1e-12)
    # the other maker's constant (k = 2.3, REFERENCES.md) would be 4.5 % off: the class keeps its own
    assert abs(period / (2.3 * 47e3 * 22e-9) - 1) > 0.04


@pytest.mark.parametrize("vt", [0.3, 0.4, 0.5, 0.6, 0.7])
def test_behavioural_oscillator_in_ngspice(ngspice, tmp_path, vt):
    # ngspice (independent transient simulation) of two threshold inverters with Rt, Ct, Rs: within 2 %
    rt, ct = 100e3, 10e-9
    got = measures(ngspice, oscillator_netlist(rt, ct, 2 * rt, 12.0, vt, "check"), ("period",), tmp_path)["period"]
    assert got == pytest.approx(float(rc_period_s(rt, ct, float(threshold_factor(0.5)), vt)), rel=0.02)


def test_design_netlist_reports_delay(rc, ngspice, tmp_path):
    d = _rc_design(rt=100e3, ct=10e-9, stage=10)
    got = measures(ngspice, rc.spice(d), ("period", "delay"), tmp_path)
    assert got["delay"] == pytest.approx(got["period"] * 2 ** 9, rel=1e-4)
    # ideal-inverter period 2.197 RC against the class's 2.2 RC: 0.1 % apart, both inside 1 %
    assert got["delay"] == pytest.approx(rc.nominal_delay(d), rel=0.01)


def test_stage_delay_is_two_to_the_n_minus_one_periods(rc):
    # 4060-type datasheets: output of stage N goes high after 2^(N−1) oscillator periods
    period = rc.nominal_delay(_rc_design(stage=4)) / 8
    for n in (4, 5, 6, 7, 8, 9, 10, 12, 13, 14):
        assert rc.nominal_delay(_rc_design(stage=n)) == pytest.approx(period * 2 ** (n - 1), rel=1e-12)
    # cascade: stage 14 of the first counter clocks the second, N_total = 14 + N
    assert rc.nominal_delay(_rc_design(stage=6, cascade=1)) == pytest.approx(period * 2 ** 19, rel=1e-12)
    assert rc.nominal_delay(_rc_design(stage=6, cascade=1, link=12)) == pytest.approx(period * 2 ** 17, rel=1e-12)


def test_only_brought_out_stages(rc):
    findings = {f.code: f for f in rc.checks(_rc_design(stage=11))}
    assert findings["stage"].severity == "violation" and "12, 13, 14" in findings["stage"].message
    stages = rc.selection().blocks[1].table
    single = stages[stages.cascade == 0]
    assert 11 not in set(single.stage) and set(single.stage) <= {4, 5, 6, 7, 8, 9, 10, 12, 13, 14}


def test_crystal_single_counter_quarter_second(xtal):
    # 2^13 / 32768 Hz = 0.25 s at Q14 of one counter
    d = _xtal_design(stage=14, cascade=0)
    assert xtal.nominal_delay(d) == pytest.approx(0.25, rel=1e-12)


def test_crystal_corner_search_finds_the_parabola_extreme(xtal):
    # crystal datasheets: df/f = beta·(T − T0)², beta < 0; the shortest delay (fastest clock) sits at the
    # turnover, inside the ambient range: the corner search must reach it; checked against a dense sweep
    d = _xtal_design()
    params = xtal.quantities(d)
    wc = xtal.worst_case(d)
    crystal = xtal.catalog.part("crystal-32k-20ppm")
    temps = np.linspace(params["ambient_c"].lo, params["ambient_c"].hi, 2001)
    t0s = np.linspace(params["crystal_turnover_c"].lo, params["crystal_turnover_c"].hi, 101)
    tt, t00 = np.meshgrid(temps, t0s)
    factor = float(stage_factor(xtal.n_total(d)))
    dense = []
    for sign in (-1.0, 1.0):
        dense.append(factor * crystal_period_s(32768.0, sign * 20e-6, sign * 3e-6, -0.034e-6, t00, tt))
    assert wc.min_s == pytest.approx(float(dense[1].min()), rel=1e-12)
    assert wc.max_s == pytest.approx(float(dense[0].max()), rel=1e-12)
    assert wc.at_min["ambient_c"] == pytest.approx(wc.at_min["crystal_turnover_c"])
    # without the turnover as an interior ambient point the corner search misses the extreme
    plain = dict(params)
    plain["ambient_c"] = dataclasses.replace(params["ambient_c"], critical=())
    missed = worst_case(lambda x: xtal.delay(d, x), plain)
    assert missed.min_s > wc.min_s * (1 + 1e-7)


def test_rc_threshold_is_an_interior_corner(rc):
    # F(v) is smallest at v = 1/2 inside the 0.3 to 0.7 spread: the shortest delay uses it
    wc = rc.worst_case(_rc_design())
    assert wc.at_min["vt_frac"] == 0.5 and wc.at_max["vt_frac"] in (0.3, 0.7)


@pytest.mark.parametrize("topology", ["rc", "xtal"])
def test_selection_tables_agree_with_evaluate(request, topology):
    topo = request.getfixturevalue(topology)
    model = topo.selection()
    assert model.combine == "product"
    osc, stages = model.blocks[0].table, model.blocks[1].table
    assert len(osc) and len(stages)
    band = topo.brief.delay
    rng = np.random.default_rng(5)
    for i in rng.choice(len(osc), min(4, len(osc)), replace=False):
        o = osc.iloc[i]
        fit = stages[(stages.delay_nom * o.delay_lo >= band.min_s) & (stages.delay_nom * o.delay_hi <= band.max_s)]
        s = fit.iloc[int(rng.integers(len(fit)))]
        d = Design(topo.id, values={r: float(o[r]) for r in model.blocks[0].roles},
                   options={**{k: o[k] for k in model.blocks[0].options},
                            **{k: (s[k].item() if hasattr(s[k], "item") else s[k]) for k in model.blocks[1].options}})
        ev = topo.evaluate(d, samples=2000)
        assert ev.worst.method.startswith("exhaustive")
        assert o.delay_lo * s.delay_lo == pytest.approx(ev.worst.min_s, rel=1e-12)
        assert o.delay_hi * s.delay_hi == pytest.approx(ev.worst.max_s, rel=1e-12)
        assert o.delay_nom * s.delay_nom == pytest.approx(ev.nominal_s, rel=1e-12)
        assert o.cost + s.cost + model.fixed_cost == pytest.approx(ev.cost)
        assert o.placements + s.placements + model.fixed_placements == ev.placements
        assert o.lines + s.lines + model.fixed_lines == ev.lines
        assert o.after_a + s.after_a + model.fixed_after_a == pytest.approx(ev.standby.after_a)
        assert o.during_a + s.during_a + model.fixed_during_a == pytest.approx(ev.standby.during_a)
        assert band.min_s <= ev.worst.min_s and ev.worst.max_s <= band.max_s


def test_crystal_dropped_reason_names_nearest_delays(catalog):
    # glue pot 3 h to 4 h: crystal delays are powers of two of 1/32768 s, 2.28 h and 4.55 h either side
    model = build_topology("crystal-counter", load_brief(EXAMPLES / "glue_pot_warmer.yaml"), catalog).selection()
    assert model.blocks[1].table.empty
    assert any("2.28 h and 4.55 h" in k for k in model.blocks[0].dropped)


def test_latch_current_and_series_resistor(rc):
    # after the timeout the output holds the oscillator input high through the diode: (V − Vf)/(Rs + Rt)
    assert rc.rs_ohm(4.7e3) == RS_MIN_OHM and rc.rs_ohm(100e3) == 200e3   # Rs ≈ 2·Rt, at least 10 kohm
    a, b = rc.standby(_rc_design(rt=100e3)), rc.standby(_rc_design(rt=200e3))
    vf = rc.catalog.part("diode-small-signal").value("vf", "V")
    assert rc.rs_ohm(200e3) == 390e3                                       # E24 value nearest 400 kohm
    assert a.after_a - b.after_a == pytest.approx((12.0 - vf) / 300e3 - (12.0 - vf) / 590e3, rel=1e-9)
    bom = {line.refs: line for line in rc.bom(_rc_design())}
    assert "latch" in bom["D2"].note and bom["R2"].value == "200 kΩ" and bom["Q1"].part == "pnp-small"


def test_supply_above_rating_drops_the_counter(catalog):
    # towel rail: 16 V supply maximum above the 15 V recommended maximum (4060-type datasheets)
    model = build_topology("rc-counter", load_brief(EXAMPLES / "towel_rail_boost.yaml"), catalog).selection()
    assert model.blocks[0].table.empty and any("outside" in k for k in model.blocks[0].dropped)


def test_monte_carlo_reproducible_by_seed(rc, xtal):
    for topo, d in ((rc, _rc_design()), (xtal, _xtal_design())):
        a, b, c = (topo.monte_carlo(d, samples=4000, seed=s) for s in (2, 2, 3))
        assert np.array_equal(a.delays, b.delays) and not np.array_equal(a.delays, c.delays)


def test_waveform_period_matches_formula(rc):
    d = _rc_design(rt=100e3, ct=10e-9)
    x = {**rc.nominal_point(d), "vt_frac": 0.3}
    w = rc.waveform(d, x)
    jumps = w.time_s[1:][np.diff(w.signal) > 6.0]      # the junction jumps up by about VDD once a period
    assert np.diff(jumps).mean() == pytest.approx(100e3 * 10e-9 * float(threshold_factor(0.3)), rel=0.01)
    assert w.threshold == pytest.approx(0.3 * 12.0)


def test_dominated_rows_are_dropped_and_counted():
    # a row no better in every column than another of its group goes; equal or trading rows stay
    import pandas as pd
    from tradeoff.topologies.ic_common import drop_dominated
    table = pd.DataFrame({"value": [1.0, 1.0, 1.0, 2.0, 1.0], "cost": [1.0, 2.0, 0.5, 9.0, 1.0],
                          "tolerance": [0.05, 0.05, 0.10, 0.20, 0.05], "gain": [3.0, 3.0, 3.0, 1.0, 3.0]})
    dropped: dict[str, int] = {}
    kept = drop_dominated(table, ("value",), ("cost", "tolerance"), "dominated", dropped, higher=("gain",))
    assert sorted(kept.cost.tolist()) == [0.5, 1.0, 1.0, 9.0] and dropped == {"dominated": 1}
