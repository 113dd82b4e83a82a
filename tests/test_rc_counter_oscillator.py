"""The RC counter's oscillator terms (tradeoff.topologies.rc_counter): the interpolated input-network and
inverter tables against the law they tabulate, the counter's supply dependence against a transistor-level
ngspice transient, and the Rt floor where the inverters are too weak for the law."""
from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from spice_measures import measures
from test_oscillator_clamp import _netlist
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.errors import CatalogError
from tradeoff.devices.oscillator import clamped_period_factor, inverter_factor
from tradeoff.topologies.base import Design
from tradeoff.topologies.rc_counter import RO_LIMIT, _network_and_inverters
from tradeoff.topologies.registry import build_topology

from conftest import EXAMPLES

COUNTER = "counter-cmos-14stage"


@pytest.fixture(scope="module")
def counter():
    return load_catalog().part(COUNTER)


@pytest.fixture(scope="module")
def rc():
    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace({"supply.max": "14 V"})
    return build_topology("rc-counter", brief, load_catalog())


def _design(rt, ct):
    return Design("rc-counter", values={"r_timing": rt, "c_timing": ct},
                  options={"r_timing_part": "res-metal-film-1pct", "c_timing_part": "cap-ceramic-c0g",
                           "counter": COUNTER, "stage": 10, "cascade": 0, "link_stage": 14})


def test_tables_follow_the_law(counter):
    # the law itself (clamped_period_factor, inverter_factor; checked against ngspice in
    # test_oscillator_clamp.py): the interpolated tables stay within 1 % of it where the law is used
    rng = np.random.default_rng(3)
    n = 80
    kp, clamp, vref = counter.value("mos_kp", "A/V**2"), counter.value("clamp_v", "V"), counter.value("k_supply", "V")
    vdd, vt = rng.uniform(3.0, 15.0, n), rng.uniform(0.7, 1.4, n)
    rt = np.maximum(10 ** rng.uniform(4, 7, n), 1 / (kp * (vdd - 1.4) * RO_LIMIT))
    rs, cp = rng.uniform(2.0, 2.3, n), 10 ** rng.uniform(-4, -1, n)
    want = (clamped_period_factor(0.5, rs, clamp / vdd, cp, 0, 0) / clamped_period_factor(0.5, 2.0, clamp / vref, 0, 0, 0)
            * inverter_factor(vdd, vt, kp, rt) / inverter_factor(vref, vt, kp, rt))
    assert _network_and_inverters(counter, rs, cp, rt, vdd, vt) == pytest.approx(want, rel=0.01)


def test_supply_dependence_against_transistor_level_ngspice(rc, counter, ngspice, tmp_path):
    # ngspice transient of the class's oscillator as the model sees it (square-law inverters with the class's
    # KP and typical threshold, clamp diodes, 8 pF at the pin): the period's change from a 5 V to a 15 V
    # rail, against the counter model's, within 1 % (the datasheet constant k cancels in the ratio)
    rt, ct = 100e3, 1e-9
    d = _design(rt, ct)
    vt, kp, cp = counter.value("mos_vt_typ", "V"), counter.value("mos_kp", "A/V**2"), 8e-12
    x = {n: np.array([v]) for n, v in rc.nominal_point(d).items()}
    model, spice = {}, {}
    for vdd in (5.0, 15.0):
        x.update(rail_v=np.array([vdd]), pin_cap_f=np.array([cp]), mos_vt_v=np.array([vt]))
        model[vdd] = rc.period_s(d, x)[0]
        spice[vdd] = measures(ngspice, _netlist(vdd, rt, float(rc.rs_ohm(rt)), ct, cp, vt, vt, kp=kp),
                              ("period",), tmp_path)["period"]
    assert spice[15.0] < 0.97 * spice[5.0]
    assert model[15.0] / model[5.0] == pytest.approx(spice[15.0] / spice[5.0], abs=0.01)


def test_rt_floor_where_the_inverters_are_weak(counter):
    # towel rail: the counter runs from a 3.3 V rail, where the inverters' output resistance
    # 1/(KP·(VDD − Vt)) passes RO_LIMIT of Rt below about 44 kohm: those Rt are dropped with the reason, and
    # a design using one gets the warning
    brief = load_brief(EXAMPLES / "towel_rail_boost.yaml").replace({"delay.tolerance": "±50 %"})
    topo = build_topology("rc-counter", brief, load_catalog())
    rail = topo.plan(counter).rail
    floor = 1 / (counter.value("mos_kp", "A/V**2") * (rail.min_v - counter.value("mos_vt_max", "V")) * RO_LIMIT)
    assert 30e3 < floor < 60e3
    dropped = topo.selection().blocks[0].dropped
    assert any("Rt below" in reason and "output resistance" in reason for reason in dropped)
    assert topo.selection().blocks[0].table["r_timing"].min() >= floor
    codes = {f.code: f.severity for f in topo.checks(_design(22e3, 10e-9))}
    assert codes.get("oscillator-drive") == "warning"
    assert "oscillator-drive" not in {f.code for f in topo.checks(_design(100e3, 10e-9))}


def test_threshold_band_must_leave_both_transistors_conducting(counter):
    # square law (Sedra and Smith): with 2·Vt at or above the supply both transistors are off at the
    # switching point and the inverter has no transfer there; such a class is refused at its parameter
    p = dict(counter.params)
    p["mos_vt_max"] = dataclasses.replace(p["mos_vt_max"], value="1.6 V")
    with pytest.raises(CatalogError, match="mos_vt_max: must be below half of supply_min"):
        _network_and_inverters(dataclasses.replace(counter, params=p), 2.0, 0.0, 100e3, 5.0, 1.0)
