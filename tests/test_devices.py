"""Device laws (tradeoff.devices), each against its outside reference: scipy solve_ivp, CODATA constants,
the aluminium electrolytic datasheet rule, closed forms of standard circuit analysis, datasheet boxes."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants
from scipy.integrate import solve_ivp

from tradeoff.catalog import load_catalog
from tradeoff.devices.capacitor import (
    CapacitorLeakage, band_frac, electrolytic_leakage_a, insulation_resistance_ohm, rc_discharge_time_s,
)
from tradeoff.devices.comparator import threshold_v
from tradeoff.devices.junction import thermal_voltage_v
from tradeoff.devices.mosfet import drain_current_a, gate_voltage_for_a, k_at, on_state_drop_v, rds_on_at_ohm, vto_v
from tradeoff.devices.oscillator import (
    crystal_frequency, crystal_period_s, rc_band, rc_half_periods_s, rc_junction_v, threshold_factor,
)
from tradeoff.devices.quadrature import discharge_time_s, evaluate_in_chunks
from tradeoff.devices.relay import (
    coil_ohm_at, derated_power_w, linear_peak_dissipation_w, release_current_a, typical_release_band,
)
from tradeoff.devices.start import (
    CHARGE_FRACTION_MIN, CHARGE_TIME_CONSTANTS, charge_window_s, power_on_release_s, power_on_start,
)

CATALOG = load_catalog()


# ---- capacitor, quadrature, start (hold laws) ------------------------------------------------------------

def ode_discharge_s(c_f, v0, v_end, current) -> float:
    """Reference discharge time by scipy solve_ivp with a terminal event at v_end (tight tolerances)."""
    event = lambda t, v: v[0] - v_end  # noqa: E731
    event.terminal, event.direction = True, -1
    sol = solve_ivp(lambda t, v: [-current(v[0]) / c_f], (0, 1e9), [v0], events=event, rtol=1e-11, atol=1e-13,
                    method="LSODA")
    return float(sol.t_events[0][0])


def test_thermal_voltage_codata():
    # CODATA 2018 (via scipy.constants): kT/q = 25.85 mV at 300 K
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
    # the blended power law reproduces electrolytic_leakage_a at levels 0 (typical) and 1 (datasheet limit)
    part = CATALOG.part("cap-electrolytic-85c")
    leak = CapacitorLeakage(part, 4.7e-4, 25.0)
    for level, typical in ((0.0, True), (1.0, False)):
        a_typ, a_lim = leak.coefficients(60.0, level)
        expected = electrolytic_leakage_a(4.7e-4, v, 25.0, 60.0, part, typical=typical)
        assert leak.current_a(v, a_typ, a_lim) == pytest.approx(expected, rel=1e-12)
    assert leak.current_a(v, *leak.coefficients(60.0, -1.0)) == 0.0


def test_datasheet_rule_at_rated_voltage():
    # aluminium electrolytic datasheets: I <= 0.01 CV or 3 uA, whichever is greater, 20 degC
    part = CATALOG.part("cap-electrolytic-85c")
    big, small = CapacitorLeakage(part, 4.7e-4, 25.0), CapacitorLeakage(part, 1e-6, 16.0)
    assert big.current_a(25.0, *big.coefficients(20.0, 1.0)) == pytest.approx(0.01e-6 * 470 * 25)
    assert small.current_a(16.0, *small.coefficients(20.0, 1.0)) == pytest.approx(3e-6)


def test_film_leakage_uses_insulation_resistance():
    part = CATALOG.part("cap-film-pet-10pct")
    leak = CapacitorLeakage(part, 4.7e-6, 63.0)
    r_ins = insulation_resistance_ohm(4.7e-6, part)
    assert leak.current_a(10.0, *leak.coefficients(25.0, 1.0)) == pytest.approx(10.0 / r_ins)
    assert "insulation" in leak.basis_text()


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


def test_rc_discharge_closed_form_matches_solve_ivp():
    # reference: scipy solve_ivp of C dV/dt = -(V/R + IL) with an event at V1
    c, r, il, v0, v1 = 470e-6, 1e6, 2e-6, 11.0, 1.5
    event = lambda t, v: v[0] - v1  # noqa: E731
    event.terminal, event.direction = True, -1
    ode = solve_ivp(lambda t, v: [-(v[0] / r + il) / c], (0, 1e7), [v0], events=event, rtol=1e-11,
                    atol=1e-13).t_events[0][0]
    assert float(rc_discharge_time_s(c, r, v0, v1, il)) == pytest.approx(ode, rel=1e-6)
    assert float(rc_discharge_time_s(c, r, v1, v0, il)) == 0.0


def test_band_is_tolerance_plus_tempco_over_the_farther_ambient_limit():
    # resistor class datasheets: 1 % and 100 ppm/K; -20 to 40 degC is 45 K from 25 degC at its far end
    assert band_frac(0.01, 100e-6, -20.0, 40.0) == pytest.approx(0.01 + 100e-6 * 45)


def test_chunked_evaluation_equals_one_pass():
    x = {"a": np.linspace(0, 1, 20001), "b": np.float64(2.0)}
    whole = np.sin(x["a"]) * x["b"]
    assert np.array_equal(evaluate_in_chunks(lambda c: np.sin(c["a"]) * c["b"], x, chunk=4096), whole)


# ---- MOSFET square law -----------------------------------------------------------------------------------

def test_square_law_passes_the_datasheet_threshold_point():
    # datasheet threshold point: Id(VGS(th)) = test current; the inverse returns the gate voltage
    k, vth, test = 0.2, 1.5, 250e-6
    vto = vto_v(vth, test, k)
    assert float(drain_current_a(vth, vto, k, 1.0)) == pytest.approx(test, rel=1e-12)
    assert float(gate_voltage_for_a(30e-3, vto, k, 1.0)) == pytest.approx(vto + math.sqrt(2 * 30e-3 / k))


def test_mobility_law_and_linear_region_drop():
    # K ~ T^-1.5 (mobility, from memory); SPICE level 1 linear region Id = K((Vgs-Vt)Vds - Vds^2/2)
    assert float(k_at(0.2, 25.0, -1.5)) == pytest.approx(0.2)
    assert float(k_at(0.2, 85.0, -1.5)) == pytest.approx(0.2 * (358.15 / 298.15) ** -1.5)
    vds = on_state_drop_v(2.0, 0.2, 0.1)
    assert 0.2 * (2.0 * vds - vds ** 2 / 2) == pytest.approx(0.1, rel=1e-12)
    assert on_state_drop_v(1.0, 0.2, 0.2) == math.inf    # above K (Vgs - Vt)^2 / 2 = 0.1 A


def test_on_resistance_rises_linearly_from_its_25_degree_rating():
    # power MOSFET datasheets' normalised R_DS(on) curve read as a line: +0.5 %/K doubles it 200 K above 25 degC
    assert float(rds_on_at_ohm(0.1, 0.005, 225.0)) == pytest.approx(0.2, rel=1e-12)
    assert float(rds_on_at_ohm(0.1, 0.005, 25.0)) == 0.1


# ---- relay -------------------------------------------------------------------------------------------------

def test_relay_release_current_coil_tempco_and_dissipation_peak():
    # 12 V coil of 400 ohm releasing at 10 %: 3 mA; copper +0.393 %/K (IEC 60028); VI peak at V^2/4R
    assert float(release_current_a(0.10, 12.0, 400.0)) == pytest.approx(3e-3)
    assert float(coil_ohm_at(400.0, 0.00393, 65.0)) == pytest.approx(400.0 * (1 + 0.00393 * 40))
    currents = np.linspace(0, 12.0 / 400.0, 10001)
    assert float(linear_peak_dissipation_w(12.0, 400.0)) == pytest.approx(np.max((12.0 - currents * 400.0) * currents),
                                                                         rel=1e-6)
    # transistor datasheets' derating: 500 mW at 25 degC, zero at 150 degC -> 300 mW at 75 degC
    assert derated_power_w(0.5, 150.0, 75.0) == pytest.approx(0.3)


def test_typical_release_band_stays_inside_the_guarantees():
    # relay datasheets guarantee release between must-release and must-operate: a typical band never leaves it
    assert typical_release_band(0.15, 0.35, 0.10, 0.75) == (0.15, 0.35)
    assert typical_release_band(0.15, 0.35, 0.20, 0.30) == (0.20, 0.30)
    assert typical_release_band(0.15, 0.35, 0.40, 0.75) is None


# ---- comparator --------------------------------------------------------------------------------------------

def test_threshold_node_by_superposition():
    # standard circuit analysis: with the drain at 0 V, r_hyst is in parallel with r_bottom
    bottom = 1e6 * 10e6 / (1e6 + 10e6)
    assert float(threshold_v(1.2, 0.0, 1e6, 1e6, 10e6)) == pytest.approx(1.2 * bottom / (1e6 + bottom))


# ---- oscillators -------------------------------------------------------------------------------------------

def test_crystal_period_is_the_inverse_frequency_with_its_parabola():
    # tuning-fork crystal datasheets: -0.034 ppm/K^2 about 25 degC; 20 K off turnover is -13.6 ppm
    f = crystal_frequency(32768.0, 0.0, 0.0, -0.034e-6, 45.0, 25.0)
    assert float(f) == pytest.approx(32768.0 * (1 - 13.6e-6), rel=1e-12)
    assert float(crystal_period_s(32768.0, 0.0, 0.0, -0.034e-6, 25.0, 45.0)) == pytest.approx(1 / float(f), rel=1e-15)


def test_threshold_formula_at_half_supply():
    # standard circuit analysis: T = RC·[ln((Vdd+Vt)/Vt) + ln((2Vdd−Vt)/(Vdd−Vt))] = 2·ln 3·RC = 2.197·RC at Vt = Vdd/2
    assert float(threshold_factor(0.5)) == pytest.approx(2 * math.log(3), rel=1e-12)
    assert float(threshold_factor(0.5)) == pytest.approx(2.197, abs=5e-4)
    v = np.array([0.2, 0.3, 0.4, 0.6, 0.7, 0.8])
    assert np.allclose(threshold_factor(v), threshold_factor(1 - v)) and np.all(threshold_factor(v) > 2.197)


@pytest.mark.parametrize("v", [0.3, 0.5, 0.7])
def test_junction_waveform_against_solve_ivp(v):
    # the two half-periods add to tau·F(v); the junction follows scipy solve_ivp of Ct's charge (ideal
    # inverters: Rt from the first output, Ct from the second, Rs carrying no current) and reaches Vt at the
    # end of each half
    tau, vdd = 1e-3, 12.0
    vt = v * vdd
    t1, t2 = rc_half_periods_s(tau, vdd, vt)
    assert t1 + t2 == pytest.approx(tau * float(threshold_factor(v)), rel=1e-12)
    # Rt carries (V(o1) - x)/Rt into Ct while V(o2) holds: dx/dt = (V(o1) - x)/tau; rising half V(o1) = VDD
    # from x = Vt - VDD, falling half V(o1) = 0 from x = Vt + VDD
    rise = solve_ivp(lambda t, x: [(vdd - x[0]) / tau], (0, t1), [vt - vdd], rtol=1e-11, atol=1e-12, dense_output=True)
    fall = solve_ivp(lambda t, x: [-x[0] / tau], (0, t2), [vt + vdd], rtol=1e-11, atol=1e-12, dense_output=True)
    t = np.linspace(0, t1 * 0.999, 7)
    assert np.allclose(rc_junction_v(t, tau, vdd, vt), rise.sol(t)[0], atol=1e-7)
    t = np.linspace(0, t2 * 0.999, 7)
    assert np.allclose(rc_junction_v(t1 + t, tau, vdd, vt), fall.sol(t)[0], atol=1e-7)
    assert float(rc_junction_v(t1 * (1 - 1e-12), tau, vdd, vt)) == pytest.approx(vt, rel=1e-9)
    assert float(rc_junction_v(t1 + t2 - 1e-15, tau, vdd, vt)) == pytest.approx(vt, rel=1e-6)


# Factory-trimmed internal RC, a small 8-bit microcontroller family's datasheet (electrical characteristics): +/-1 % at 25 degC,
# +/-1.5 % over 0 to 55 degC, -4/+3 % over -40 to 105 degC.
DATASHEET_BOXES = ((25.0, 0.0, -40.0), (25.0, 55.0, 105.0), (-0.01, -0.015, -0.04), (0.01, 0.015, 0.03))


@pytest.mark.parametrize("temp_c, lo, hi", [
    (25.0, -0.01, 0.01),     # datasheet: +/-1 % at 25 degC
    (0.0, -0.015, 0.015),    # datasheet: +/-1.5 % over 0 to 55 degC, at the box edge
    (40.0, -0.015, 0.015),
    (55.0, -0.015, 0.015),
    (-0.5, -0.04, 0.03),     # just outside 0 to 55 degC: only the -40 to 105 degC box holds
    (80.0, -0.04, 0.03),
    (-40.0, -0.04, 0.03),    # datasheet: -4/+3 % over -40 to 105 degC
])
def test_internal_rc_band_is_the_datasheet_box(temp_c, lo, hi):
    band_lo, band_hi = rc_band(np.array([temp_c]), *DATASHEET_BOXES)
    assert band_lo[0] == pytest.approx(lo) and band_hi[0] == pytest.approx(hi)


# ---- start networks ----

def test_power_on_release_against_integration():
    # physics identity: RC charged from a supply ramping to V in rise_s; release when v_c = frac·supply
    for tau, rise, frac in ((0.1, 0.05, 1 / 3), (0.01, 0.05, 1 / 3), (0.1, 0.0, 0.3), (0.1, 0.2, 0.3)):
        def supply(t):
            return 1.0 if rise == 0 else min(1.0, t / rise)
        sol = solve_ivp(lambda t, v: [(supply(t) - v[0]) / tau], (1e-9, 10 * tau + rise), [0.0], max_step=tau / 20,
                        rtol=1e-9, atol=1e-12, events=lambda t, v: v[0] - frac * supply(t) if t > 1e-6 else -1.0)
        assert sol.t_events[0][0] == pytest.approx(power_on_release_s(tau, rise, frac), rel=1e-4)
    # step supply: ln(1/(1 − 1/3)) = 0.405 tau (standard circuit analysis)
    assert power_on_release_s(1.0, 0.0, 1 / 3) == pytest.approx(math.log(1.5))


def test_bisection_on_arrays_matches_scipy_brentq():
    # reference: scipy.optimize.brentq (Brent's method) on each element alone; the bisection must bracket
    # each root within its width (hi - lo)/2**steps, arithmetic and geometric
    from scipy.optimize import brentq

    from tradeoff.devices.roots import bisect_arrays

    targets = np.array([0.3, 2.0, 7.5, 40.0])
    lo, hi = bisect_arrays(lambda x: x ** 3 + x >= targets, np.zeros(4), np.full(4, 5.0), 50)
    for t, a, b in zip(targets, lo, hi):
        root = brentq(lambda x: x ** 3 + x - t, 0.0, 5.0, xtol=1e-15)
        assert a <= root <= b and b - a <= 5.0 / 2 ** 50
    glo, ghi = bisect_arrays(lambda r: np.log10(r) >= np.array([0.5, 3.2]), np.full(2, 1.0), np.full(2, 1e6), 60,
                             geometric=True)
    assert glo == pytest.approx([10 ** 0.5, 10 ** 3.2], rel=1e-12) and ghi == pytest.approx(glo, rel=1e-12)
