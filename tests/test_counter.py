"""Ripple counters with RC or crystal oscillator: threshold formula, datasheet k, ngspice,
stage delays, crystal corner search against a dense sweep, selection tables against evaluate()."""
from __future__ import annotations

import dataclasses
import itertools

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from spice_measures import measures
from tradeoff.analysis import worst_case
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.topologies.base import Design
from tradeoff.topologies.registry import build_topology
from tradeoff.devices.oscillator import crystal_period_s, rc_period_s, threshold_factor
from tradeoff.topologies.counter_chain import NODE_DROP_V, decoded_count, output_bit, parse_decode, stage_factor
from tradeoff.topologies.rc_counter import RS_MIN_OHM, oscillator_netlist

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


def test_class_constant_at_the_datasheet_conditions(rc, catalog):
    # 4060-type datasheets: f = 1/(k·Rt·Ct) with Rs = 2·Rt, k = 2.2, 2.3 or 2.5 by maker; at those
    # conditions (reference supply, no pin capacitance, typical threshold) the period is k·Rt·Ct exactly,
    # and the worst case spans at least the makers' band
    part = catalog.part(COUNTER)
    assert (part.value("k_min", ""), part.value("k", ""), part.value("k_max", "")) == (2.2, 2.3, 2.5)
    d = _rc_design(rt=100e3, ct=22e-9, stage=4)
    assert rc.rs_ohm(100e3) == 200e3
    x = {n: np.array([v]) for n, v in rc.nominal_point(d).items()}
    for k in (2.2, 2.3, 2.5):
        x.update(k=np.array([k]), pin_cap_f=np.array([0.0]), rail_v=np.array([part.value("k_supply", "V")]),
                 mos_vt_v=np.array([1.2]))
        assert rc.period_s(d, x)[0] == pytest.approx(k * 100e3 * 22e-9, rel=1e-9)
    wc = rc.worst_case(d)
    assert wc.max_s / wc.min_s > 2.5 / 2.2 * (1.01 * 1.05) ** 2


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
    single = stages[(stages.cascade == 0) & (stages.decode == "")]
    assert 11 not in set(single.stage) and set(single.stage) <= {4, 5, 6, 7, 8, 9, 10, 12, 13, 14}
    decoded = [parse_decode(t) for t in stages.decode if t]
    assert decoded and all(n in {4, 5, 6, 7, 8, 9, 10, 12, 13, 14} for outs in decoded for _, n in outs)


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
    factor = float(xtal.periods(d))
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


def _row_design(topo, model, o, s):
    """The Design the optimiser builds from oscillator row `o` and stage row `s`."""
    plain = lambda v: v.item() if hasattr(v, "item") else v
    return Design(topo.id, values={r: float(o[r]) for r in model.blocks[0].roles},
                  options={**{k: plain(o[k]) for k in model.blocks[0].options},
                           **{k: plain(s[k]) for k in model.blocks[1].options}})


