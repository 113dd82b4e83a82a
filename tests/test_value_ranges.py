"""Values and the part classes that make them: a design value outside its class's practical range
(the class's min_value to max_value, datasheet value ranges as the catalog states them) is a
violation in analyze as in the study, and the high-value resistor class makes the values above
10 Mohm that general-purpose classes stop at."""
from __future__ import annotations

import pytest

from tradeoff.catalog import load_catalog
from tradeoff.design import load_design

from conftest import EXAMPLES


def design_file(tmp_path, r_hold: str, r_part: str):
    path = tmp_path / "hold.yaml"
    path.write_text(f"brief: {EXAMPLES / 'fan_run_on.yaml'}\ntopology: rc-comparator\n"
                    f"values: {{r_hold: {r_hold}, c_hold: 10 uF}}\n"
                    f"options: {{regulator: ldo-micropower, r_hold_part: {r_part}, c_hold_part: cap-film-pet-5pct}}\n",
                    encoding="utf-8")
    return path


def range_findings(path):
    _, topology, design = load_design(path)
    ev = topology.evaluate(design, samples=500)
    return [f for f in ev.findings if f.code == "value-range"], ev


def test_51_mohm_on_a_class_that_stops_at_10_mohm_is_a_violation(tmp_path):
    found, ev = range_findings(design_file(tmp_path, "51 Mohm", "res-metal-film-1pct"))
    assert [f.severity for f in found] == ["violation"]
    assert "51 MΩ is outside the res-metal-film-1pct class's range 1 Ω to 10 MΩ" in found[0].message
    assert not ev.feasible and any("outside the res-metal-film-1pct" in r for r in ev.reasons)


def test_the_high_value_class_makes_51_mohm_and_its_range_is_10_mohm_to_1_gohm(tmp_path):
    part = load_catalog().part("res-thick-film-high-value-5pct")
    assert (part.value("min_value", "ohm"), part.value("max_value", "ohm")) == (10e6, 1e9)
    found, _ = range_findings(design_file(tmp_path, "51 Mohm", "res-thick-film-high-value-5pct"))
    assert found == []
    below, _ = range_findings(design_file(tmp_path, "4.7 Mohm", "res-thick-film-high-value-5pct"))
    assert len(below) == 1 and "4.7 MΩ" in below[0].message


def test_the_search_range_is_the_union_of_the_allowed_classes_ranges():
    """The hold resistor's candidates run from the smallest to the largest E24 value of the resistor
    classes in the catalog (1 ohm to 1 Gohm, catalogs/passives.yaml), not a per-topology constant."""
    from tradeoff.brief import load_brief
    from tradeoff.candidates import role_candidates
    from tradeoff.topologies.registry import build_topology

    catalog = load_catalog()
    topology = build_topology("rc-comparator", load_brief(EXAMPLES / "fan_run_on.yaml"), catalog)
    r_role, c_role = topology.roles()
    r_values = role_candidates(r_role, topology.brief, catalog)["value"]
    assert (r_values.min(), r_values.max()) == (1.0, 1e9)
    c_values = role_candidates(c_role, topology.brief, catalog)["value"]   # electrolytic and film classes only
    lo, hi = c_values.min(), c_values.max()
    held = [p for p in catalog.parts("capacitor") if p.fields.get("dielectric") in ("electrolytic", "film")]
    assert hi == max(p.value("max_value", "F") for p in held) == 10e-3       # the 85 degC electrolytic
    assert lo == min(p.value("min_value", "F") for p in held) == 100e-12     # polypropylene film


def test_the_fan_study_finds_the_comparator_hold_that_analyze_accepts():
    """Before the search range followed the classes, the study called the comparator hold infeasible on
    the fan brief ('worst case at most 6.97 min') while analyze accepted 51 Mohm with 10 uF PET film;
    now the study's own design is proven by analyze."""
    from tradeoff.api import analyze
    from tradeoff.trade_study import study

    outcome = study(EXAMPLES / "fan_run_on.yaml", only=["rc-comparator"]).outcomes[0]
    assert outcome.verified, outcome.reasons
    design = outcome.verified[0].evaluation.design
    assert design.values["r_hold"] > 10e6   # only the high-value class makes it
    result = analyze((outcome.model, design))
    assert result.evaluation.feasible and not any(f.code == "value-range" for f in result.evaluation.findings)


