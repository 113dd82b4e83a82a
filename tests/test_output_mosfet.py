"""The IC topologies' low-side output MOSFET: a load of several amperes finds a class (the catalog alone
no longer rules out a 1.7 A heat mat), and the class is checked for R_DS(on) loss against its derated
dissipation rating.

Checks by hand from the class's datasheet-style figures (see catalogs/semiconductors.yaml): on-state
loss I²·R_DS(on) with R_DS(on) raised by its tempco to Tj max (normalised R_DS(on) curves of MOSFET
datasheets), against p_tot derated linearly from 25 degC to Tj max (the datasheets' derating curve).
"""
from __future__ import annotations

import pytest

from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.errors import CatalogError
from tradeoff.topologies import logic

from conftest import EXAMPLES


@pytest.fixture(scope="module")
def mat():
    return load_brief(EXAMPLES / "propagator_mat.yaml")


def rail_of(brief, catalog):
    regulator = catalog.parts("ldo")[0].id
    return logic.logic_rail(brief, catalog, regulator, 1.8, 5.5)


def test_a_1_7_A_load_gets_the_power_class_and_its_loss_is_i_squared_r_hot(mat):
    catalog = load_catalog()
    rail = rail_of(mat, catalog)
    fet = logic.output_mosfet(mat, catalog, rail)
    assert fet.id == "mosfet-n-logic-power" and fet.value("id_max", "A") >= 1.7
    drop, loss = logic.on_state(fet, mat, rail)
    # Square law, linear region (SPICE level 1): Vds = ov - sqrt(ov^2 - 2 I / K) at the lowest rail, VGS(th) max
    # 2.5 V raised 4 mV/K below 25 degC, K min 12 A/V^2; R_DS(on) 0.04 ohm x (1 + 0.5 %/K x 125 K) gives less.
    ov = rail.min_v - (2.5 + 0.004 * (25.0 - mat.ambient.min_c))
    by_hand = ov - (ov * ov - 2 * 1.7 / 12.0) ** 0.5
    assert by_hand > 1.7 * 0.04 * 1.625
    assert drop == pytest.approx(by_hand, rel=1e-9)
    assert loss == pytest.approx(1.7 * by_hand, rel=1e-9)
    assert loss < 1.25 * (150 - mat.ambient.max_c) / 125


def test_a_class_whose_loss_exceeds_its_derated_rating_is_not_chosen(mat, tmp_path):
    # The same class with a 0.2 W rating: about 0.4 W at 1.7 A is above it, and no other class carries 1.7 A.
    own = tmp_path / "weak.yaml"
    own.write_text("parts:\n  - id: mosfet-n-logic-power\n    category: mosfet\n    description: weak copy\n"
                   "    params:\n" + "".join(
                       f"      {name}: {{value: {value!r}, source: test}}\n" for name, value in (
                           ("vth_min", "1.0 V"), ("vth_typ", "1.6 V"), ("vth_max", "2.5 V"),
                           ("vth_test_current", "250 uA"), ("vth_tempco", "-4 mV/K"), ("k_min", "12 A/V**2"),
                           ("k_typ", "24 A/V**2"), ("k_max", "48 A/V**2"), ("k_temp_exponent", -1.5),
                           ("igss", "100 nA"), ("igss_test_voltage", "20 V"), ("igss_typical_frac", 0.01),
                           ("vgs_on", "4.5 V"), ("rds_on", "0.04 ohm"), ("rds_on_tempco", "0.5 %/K"),
                           ("vgs_max", "20 V"), ("vds_max", "30 V"), ("id_max", "6 A"), ("p_tot", "0.2 W"),
                           ("tj_max", "150 degC"), ("idss", "1 uA"), ("cost", 0.10))), encoding="utf-8")
    catalog = load_catalog(extra=(own,))
    with pytest.raises(CatalogError) as exc:
        logic.output_mosfet(mat, catalog, rail_of(mat, catalog))
    assert "on-state loss its dissipation rating covers" in str(exc.value)
    # The topology's finding is the whole reason, ": " inside it included, without file or key.
    findings = logic.output_driver_checks(mat, catalog, rail_of(mat, catalog))
    assert [(f.severity, f.message) for f in findings] == [("violation", exc.value.reason)]
    assert exc.value.reason.startswith("no mosfet class fits: an N-MOSFET for 1.7 A at ")


def test_the_propagator_mat_is_not_ruled_out_by_the_mosfet_catalog(mat):
    from tradeoff.trade_study import study

    result = study(mat.replace({"analysis.samples": 500}), only=["mcu", "timer555"])
    for outcome in result.outcomes:
        assert not any("no mosfet class fits" in r for r in outcome.reasons), outcome.reasons