@pytest.mark.parametrize("topology", ["rc", "xtal"])
@pytest.mark.parametrize("decoded", [False, True])
def test_selection_tables_agree_with_evaluate(request, topology, decoded):
    topo = request.getfixturevalue(topology)
    model = topo.selection()
    assert model.combine == "product"
    osc, stages = model.blocks[0].table, model.blocks[1].table
    stages = stages[(stages.decode != "") == decoded]
    assert len(osc) and len(stages)
    band = topo.brief.delay
    path = osc["latch_path_ohm"] if "latch_path_ohm" in osc.columns else pd.Series(np.inf, index=osc.index)
    rng = np.random.default_rng(5)
    checked = 0
    for i in rng.permutation(len(osc)):
        o = osc.iloc[i]
        fit = stages[(stages.delay_nom * o.delay_lo >= band.min_s) & (stages.delay_nom * o.delay_hi <= band.max_s)
                     & (stages.latch_path_min_ohm <= path.iloc[i])]     # the selection's links
        if fit.empty:
            continue
        s = fit.iloc[int(rng.integers(len(fit)))]
        ev = topo.evaluate(_row_design(topo, model, o, s), samples=2000)
        assert not [f.message for f in ev.findings if f.severity == "violation"]
        assert ev.worst.method.startswith("exhaustive")
        assert o.delay_lo * s.delay_lo == pytest.approx(ev.worst.min_s, rel=1e-12)
        assert o.delay_hi * s.delay_hi == pytest.approx(ev.worst.max_s, rel=1e-12)
        assert o.delay_nom * s.delay_nom == pytest.approx(ev.nominal_s, rel=1e-12)
        assert o.cost + s.cost + model.fixed_cost == pytest.approx(ev.cost)
        assert o.placements + s.placements + model.fixed_placements == ev.placements
        assert o.lines + s.lines + model.fixed_lines == ev.lines
        assert o.during_a + s.during_a + model.fixed_during_a == pytest.approx(ev.standby.during_a)
        after = o.after_a + s.after_a + model.fixed_after_a
        if decoded and topology == "rc":
            # the pull-up in series with Rs + Rt lowers the latch current; the table keeps the bound
            # (V − Vf)/(Rs + Rt), at most the pull-up's share of the latch path above it
            counter = topo._counter(ev.design)
            rp = topo._pullup_ohm(counter, topo.plan(counter))
            latch = (12.0 - topo._vf()) / float(o.latch_path_ohm)
            assert after >= ev.standby.after_a
            assert after - ev.standby.after_a == pytest.approx(latch * rp / (rp + o.latch_path_ohm), rel=1e-9)
        else:
            assert after == pytest.approx(ev.standby.after_a, rel=1e-12)
        assert band.min_s <= ev.worst.min_s and ev.worst.max_s <= band.max_s
        checked += 1
        if checked == 3:
            break
    assert checked == 3


def test_crystal_dropped_reason_names_nearest_delays(catalog):
    # 4 h ±0.1 %: crystal delays are whole counts of sums of at most three powers of two; the nearest
    # are 2^28 + 2^27 + 2^26 periods (3.98 h) and 2^29 periods (4.55 h) of 1/32768 s (binary arithmetic)
    brief = load_brief(EXAMPLES / "glue_pot_warmer.yaml").replace({"delay.nominal": "4 h", "delay.min": "3.996 h",
                                                                   "delay.max": "4.004 h"})
    model = build_topology("crystal-counter", brief, catalog).selection()
    assert model.blocks[1].table.empty
    assert any("3.98 h and 4.55 h" in k for k in model.blocks[0].dropped), model.blocks[0].dropped
    assert (2**28 + 2**27 + 2**26) / 32768 / 3600 == pytest.approx(3.98, abs=0.005)


def test_latch_current_and_series_resistor(rc):
    # after the timeout the output holds the oscillator input high through the diode: (V − Vf)/(Rs + Rt)
    # Rs about 2·Rt and at least 10 kohm (4060-type datasheets), never below 2·Rt (common practice)
    assert rc.rs_ohm(4.7e3) == RS_MIN_OHM and rc.rs_ohm(100e3) == 200e3
    a, b = rc.standby(_rc_design(rt=100e3)), rc.standby(_rc_design(rt=200e3))
    vf = rc.catalog.part("diode-small-signal").value("vf", "V")
    assert rc.rs_ohm(200e3) == 430e3                       # IEC 60063 E24: the smallest value at or above 400 kohm
    assert rc.rs_ohm(56e3) == 120e3                        # 112 kohm: E24's nearest (110 kohm) lies below 2·Rt
    assert a.after_a - b.after_a == pytest.approx((12.0 - vf) / 300e3 - (12.0 - vf) / 630e3, rel=1e-9)
    finding = {f.code: f for f in rc.checks(_rc_design(rt=56e3))}["series-resistor"]
    assert "120 kΩ" in finding.message and "2.14·Rt" in finding.message and "common practice" in finding.message
    bom = {line.refs: line for line in rc.bom(_rc_design())}
    assert "latch" in bom["D2"].note and bom["R2"].value == "200 kΩ" and bom["Q1"].part == "pnp-small"


def _ripple_chain_first_all_high(bits_of, cascade: int, link: int, outputs, periods: int) -> int:
    """Simulate the chain period by period as binary counters (numpy over the count sequence): counter 0
    counts oscillator periods, counter j + 1 counts falling edges of counter j's stage `link`; return
    the first period count at which every (counter, stage) output is high."""
    counts = [np.arange(periods + 1, dtype=np.int64)]
    for _ in range(cascade):
        q = (counts[-1] >> (link - 1)) & 1
        falls = np.concatenate([[0], (q[:-1] == 1) & (q[1:] == 0)]).astype(np.int64)
        counts.append(np.cumsum(falls))
    high = np.ones(periods + 1, dtype=bool)
    for j, n in outputs:
        high &= ((counts[j] % (1 << 14)) >> (n - 1)) & 1 == 1
    return int(np.argmax(high)) if high.any() else -1


