"""The brief loader as a library: values, defaults, replace, to_dict, positions, and a fuzz test."""
from __future__ import annotations

import copy

import pydantic
import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tradeoff import brief as brief_module
from tradeoff import yamlpos
from tradeoff.brief import Brief, load_brief
from tradeoff.errors import BriefError

from conftest import EXAMPLES

MINIMAL = """\
title: Minimal
delay:
  nominal: 1 h
supply:
  nominal: 12 V
load:
  dc:
    current: 100 mA
"""


def test_examples_load_with_their_stated_values():
    towel = load_brief(EXAMPLES / "towel_rail_boost.yaml")
    assert towel.delay.nominal_s == 7200.0
    assert towel.delay.min_s == pytest.approx(7200 * 0.85)  # ±15 %
    assert towel.load.kind == "relay" and towel.load.current_a == pytest.approx(12 / 400)
    assert towel.load.switched.mains and towel.start == "button"
    glue = load_brief(EXAMPLES / "glue_pot_warmer.yaml")
    assert (glue.delay.min_s, glue.delay.nominal_s, glue.delay.max_s) == (10800.0, 12600.0, 14400.0)
    assert glue.supply.min_v == pytest.approx(11.4) and glue.supply.max_v == pytest.approx(12.6)  # regulated ±5 %
    fan = load_brief(EXAMPLES / "fan_run_on.yaml")
    assert (fan.delay.min_s, fan.delay.max_s) == (600.0, 1200.0)
    mat = load_brief(EXAMPLES / "propagator_mat.yaml")
    assert mat.load.kind == "dc" and mat.load.switched.current_a == 1.7 and not mat.load.switched.mains
    assert mat.analysis.samples == 50000 and mat.analysis.seed == 7


def test_defaults_are_applied_and_recorded():
    b = load_brief(MINIMAL)
    assert (b.ambient.min_c, b.ambient.max_c) == (0.0, 40.0)
    assert (b.supply.min_v, b.supply.max_v) == pytest.approx((10.8, 14.4))  # unregulated -10 % / +20 %
    assert (b.delay.min_s, b.delay.max_s) == pytest.approx((3240.0, 3960.0))  # default tolerance ±10 %
    assert b.analysis.model_dump() == {"samples": 20000, "seed": 1, "coverage": 0.99, "margin": 0.05,
                                       "relax": "none"}
    assert b.series.model_dump() == {"resistor": "E24", "electrolytic": "E6", "film": "E12", "ceramic": "E12",
                                     "pairs": ()}   # false: no pairings
    assert b.topologies == ("all",) and b.start == "power-on"
    assert b.limits.model_dump() == {"standby_after_a": None, "rails": None, "parts": None, "cost": None}
    assert set(b.weights.model_dump().values()) == {1.0}
    assert "ambient.min" in b.defaults() and "delay.nominal" not in b.defaults()
    origins = {v.key: v.origin for v in b.values}
    assert origins["delay.min"] == "derived" and origins["load.switched.current"] == "derived"
    assert origins["supply.nominal"] == "given"


def test_brief_is_frozen_and_strict():
    b = load_brief(MINIMAL)
    with pytest.raises(pydantic.ValidationError):
        b.title = "changed"
    with pytest.raises(pydantic.ValidationError):  # strict: a string is no float
        brief_module.Ambient(min_c="0", max_c=40.0)
    with pytest.raises(pydantic.ValidationError):  # extra='forbid'
        brief_module.Ambient(min_c=0.0, max_c=40.0, mid_c=20.0)


def test_replace_revalidates_and_leaves_the_original():
    b = load_brief(MINIMAL)
    c = b.replace({"delay.nominal": "2 h", "weights.cost": 3, "ambient.max": "50 degC"})
    assert c.delay.nominal_s == 7200.0 and c.weights.cost == 3.0 and c.ambient.max_c == 50.0
    assert b.delay.nominal_s == 3600.0
    assert {v.key: v.origin for v in c.values}["ambient.max"] == "given"
    d = c.replace({"delay.nominal": None, "delay.min": "1 h", "delay.max": "3 h"})
    assert d.delay.nominal_s == 7200.0  # midpoint of min and max


def test_replace_errors_read_like_file_errors():
    b = load_brief(MINIMAL, source_name="m.yaml")
    with pytest.raises(BriefError) as info:
        b.replace({"delay.nominal": "12 V", "supply.nominal": "100 V"})
    text = str(info.value)
    assert "m.yaml: delay.nominal: '12 V' is a voltage; accepted: a time" in text
    assert "m.yaml: supply.nominal: 100 V is outside the accepted range" in text
    assert text.count("(value set by a change)") == 2
    with pytest.raises(BriefError, match=r"m.yaml:3:3: delay.nomnal: unknown key 'nomnal'"):
        load_brief(MINIMAL.replace("nominal: 1 h", "nomnal: 1 h"), source_name="m.yaml")


def test_replace_keeps_positions_of_unchanged_keys():
    b = load_brief(MINIMAL, source_name="m.yaml")
    with pytest.raises(BriefError) as info:
        b.replace({"supply.min": "13 V"})
    assert str(info.value) == ("m.yaml: supply.min: min 13 V is above nominal 12 V; accepted: min <= nominal <= max "
                               "(value set by a change)")
    towel = load_brief(EXAMPLES / "towel_rail_boost.yaml", source_name="towel.yaml")
    with pytest.raises(BriefError) as info:
        towel.replace({"ambient.max": "0 degC"})
    assert str(info.value).startswith("towel.yaml:13:8: ambient.min: min 5 °C is above max 0 °C")  # unchanged key


