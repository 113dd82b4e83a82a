"""Leakage laws over temperature: the electrolytic limit held at its 20 degC guarantee when cold, the
comparator's input bias between its 25 degC and 85 degC datasheet limits, the 555 discharge pin's
off-state leakage, and the comparator hold's corner search against a dense ambient scan."""
from __future__ import annotations

import numpy as np
import pytest

from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.devices.capacitor import LEAK_LEVEL, CapacitorLeakage, electrolytic_leakage_a
from tradeoff.devices.comparator import discharge_leakage_a, doubling_interval_k, input_bias_limit_a, monostable_width_s
from tradeoff.topologies.base import Design
from tradeoff.topologies.registry import build_topology

from conftest import EXAMPLES


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


def test_electrolytic_limit_never_below_its_20c_guarantee(catalog):
    # aluminium electrolytic datasheets (sectional specification IEC 60384-4): I <= 0.01·C·V or 3 uA,
    # whichever is greater, at rated voltage and 20 degC; no datasheet promises less when colder
    part = catalog.part("cap-electrolytic-85c")
    for c_f, rated in ((100e-6, 16.0), (1e-6, 16.0)):
        rule = max(0.01 * (c_f * 1e6) * rated * 1e-6, 3e-6)
        for cold in (-20.0, 5.0, 20.0):
            assert electrolytic_leakage_a(c_f, rated, rated, cold, part) == pytest.approx(rule, rel=1e-12)
        # above 20 degC the catalog's doubling law (every 20 K, from memory) raises it
        assert electrolytic_leakage_a(c_f, rated, rated, 60.0, part) == pytest.approx(rule * 4, rel=1e-12)
        # a typical part follows the law both ways: below its 20 degC figure when cold
        typical = electrolytic_leakage_a(c_f, rated, rated, 0.0, part, typical=True)
        assert typical == pytest.approx(0.1 * rule * 2 ** (-1), rel=1e-12)
    # the leakage level +1 (the worst, shortest-delay corner of a hold) at 5 degC is the 20 degC rule
    leak = CapacitorLeakage(part, 100e-6, 16.0)
    a_typ, a_lim = leak.coefficients(5.0, 1.0)
    assert float(a_lim) * 16.0 ** leak.n_lim == pytest.approx(max(0.01 * 100 * 16, 3) * 1e-6, rel=1e-12)
    assert float(a_typ) == 0.0


def test_comparator_bias_between_its_datasheet_limits(catalog):
    comp = catalog.part("comparator-nanopower")
    room, hot = comp.value("bias_room_max", "A"), comp.value("bias_max", "A")
    t = np.array([-20.0, 0.0, 25.0, 55.0, 85.0])
    got = input_bias_limit_a(comp, t)
    # the datasheet's two limits (25 degC and 85 degC) are met exactly, exponential between them: at the
    # midpoint the geometric mean; below 25 degC the 25 degC limit (nothing smaller is promised)
    assert got == pytest.approx([room, room, room, (room * hot) ** 0.5, hot], rel=1e-12)
    # common practice (Sedra and Smith): junction leakage doubles about every 10 K; the class's two
    # limits imply a doubling interval of that order
    assert 7.0 <= doubling_interval_k(25.0, room, 85.0, hot) <= 13.0
    # a class without a room-temperature limit keeps its hot limit at every ambient
    plain = comp.with_overrides({"bias_room_max": hot}, "test")
    assert input_bias_limit_a(plain, t) == pytest.approx(np.full(5, hot))