def test_decoded_count_matches_a_simulated_ripple_chain():
    # ripple-counter arithmetic (4060-type datasheets: stage N toggles every 2^(N−1) periods, the next
    # counter is clocked by the link stage's falling edge): the AND of the outputs first goes high at
    # Σ 2^(N − 1 + L·j); checked against a period-by-period binary simulation for random output sets
    rng = np.random.default_rng(11)
    outs = (4, 5, 6, 7, 8, 9, 10, 12, 13, 14)
    for _ in range(25):
        cascade = int(rng.integers(0, 3))
        link = int(rng.choice([4, 5, 6, 7]))          # short links keep the simulated sequence small
        size = int(rng.integers(1, 4))
        chosen = {(int(rng.integers(0, cascade + 1)), int(rng.choice(outs))) for _ in range(size)}
        if cascade == 2:
            chosen = {(j, min(n, 9)) for j, n in chosen}
        want = decoded_count(output_bit(n, j, link) for j, n in chosen)
        assert _ripple_chain_first_all_high(None, cascade, link, sorted(chosen), want + 10) == want, (chosen, link)


def test_stage_block_has_each_exact_count_once_within_the_oscillator_range(xtal):
    # every count of one to three outputs that the crystal row can bring into the band appears once,
    # with the fewest counters; no other count appears (brute force over the same chains)
    model = xtal.selection()
    osc, stages = model.blocks[0].table, model.blocks[1].table
    band = xtal.brief.delay
    outs = (4, 5, 6, 7, 8, 9, 10, 12, 13, 14)
    fewest: dict[int, int] = {}
    for cascade in range(3):
        for link in (outs if cascade else (14,)):
            avail = {output_bit(n, j, link) for j in range(cascade + 1) for n in outs}
            for size in (1, 2, 3):
                for combo in itertools.combinations(sorted(avail), size):
                    count = decoded_count(combo)
                    fewest.setdefault(count, cascade)
    fits = {c for c in fewest if any(c * lo >= band.min_s and c * hi <= band.max_s
                                     for lo, hi in zip(osc.delay_lo, osc.delay_hi))}
    got = stages.delay_nom.astype(int).tolist()
    assert sorted(got) == sorted(fits) and len(got) == len(set(got))
    for _, s in stages.iterrows():
        assert s.cascade == fewest[int(s.delay_nom)]
        d = _xtal_design(stage=int(s.stage) or 14, cascade=int(s.cascade))
        d = dataclasses.replace(d, options={**d.options, "link_stage": int(s.link_stage), "decode": s.decode})
        assert xtal.periods(d) == int(s.delay_nom)


def test_four_hours_within_5_percent_by_a_decoded_crystal_chain(catalog):
    # 4 h = 471,859,200 periods of 1/32768 s; no power of two is within 5 % (2^28: 2.28 h, 2^29: 4.55 h),
    # 2^28 + 2^27 + 2^26 = 469,762,048 periods (3.98 h, −0.44 %) is: U3.Q7 + U3.Q8 + U3.Q9 with link stage 10
    text = """
title: four hours
delay: {nominal: 4 h, tolerance: 5 %}
ambient: {min: 0 degC, max: 50 degC}
supply: {kind: regulated, nominal: 12 V, min: 11.4 V, max: 12.6 V}
start: button
load:
  relay: {coil_voltage: 12 V, coil_resistance: 400 ohm, must_operate: 75 %, must_release: 10 %}
  switched: {voltage: 230 V, current: 2 A, mains: true}
"""
    topo = build_topology("crystal-counter", load_brief(text), catalog)
    stages = topo.selection().blocks[1].table
    assert set(stages.delay_nom.astype(int)) == {2**28 + 2**27 + 2**26}
    d = _xtal_design(cascade=2, crystal="crystal-32k-50ppm")
    d = dataclasses.replace(d, options={**d.options, "link_stage": 10, "decode": "U3.Q7+U3.Q8+U3.Q9"})
    ev = topo.evaluate(d, samples=2000)
    assert ev.nominal_s == pytest.approx((2**28 + 2**27 + 2**26) / 32768.0, rel=1e-12) and ev.feasible, ev.reasons


