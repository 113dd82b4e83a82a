"""555-class monostable: datasheet pulse width, leakage limit, ngspice, corners, selection tables."""
from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from scipy.integrate import solve_ivp

from spice_measures import measures
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.topologies.base import Design
from tradeoff.topologies.registry import build_topology
from tradeoff.devices.comparator import THRESHOLD_FRAC, monostable_width_s
from tradeoff.topologies.timer555 import monostable_netlist

from conftest import EXAMPLES


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


@pytest.fixture(scope="module")
def short(catalog):
    """Fan run-on brief shortened to 40 s to 80 s, where a 555 with a small capacitor is feasible."""
    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace(
        {"delay.nominal": "60 s", "delay.min": "40 s", "delay.max": "80 s"})
    return build_topology("timer555", brief, catalog)


def _design(r=1e6, c=47e-6, timer="timer555-bipolar", r_part="res-metal-film-1pct",
            c_part="cap-electrolytic-low-leakage"):
    return Design("timer555", values={"r_timing": r, "c_timing": c},
                  options={"timer": timer, "r_timing_part": r_part, "c_timing_part": c_part})


def test_pulse_width_is_1_1_rc_without_leakage():
    # NE555 and TLC555 datasheets, monostable operation: t = 1.1·R·C; exactly R·C·ln 3 = 1.0986·R·C
    r, c = np.array([1e3, 100e3, 4.7e6]), np.array([10e-9, 1e-6, 100e-6])
    t = monostable_width_s(r, c, 0.0, 12.0)
    assert np.allclose(t / (r * c), math.log(3), rtol=1e-12)
    assert math.log(3) == pytest.approx(1.0986, abs=5e-5)
    assert np.allclose(t / (r * c), 1.1, rtol=2e-3)


def test_leakage_formula_matches_integration():
    # physics identity: dv/dt = (Vcc − v)/(R·C) − Ix/C from 0 V reaches 2/3 Vcc at the closed-form time
    r, c, ix, vcc = 2e6, 22e-6, 0.8e-6, 12.0
    sol = solve_ivp(lambda t, v: [(vcc - v[0]) / (r * c) - ix / c], (0, 1e4), [0.0], rtol=1e-10, atol=1e-12,
                    events=lambda t, v: v[0] - THRESHOLD_FRAC * vcc)
    assert sol.t_events[0][0] == pytest.approx(float(monostable_width_s(r, c, ix, vcc)), rel=1e-6)


def test_infeasible_as_leakage_drop_reaches_a_third_of_the_supply():
    # standard circuit analysis: with Ix·R >= Vcc/3 the capacitor settles below 2/3 Vcc
    r, c, vcc = 1e6, 10e-6, 12.0
    ix = (vcc / 3) / r * np.array([0.0, 0.5, 0.9, 0.99, 0.999, 1.0, 1.2])
    t = monostable_width_s(r, c, ix, vcc)
    assert np.all(np.diff(t[:5]) > 0) and t[4] > 5 * t[0]
    assert np.isinf(t[5]) and np.isinf(t[6]) and not np.isnan(t).any()


def test_behavioural_monostable_in_ngspice(ngspice, tmp_path):
    # ngspice (independent transient simulation) of the same RC, leakage current and 2/3 Vcc comparator
    for r, c, ix in ((1e6, 100e-6, 0.0), (1e6, 100e-6, 2e-6), (4.7e6, 10e-6, 0.5e-6)):
        got = measures(ngspice, monostable_netlist(r, c, ix, 12.0, "check"), ("delay",), tmp_path)["delay"]
        assert got == pytest.approx(float(monostable_width_s(r, c, ix, 12.0)), rel=0.01)


def test_spice_of_a_design_matches_its_nominal_delay(short, ngspice, tmp_path):
    # ngspice runs the topology's own netlist at the nominal point
    d = _design(r=2e6, c=22e-6)
    got = measures(ngspice, short.spice(d), ("delay",), tmp_path)["delay"]
    assert got == pytest.approx(short.nominal_delay(d), rel=0.01)


def test_selection_table_equals_exhaustive_corners(short):
    # the block's delay_lo/hi come from monotone corner choices; evaluate() searches all 2^11 corners
    model = short.selection()
    table = model.blocks[0].table
    assert len(table) > 100 and model.combine == "sum"
    rng = np.random.default_rng(3)
    for i in rng.choice(len(table), 6, replace=False):
        row = table.iloc[i]
        d = _design(row.r_timing, row.c_timing, row.timer, row.r_timing_part, row.c_timing_part)
        ev = short.evaluate(d, samples=2000)
        assert ev.worst.method.startswith("exhaustive")
        assert row.delay_lo == pytest.approx(ev.worst.min_s, rel=1e-12)
        assert row.delay_hi == pytest.approx(ev.worst.max_s, rel=1e-12)
        assert row.delay_nom == pytest.approx(ev.nominal_s, rel=1e-12)
        assert row.cost == pytest.approx(ev.cost) and row.placements == ev.placements and row.lines == ev.lines
        assert row.after_a == pytest.approx(ev.standby.after_a) and row.during_a == pytest.approx(ev.standby.during_a)


