"""rc-mosfet: ngspice reference, closed form, corners, selection tables, gate-drive rule."""
from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from spice_measures import measures

from tradeoff.analysis import worst_case
from tradeoff.topologies.base import Design
from tradeoff.devices.capacitor import rc_discharge_time_s as hold_time_closed_s
from tradeoff.topologies.rc_mosfet import RcMosfet

from hold_cases import BRIEF, CATALOG, WIDE, delay_at, make_design, make_topology, sweep_beats_corners


def topology(brief=BRIEF) -> RcMosfet:
    return make_topology(RcMosfet, brief)


def design(r, c, **options) -> Design:
    return make_design("rc-mosfet", r, c, **options)


at = delay_at

SPICE_CASES = [  # about 10 s to 11 h, with and without leakage, gate leakage and shunt
    ("button", design(22e3, 220e-6), {"leak_level": -1.0}),
    ("button", design(220e3, 470e-6), {}),
    ("button", design(1e6, 100e-6, shunt=10e6), {"leak_level": 1.0, "gate_leak": 1.0}),
    ("button", design(4.7e6, 2.2e-3), {"leak_level": 0.5, "ambient_c": 40.0, "vth": 2.2}),
    ("button", design(4.7e6, 4.7e-3), {"leak_level": -1.0, "k": 0.3}),
    ("button", design(2.2e6, 4.7e-6, c_hold_part="cap-film-pet-10pct"), {"gate_leak": 1.0}),
    ("power-on", design(1e6, 470e-6, r_start=10e3, c_start=100e-6), {}),
]


@pytest.mark.parametrize("start,d,point", SPICE_CASES)
def test_release_time_agrees_with_ngspice(ngspice, tmp_path, start, d, point):
    # reference: ngspice transient (level-1 MOSFET with the model's VTO and KP, coil R + L with flyback
    # diode, leakage as a behavioural source, gate leakage as a resistor); within 5 %
    topo = topology(BRIEF.replace({"start": start}))
    sim = measures(ngspice, topo.spice(d, point), ("delay",), tmp_path)["delay"]
    assert at(topo, d, **point) == pytest.approx(sim, rel=0.05)


def test_spice_cases_span_ten_seconds_to_ten_hours():
    delays = [at(topology(BRIEF.replace({"start": s})), d, **p) for s, d, p in SPICE_CASES]
    assert min(delays) < 20 and max(delays) > 8 * 3600


@pytest.mark.parametrize("r,c,level", [(220e3, 470e-6, 0.0), (1e6, 100e-6, 1.0), (4.7e6, 1e-3, -1.0)])
def test_closed_form_equals_quadrature_equals_solve_ivp(r, c, level):
    # constant capacitor leakage (voltage exponents 0): closed form, quadrature and solve_ivp agree
    topo = topology()
    d = design(r, c, overrides={"cap-electrolytic-85c": {"leakage_voltage_exponent": 0,
                                                         "leakage_voltage_exponent_limit": 0}})
    s = topo.nominal_state(d, {"leak_level": level})
    g, leak = float(topo.gate(s)["g"][0]), float(s.leakage_a(1.0)[0])
    v0, v1 = 12.0 - 0.72, float(topo.voltage_for_a(s, s.release_a)[0])
    closed = float(hold_time_closed_s(c, 1 / g, v0, v1, leak))
    event = lambda t, v: v[0] - v1  # noqa: E731
    event.terminal, event.direction = True, -1
    ode = solve_ivp(lambda t, v: [-(v[0] * g + leak) / c], (0, 1e8), [v0], events=event, rtol=1e-11,
                    atol=1e-13).t_events[0][0]
    quad = at(topo, d, leak_level=level)
    assert quad == pytest.approx(closed, rel=1e-7)
    assert quad == pytest.approx(ode, rel=1e-4)


