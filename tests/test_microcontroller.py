"""Microcontroller timer: oscillator bands, tick quantisation, crystal parabola corners, rails and standby,
Monte Carlo seeding, and the optimiser's table against evaluate()."""
from __future__ import annotations


import numpy as np
import pytest

from tradeoff.analysis import exhaustive_corners
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.errors import DesignKeyError
from tradeoff.topologies.base import Design
from tradeoff.topologies.microcontroller import Microcontroller, programmed_ticks
from tradeoff.topologies.registry import build_topology

from conftest import EXAMPLES
from test_devices import DATASHEET_BOXES

TOWEL = EXAMPLES / "towel_rail_boost.yaml"


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


@pytest.fixture(scope="module")
def towel(catalog) -> Microcontroller:
    """12 V unregulated (11 to 16 V), 5 to 35 degC, 2 h +/-15 %."""
    return build_topology("mcu", load_brief(TOWEL), catalog)


def _topology(catalog, changes) -> Microcontroller:
    return build_topology("mcu", load_brief(TOWEL).replace(changes), catalog)


def _design(osc, prescaler, regulator="ldo-micropower", **extra):
    return Design("mcu", {}, {"oscillator": osc, "regulator": regulator, "prescaler": prescaler, **extra})


def test_catalog_internal_rc_is_the_datasheet(catalog):
    # the shipped class carries the microcontroller datasheet's boxes unchanged
    mcu = catalog.part("mcu-8bit-small")
    got = tuple(mcu.values(n, u) for n, u in (("internal_rc_band_tmin", "degC"), ("internal_rc_band_tmax", "degC"),
                                               ("internal_rc_band_lo", ""), ("internal_rc_band_hi", "")))
    np.testing.assert_allclose(np.array(got), np.array(DATASHEET_BOXES))


def test_internal_rc_worst_case_over_0_to_55(towel):
    # 5 to 35 degC lies in the 0 to 55 degC box: +/-1.5 % (datasheet, docs/references.md)
    d = _design("internal-rc", 262144)
    cycles = towel.ticks(d) * 262144
    wc = towel.worst_case(d)
    assert wc.min_s == pytest.approx(cycles / (1e6 * 1.015), rel=1e-12)
    assert wc.max_s == pytest.approx(cycles / (1e6 * 0.985), rel=1e-12)


def test_internal_rc_wide_ambient_uses_minus4_plus3(catalog):
    # -20 to 35 degC leaves 0 to 55 degC: the -4/+3 % box (datasheet, docs/references.md); a dense sweep agrees
    t = _topology(catalog, {"ambient.min": "-20 degC"})
    d = _design("internal-rc", 65536)
    cycles = t.ticks(d) * 65536
    wc = t.worst_case(d)
    assert wc.min_s == pytest.approx(cycles / 1.03e6, rel=1e-12)
    assert wc.max_s == pytest.approx(cycles / 0.96e6, rel=1e-12)
    temp, pos = np.meshgrid(np.linspace(-20, 35, 551), np.linspace(-1, 1, 41))
    x = {"ambient_c": temp.ravel(), "rc_trim_position": pos.ravel(), "supply_v": np.full(temp.size, 12.0)}
    dense = t.delay(d, x)
    assert dense.min() == pytest.approx(wc.min_s, rel=1e-12) and dense.max() == pytest.approx(wc.max_s, rel=1e-12)


def test_low_power_rc_spans_26_to_56_khz(towel):
    # watchdog-class RC: 26/38/56 kHz min/typ/max (docs/references.md); firmware counts with 38 kHz
    d = _design("low-power-rc", 8192)
    ticks = towel.ticks(d)
    assert ticks == round(7200 * 38000 / 8192)
    wc = towel.worst_case(d)
    assert wc.min_s == pytest.approx(ticks * 8192 / 56e3, rel=1e-12)
    assert wc.max_s == pytest.approx(ticks * 8192 / 26e3, rel=1e-12)