def test_decoded_parts_and_currents(xtal):
    # diode-AND: one diode per output and a pull-up; while timing a low output sinks the pull-up current
    # (V − Vf)/Rp; after the timeout all outputs are high and the AND diodes block, so the pull-up only
    # carries the latch current, now (V − Vf)/(Rp + R_bias) (standard circuit analysis)
    plain = _xtal_design(stage=12, cascade=1)
    dec = dataclasses.replace(plain, options={**plain.options, "decode": "U2.Q11+U2.Q12"})
    with pytest.raises(Exception, match="decode"):
        xtal.periods(dataclasses.replace(plain, options={**plain.options, "decode": "Q12 of U2"}))
    counter = xtal._counter(dec)
    plan = xtal.plan(counter)
    rp, vf, v = xtal._pullup_ohm(counter, plan), xtal._vf(), 12.0
    bom = {b.refs: b for b in xtal.bom(dec)}
    assert bom["D11, D12"].quantity == 2 and bom["R12"].part.startswith("res")
    assert len(xtal.bom(dec)) == len(xtal.bom(plain)) + 2
    a, b = xtal.standby(plain), xtal.standby(dec)
    base = (v - catalog_vbe(xtal) - vf) / plan.switch.base_ohm - (v - catalog_vbe(xtal)) / plan.switch.base_ohm
    assert b.during_a - a.during_a == pytest.approx((v - vf) / rp + base, rel=1e-9)
    assert b.after_a - a.after_a == pytest.approx((v - vf) / (rp + 10e6) - (v - vf) / 10e6, rel=1e-9)
    # the pull-up is the smallest standard value whose current and the PNP's base current fit the sink rating
    findings = {f.code: f for f in xtal.checks(dec)}
    assert "output-sink" not in findings and findings["decode"].severity == "info"
    # an 11-bit count on stage 11 is not brought out
    bad = dataclasses.replace(plain, options={**plain.options, "decode": "U2.Q11+U1.Q11"})
    assert any(f.code == "stage" and f.severity == "violation" for f in xtal.checks(bad))


def catalog_vbe(topo):
    return topo.catalog.part("pnp-small").value("vbe_on_typ", "V")


def test_decoded_rc_needs_a_latch_path_the_pull_up_can_hold(rc):
    # the latch current (V − Vf)/(Rp + Rs + Rt) through the pull-up must leave the node within NODE_DROP_V
    # of the rail (common practice), so Rs + Rt >= Rp·(Vmax − Vf − drop)/drop: small Rt fails, large passes
    counter = rc._counter(_rc_design())
    plan = rc.plan(counter)
    rp = rc._pullup_ohm(counter, plan)
    need = rp * (14.0 - rc._vf() - NODE_DROP_V) / NODE_DROP_V
    for rt, ok in ((100e3, False), (680e3, True)):
        d = _rc_design(rt=rt, ct=100e-9, cascade=1)
        d = dataclasses.replace(d, options={**d.options, "decode": "U2.Q4+U2.Q5"})
        assert (rc._latch_path_ohm(d) >= need) == ok
        bad = [f for f in rc.checks(d) if f.code == "decode-latch"]
        assert bool(bad) != ok
    model = rc.selection()
    link = [l for l in model.links if "latch" in l.reason]
    assert link and link[0].terms[0][1] == "latch_path_ohm"
    stages = model.blocks[1].table
    assert np.allclose(stages.latch_path_min_ohm[stages.decode != ""], need, rtol=1e-12)