def test_release_at_square_law_gate_voltage():
    # datasheet threshold point: Id(VGS(th)) = test current; release where K/2 (V - Vto)^2 = I_release
    topo = topology()
    s = topo.nominal_state(design(1e6, 100e-6))
    p = topo.gate(s)
    vth = CATALOG.part("mosfet-n-logic-small").value("vth_typ", "V")
    assert float(topo.output_a(s, np.array([vth]))[0]) == pytest.approx(250e-6, rel=1e-9)
    v_rel = topo.voltage_for_a(s, s.release_a)
    assert float(topo.output_a(s, v_rel)[0]) == pytest.approx(float(s.release_a[0]), rel=1e-9)
    assert float(p["vto"][0]) < vth


def test_ten_megohm_meter_visibly_shortens_the_hold():
    # common practice (no source): a 10 Mohm meter across the hold capacitor visibly shortens the hold
    topo = topology()
    assert at(topo, design(2.2e6, 220e-6, shunt="10 Mohm")) < 0.9 * at(topo, design(2.2e6, 220e-6))


@pytest.mark.parametrize("d", [design(220e3, 470e-6), design(2.2e6, 4.7e-6, c_hold_part="cap-film-pet-10pct")])
def test_slope_guided_search_finds_the_exhaustive_extremes(d):
    topo = topology()
    exhaustive = topo.worst_case(d)
    guided = worst_case(lambda x: topo.delay(d, x), topo.quantities(d), exhaustive_limit=0)
    assert guided.min_s == pytest.approx(exhaustive.min_s, rel=1e-12)
    assert guided.max_s == pytest.approx(exhaustive.max_s, rel=1e-12)


@pytest.mark.parametrize("start", ["button", "power-on"])
@pytest.mark.parametrize("d", [design(10e3, 1e-3), design(220e3, 470e-6), design(4.7e6, 1e-3, shunt=10e6)])
def test_corners_hold_the_extremes_of_a_dense_sweep(start, d):
    # every quantity swept alone, and ambient (direction 0) with r_hold jointly: nothing beats the corners
    topo = topology(WIDE.replace({"start": start}))
    if start == "power-on":
        d = design(d.values["r_hold"], d.values["c_hold"], r_start=10e3, c_start=100e-6, **d.options)
    assert sweep_beats_corners(topo, d, ["ambient_c", "r_hold"]) == []


def test_selection_table_equals_evaluate_worst_case():
    topo = topology(WIDE)
    model = topo.selection()
    block = model.block("hold")
    for _, row in block.table.sample(5, random_state=2).iterrows():
        d = Design("rc-mosfet", {"r_hold": row["r_hold"], "c_hold": row["c_hold"]}, {k: row[k] for k in block.options})
        ev = topo.evaluate(d, samples=200)
        assert row["delay_lo"] == pytest.approx(ev.worst.min_s, rel=1e-9)
        assert row["delay_hi"] == pytest.approx(ev.worst.max_s, rel=1e-9)
        assert model.fixed_cost + row["cost"] == pytest.approx(ev.cost)


def test_monte_carlo_reproducible_by_seed():
    topo = topology()
    a, b = (topo.monte_carlo(design(220e3, 470e-6), samples=4000, seed=9) for _ in range(2))
    assert np.array_equal(a.delays, b.delays)


def test_gate_drive_rule_on_a_five_volt_supply():
    # a 4.5 V R_DS(on) rating is not reached from 5 V minus the button diode: violation, all candidates dropped
    brief = BRIEF.replace({"supply.nominal": "5 V", "supply.min": "4.75 V", "supply.max": "5.25 V",
                           "load.relay.coil_voltage": "5 V", "load.relay.coil_resistance": "70 ohm"})
    topo = topology(brief)
    assert [f for f in topo.checks(design(220e3, 470e-6)) if f.code == "start-drive" and f.severity == "violation"]
    block = topo.selection().block("hold")
    assert len(block.table) == 0 and any("on-resistance is rated" in k for k in block.dropped)


def test_linear_region_chatter_band_reported():
    codes = {f.code: f for f in topology().checks(design(220e3, 470e-6))}
    assert codes["chatter-band"].severity == "warning"
    assert codes["dissipation"].severity in ("warning", "violation")
