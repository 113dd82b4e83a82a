"""`tradeoff check`: malformed briefs exit 2 with FILE:LINE:COLUMN: key: message, valid ones print every value."""
from __future__ import annotations

import pytest
from click.testing import CliRunner

from tradeoff.cli import cli

from conftest import EXAMPLES

# Line numbers below refer to this text (1-based); each case replaces or blanks whole lines.
BASE = """\
title: Test brief
delay:
  nominal: 2 h
  tolerance: 10 %
ambient:
  min: 0 degC
  max: 40 degC
supply:
  nominal: 12 V
  kind: unregulated
  min: 11 V
  max: 16 V
start: button
load:
  relay:
    coil_voltage: 12 V
    coil_resistance: 400 ohm
    must_operate: 75 %
    must_release: 10 %
  switched:
    voltage: 230 V
    current: 0.5 A
    mains: true
analysis:
  samples: 20000
  seed: 1
  coverage: 99 %
"""

# (id, {line: replacement text, "#" blanks it}, [(line, column, key, message fragment), ...])
MALFORMED = [
    # wrong dimension
    ("time-given-volts", {3: "  nominal: 12 V"}, [(3, 12, "delay.nominal", "'12 V' is a voltage; accepted: a time")]),
    ("temperature-given-volts", {6: "  min: 5 V"}, [(6, 8, "ambient.min", "is a voltage; accepted: a temperature")]),
    ("supply-given-seconds", {9: "  nominal: 12 s"}, [(9, 12, "supply.nominal", "is a time; accepted: a voltage")]),
    ("coil-resistance-in-volts", {17: "    coil_resistance: 400 V"},
     [(17, 22, "load.relay.coil_resistance", "is a voltage; accepted: a resistance")]),
    ("switched-current-in-volts", {22: "    current: 230 V"},
     [(22, 14, "load.switched.current", "is a voltage; accepted: a current")]),
    ("prefix-space-molar", {17: "    coil_resistance: 0.4k ohm"},
     [(17, 22, "load.relay.coil_resistance", "space between the prefix 'k' and the unit 'ohm'")]),
    ("milliohm-typo", {17: "    coil_resistance: 2.2 mohm"},
     [(17, 22, "load.relay.coil_resistance", "write '2.2 Mohm' for megohm")]),
    # unknown keys, with suggestions
    ("unknown-key-in-delay", {3: "  nominl: 2 h"},
     [(3, 3, "delay.nominl", "unknown key 'nominl' (did you mean 'nominal'?)"),
      (2, 1, "delay.nominal", "missing required key 'nominal'")]),
    ("unknown-top-key", {24: "analysys:"}, [(24, 1, "analysys", "did you mean 'analysis'?")]),
    ("unknown-relay-key", {18: "    must_operat: 75 %"},
     [(18, 5, "load.relay.must_operat", "did you mean 'must_operate'?")]),
    ("unknown-supply-kind", {10: "  kind: unregulatd"},
     [(10, 9, "supply.kind", "(did you mean 'unregulated'?); accepted: unregulated, regulated")]),
    ("unknown-start", {13: "start: power_on"}, [(13, 8, "start", "did you mean 'power-on'?")]),
    # contradictions
    ("ambient-min-above-max", {6: "  min: 50 degC"}, [(6, 8, "ambient.min", "min 50 °C is above max 40 °C")]),
    ("tolerance-120-percent", {4: "  tolerance: 120 %"},
     [(4, 14, "delay.tolerance", "120 % is outside the accepted range; accepted: above 0 % and below 100 %")]),
    ("tolerance-100-percent", {4: "  tolerance: 100 %"}, [(4, 14, "delay.tolerance", "outside the accepted range")]),
    ("release-above-operate", {19: "    must_release: 80 %"},
     [(19, 19, "load.relay.must_release", "must_release 80 % is not below must_operate 75 %")]),
    ("supply-min-above-nominal", {11: "  min: 13 V"}, [(11, 8, "supply.min", "min 13 V is above nominal 12 V")]),
    ("supply-max-below-nominal", {12: "  max: 11.5 V"}, [(12, 8, "supply.max", "max 11.5 V is below nominal 12 V")]),
    ("nominal-outside-band", {2: "delay: {nominal: 2 h, min: 3 h, max: 4 h}", 3: "#", 4: "#"},
     [(2, 18, "delay.nominal", "nominal 2 h lies outside min..max")]),
    ("min-not-below-max", {2: "delay: {min: 4 h, max: 3 h}", 3: "#", 4: "#"},
     [(2, 14, "delay.min", "min 4 h is not below max 3 h")]),
    ("tolerance-and-band", {2: "delay: {nominal: 2 h, tolerance: 5 %, min: 1 h, max: 3 h}", 3: "#", 4: "#"},
     [(2, 34, "delay.tolerance", "tolerance and min/max both given")]),
    ("mains-false-at-230-v", {23: "    mains: false"}, [(23, 12, "load.switched.mains", "above the 50 V")]),
    ("coil-cannot-operate", {16: "    coil_voltage: 24 V"},
     [(16, 19, "load.relay.coil_voltage", "the coil needs 18 V to operate")]),
    ("all-weights-zero", {24: "weights: {accuracy: 0, standby: 0, rails: 0, parts: 0, cost: 0, effort: 0}",
                          25: "#", 26: "#", 27: "#"},
     [(24, 10, "weights", "every weight is 0")]),
    # absurd magnitudes
    ("negative-delay", {3: "  nominal: -2 h"}, [(3, 12, "delay.nominal", "outside the accepted range")]),
    ("zero-delay", {3: "  nominal: 0 s"}, [(3, 12, "delay.nominal", "accepted: 10 ms to 168 h")]),
    ("ten-year-delay", {3: "  nominal: 10 years"}, [(3, 12, "delay.nominal", "outside the accepted range")]),
    ("ten-kilovolt-supply", {9: "  nominal: 10 kV"}, [(9, 12, "supply.nominal", "10 kV is outside the accepted range")]),
    ("coverage-half", {27: "  coverage: 0.5"}, [(27, 13, "analysis.coverage", "accepted: above 50 %")]),
    ("coverage-one", {27: "  coverage: 100 %"}, [(27, 13, "analysis.coverage", "below 100 %")]),
    ("too-few-samples", {25: "  samples: 50"}, [(25, 12, "analysis.samples", "an integer from 100 to 10000000")]),
    ("too-many-samples", {25: "  samples: 20000000"}, [(25, 12, "analysis.samples", "outside the accepted range")]),
    # bad YAML
    ("yaml-colon-in-value", {3: "  nominal: 2 h: x"}, [(3, 15, "", "YAML syntax error: mapping values are not allowed")]),
    ("yaml-bad-indent", {4: "   tolerance: 10 %"}, [(4, 13, "", "YAML syntax error")]),
    ("yaml-unclosed-list", {3: "  nominal: [2 h"}, [(4, 12, "", "expected ',' or ']'")]),
    ("yaml-duplicate-key", {4: "  nominal: 3 h"}, [(4, 3, "delay.nominal", "key given twice")]),
    # missing required fields
    ("missing-supply-nominal", {9: "#"}, [(8, 1, "supply.nominal", "missing required key 'nominal'")]),
    ("missing-title", {1: "#"}, [(2, 1, "title", "missing required key 'title'")]),
    ("missing-switched", {20: "#", 21: "#", 22: "#", 23: "#"},
     [(14, 1, "load.switched", "missing required key 'switched'")]),
    ("missing-coil-resistance", {17: "#"}, [(15, 3, "load.relay.coil_resistance", "missing required key")]),
    # wrong types
    ("list-for-mapping", {5: "ambient: [0 degC, 40 degC]", 6: "#", 7: "#"},
     [(5, 10, "ambient", "accepted: a mapping with keys min, max")]),
    ("bare-number-for-time", {3: "  nominal: 7200"}, [(3, 12, "delay.nominal", "the bare number 7200 has no unit")]),
    ("text-for-boolean", {23: "    mains: yes please"}, [(23, 12, "load.switched.mains", "accepted: true or false")]),
    ("text-for-samples", {25: "  samples: many"}, [(25, 12, "analysis.samples", "got 'many'; accepted: an integer")]),
    ("float-for-seed", {26: "  seed: 1.5"}, [(26, 9, "analysis.seed", "accepted: an integer")]),
    ("bare-percent-number", {4: "  tolerance: 10"}, [(4, 14, "delay.tolerance", "the bare number '10' is ambiguous")]),
    ("mapping-for-title", {1: "title: {a: 1}"}, [(1, 8, "title", "accepted: one line of text")]),
]