def test_supply_above_rating_gets_a_logic_rail(catalog):
    # towel rail: 11 to 16 V unregulated, above the counter's 15 V rating (4060-type datasheets): the counter
    # runs from a regulator rail (logic.py), the rail count is 2 and the regulator's quiescent current stays
    # after the timeout; the output, high at the rail, cannot turn a high-side switch at 16 V off, so a PNP
    # at the rail drives a low-side N-MOSFET. At the 3.3 V rail the small class (K min 0.25 A/V^2, VGS(th) up
    # to 2.6 V at 5 degC) cannot carry the 40 mA coil, so the power class takes it (catalogs/semiconductors.yaml)
    # (the band widened to 1 to 3 h: at ±15 % the class's oscillator spread alone leaves no design)
    brief = load_brief(EXAMPLES / "towel_rail_boost.yaml").replace({"delay.tolerance": "±50 %"})
    topo = build_topology("rc-counter", brief, catalog)
    model = topo.selection()
    assert len(model.blocks[0].table) and len(model.blocks[1].table) and model.rails == 2
    ldo = catalog.part("ldo-micropower")
    d = _rc_design(rt=470e3, ct=1e-6, stage=14, cascade=1, link=12)
    plan = topo.plan(topo._counter(d))
    assert plan.rail.regulator.id == ldo.id and plan.rail.nominal_v == 3.3 and plan.switch.kind == "inverted-n-mosfet"
    assert topo.rails(d) == 2
    bom = {b.refs: b for b in topo.bom(d)}
    assert bom["U9"].part == ldo.id and bom["Q1"].part == "mosfet-n-logic-power" and bom["Q2"].part == "pnp-small"
    after = topo.standby(d).after_a
    latch = (3.3 - topo._vf()) / (topo.rs_ohm(470e3) + 470e3)
    leak = catalog.part("pnp-small").value("iceo", "A") + catalog.part("mosfet-n-logic-power").value("idss", "A")
    q = 2 * catalog.part(COUNTER).values("quiescent_typ", "A")[0]   # 0.04 uA at every listed supply
    assert after == pytest.approx(q + latch + leak + ldo.value("quiescent_typ", "A"), rel=1e-9)
    assert not [f for f in topo.checks(d) if f.severity == "violation"]
    assert model.fixed_after_a == pytest.approx(leak + ldo.value("quiescent_typ", "A"))


def test_large_dc_load_gets_a_p_mosfet_with_its_dissipation_check(catalog, tmp_path):
    # propagator mat: 1.7 A, above the small PNP's 0.2 A: a P-MOSFET high side; its loss I²·R_DS(on) at the
    # maximum junction temperature against p_tot derated linearly to 0 at Tj max (datasheet derating curve)
    brief = load_brief(EXAMPLES / "propagator_mat.yaml")
    topo = build_topology("crystal-counter", brief, catalog)
    d = _xtal_design()
    plan = topo.plan(topo._counter(d))
    fet = catalog.part("mosfet-p-logic-power")
    assert plan.switch.kind == "p-mosfet" and {b.refs: b for b in topo.bom(d)}["Q1"].part == fet.id
    r_hot = 0.1 * (1 + 0.005 * (150 - 25))
    loss, allowed = 1.7**2 * r_hot, 1.0 * (150 - 35) / (150 - 25)
    assert plan.switch.notes and f"{loss * 1e3:.3g} mW" in plan.switch.notes[0]       # 470 mW
    assert f"{allowed * 1e3:.3g} mW" in plan.switch.notes[0]                             # 920 mW
    assert not [f for f in topo.checks(d) if f.code in ("load-switch", "output-sink") and f.severity == "violation"]
    # a class with five times the on-resistance overheats: no switch works, the counter is dropped with the reason
    hot = tmp_path / "hot.yaml"
    hot.write_text("""parts:
  - id: mosfet-p-logic-power
    category: mosfet
    description: hotter P-channel class
    params:
""" + "".join(f"      {k}: {{value: {v!r}, source: test}}\n" for k, v in {
        "p_channel": 1, "vth_min": "1.0 V", "vth_typ": "1.7 V", "vth_max": "2.5 V", "vgs_on": "4.5 V",
        "rds_on": "0.5 ohm", "rds_on_tempco": "0.5 %/K", "vgs_max": "20 V", "vds_max": "30 V", "id_max": "3 A",
        "p_tot": "1 W", "tj_max": "150 degC", "idss": "1 uA", "cost": 0.12}.items()))
    hot_topo = build_topology("crystal-counter", brief, load_catalog(extra=(hot,)))
    model = hot_topo.selection()
    assert model.blocks[1].table.empty
    assert any("dissipates" in k and "above its" in k for k in model.blocks[0].dropped), model.blocks[0].dropped
    # logic.py's low-side drivers never take the P-channel class: for 1.7 A the N-channel power class
    from tradeoff.topologies import logic
    chosen = logic.output_mosfet(brief, catalog, logic.LogicRail(None, 12.0, 11.4, 12.6, 0.0, 0.0))
    assert chosen.id == "mosfet-n-logic-power" and not logic.p_channel(chosen)


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


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.sampled_from([0.0, 1.0, 2.0, 3.0]), st.integers(0, 3), st.integers(0, 3),
                          st.integers(0, 3)), min_size=0, max_size=40))