def test_dropped_reasons_name_the_leakage_limit(short, catalog):
    # towel rail 2 h: every electrolytic large enough leaks past Vcc/3 at the worst corner
    brief = load_brief(EXAMPLES / "towel_rail_boost.yaml")
    model = build_topology("timer555", brief, catalog).selection()
    dropped = model.blocks[0].dropped
    assert model.blocks[0].table.empty
    assert any("leakage plus threshold current times R reaches Vcc/3" in k for k in dropped)
    assert any("timer555-cmos" in k and "outside" in k for k in dropped)   # 16 V supply maximum above 15 V
    assert any("largest practical value" in k for k in dropped)


def test_largest_timing_resistance_rule(short):
    # NE555 datasheets: about 3.4 Mohm at 5 V, 10 Mohm at 15 V; at 10.8 V minimum supply about 7.2 Mohm
    findings = {f.code: f for f in short.checks(_design(r=9.1e6, c=1e-6, c_part="cap-film-pet-5pct"))}
    assert findings["r-max"].severity == "violation" and "7.23 MΩ" in findings["r-max"].message
    cmos = {f.code for f in short.checks(_design(r=9.1e6, c=1e-6, timer="timer555-cmos", c_part="cap-film-pet-5pct"))}
    assert "r-max" not in cmos


def test_leakage_violation_and_never_ending_units(short):
    d = _design(r=4.7e6, c=1000e-6, c_part="cap-electrolytic-85c")
    findings = {f.code: f for f in short.checks(d)}
    assert findings["leakage"].severity == "violation" and "never reaches 2/3 Vcc" in findings["leakage"].message
    ev = short.evaluate(d, samples=2000)
    assert math.isinf(ev.worst.max_s) and not ev.feasible


def test_output_stage_by_class(short):
    bipolar = {b.refs: b for b in short.bom(_design())}
    cmos = {b.refs: b for b in short.bom(_design(timer="timer555-cmos"))}
    assert "Q1" not in bipolar and "flyback" in bipolar["D1"].note     # 200 mA output drives a 30 mA coil
    assert cmos["Q1"].part.startswith("mosfet") and "gate resistor" in cmos["R3"].note


def test_standby_after_timeout_includes_discharge_current(short):
    # after the timeout the discharge pin holds C empty: Vcc/R flows on top of the timer's supply current
    d1, d2 = _design(r=1e6, timer="timer555-cmos"), _design(r=2e6, timer="timer555-cmos")
    a1, a2 = short.standby(d1).after_a, short.standby(d2).after_a
    assert a1 - a2 == pytest.approx(12.0 / 1e6 - 12.0 / 2e6, rel=1e-9)
    assert a2 > 150e-6     # TLC555/LMC555 datasheets: about 150 uA at 12 V (docs/references.md)


def test_monte_carlo_reproducible_by_seed(short):
    d = _design()
    a, b, c = (short.monte_carlo(d, samples=5000, seed=s) for s in (11, 11, 12))
    assert np.array_equal(a.delays, b.delays) and not np.array_equal(a.delays, c.delays)
    assert a.percentiles == b.percentiles


def test_waveform_crosses_threshold_at_the_delay(short):
    d = _design()
    x = short.nominal_point(d)
    w = short.waveform(d, x)
    crossing = np.interp(w.threshold, w.signal, w.time_s)
    assert crossing == pytest.approx(short.nominal_delay(d), rel=1e-3) and w.unit == "V"


@pytest.mark.parametrize("pairs", [False, True])
def test_windowed_table_equals_the_full_scan(short, catalog, monkeypatch, pairs):
    # bisection over R per capacitor finds the rows a scan of every (R, C) finds, in the same order
    import window_reference
    from tradeoff.topologies import timer555_tables

    brief = short.brief.replace({"series.resistor": "E12", "series.pairs": pairs})
    windowed = build_topology("timer555", brief, catalog).selection().blocks[0]
    monkeypatch.setattr(timer555_tables, "leading_below", window_reference.full_scan)
    scanned = build_topology("timer555", brief, catalog).selection().blocks[0]
    assert len(scanned.table) > 50
    pd.testing.assert_frame_equal(windowed.table, scanned.table)
    assert windowed.dropped == scanned.dropped