def test_555_discharge_pin_leakage_against_the_closed_form(catalog):
    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace(
        {"delay.nominal": "60 s", "delay.min": "40 s", "delay.max": "80 s"})
    topo = build_topology("timer555", brief, catalog)
    design = Design("timer555", {"r_timing": 2.2e6, "c_timing": 22e-6},
                    {"timer": "timer555-bipolar", "r_timing_part": "res-metal-film-1pct",
                     "c_timing_part": "cap-film-pet-10pct"})
    q = topo.quantities(design)
    timer = catalog.part("timer555-bipolar")
    assert q["discharge_a"].hi == pytest.approx(timer.value("discharge_leakage_max", "A"))   # 100 nA, from memory
    x = {n: np.array([u.nominal]) for n, u in q.items()}
    x.update(c_timing_leakage=np.array([0.0]), threshold_a=np.array([0.0]), ambient_c=np.array([45.0]),
             discharge_a=np.array([100e-9]), timer_error=np.array([0.0]), timer_tempco=np.array([0.0]),
             timer_supply_coef=np.array([0.0]), r_timing_tempco=np.array([0.0]), c_timing_tempco=np.array([0.0]))
    v = float(x["supply_v"][0])
    # standard circuit analysis (555-class datasheets' monostable): t = R·C·ln((V − Ix·R)/(V/3 − Ix·R)),
    # with Ix = 100 nA doubled every 10 K above 25 degC (junction leakage, common practice): 400 nA at 45 degC
    ix = 100e-9 * 2 ** 2
    expected = 2.2e6 * 22e-6 * np.log((v - ix * 2.2e6) / (v / 3 - ix * 2.2e6))
    assert topo.delay(design, x)[0] == pytest.approx(expected, rel=1e-9)
    assert discharge_leakage_a(100e-9, 10.0) == pytest.approx(100e-9)   # held at the 25 degC figure when cold
    assert float(monostable_width_s(2.2e6, 22e-6, ix, v)) == pytest.approx(expected, rel=1e-12)
    # the netlist carries the same current
    assert f"ix cap 0 dc {topo._ix_at(design, topo.nominal_point(design)):.6g}" in topo.spice(design)
    assert topo._ix_at(design, topo.nominal_point(design)) >= timer.value("discharge_leakage_typ", "A")


def test_comparator_corners_find_the_extremes_of_a_dense_ambient_scan(catalog):
    # the longest delay is at a hot ambient with the bias current into the capacitor, the shortest at a hot
    # ambient with leakage and bias out of it: no single ambient direction holds, so check the corner
    # search (and the optimiser table) against a dense ambient scan of many corners of the other quantities
    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace({"ambient.min": "-10 degC", "ambient.max": "70 degC"})
    topo = build_topology("rc-comparator", brief, catalog)
    design = Design("rc-comparator", {"r_hold": 47e6, "c_hold": 10e-6},
                    {"regulator": "ldo-micropower", "c_hold_part": "cap-film-pet-10pct",
                     "r_hold_part": "res-thick-film-high-value-5pct"})
    wc = topo.worst_case(design)
    q = topo.quantities(design)
    names = [n for n, u in q.items() if u.spreads and n != "ambient_c"]
    rng = np.random.default_rng(7)
    temps = np.linspace(-10.0, 70.0, 81)
    corners = rng.integers(0, 2, size=(200, len(names)))
    x = {n: np.repeat(np.where(corners[:, i] == 1, q[n].hi, q[n].lo), len(temps)) for i, n in enumerate(names)}
    x.update({n: np.full(len(corners) * len(temps), u.nominal) for n, u in q.items() if n not in x})
    x["ambient_c"] = np.tile(temps, len(corners))
    scan = topo.delay(design, x)
    assert scan.min() >= wc.min_s * (1 - 1e-9) and scan.max() <= wc.max_s * (1 + 1e-9)
    assert wc.at_max["ambient_c"] == 70.0 and wc.at_max["bias_frac"] == -1.0
    assert wc.at_min["ambient_c"] == 70.0 and wc.at_min["bias_frac"] == 1.0
    # the bias limit binds: at the hot end the longest delay is longer than at the cold end
    at_max = {n: np.array([v]) for n, v in wc.at_max.items()}
    cold = topo.delay(design, {**at_max, "ambient_c": np.array([-10.0])})[0]
    assert wc.max_s > cold * (1 + 1e-4)
    # the optimiser table's extremes equal the corner search's (rows of each capacitor class)
    table = topo.selection().blocks[0].table
    rows = table.groupby("c_hold_part").head(1)
    assert len(rows) >= 1
    for _, row in rows.iterrows():
        d = Design("rc-comparator", {"r_hold": row["r_hold"], "c_hold": row["c_hold"]},
                   {k: row[k] for k in ("regulator", "c_hold_part", "r_hold_part", "comparator", "reference")}
                   | {"c_rated_v": float(row["c_rated_v"])})
        w = topo.worst_case(d)
        assert (float(row["delay_lo"]), float(row["delay_hi"])) == pytest.approx((w.min_s, w.max_s), rel=1e-6)
        assert LEAK_LEVEL in w.at_min


