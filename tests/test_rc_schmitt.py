"""RC charge read by an emitter-coupled Schmitt trigger: ngspice, the RC law, the trip point, corners,
standby, design rules, the optimiser table and the study."""
from __future__ import annotations

import math

import numpy as np
import pytest

import tradeoff
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.devices.capacitor import LEAK_LEVEL
from tradeoff.devices.junction import thermal_voltage_v
from tradeoff.topologies.base import Design
from tradeoff.devices.schmitt import falling_trip_v, rising_trip, saturation_current_a
from tradeoff.topologies.registry import build_topology

from conftest import EXAMPLES
from spice_measures import measures

SHORT = {"delay.nominal": "30 s", "delay.min": "24 s", "delay.max": "40 s"}
"""The fan run-on cut to 24 to 40 s: film capacitors reach it, electrolytics' leakage does not matter."""


@pytest.fixture(scope="module")
def fan():
    """Bathroom fan run-on: 10 to 20 min, 10.8 to 15 V unregulated, 5 to 40 degC, relay load, button start."""
    return build_topology("rc-schmitt", load_brief(EXAMPLES / "fan_run_on.yaml"), load_catalog())


def _design(r_ohm=1e6, c_f=10e-6, cap="cap-film-pet-5pct", **options):
    return Design("rc-schmitt", {"r_hold": r_ohm, "c_hold": c_f},
                  {"c_hold_part": cap, "r_hold_part": "res-metal-film-1pct", **options})


def _point(topology, design, **changes):
    return {**topology.nominal_point(design), **changes}


def _arrays(point):
    return {k: np.array([float(v)]) for k, v in point.items()}


def _schmitt_netlist(topology, design, point) -> str:
    """The test's own netlist: supply, charge resistor and capacitor (leakage as a behavioural source),
    two Gummel–Poon NPNs with the model's IS, BF and NF at the point's temperature, the threshold
    network and Q2's collector resistor; the delay is the time Q2's collector snaps up to the supply."""
    x = _arrays(point)
    tr = {k: float(np.ravel(v)[0]) for k, v in topology.trip(design, x).items()}
    npn = topology.part(design, "npn")
    temp, vs = point["ambient_c"], point["supply_v"]
    gain = math.exp(npn.value("hfe_tempco", "1/K") * (temp - 25.0))
    is2 = float(saturation_current_a(point["vbe_q2"] + npn.value("vbe_tempco", "V/K") * (temp - 25.0),
                                     npn.value("vbe_test_current", "A"), 1.0, temp))
    leak = topology._leakage(design)
    a_typ, a_lim = (float(np.ravel(a)[0]) for a in leak.coefficients(temp, point[LEAK_LEVEL]))
    stop = 3 * point["r_hold"] * point["c_hold"]
    return "\n".join([
        "* emitter-coupled Schmitt trigger on an RC charge (test netlist)",
        f".options temp={temp} tnom={temp} reltol=1e-6 abstol=1e-15 vntol=1e-8",
        f"V1 vcc 0 dc {vs}", f"R0 vcc in {point['r_hold']}", f"C0 in 0 {point['c_hold']} ic=0",
        f"B0 in 0 I={a_typ}*pwr(max(v(in),0),{leak.n_typ}) + {a_lim}*pwr(max(v(in),0),{leak.n_lim})",
        "Q1 c1 in e NA", "Q2 c2 b2 e NB", f"RE e 0 {point['r_emitter']}", f"RC1 vcc c1 {point['r_q1_collector']}",
        f"R1 c1 b2 {point['r_divider_top']}", f"R2 b2 0 {point['r_divider_bottom']}",
        f"RC2 vcc c2 {topology.entry.value('r_q2_collector', 'ohm')}",
        "CX1 c1 0 10p", "CX2 c2 0 10p", "CX3 b2 0 10p",
        f".model NA NPN(IS={tr['is1']} BF={tr['hfe1']} NF=1 BR=1)",
        f".model NB NPN(IS={is2} BF={point['hfe_q2'] * gain} NF=1 BR=1)",
        f".tran {stop / 20000} {stop} 0 {stop / 20000} uic",
        f".measure tran delay when v(c2)={vs - 1.0} rise=1",
        f".measure tran vtrip find v(in) when v(c2)={vs - 1.0} rise=1", ".end", ""])


