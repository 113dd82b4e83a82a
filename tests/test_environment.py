"""The brief's `environment:` section: board-surface leakage at the high-impedance timing nodes and the
product's service life (electrolytic endurance, crystal ageing), each against its formula, plus the
brief field's defaults and located errors."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from spice_measures import measures
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.devices.capacitor import LEAK_LEVEL
from tradeoff.devices.comparator import THRESHOLD_FRAC
from tradeoff.devices.life import crystal_ageing_frac, life_used_frac
from tradeoff.errors import BriefError
from tradeoff.topologies.bands import BOARD_LEAK
from tradeoff.topologies.base import Design
from tradeoff.topologies.shared_checks import life_findings
from tradeoff.topologies.registry import build_topology

from conftest import EXAMPLES

FAN = EXAMPLES / "fan_run_on.yaml"
COMPARATOR = Design("rc-comparator", {"r_hold": 47e6, "c_hold": 10e-6},
                    {"regulator": "ldo-micropower", "c_hold_part": "cap-film-pet-10pct",
                     "r_hold_part": "res-thick-film-high-value-5pct"})


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


@pytest.fixture(scope="module")
def fan():
    return load_brief(FAN)


# ---- the brief field ----------------------------------------------------------------------------------
def test_no_environment_section_states_nothing_and_records_its_defaults(fan):
    env = fan.environment
    assert (env.board, env.surface_ohm, env.life_years) == (None, None, None)
    shown = {v.key: (v.text, v.origin) for v in fan.values}
    assert shown["environment.board"] == ("none", "default")
    assert shown["environment.life"] == ("not stated", "default")


def test_board_classes_and_a_given_resistance(fan):
    humid = fan.replace({"environment.board": "humid"}).environment
    assert (humid.board, humid.surface_ohm) == ("humid", 1e9)
    assert "from memory" in humid.surface_basis
    assert fan.replace({"environment.board": "contaminated"}).environment.surface_ohm == 1e8
    given = fan.replace({"environment.board": "470 Mohm", "environment.life": "10 years"}).environment
    assert (given.board, given.surface_ohm, given.life_years) == ("given", 470e6, pytest.approx(10.0))


@pytest.mark.parametrize("key, value, accepted", [
    ("board", "wet", "accepted: none, clean, humid, contaminated or a surface insulation resistance from 1 MΩ to 10 TΩ"),
    ("board", "10 kohm", "accepted: 1 MΩ to 10 TΩ"),
    ("life", "6 months", "accepted: a service life from 1 to 50 years"),
    ("life", "10", "accepted: a service life from 1 to 50 years"),
    ("life", "80 years", "accepted: a service life from 1 to 50 years"),
])
def test_bad_values_are_located_errors(fan, key, value, accepted):
    text = FAN.read_text(encoding="utf-8").rstrip("\n") + f"\nenvironment:\n  {key}: {value}\n"
    line = text.count("\n")
    with pytest.raises(BriefError) as err:
        load_brief(text, source_name="brief.yaml")
    message = str(err.value)
    assert f"brief.yaml:{line}:{len(key) + 5}: environment.{key}:" in message
    assert accepted in message


# ---- board-surface leakage ------------------------------------------------------------------------------
def test_rc_discharge_with_a_parallel_leak_matches_the_closed_form(fan, catalog):
    # standard circuit analysis: C discharging through R and a parallel R_s from V0 reaches V_th after
    # t = (R ∥ R_s)·C·ln(V0/V_th); capacitor leakage and comparator bias set to none for the check
    brief = fan.replace({"environment.board": "humid"})
    topo = build_topology("rc-comparator", brief, catalog)
    x = {n: np.array([u.nominal]) for n, u in topo.quantities(COMPARATOR).items()}
    x.update({LEAK_LEVEL: np.array([-1.0]), "bias_frac": np.array([0.0]), "ref_bias_frac": np.array([0.0]),
              BOARD_LEAK: np.array([1.0])})
    r, c, v0 = float(x["r_hold"][0]), float(x["c_hold"][0]), float(x["rail_v"][0])
    v_th = float(topo.trip_v(x)[0])
    parallel = r * 1e9 / (r + 1e9)
    assert topo.delay(COMPARATOR, x)[0] == pytest.approx(parallel * c * math.log(v0 / v_th), rel=1e-6)
    x[BOARD_LEAK] = np.array([0.0])
    assert topo.delay(COMPARATOR, x)[0] == pytest.approx(r * c * math.log(v0 / v_th), rel=1e-6)


def test_a_humid_board_shortens_the_worst_case_of_a_high_impedance_hold(fan, catalog):
    # the fan run-on brief's comparator hold at 47 MΩ: 1 GΩ across the capacitor takes about 4.5 % off
    # (47 MΩ ∥ 1 GΩ), 100 MΩ about a third (47 MΩ ∥ 100 MΩ)
    shortest = {}
    for board in (None, "humid", "contaminated"):
        brief = fan if board is None else fan.replace({"environment.board": board})
        shortest[board] = build_topology("rc-comparator", brief, catalog).worst_case(COMPARATOR).min_s
    assert shortest["humid"] < shortest[None] * (1 - 0.02)
    assert shortest["contaminated"] < shortest["humid"] * (1 - 0.2)
    assert 0.95 < shortest["humid"] / shortest[None] < 0.97


def test_hold_surface_equals_a_shunt_of_the_same_resistance(fan, catalog):
    # the board surface at its full figure is the same path as the hold's external shunt option
    brief = fan.replace({"environment.board": "200 Mohm"})
    design = Design("rc-mosfet", {"r_hold": 4.7e6, "c_hold": 220e-6}, {"c_hold_part": "cap-electrolytic-85c"})
    surface, plain = build_topology("rc-mosfet", brief, catalog), build_topology("rc-mosfet", fan, catalog)
    x = {n: np.array([u.nominal]) for n, u in surface.quantities(design).items()}
    x[BOARD_LEAK] = np.array([1.0])
    shunted = Design(design.topology, design.values, {**design.options, "shunt": "200 Mohm"})
    y = {n: v for n, v in x.items() if n != BOARD_LEAK}
    assert surface.delay(design, x)[0] == pytest.approx(plain.delay(shunted, y)[0], rel=1e-9)
    assert surface.worst_case(design).min_s < plain.worst_case(design).min_s
    assert "RSURFACE hold 0 400000000\n" in surface.spice(design)   # nominal: half the figure's conductance


def test_555_with_a_surface_leak_against_the_ode_and_ngspice(fan, catalog, ngspice, tmp_path):
    # standard circuit analysis: C·dv/dt = (V − v)/R − v/R_s − Ix from 0 V reaches 2/3 V at the width the
    # model gives; a board leak to ground lengthens the charge
    brief = fan.replace({"delay.nominal": "60 s", "delay.min": "40 s", "delay.max": "80 s",
                         "environment.board": "contaminated"})
    topo = build_topology("timer555", brief, catalog)
    design = Design("timer555", {"r_timing": 2.2e6, "c_timing": 22e-6},
                    {"timer": "timer555-cmos", "r_timing_part": "res-metal-film-1pct",
                     "c_timing_part": "cap-film-pet-10pct"})
    x = {n: np.array([u.nominal]) for n, u in topo.quantities(design).items()}
    x.update({n: np.array([0.0]) for n in ("timer_error", "timer_tempco", "timer_supply_coef", "r_timing_tempco",
                                            "c_timing_tempco")})
    x[BOARD_LEAK] = np.array([1.0])
    r, c, v = 2.2e6, float(x["c_timing"][0]), float(x["supply_v"][0])
    ix = topo._ix_at(design, {n: float(a[0]) for n, a in x.items()})
    sol = solve_ivp(lambda t, u: [((v - u[0]) / r - u[0] / 1e8 - ix) / c], (0, 1e4), [0.0], rtol=1e-10,
                    atol=1e-12, events=lambda t, u: u[0] - THRESHOLD_FRAC * v)
    width = float(topo.delay(design, x)[0])
    assert width == pytest.approx(sol.t_events[0][0], rel=1e-6)
    x[BOARD_LEAK] = np.array([0.0])
    assert width > float(topo.delay(design, x)[0]) * 1.01
    netlist = topo.spice(design)
    assert "rsurface cap 0 2e+08" in netlist
    assert measures(ngspice, netlist, ("delay",), tmp_path)["delay"] == pytest.approx(topo.nominal_delay(design),
                                                                                      rel=0.01)


# ---- service life -------------------------------------------------------------------------------------
def test_electrolytic_life_against_the_10_k_rule(fan, catalog):
    # aluminium electrolytic datasheets (from memory): 2000 h at 85 °C; Arrhenius 10 K rule (common practice):
    # at 40 °C 2000 h · 2^4.5 = 45,255 h = 5.16 years; 3 years use 58.1 %, widening the band by 0.581 · 20 %
    assert life_used_frac(3.0, 2000.0, 85.0, 40.0) == pytest.approx(3 * 8766 / (2000 * 2 ** 4.5), rel=1e-12)
    part = catalog.part("cap-electrolytic-85c")
    design = Design("rc-mosfet", {"r_hold": 4.7e6, "c_hold": 220e-6}, {"c_hold_part": part.id})
    new = build_topology("rc-mosfet", fan, catalog).quantities(design)["c_hold"]
    aged_topo = build_topology("rc-mosfet", fan.replace({"environment.life": "3 years"}), catalog)
    aged = aged_topo.quantities(design)["c_hold"]
    change = 0.20 * 3 * 8766 / (2000 * 2 ** 4.5)
    assert (aged.hi - new.hi) / 220e-6 == pytest.approx(change, rel=1e-9)
    assert (new.lo - aged.lo) / 220e-6 == pytest.approx(change, rel=1e-9)
    assert aged_topo.worst_case(design).min_s < build_topology("rc-mosfet", fan, catalog).worst_case(design).min_s
    info = [f for f in life_findings(aged_topo.brief, catalog, aged_topo.bom(design)) if f.code == "service-life"]
    assert [f.severity for f in info] == ["info"] and "5.16 years at 40 °C" in info[0].message


def test_a_life_beyond_the_endurance_is_a_violation_and_leaves_the_class_out(fan, catalog):
    brief = fan.replace({"environment.life": "10 years"})   # beyond 5.16 years at 40 °C
    design = Design("rc-mosfet", {"r_hold": 4.7e6, "c_hold": 220e-6}, {"c_hold_part": "cap-electrolytic-85c"})
    topo = build_topology("rc-mosfet", brief, catalog)
    found = [f for f in life_findings(brief, catalog, topo.bom(design)) if f.code == "service-life"]
    assert [f.severity for f in found] == ["violation"] and "shorter than the 10-year service life" in found[0].message
    short = {"delay.nominal": "60 s", "delay.min": "40 s", "delay.max": "80 s"}
    for life, electrolytics in ((None, True), ("10 years", False)):
        changes = short if life is None else {**short, "environment.life": life}
        table = build_topology("rc-comparator", fan.replace(changes), catalog).selection().blocks[0].table
        assert len(table) and table["c_hold_part"].str.startswith("cap-electrolytic").any() == electrolytics
    timer = build_topology("timer555", fan.replace({**short, "environment.life": "10 years"}), catalog).selection().blocks[0]
    assert not timer.table["c_timing_part"].str.startswith("cap-electrolytic").any()
    assert any("rated for less than the 10-year service life" in reason for reason in timer.dropped)


def test_crystal_ageing_follows_the_log_law(fan, catalog):
    # common practice: ageing grows with log time, a1·(1 + log10(t / 1 year)): 3 ppm first year -> 6 ppm at
    # 10 years, 6.9 ppm at 20; the first-year figure (crystal datasheets, from memory) for no stated life
    assert crystal_ageing_frac(3e-6, None) == crystal_ageing_frac(3e-6, 1.0) == 3e-6
    assert crystal_ageing_frac(3e-6, 10.0) == pytest.approx(6e-6, rel=1e-12)
    assert crystal_ageing_frac(3e-6, 20.0) == pytest.approx(3e-6 * (1 + math.log10(20)), rel=1e-12)
    design = Design("crystal-counter", {}, {})
    for years, bound in ((None, 3e-6), (20, 3e-6 * (1 + math.log10(20)))):
        brief = fan if years is None else fan.replace({"environment.life": f"{years} years"})
        topo = build_topology("crystal-counter", brief, catalog)
        assert topo.quantities(design)["crystal_aging"].hi == pytest.approx(bound, rel=1e-12)


@pytest.mark.parametrize("topology, band", [("rc-comparator", ("60 s", "40 s", "80 s")),
                                            ("rc-schmitt", ("60 s", "40 s", "80 s")),
                                            ("timer555", ("60 s", "40 s", "80 s")),
                                            ("rc-mosfet", ("10 min", "2 min", "40 min")),
                                            ("rc-darlington", ("10 min", "2 min", "40 min"))])
def test_candidate_tables_take_the_board_leak_at_its_worse_end(fan, catalog, topology, band):
    # the optimiser's table extremes equal the corner search's with a contaminated board (the leak to ground
    # shortens a discharging hold and lengthens a charging one)
    brief = fan.replace({"delay.nominal": band[0], "delay.min": band[1], "delay.max": band[2],
                         "environment.board": "contaminated"})
    topo = build_topology(topology, brief, catalog)
    block = topo.selection().blocks[0]
    rows = block.table.groupby([c for c in block.options if c.endswith("_part")]).head(1).head(4)
    assert len(rows)
    for _, row in rows.iterrows():
        design = Design(topology, {r: float(row[r]) for r in block.roles},
                        {o: (float(row[o]) if o.endswith("_rated_v") else row[o]) for o in block.options})
        w = topo.worst_case(design)
        assert (float(row["delay_lo"]), float(row["delay_hi"])) == pytest.approx((w.min_s, w.max_s), rel=1e-6)
        charging = topology in ("rc-schmitt", "timer555")
        assert (w.at_min[BOARD_LEAK], w.at_max[BOARD_LEAK]) == ((0.0, 1.0) if charging else (1.0, 0.0))