def test_a_value_outside_the_circuits_own_limit_is_a_violation_in_analyze(tmp_path):
    """The counter's datasheets give Rt 10 kohm to 1 Mohm; the study never offers 2.2 Mohm, so analyze
    refuses it too (one rule for both)."""
    path = tmp_path / "osc.yaml"
    path.write_text(f"brief: {EXAMPLES / 'fan_run_on.yaml'}\ntopology: rc-counter\n"
                    "values: {r_timing: 2.2 Mohm, c_timing: 22 nF}\noptions: {stage: 14}\n", encoding="utf-8")
    found, ev = range_findings(path)
    assert len(found) == 1 and "accepted: 10 kΩ to 1 MΩ" in found[0].message and not ev.feasible


def test_the_high_value_class_states_a_voltage_coefficient_with_its_source():
    part = load_catalog().part("res-thick-film-high-value-5pct")
    assert part.value("voltage_coefficient", "1/V") == pytest.approx(100e-6)
    assert "from memory" in part.source("voltage_coefficient") and "method 309" in part.source("voltage_coefficient")


@pytest.mark.parametrize("coefficient, widening", [("100 ppm/V", 100e-6 * 15.0), ("0 ppm/V", 0.0)])
def test_the_voltage_coefficient_widens_the_hold_resistors_band_alike_in_study_and_analyze(tmp_path, coefficient,
                                                                                           widening):
    """MIL-STD-202 method 309: the voltage coefficient is the relative change of resistance per volt, so at the
    fan brief's 15 V supply maximum a 100 ppm/V class moves by up to 0.15 %, on top of its 5 % tolerance and
    200 ppm/K over the 20 K from 25 degC to the 5 degC ambient end (catalogs/passives.yaml). The study's table
    row for the same resistor carries the same band."""
    from tradeoff.topologies import bands
    from tradeoff.topologies.base import Role

    path = design_file(tmp_path, "51 Mohm", "res-thick-film-high-value-5pct")
    path.write_text(path.read_text(encoding="utf-8") + "overrides: {res-thick-film-high-value-5pct: "
                    f"{{voltage_coefficient: {coefficient}}}}}\n", encoding="utf-8")
    _, topology, design = load_design(path)
    band = topology.uncertain(design)["r_hold"]
    expected = 0.05 + 200e-6 * 20 + widening
    assert (band.lo, band.hi) == pytest.approx((51e6 * (1 - expected), 51e6 * (1 + expected)), rel=1e-12)
    part = topology.option_part(design, "r_hold_part")   # the class with the design's override
    r_table, _ = bands.role_tables(Role("r", "resistor", "test resistor", lo=51e6, hi=51e6),
                                   topology.roles()[1], topology.brief, topology.catalog, [part])
    assert r_table["spread"].tolist() == pytest.approx([expected], rel=1e-12)


def test_the_voltage_coefficient_shortens_the_comparator_holds_worst_case(tmp_path):
    """With the coefficient the hold resistor's lowest value falls from R·(1 − 5.4 %) to R·(1 − 5.55 %). The
    delay t = C·∫dV/i(V) with i = V/R + leakage + bias has an elasticity to R of the resistor's share of the
    current, at most 1, so the worst-case shortest delay falls, by at most the resistor's own ratio."""
    def shortest(coefficient):
        path = design_file(tmp_path, "51 Mohm", "res-thick-film-high-value-5pct")
        path.write_text(path.read_text(encoding="utf-8") + "overrides: {res-thick-film-high-value-5pct: "
                        f"{{voltage_coefficient: {coefficient}}}}}\n", encoding="utf-8")
        _, topology, design = load_design(path)
        return topology.evaluate(design, samples=200).worst.min_s

    with_it, without = shortest("100 ppm/V"), shortest("0 ppm/V")
    assert (1 - 0.0555) / (1 - 0.054) * (1 - 1e-9) <= with_it / without < 1