def test_monte_carlo_leakage_assumption_in_every_report(catalog):
    # the sentence states the spreads the models really draw (tradeoff.analysis.Uncertain: normal and
    # log-normal with the farther limit at 3 sigma, uniform within the band), once in the terminal
    # report, in the JSON and on the review page
    import html
    import io
    import json

    from rich.console import Console

    from tradeoff.plain import LEAKAGE_SPREAD_ASSUMPTION
    from tradeoff.report.html import review_html
    from tradeoff.report.study_text import render_study
    from tradeoff.trade_study import study

    brief = load_brief(EXAMPLES / "fan_run_on.yaml")
    comparator = build_topology("rc-comparator", brief, catalog).quantities(
        Design("rc-comparator", {"r_hold": 47e6, "c_hold": 10e-6},
               {"regulator": "ldo-micropower", "c_hold_part": "cap-film-pet-10pct",
                "r_hold_part": "res-thick-film-high-value-5pct"}))
    timers = [build_topology("timer555", brief, catalog).quantities(
        Design("timer555", {"r_timing": 2.2e6, "c_timing": 22e-6},
               {"timer": "timer555-bipolar", "r_timing_part": "res-metal-film-1pct", "c_timing_part": part}))
        for part in ("cap-electrolytic-85c", "cap-film-pet-10pct")]
    assert (comparator[LEAK_LEVEL].dist, comparator[LEAK_LEVEL].lo, comparator[LEAK_LEVEL].hi) == ("normal", -1.0, 1.0)
    assert "normal about a typical part with the datasheet limit at 3 standard deviations" in LEAKAGE_SPREAD_ASSUMPTION
    assert {timers[0][n].dist for n in ("c_timing_leakage", "threshold_a", "discharge_a")} == {"lognormal"}
    assert "electrolytic leakage, threshold and discharge-pin currents log-normal" in LEAKAGE_SPREAD_ASSUMPTION
    assert (timers[1]["c_timing_leakage"].dist, timers[1]["c_timing_leakage"].nominal) == ("fixed", 1.0)
    assert "film capacitor at the guaranteed insulation resistance in every unit" in LEAKAGE_SPREAD_ASSUMPTION
    assert (comparator["bias_frac"].dist, comparator["bias_frac"].lo) == ("uniform", -1.0)
    assert "input bias uniform between plus and minus its limit" in LEAKAGE_SPREAD_ASSUMPTION
    result = study(EXAMPLES / "fan_run_on.yaml", samples=200, only=("rc-comparator",))
    buffer = io.StringIO()
    render_study(result, Console(file=buffer, width=400, color_system=None, force_terminal=False))
    assert " ".join(buffer.getvalue().split()).count(LEAKAGE_SPREAD_ASSUMPTION) == 1
    assert json.loads(json.dumps(result.to_dict()))["assumptions"] == [LEAKAGE_SPREAD_ASSUMPTION]
    assert LEAKAGE_SPREAD_ASSUMPTION in html.unescape(" ".join(review_html(result).split()))