def test_tick_quantisation(towel):
    # a coarse tick: 2^18 cycles of 38 kHz = 6.898 s; 7200 s is not a whole number of ticks
    d = _design("low-power-rc", 262144)
    tick = 262144 / 38000
    ticks = towel.ticks(d)
    assert ticks == 1044 == programmed_ticks(7200.0, tick)
    nominal = towel.nominal_delay(d)
    assert nominal == pytest.approx(1044 * tick, rel=1e-12)
    assert nominal != pytest.approx(7200.0, rel=1e-4)     # the nominal does not land on the target ...
    assert abs(nominal - 7200.0) <= tick / 2               # ... but within half a tick of it
    # with a 1 s tick of the 32.768 kHz crystal the target is a whole number of ticks
    assert towel.nominal_delay(_design("crystal-32k-20ppm", 32768)) == pytest.approx(7200.0, rel=1e-12)


def test_programmed_ticks_override(towel):
    d = _design("crystal-32k-20ppm", 32768, ticks=3600)
    assert towel.nominal_delay(d) == pytest.approx(3600.0, rel=1e-12)


def _dense_crystal_extremes(t, d, temps):
    """Delay extremes over a dense grid of ambient and turnover, with tolerance and aging at their corners."""
    q = t.quantities(d)
    corners = exhaustive_corners({k: q[k] for k in ("crystal_tolerance", "crystal_aging")})
    t0 = np.linspace(q["crystal_turnover_c"].lo, q["crystal_turnover_c"].hi, 101)
    temp, turn, idx = np.meshgrid(temps, t0, np.arange(len(corners["crystal_tolerance"])), indexing="ij")
    x = {"ambient_c": temp.ravel(), "crystal_turnover_c": turn.ravel(), "supply_v": np.full(temp.size, 12.0),
         **{k: v[idx.ravel()] for k, v in corners.items()}}
    dense = t.delay(d, x)
    return dense.min(), dense.max()


@pytest.mark.parametrize("ambient", [("5 degC", "35 degC"), ("-10 degC", "22 degC"), ("28 degC", "60 degC")])
def test_crystal_parabola_extreme_found(catalog, ambient):
    # crystal datasheets (docs/references.md): df/f = k (T - T0)^2, k = -0.034 ppm/K^2, turnover 25 degC (+/-5 K, from
    # memory): the fastest unit is at its turnover, an interior point of the ambient range. The corner search,
    # with the turnover temperatures declared critical, must find the extremes of a dense temperature sweep.
    t = _topology(catalog, {"ambient.min": ambient[0], "ambient.max": ambient[1]})
    d = _design("crystal-32k-20ppm", 32768)
    wc = t.worst_case(d)
    lo_c, hi_c = t.brief.ambient.min_c, t.brief.ambient.max_c
    dense_min, dense_max = _dense_crystal_extremes(t, d, np.linspace(lo_c, hi_c, 701))
    assert wc.min_s == pytest.approx(dense_min, rel=1e-12)
    assert wc.max_s == pytest.approx(dense_max, rel=1e-12)
    if lo_c < 20 and hi_c > 30:
        assert lo_c < wc.at_min["ambient_c"] < hi_c                        # interior corner
        assert wc.at_min["ambient_c"] == wc.at_min["crystal_turnover_c"]   # at the unit's turnover
        # fastest unit: +20 ppm tolerance, +3 ppm aging, at the turnover
        assert wc.min_s == pytest.approx(7200 / (1 + 23e-6), rel=1e-12)


def test_rails_and_regulator_quiescent_in_standby(towel, catalog):
    # 12 V unregulated supply above the MCU's 5.5 V rating: a regulated logic rail, 2 rails; the regulator's
    # quiescent current stays after the timeout (micropower LDO 1.6 uA typ, three-terminal 5 mA typ: docs/references.md)
    off = catalog.part("mcu-8bit-small").value("sleep_current_off", "A")
    for reg, iq in (("ldo-micropower", 1.6e-6), ("ldo-classic", 5e-3)):
        d = _design("crystal-32k-20ppm", 32768, regulator=reg)
        assert towel.rails(d) == 2
        sb = towel.standby(d)
        assert sb.after_a == pytest.approx(off + iq, rel=1e-12)
        assert sb.during_a > towel.brief.load.current_a + iq   # the relay coil is fed during timing
    with pytest.raises(DesignKeyError, match="unregulated") as caught:
        towel.rails(_design("crystal-32k-20ppm", 32768, regulator="none"))
    assert caught.value.path == ("options", "regulator")


