"""Shared RC-hold pieces: discharge integral, leakage law, start pulse, shunt option."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants
from scipy.integrate import solve_ivp

from tradeoff import physics
from tradeoff.catalog import load_catalog
from tradeoff.errors import DesignError
from tradeoff.topologies.base import Design
from tradeoff.topologies.hold import (
    CHARGE_FRACTION_MIN, CHARGE_TIME_CONSTANTS, CapacitorLeakage, charge_window_s, discharge_time_s,
    power_on_start, shunt_ohm, thermal_voltage_v,
)

CATALOG = load_catalog()


def ode_discharge_s(c_f, v0, v_end, current) -> float:
    """Reference discharge time by scipy solve_ivp with a terminal event at v_end (tight tolerances)."""
    event = lambda t, v: v[0] - v_end  # noqa: E731
    event.terminal, event.direction = True, -1
    sol = solve_ivp(lambda t, v: [-current(v[0]) / c_f], (0, 1e9), [v0], events=event, rtol=1e-11, atol=1e-13,
                    method="LSODA")
    return float(sol.t_events[0][0])


def test_thermal_voltage_codata():
    # REFERENCES.md: kT/q = 25.85 mV at 300 K from CODATA constants (scipy.constants)
    assert thermal_voltage_v(300 - constants.zero_Celsius) == pytest.approx(25.85e-3, rel=2e-4)


def test_quadrature_equals_closed_form_rc_with_constant_current():
    # physics identity: C dV/dt = -(V/R + I) gives t = R C ln((V0 + I R)/(V1 + I R))
    r, c, i = np.array([1e5, 1e6, 4.7e6]), np.array([1e-4, 4.7e-4, 2.2e-3]), np.array([0.0, 1e-6, 3e-7])
    v0, v1 = 11.0, 1.5
    t = discharge_time_s(c, np.log(v1), np.log(v0),
                         lambda u: (np.exp(u), np.exp(u) / r[:, None] + i[:, None]))
    assert t == pytest.approx(r * c * np.log((v0 + i * r) / (v1 + i * r)), rel=1e-9)


@pytest.mark.parametrize("part_id,level,shunt", [("cap-electrolytic-85c", 1.0, None),
                                                 ("cap-electrolytic-85c", 0.0, 1e7),
                                                 ("cap-electrolytic-low-leakage", 0.5, 3.3e6),
                                                 ("cap-film-pet-10pct", 1.0, None)])
def test_quadrature_matches_solve_ivp_with_leakage_law_and_shunt(part_id, level, shunt):
    # reference: scipy solve_ivp with an event; the quadrature must agree within 0.1 %
    part = CATALOG.part(part_id)
    c, r, rated = 4.7e-4 if part.fields["dielectric"] == "electrolytic" else 4.7e-6, 1e6, 25.0
    leak = CapacitorLeakage(part, c, rated)
    a_typ, a_lim = leak.coefficients(40.0, level)

    def current(v):
        return v / r + leak.current_a(v, a_typ, a_lim) + (0.0 if shunt is None else v / shunt)

    t = discharge_time_s(c, np.log(1.0), np.log(12.0), lambda u: (np.exp(u), current(np.exp(u))))
    assert float(t) == pytest.approx(ode_discharge_s(c, 12.0, 1.0, current), rel=1e-3)


@pytest.mark.parametrize("v", [0.5, 3.0, 11.0, 25.0])
def test_leakage_law_is_the_physics_rule(v):
    # the blended power law reproduces tradeoff.physics at levels 0 (typical) and 1 (datasheet limit)
    part = CATALOG.part("cap-electrolytic-85c")
    leak = CapacitorLeakage(part, 4.7e-4, 25.0)
    for level, typical in ((0.0, True), (1.0, False)):
        a_typ, a_lim = leak.coefficients(60.0, level)
        expected = physics.electrolytic_leakage_a(4.7e-4, v, 25.0, 60.0, part, typical=typical)
        assert leak.current_a(v, a_typ, a_lim) == pytest.approx(expected, rel=1e-12)
    assert leak.current_a(v, *leak.coefficients(60.0, -1.0)) == 0.0


def test_datasheet_rule_at_rated_voltage():
    # aluminium electrolytic datasheets (REFERENCES.md): I <= 0.01 CV or 3 uA, whichever is greater, 20 degC
    part = CATALOG.part("cap-electrolytic-85c")
    big, small = CapacitorLeakage(part, 4.7e-4, 25.0), CapacitorLeakage(part, 1e-6, 16.0)
    assert big.current_a(25.0, *big.coefficients(20.0, 1.0)) == pytest.approx(0.01e-6 * 470 * 25)
    assert small.current_a(16.0, *small.coefficients(20.0, 1.0)) == pytest.approx(3e-6)


def test_film_leakage_uses_insulation_resistance():
    part = CATALOG.part("cap-film-pet-10pct")
    leak = CapacitorLeakage(part, 4.7e-6, 63.0)
    r_ins = physics.insulation_resistance_ohm(4.7e-6, part)
    assert leak.current_a(10.0, *leak.coefficients(25.0, 1.0)) == pytest.approx(10.0 / r_ins)
    assert "insulation" in leak.finding().message


def start_ode(supply, r_start, c_start, r_be, r_charge, c_hold, hfe, veb, vce, load):
    """solve_ivp of the start circuit: PNP collector current min(hFE·IB(t), (V_top - V)/r_charge)."""
    a, b = (supply - veb) / r_start, veb / r_be
    top = supply - vce
    t_off = r_start * c_start * math.log(a / b)

    def rhs(t, v):
        ib = max(a * math.exp(-t / (r_start * c_start)) - b, 0.0)
        return [(min(hfe * ib, max(top - v[0], 0.0) / r_charge) - load) / c_hold]

    sol = solve_ivp(rhs, (0, t_off), [0.0], rtol=1e-10, atol=1e-12, max_step=t_off / 2000, method="LSODA")
    return t_off, float(sol.y[0, -1])


@pytest.mark.parametrize("r_start,c_start,c_hold", [(10e3, 100e-6, 470e-6), (22e3, 47e-6, 1e-3),
                                                    (4.7e3, 22e-6, 220e-6)])
def test_power_on_start_matches_ode(r_start, c_start, c_hold):
    # reference: solve_ivp of the same idealised start circuit (PNP as saturating switch / current source)
    args = dict(supply=12.0, r_start=r_start, c_start=c_start, r_be=10e3, r_charge=220.0, c_hold=c_hold,
                hfe=200.0, veb=0.68, vce=0.25, load=10e-6)
    pulse = power_on_start(args["supply"], r_start, c_start, 10e3, 220.0, c_hold, 200.0, 0.68, 0.25, 10e-6)
    t_off, v_end = start_ode(**args)
    assert float(pulse.pulse_s) == pytest.approx(t_off, rel=1e-12)
    assert float(pulse.peak_v) == pytest.approx(v_end, rel=2e-3)
    assert float(pulse.charge_frac) > CHARGE_FRACTION_MIN


def test_charge_window_guarantees_95_percent():
    # design rule: a window of at least 3 charge time constants gives >= 95 % charge at the worst corner
    r_charge, load = 220.0, 20e-6
    window = float(charge_window_s(10.8, 15.0, 10e3, 10e3 * 10e-6, 10e3, r_charge, 100.0, 0.75, 0.25, load))
    c_hold = window / (CHARGE_TIME_CONSTANTS * r_charge)  # the largest hold capacitor the window allows
    pulse = power_on_start(10.8, 10e3, 10e-6, 10e3, r_charge, c_hold, 100.0, 0.75, 0.25, load)
    assert float(pulse.saturated_s) >= CHARGE_TIME_CONSTANTS * r_charge * c_hold * (1 - 1e-6)
    assert float(pulse.peak_v / (10.8 - 0.25)) >= CHARGE_FRACTION_MIN - 1e-3
    # a far larger capacitor (40 times) is not charged to 95 % before the PNP leaves saturation
    short = power_on_start(10.8, 10e3, 10e-6, 10e3, r_charge, 40 * c_hold, 100.0, 0.75, 0.25, load)
    assert float(short.charge_frac) < CHARGE_FRACTION_MIN


def test_shunt_option_parsing():
    assert shunt_ohm(Design("rc-darlington", options={"shunt": "10 Mohm"})) == pytest.approx(1e7)
    assert shunt_ohm(Design("rc-darlington", options={})) is None
    with pytest.raises(DesignError, match=r"options\.shunt: .*accepted: a resistance"):
        shunt_ohm(Design("rc-darlington", options={"shunt": "10 furlongs"}))
    with pytest.raises(DesignError, match="not a positive resistance"):
        shunt_ohm(Design("rc-darlington", options={"shunt": -5.0}))
