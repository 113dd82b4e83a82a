"""Values and the part classes that make them: a design value outside its class's practical range
(the class's min_value to max_value, datasheet value ranges as the catalog states them) is a
violation in analyze as in the study, and the high-value resistor class makes the values above
10 Mohm that general-purpose classes stop at."""
from __future__ import annotations

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