def test_to_dict_is_si_with_unit_suffixed_keys():
    data = load_brief(EXAMPLES / "towel_rail_boost.yaml").to_dict()
    assert data["delay"]["nominal_s"] == 7200.0
    assert data["load"]["coil_resistance_ohm"] == 400.0
    assert data["supply"]["no_load_power_w"] == 1.0
    assert data["limits"]["standby_after_a"] == pytest.approx(100e-6)
    assert data["analysis"]["coverage_frac"] == 0.99 and data["analysis"]["margin_frac"] == pytest.approx(0.05)
    assert "cost_eur" in data["limits"] and "cost" not in data["limits"]  # unit suffix on every figure
    assert yaml.safe_load(yaml.safe_dump(data)) == data  # plain data only


def test_load_brief_reads_text_and_paths_alike(tmp_path):
    path = tmp_path / "b.yaml"
    path.write_text(MINIMAL, encoding="utf-8")
    assert load_brief(path).model_dump(exclude={"path"}) == load_brief(MINIMAL).model_dump(exclude={"path"})
    assert load_brief(str(path)).path == path.resolve()
    assert load_brief(MINIMAL).path is None


def test_relay_and_dc_together_is_an_error():
    text = MINIMAL + "  relay: {coil_voltage: 12 V, coil_resistance: 400 ohm}\n"
    with pytest.raises(BriefError, match=r"<brief>:7:3: load.dc: both relay and dc given"):
        load_brief(text)
    with pytest.raises(BriefError, match=r"load.switched: a dc load is switched by the timer itself"):
        load_brief(MINIMAL + "  switched: {voltage: 12 V, current: 1 A}\n")


def test_yamlpos_locates_values_keys_and_missing_keys():
    root = yamlpos.compose("a:\n  b: 1\n  c: [x, y]\n")
    assert yamlpos.locate(root, ("a", "b")) == (2, 6)
    assert yamlpos.locate(root, ("a", "b"), at_key=True) == (2, 3)
    assert yamlpos.locate(root, ("a", "c", 1)) == (3, 10)
    assert yamlpos.locate(root, ("a", "missing")) == (1, 1)  # the parent mapping's key
    assert yamlpos.locate(root, ("zz",)) == (1, 1)
    assert yamlpos.locate(None, ("a",)) == (None, None)
    assert yamlpos.duplicate_keys(yamlpos.compose("a: 1\nb: 2\na: 3\n")) == [(("a",), (3, 1))]
    with pytest.raises(yaml.YAMLError) as info:
        yamlpos.compose("a: [1\n")
    assert yamlpos.syntax_error_position(info.value)[0] == 2


# --- fuzz: only BriefError (or a Brief) may come out -------------------------------------------

_SCALARS = st.one_of(st.none(), st.booleans(), st.integers(), st.floats(allow_nan=True), st.text(max_size=12),
                     st.sampled_from(["2 h", "12 V", "400 ohm", "20 %", "±5 %", "all", "relay", "-1 degC", "1e999 s",
                                      "2.2M ohm", "E24", "power-on", "nan", "0"]))
_VALUES = st.recursive(_SCALARS, lambda inner: st.lists(inner, max_size=4)
                       | st.dictionaries(st.text(max_size=10) | st.sampled_from(["nominal", "min", "max", "relay"]),
                                         inner, max_size=4), max_leaves=12)
_BASE = yaml.safe_load(MINIMAL + "ambient: {min: 0 degC, max: 30 degC}\nanalysis: {samples: 1000}\n")
_PATHS = [("title",), ("delay",), ("delay", "nominal"), ("delay", "tolerance"), ("delay", "min"), ("ambient",),
          ("ambient", "max"), ("supply", "nominal"), ("supply", "kind"), ("supply", "no_load_power"), ("start",),
          ("load",), ("load", "dc"), ("load", "dc", "current"), ("load", "relay"), ("limits",), ("weights",),
          ("series", "film"), ("topologies",), ("analysis", "samples"), ("analysis", "coverage"), ("other",)]


def _outcome(text: str) -> None:
    try:
        result = load_brief(text, source_name="fuzz.yaml")
    except BriefError as exc:
        assert exc.exit_code == 2 and all(p.file == "fuzz.yaml" for p in exc.problems) and str(exc)
    else:
        assert isinstance(result, Brief)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(max_size=80))
def test_fuzz_random_text(text):
    _outcome(text + "\n")


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_VALUES)
def test_fuzz_random_documents(document):
    _outcome(yaml.safe_dump(document, allow_unicode=True) + "\n")


@settings(max_examples=250, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.sampled_from(_PATHS), _VALUES), min_size=1, max_size=3))
def test_fuzz_random_field_values(changes):
    data = copy.deepcopy(_BASE)
    for path, value in changes:
        node = data
        for step in path[:-1]:
            if not isinstance(node.get(step), dict):
                node[step] = {}
            node = node[step]
        node[path[-1]] = value
    _outcome(yaml.safe_dump(data, allow_unicode=True) + "\n")