CASES = [
    ("nominal film", dict(r_ohm=1e6, c_f=10e-6), {}),
    ("cold, low supply, weak gains", dict(r_ohm=4.7e6, c_f=2.2e-6),
     dict(ambient_c=5.0, supply_v=10.8, hfe_q1=50.0, hfe_q2=50.0, vbe_q1=0.8, vbe_q2=0.6)),
    ("hot, high supply, leakage limit", dict(r_ohm=220e3, c_f=470e-6, cap="cap-electrolytic-low-leakage"),
     dict(ambient_c=40.0, supply_v=15.0, hfe_q1=300.0, hfe_q2=300.0, vbe_q1=0.6, vbe_q2=0.8, leak_level=1.0)),
    ("typical electrolytic, resistor corners", dict(r_ohm=100e3, c_f=2.2e-3, cap="cap-electrolytic-85c"),
     dict(r_emitter=1.012e6, r_q1_collector=385e3, r_divider_top=2.23e6, r_divider_bottom=1.48e6, leak_level=0.0)),
]


@pytest.mark.parametrize("name, values, changes", CASES, ids=[c[0] for c in CASES])
def test_delay_and_trip_agree_with_ngspice(fan, ngspice, tmp_path, name, values, changes):
    d = _design(**values)
    point = _point(fan, d, **changes)
    got = measures(ngspice, _schmitt_netlist(fan, d, point), ("delay", "vtrip"), tmp_path)
    x = _arrays(point)
    # ngspice transient with Gummel-Poon transistors is the independent reference (issue 8 asks for 2 %;
    # the exact fold of the same junction law agrees to about 0.01 %, so 0.5 % still catches a wrong model)
    assert fan.delay(d, x)[0] == pytest.approx(got["delay"], rel=0.005)
    assert float(fan.trip(d, x)["v_trip"][0]) == pytest.approx(got["vtrip"], abs=0.01)


def test_exported_netlist_with_switch_and_coil_agrees_with_ngspice(fan, ngspice, tmp_path):
    d = _design(r_ohm=2.2e6, c_f=4.7e-6)
    hot = {"ambient_c": 40.0, "supply_v": 15.0}
    got = measures(ngspice, fan.spice(d, hot), ("delay",), tmp_path)["delay"]
    # ngspice is the reference; the exported netlist adds the P-MOSFET, coil and flyback diode
    assert got == pytest.approx(fan.delay(d, _arrays(_point(fan, d, **hot)))[0], rel=0.02)


@pytest.mark.parametrize("supply_v", [10.8, 12.0, 15.0])
def test_plain_rc_charge_without_leakage_or_base_current(fan, supply_v):
    # RC charging law (any circuits textbook): from 0 V to V_trip takes t = R C ln(Vs / (Vs - V_trip))
    d = _design(r_ohm=3.3e6, c_f=6.8e-6)
    x = _arrays(_point(fan, d, supply_v=supply_v, leak_level=-1.0, hfe_q1=1e9))
    v_trip = float(fan.trip(d, x)["v_trip"][0])
    assert fan.delay(d, x)[0] == pytest.approx(3.3e6 * 6.8e-6 * math.log(supply_v / (supply_v - v_trip)), rel=1e-7)


def test_trip_is_ratiometric_with_hysteresis_and_cancelling_junction_tempcos(fan):
    d = _design()
    trips = {}
    for vs in (10.8, 15.0):
        for temp in (5.0, 40.0):
            trips[vs, temp] = float(fan.trip(d, _arrays(_point(fan, d, supply_v=vs, ambient_c=temp)))["v_trip"][0])
    # divider ratio R2/(RC1 + R1 + R2) = 0.364 (Ohm's law), shifted by the difference of two junction drops
    for (vs, _), v in trips.items():
        assert 0.33 < v / vs < 0.37
    # both VBE move by about -2 mV/K (Sedra and Smith): over 35 K the trip moves far less than 70 mV
    assert abs(trips[10.8, 40.0] - trips[10.8, 5.0]) < 0.02
    npn = fan.part(d, "npn")
    net = {k: fan.entry.value(k, "ohm") for k in ("r_emitter", "r_q1_collector", "r_divider_top", "r_divider_bottom")}
    is_ = float(saturation_current_a(0.68, npn.value("vbe_test_current", "A"), 1.0, 25.0))
    args = (12.0, *net.values(), 125.0, 125.0, is_, is_, float(thermal_voltage_v(25.0)))
    up, down = float(rising_trip(*args)["v_trip"]), float(falling_trip_v(*args))
    # hand estimate (Millman and Halkias' emitter-coupled binary): after the snap Q1's collector current
    # IE1·RC1 moves Q2's base down by the divider fraction R2/(R1 + R2); with IE1 about V_E/R_E that bounds
    # the hysteresis from above (Q1 already carries part of the current before the snap)
    divider = net["r_divider_bottom"] / (net["r_divider_top"] + net["r_divider_bottom"])
    bound = 3.85 / net["r_emitter"] * net["r_q1_collector"] * divider

    assert 0.1 < up - down < bound