def test_regulated_supply_in_range_runs_direct(catalog):
    t = _topology(catalog, {"supply": {"nominal": "3.3 V", "kind": "regulated"}, "load": {"dc": {"current": "20 mA"}}})
    d = _design("low-power-rc", 8192, regulator="none")
    assert t.rails(d) == 1
    assert t.standby(d).after_a == pytest.approx(catalog.part("mcu-8bit-small").value("sleep_current_off", "A"))
    assert not any(line.part.startswith("ldo") for line in t.bom(d))
    # running straight from the supply is one of the optimiser's choices
    model = t.selection()
    assert "none" in set(model.blocks[0].table["regulator"])


def test_classic_regulator_rejected_for_low_supply(catalog):
    # three-terminal regulator: 2 V dropout (from memory) cannot make a 5 V rail from a 5.5 V minimum supply
    t = _topology(catalog, {"supply": {"nominal": "6 V", "min": "5.5 V", "max": "7 V"},
                            "load": {"dc": {"current": "20 mA"}}})
    model = t.selection()
    assert "ldo-classic" not in set(model.blocks[0].table["regulator"])
    assert any("ldo-classic" in reason and "dropout" in reason for reason in model.blocks[0].dropped)


def test_monte_carlo_reproducible_by_seed(towel):
    d = _design("internal-rc", 65536)
    a, b = towel.monte_carlo(d, samples=5000, seed=7), towel.monte_carlo(d, samples=5000, seed=7)
    c = towel.monte_carlo(d, samples=5000, seed=8)
    np.testing.assert_array_equal(a.delays, b.delays)
    assert not np.array_equal(a.delays, c.delays)
    wc = towel.worst_case(d)
    assert wc.min_s <= a.delays.min() and a.delays.max() <= wc.max_s    # samples stay inside the corners


def test_selection_table_agrees_with_evaluate(towel):
    model = towel.selection()
    (block,) = model.blocks
    table = block.table
    assert {"internal-rc", "low-power-rc", "crystal-32k-20ppm"} <= set(table["oscillator"])
    # the low-power RC's +/-30 % cannot meet +/-15 %, but only nominal-outside-band rows are pruned
    rows = table.groupby("oscillator").head(2)
    for _, row in rows.iterrows():
        d = Design("mcu", {}, {k: row[k] for k in block.options})
        ev = towel.evaluate(d, samples=2000)
        assert row["delay_lo"] == pytest.approx(ev.worst.min_s, rel=1e-12)
        assert row["delay_hi"] == pytest.approx(ev.worst.max_s, rel=1e-12)
        assert row["delay_nom"] == pytest.approx(ev.nominal_s, rel=1e-12)
        assert row["after_a"] == pytest.approx(ev.standby.after_a, rel=1e-12)
        assert row["cost"] == pytest.approx(ev.cost, rel=1e-12)
        assert row["placements"] == ev.placements
        assert model.rails + row["rails"] == ev.rails


def test_selection_drops_coarse_ticks_with_reason(catalog):
    # a 1 min delay: the 2^18-cycle tick of the crystal (8 s) quantises 60 s to 56 s or 64 s, outside +/-5 %
    t = _topology(catalog, {"delay": {"nominal": "60 s", "tolerance": "5 %"}})
    block = t.selection().blocks[0]
    assert not ((block.table["oscillator"] == "crystal-32k-20ppm") & (block.table["prescaler"] == 262144)).any()
    assert any("crystal-32k-20ppm: tick 8 s" in reason for reason in block.dropped)


def test_waveform_ends_at_programmed_count(towel):
    d = _design("crystal-32k-20ppm", 32768)
    w = towel.waveform(d, towel.nominal_point(d))
    assert w.threshold == 7200 and w.unit == "ticks"
    crossing = w.time_s[np.argmax(w.signal >= w.threshold)]
    assert crossing == pytest.approx(7200.0, rel=2e-3)


def test_example_design_file_names_valid_options(towel):
    import yaml

    data = yaml.safe_load((EXAMPLES / "designs" / "mcu.yaml").read_text())
    assert data["topology"] == "mcu"
    d = Design("mcu", {}, data["options"])
    assert towel.evaluate(d, samples=2000).feasible