def test_dominated_rows_match_a_pairwise_check(rows):
    # every row another row of its group beats (no worse in each column, better in one) goes, and only those:
    # the definition checked pair by pair
    import pandas as pd
    from tradeoff.topologies.ic_common import drop_dominated
    table = pd.DataFrame(rows, columns=["value", "cost", "tolerance", "gain"], dtype=float)
    table["id"] = np.arange(len(table))
    kept = drop_dominated(table, ("value",), ("cost", "tolerance"), "dominated", {}, higher=("gain",))

    def beats(j, i):
        a, b = table.iloc[j], table.iloc[i]
        no_worse = a.cost <= b.cost and a.tolerance <= b.tolerance and a.gain >= b.gain
        return a.value == b.value and no_worse and (a.cost, a.tolerance, -a.gain) != (b.cost, b.tolerance, -b.gain)

    expected = [i for i in range(len(table)) if not any(beats(j, i) for j in range(len(table)))]
    assert kept["id"].tolist() == (expected if len(table) >= 2 else list(range(len(table))))


@pytest.mark.parametrize("changes", [{}, {"series.resistor": "E12", "series.pairs": True}])
def test_oscillator_block_pruned_while_built_equals_the_full_table(rc, monkeypatch, changes):
    # the oscillator rows no counter output can bring into the band are dropped while the (Rt, Ct) pairs are
    # evaluated; keeping every pair until the frame's own pruning gives the same blocks and the same total dropped
    from tradeoff.topologies.rc_counter import RCCounter

    brief = rc.brief.replace(changes)
    pruned = build_topology("rc-counter", brief, rc.catalog).selection()
    monkeypatch.setattr(RCCounter, "_reachable", lambda self, lo, hi, path, stages: np.arange(len(lo)))
    monkeypatch.setattr(RCCounter, "_spread_fits", lambda self, counter, f, rg, cg, env, ri, ci: (ri, ci))
    full = build_topology("rc-counter", brief, rc.catalog).selection()
    assert len(full.blocks[0].table) > 1000
    for a, b in zip(pruned.blocks, full.blocks):
        pd.testing.assert_frame_equal(a.table, b.table)
    assert sum(pruned.blocks[0].dropped.values()) == sum(full.blocks[0].dropped.values())
    assert pruned.blocks[0].dropped != full.blocks[0].dropped   # the pairs pruned early are counted as such


def test_pairs_dropped_for_their_period_spread_are_those_no_count_keeps(rc, monkeypatch):
    # on a 12 min to 18 min band about half the (Rt, Ct) pairs spread their periods wider than max/min before
    # N·S: dropping them before the interpolation leaves the blocks and the dropped counts of evaluating them all
    from tradeoff.topologies.rc_counter import RCCounter

    brief = rc.brief.replace({"delay.min": "12 min", "delay.max": "18 min"})
    spread_fits, seen = RCCounter._spread_fits, []

    def counted(self, *args):
        ri, ci = spread_fits(self, *args)
        seen.append((len(args[-1]), len(ci)))
        return ri, ci

    monkeypatch.setattr(RCCounter, "_spread_fits", counted)
    early = build_topology("rc-counter", brief, rc.catalog).selection()
    offered, passed = np.sum(seen, axis=0)
    assert 0 < passed < offered
    monkeypatch.setattr(RCCounter, "_spread_fits", lambda self, counter, f, rg, cg, env, ri, ci: (ri, ci))
    late = build_topology("rc-counter", brief, rc.catalog).selection()
    assert len(late.blocks[0].table) > 100
    for a, b in zip(early.blocks, late.blocks):
        pd.testing.assert_frame_equal(a.table, b.table)
        assert a.dropped == b.dropped