@pytest.mark.parametrize("changes", [SHORT, {"delay.nominal": "2 min", "delay.min": "1 min", "delay.max": "3 min"}],
                         ids=["24 to 40 s", "1 to 3 min"])
def test_table_corners_equal_the_exhaustive_worst_case(fan, changes):
    """The optimiser's table takes each quantity at the end its declared direction says; exhaustive search
    over all 8192 corners (analysis.worst_case) must find the same extremes, film and electrolytic rows alike."""
    topo = build_topology("rc-schmitt", fan.brief.replace(changes), fan.catalog)
    table = topo.selection().block("hold").table
    picks = table.groupby("c_hold_part").nth([0, -1])  # the first and last row of every capacitor class
    assert len(picks) >= 2
    for _, row in picks.iterrows():
        d = Design("rc-schmitt", {"r_hold": row["r_hold"], "c_hold": row["c_hold"]},
                   {"r_hold_part": row["r_hold_part"], "c_hold_part": row["c_hold_part"],
                    "c_hold_rated_v": row["c_hold_rated_v"]})
        worst = topo.worst_case(d)
        assert worst.method.startswith("exhaustive")
        assert row["delay_lo"] == pytest.approx(worst.min_s, rel=1e-9)
        assert row["delay_hi"] == pytest.approx(worst.max_s, rel=1e-9)
        assert row["delay_nom"] == pytest.approx(topo.nominal_delay(d), rel=1e-9)


def test_leakage_limit_can_hold_the_load_on_forever(fan):
    d = _design(r_ohm=6.2e6, c_f=330e-6, cap="cap-electrolytic-low-leakage")
    base = _point(fan, d)
    typical, limit = (fan.delay(d, _arrays({**base, "leak_level": lv}))[0] for lv in (0.0, 1.0))
    # datasheet rule 0.002 CV (low-leakage series, from memory) at 0.35 of the supply against ~1 uA charge current
    assert math.isfinite(typical) and limit == math.inf


def test_shunt_across_the_capacitor_lengthens_the_charge_as_thevenin_says(fan):
    metered = _design(r_ohm=4.7e6, c_f=4.7e-6, shunt=10e6)
    x = _arrays(_point(fan, metered, leak_level=-1.0, hfe_q1=1e9))
    v_trip, vs = float(fan.trip(metered, x)["v_trip"][0]), 12.0
    # Thevenin's theorem: a 10 Mohm meter across C turns the source into Vs·Rs/(R + Rs) behind R || Rs
    v_th, r_th = vs * 10e6 / 14.7e6, 4.7e6 * 10e6 / 14.7e6
    expected = r_th * 4.7e-6 * math.log(v_th / (v_th - v_trip))
    assert fan.delay(metered, x)[0] == pytest.approx(expected, rel=1e-7)
    assert expected > 1.1 * fan.delay(_design(r_ohm=4.7e6, c_f=4.7e-6), x)[0]  # a charging timer runs longer


def test_after_timeout_current_agrees_with_ngspice_operating_point(fan, ngspice, tmp_path):
    d = _design(r_ohm=1e6, c_f=10e-6)
    point = _point(fan, d, leak_level=-1.0)
    net = _schmitt_netlist(fan, d, point).replace("uic", "").split(".tran")[0] + (
        ".op\n.control\nop\nlet i = -i(V1)\nprint i\n.endc\n.end\n")
    (tmp_path / "op.cir").write_text(net)
    import subprocess
    run = subprocess.run([ngspice, "-b", "op.cir"], cwd=tmp_path, capture_output=True, text=True, timeout=60)
    simulated = float(run.stdout.split("i = ")[-1].split()[0])
    after = fan.after_state(d, _arrays(point))
    model = float(after["supply_a"][0]) - fan.part(d, "switch").value("idss", "A")
    # ngspice's DC operating point (capacitor open, Q1 on, Q2 off) is the reference; the model takes a fixed
    # VCE(sat) for Q1 where Gummel-Poon has the full saturation law
    assert model == pytest.approx(simulated, rel=0.05)
    assert fan.standby(d).after_a == pytest.approx(float(after["supply_a"][0]))