def _write(tmp_path, changes: dict[int, str]):
    lines = BASE.splitlines()
    for number, text in changes.items():
        lines[number - 1] = text
    path = tmp_path / "brief.yaml"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_table_has_at_least_thirty_cases():
    assert len(MALFORMED) >= 30


def test_base_brief_is_valid(tmp_path):
    result = CliRunner().invoke(cli, ["check", str(_write(tmp_path, {}))])
    assert result.exit_code == 0, result.output


@pytest.mark.parametrize("changes, expected", [case[1:] for case in MALFORMED], ids=[case[0] for case in MALFORMED])
def test_malformed_brief_exits_2_with_location(tmp_path, changes, expected):
    path = _write(tmp_path, changes)
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    assert result.stdout == ""  # nothing printed as if it were valid
    for line, column, key, fragment in expected:
        where = f"{path}:{line}:{column}: {key}: " if key else f"{path}:{line}:{column}: "
        matching = [row for row in result.stderr.splitlines() if row.startswith(f"Error: {where}") or
                    row.startswith(where)]
        assert matching, f"no line starting {where!r} in:\n{result.stderr}"
        assert any(fragment in row for row in matching), result.stderr


def test_every_problem_is_reported_at_once(tmp_path):
    path = _write(tmp_path, {3: "  nominal: 12 V", 9: "  nominal: 12 s", 25: "  samples: 5", 13: "start: later"})
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 2
    rows = result.stderr.removeprefix("Error: ").splitlines()
    assert [row.split(": ")[1] for row in rows] == [
        "delay.nominal", "supply.nominal", "start", "analysis.samples"]  # all four, in file order