def test_monte_carlo_reproducible_by_seed(fan):
    d = _design()
    a, b, c = (fan.monte_carlo(d, samples=3000, seed=s) for s in (4, 4, 5))
    assert a.mean_s == b.mean_s and a.mean_s != c.mean_s


def test_design_rules_gate_drive_and_junction_rating():
    catalog = load_catalog()
    low = build_topology("rc-schmitt", load_brief(EXAMPLES / "propagator_mat.yaml").replace(
        {"supply.nominal": "5 V", "supply.min": "4.75 V", "supply.max": "5.25 V"}), catalog)
    codes = {f.code: f.severity for f in low.checks(_design())}
    # a 5 V supply cannot pull the gate 4.5 V below it through Q2 (the class's VGS for R_DS(on))
    assert codes["gate-drive"] == "violation"
    high = build_topology("rc-schmitt", load_brief(EXAMPLES / "propagator_mat.yaml").replace(
        {"supply.nominal": "24 V", "supply.min": "22.8 V", "supply.max": "25.2 V"}), catalog)
    findings = {f.code: f for f in high.checks(_design(cap="cap-film-pet-5pct"))}
    # 0.35 of 25 V less a junction reverse-biases Q1's emitter-base junction beyond its 6 V rating
    assert findings["junction-rating"].severity == "violation"


def test_fan_brief_checks_pass_and_say_which_leakage_figure(fan):
    findings = {f.code: f for f in fan.checks(_design())}
    assert not [f for f in findings.values() if f.severity == "violation"]
    assert findings["hysteresis"].severity == "info" and "snaps" in findings["hysteresis"].message
    assert "minimum insulation resistance" in findings["leakage-model"].message


def test_study_selects_and_ranks_it_on_a_short_run_on():
    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace(SHORT)
    result = tradeoff.study(brief, samples=2000, only=["rc-schmitt", "rc-mosfet"])
    frame = result.to_frame()
    row = frame[frame["topology"] == "rc-schmitt"]
    assert len(row) == 1 and int(row["rank"].iloc[0]) >= 1
    worst = row[["delay_worst_min_s", "delay_worst_max_s"]].iloc[0]
    assert 24 <= worst.iloc[0] <= worst.iloc[1] <= 40


@pytest.mark.parametrize("name", ["towel_rail_boost", "glue_pot_warmer", "propagator_mat"])
def test_shipped_briefs_report_it_with_a_reason(name):
    result = tradeoff.study(EXAMPLES / f"{name}.yaml", samples=500, only=["rc-schmitt"])
    (outcome,) = result.outcomes
    # hours-long RC timing on electrolytics at their datasheet leakage limit never ends, or the time
    # constant is out of reach: either way the report says why in the designer's terms
    assert outcome.topology == "rc-schmitt" and not outcome.feasible and outcome.reasons
    assert any("band" in r or "never times out" in r for r in outcome.reasons)


def test_q2_saturation_is_flagged_where_the_active_region_model_stops(fan):
    # the trip point is solved for both NPNs forward-active (Ebers-Moll forward mode); Q2's collector sits
    # R_C2·IC2 below the supply, about 0.655·Vs - 0.9 V against 0.636·Vs of headroom above its base (Ohm's
    # law on the fixed network): it saturates only above about 47 V
    assert "q2-saturation" not in {f.code for f in fan.checks(_design())}
    high = build_topology("rc-schmitt", fan.brief.replace({"supply.nominal": "50 V", "supply.min": "48 V",
                                                           "supply.max": "52 V"}), fan.catalog)
    assert "q2-saturation" in {f.code for f in high.checks(_design(cap="cap-film-pet-5pct"))}


def test_windowed_table_equals_the_full_scan(fan, monkeypatch):
    # bisection along r_hold per capacitor keeps the rows and dropped counts a scan of every (r_hold, c_hold) pair
    # keeps; the scan also fails where the nominal delay decreases along r_hold
    import pandas as pd
    import window_reference
    from tradeoff.topologies import bands

    brief = fan.brief.replace({**SHORT, "series.resistor": "E6", "series.electrolytic": "E6", "series.film": "E6",
                               "series.pairs": True})
    windowed = build_topology("rc-schmitt", brief, fan.catalog).selection().blocks[0]
    monkeypatch.setattr(bands, "leading_below", window_reference.full_scan)
    scanned = build_topology("rc-schmitt", brief, fan.catalog).selection().blocks[0]
    assert len(scanned.table) > 20 and sum(scanned.dropped.values()) > 1000
    pd.testing.assert_frame_equal(windowed.table, scanned.table)
    assert windowed.dropped == scanned.dropped