def test_unknown_topology_gets_did_you_mean(tmp_path, monkeypatch):
    import tradeoff.topologies.registry as registry

    monkeypatch.setattr(registry, "topology_ids", lambda *_: ["rc_darlington", "cmos_555", "counter_osc"])
    path = _write(tmp_path, {24: "topologies: [rc_darlinton, cmos_555]", 25: "#", 26: "#", 27: "#"})
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 2
    assert (f"{path}:24:14: topologies[0]: unknown topology 'rc_darlinton' (did you mean 'rc_darlington'?); "
            "accepted: all, or a list of: rc_darlington, cmos_555, counter_osc") in result.stderr


@pytest.mark.parametrize("text, fragment", [
    ("", ":1:1: the brief is empty"),
    ("- a\n- b\n", ":1:1: got ['a', 'b']; accepted: a mapping with keys title, delay"),
])
def test_empty_or_non_mapping_brief(tmp_path, text, fragment):
    path = tmp_path / "brief.yaml"
    path.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 2
    assert f"{path}{fragment}" in result.stderr


def test_missing_file_exits_2(tmp_path):
    result = CliRunner().invoke(cli, ["check", str(tmp_path / "nope.yaml")])
    assert result.exit_code == 2
    assert "cannot read the brief (No such file or directory)" in result.stderr


@pytest.mark.parametrize("name", ["towel_rail_boost", "glue_pot_warmer", "fan_run_on", "propagator_mat"])
def test_examples_print_every_value_with_unit_and_origin(name):
    result = CliRunner().invoke(cli, ["check", str(EXAMPLES / f"{name}.yaml")])
    assert result.exit_code == 0, result.output
    rows = {line.split()[0]: line for line in result.stdout.splitlines()[1:] if not line.startswith("CAUTION")}
    assert rows["analysis.seed"].split()[-1] in ("given", "default")
    assert rows["ambient.min"].split()[1:3][1] == "°C"
    assert " h " in rows["delay.max"] or " min " in rows["delay.max"]


def test_check_marks_defaults_and_mains_cautions(tmp_path):
    path = _write(tmp_path, {24: "#", 25: "#", 26: "#", 27: "#", 6: "#", 7: "#", 5: "#"})
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 0, result.output
    rows = {line.split()[0]: line.split() for line in result.stdout.splitlines()[1:] if not line.startswith("CAUTION")}
    assert rows["analysis.samples"][1:] == ["20000", "default"]
    assert rows["ambient.max"][1:] == ["40", "°C", "default"]
    assert rows["supply.min"][1:] == ["11", "V", "given"]
    assert rows["delay.min"][1:4] == ["1.8", "h", "derived"]  # 2 h x (1 - 10 %)
    assert rows["load.relay.current"][1:4] == ["30", "mA", "derived"]  # 12 V / 400 ohm
    assert "CAUTION: Mains wiring is a shock and fire hazard" in result.stdout


def test_low_voltage_brief_has_no_cautions():
    result = CliRunner().invoke(cli, ["check", str(EXAMPLES / "propagator_mat.yaml")])
    assert result.exit_code == 0
    assert "CAUTION" not in result.stdout


def test_check_help_has_an_example():
    result = CliRunner().invoke(cli, ["check", "--help"])
    assert result.exit_code == 0
    assert "tradeoff check examples/" in result.output
