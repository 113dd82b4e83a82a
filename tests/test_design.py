"""Design files: located errors for malformed files (exit 2 through `tradeoff analyze`), missing
values and options per topology, inline briefs, overrides and quantity options reaching the model."""
from __future__ import annotations

from pathlib import Path

import pytest
import yaml
from click.testing import CliRunner

from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.cli import cli
from tradeoff.design import load_design
from tradeoff.errors import BriefError, DesignError
from tradeoff.topologies.registry import topology_class, topology_ids

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "examples"
DESIGNS = EXAMPLES / "designs"
FAN = (EXAMPLES / "fan_run_on.yaml").as_posix()
TOWEL = (EXAMPLES / "towel_rail_boost.yaml").as_posix()


def _write(tmp_path: Path, text: str, name: str = "design.yaml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


COMPARATOR = f"""brief: {FAN}
topology: rc-comparator
values: {{r_hold: 10 Mohm, c_hold: 47 uF}}
options: {{regulator: ldo-micropower}}
"""

# (name, design text, expected (line, column, key, message fragment) of one reported problem)
MALFORMED = [
    ("unknown top key", COMPARATOR + "overides: {}\n", (5, 1, "overides", "did you mean 'overrides'?")),
    ("missing topology", f"brief: {FAN}\nvalues: {{}}\n", (1, 1, "", "missing required key 'topology'")),
    ("unknown topology", f"brief: {FAN}\ntopology: rc-comparatr\n",
     (2, 11, "topology", "did you mean 'rc-comparator'?")),
    ("topology not a name", f"brief: {FAN}\ntopology: [rc-comparator]\n", (2, 11, "topology", "unknown topology")),
    ("unknown role", COMPARATOR.replace("r_hold: 10 Mohm", "r_hld: 10 Mohm"),
     (3, 10, "values.r_hld", "did you mean 'r_hold'?")),
    ("missing role", COMPARATOR.replace("r_hold: 10 Mohm, ", ""),
     (3, 9, "values", "missing value role 'r_hold'")),
    ("wrong dimension of a value", COMPARATOR.replace("47 uF", "47 kohm"),
     (3, 35, "values.c_hold", "is a resistance")),
    ("value without unit text", COMPARATOR.replace("10 Mohm", "ten megohm"),
     (3, 18, "values.r_hold", "does not start with a number")),
    ("negative value", COMPARATOR.replace("10 Mohm", "-10 Mohm"),
     (3, 18, "values.r_hold", "accepted: a positive quantity")),
    ("values not a mapping", COMPARATOR.replace("{r_hold: 10 Mohm, c_hold: 47 uF}", "[10 Mohm, 47 uF]"),
     (3, 9, "values", "accepted: a mapping of value role")),
    ("unknown option", COMPARATOR.replace("{regulator:", "{regulater:"),
     (4, 11, "options.regulater", "did you mean 'regulator'?")),
    ("part option of the wrong category", COMPARATOR.replace("ldo-micropower}", "ldo-micropower, "
                                                             "comparator: pnp-small}"),
     (4, 50, "options.comparator", "'pnp-small' is a pnp")),
    ("unknown part id in an option", COMPARATOR.replace("ldo-micropower}", "ldo-micropower, "
                                                        "comparator: comparator-nanopowr}"),
     (4, 50, "options.comparator", "did you mean 'comparator-nanopower'?")),
    ("quantity option of the wrong dimension", COMPARATOR.replace("ldo-micropower}", "ldo-micropower, shunt: 10 uF}"),
     (4, 45, "options.shunt", "is a capacitance")),
    ("plain option given a list", COMPARATOR.replace("{regulator: ldo-micropower}", "{regulator: [a, b]}"),
     (4, 22, "options.regulator", "accepted: a part class id, a named choice or a whole number")),
    ("missing required option", COMPARATOR.replace("options: {regulator: ldo-micropower}\n", ""),
     (1, 1, "options", "missing option 'regulator'")),
    ("option the topology rejects", COMPARATOR.replace("ldo-micropower", "ldo-nonexistent"),
     (4, 22, "options.regulator", "unknown regulator class 'ldo-nonexistent'")),  # raised inside the model
    ("unknown override part", COMPARATOR + "overrides: {comparator-nano: {bias_max: 2 nA}}\n",
     (5, 13, "overrides.comparator-nano", "did you mean 'comparator-nanopower'?")),
    ("unknown override parameter", COMPARATOR + "overrides: {comparator-nanopower: {bias_mx: 2 nA}}\n",
     (5, 36, "overrides.comparator-nanopower.bias_mx", "did you mean 'bias_max'?")),
    ("override of the wrong dimension", COMPARATOR + "overrides: {comparator-nanopower: {bias_max: 2 nV}}\n",
     (5, 46, "overrides.comparator-nanopower.bias_max", "is a voltage")),
    ("override list for a scalar", COMPARATOR + "overrides: {comparator-nanopower: {bias_max: [1 nA, 2 nA]}}\n",
     (5, 46, "overrides.comparator-nanopower.bias_max", "accepted: a quantity in nA")),
    ("missing brief file", "brief: no_such_brief.yaml\ntopology: rc-comparator\n",
     (1, 8, "brief", "no brief file 'no_such_brief.yaml'")),
    ("brief neither path nor mapping", "brief: [1, 2]\ntopology: rc-comparator\n",
     (1, 8, "brief", "accepted: a brief file path")),
    ("bad inline brief field", "brief:\n  title: Inline\n  delay: {nominal: 15 min}\n  supply: {nominal: 12 V}\n"
     "  load: {dc: {current: 10 kg}}\ntopology: rc-comparator\nvalues: {r_hold: 10 Mohm, c_hold: 47 uF}\n",
     (5, 24, "brief.load.dc.current", "is a mass")),
    ("duplicate key", COMPARATOR + "topology: mcu\n", (5, 1, "topology", "key given twice")),
    ("YAML syntax error", "brief: x\ntopology: [unclosed\n", (3, 1, "", "YAML syntax error")),
    ("empty file", "", (1, 1, "", "an empty file")),
    ("a list, not a mapping", "- brief\n- topology\n", (1, 1, "", "accepted: a mapping with keys")),
]


@pytest.mark.parametrize("name, text, expected", MALFORMED, ids=[m[0] for m in MALFORMED])
def test_malformed_design_exits_2_with_location(tmp_path, name, text, expected):
    path = _write(tmp_path, text)
    result = CliRunner().invoke(cli, ["analyze", str(path), "--samples", "100"])
    assert result.exit_code == 2, result.output
    line, column, key, fragment = expected
    lines = [ln for ln in result.output.splitlines() if ln.startswith(f"Error: {path}:") or ln.startswith(f"{path}:")]
    where = f"{path}:{line}:{column}:" + (f" {key}:" if key else "")
    hits = [ln for ln in lines if where in ln]
    assert hits, f"no problem at {where} in:\n{result.output}"
    if fragment is not None:
        assert any(fragment in ln for ln in hits), result.output
    assert "Traceback" not in result.output


def test_every_problem_is_reported_at_once(tmp_path):
    text = COMPARATOR.replace("r_hold: 10 Mohm", "r_hld: 10 Mohm").replace("{regulator:", "{regulater:")
    with pytest.raises(DesignError) as err:
        load_design(_write(tmp_path, text))
    keys = {p.key for p in err.value.problems}
    assert {"values.r_hld", "values", "options.regulater", "options"} <= keys


def test_problems_in_a_brief_file_point_into_the_brief(tmp_path):
    brief = _write(tmp_path, "title: x\ndelay: {nominal: 15 kg}\nsupply: {nominal: 12 V}\nload: {dc: {current: 1 A}}\n",
                   "brief.yaml")
    design = _write(tmp_path, COMPARATOR.replace(FAN, "brief.yaml"))
    with pytest.raises(BriefError) as err:
        load_design(design)
    assert err.value.problems[0].file == str(brief.resolve())
    assert (err.value.problems[0].line, err.value.problems[0].key) == (2, "delay.nominal")


def test_inline_brief_equals_the_brief_file(tmp_path):
    data = yaml.safe_load((EXAMPLES / "fan_run_on.yaml").read_text())
    text = yaml.safe_dump({"brief": data, "topology": "rc-comparator",
                           "values": {"r_hold": "10 Mohm", "c_hold": "47 uF"}, "options": {"regulator": "ldo-micropower"}})
    inline, _, _ = load_design(_write(tmp_path, text))
    from_file, _, _ = load_design(_write(tmp_path, COMPARATOR, "by_path.yaml"))
    assert inline.to_dict() | {"path": None} == from_file.to_dict() | {"path": None}


def test_values_and_quantity_options_are_si(tmp_path):
    _, topo, design = load_design(_write(tmp_path, COMPARATOR.replace("ldo-micropower}", "ldo-micropower, "
                                                                       "shunt: 10 Mohm, c_rated_v: 16}")))
    assert design.values == {"r_hold": pytest.approx(10e6), "c_hold": pytest.approx(47e-6)}
    assert design.options["shunt"] == pytest.approx(10e6) and design.options["c_rated_v"] == 16.0
    plain = load_design(_write(tmp_path, COMPARATOR, "plain.yaml"))
    # common practice (issue 3): a 10 Mohm meter across the hold capacitor visibly shortens the hold
    assert topo.nominal_delay(design) < 0.8 * plain[1].nominal_delay(plain[2])


def test_overrides_reach_the_model_in_si(tmp_path):
    text = COMPARATOR + "overrides: {comparator-nanopower: {bias_max: 2 nA, offset_max: 0.002}}\n"
    _, topo, design = load_design(_write(tmp_path, text))
    assert design.overrides == {"comparator-nanopower": {"bias_max": pytest.approx(2e-9), "offset_max": 0.002}}
    q = topo.uncertain(design)
    assert topo._bias_limit_a(design, 85.0) == pytest.approx(2e-9) and q["offset_v"].hi == pytest.approx(0.002)


def test_brief_changes_are_validated_and_applied(tmp_path):
    path = _write(tmp_path, COMPARATOR)
    brief, topo, _ = load_design(path, brief_changes={"analysis.samples": 500})
    assert brief.analysis.samples == 500 and topo.brief.analysis.samples == 500
    with pytest.raises(BriefError, match="analysis.samples"):
        load_design(path, brief_changes={"analysis.samples": 5})


def test_option_declarations_name_real_catalog_categories():
    """Every part option a topology declares names a catalog category that has at least one class."""
    catalog = load_catalog()
    for topology_id in topology_ids(catalog):
        cls = topology_class(topology_id, catalog)
        for option, category in cls.option_parts.items():
            assert catalog.parts(category), f"{topology_id}.{option}: no {category} class in the catalog"
        assert set(cls.required_options) <= set(cls.option_units) | set(cls.option_parts), topology_id


def _example(topology_id: str) -> dict:
    path = DESIGNS / f"{topology_id}.yaml"
    assert path.is_file(), f"acceptance (issue 3): every registered topology has an example design; missing {path}"
    data = yaml.safe_load(path.read_text())
    data["brief"] = (path.parent / data["brief"]).resolve().as_posix()
    return data


@pytest.mark.parametrize("topology_id", topology_ids())
def test_missing_values_and_required_options_are_reported(tmp_path, topology_id):
    """Each value role and each required option, left out of the topology's example, gives a located
    DesignError naming it (not a KeyError from inside the model)."""
    data = _example(topology_id)
    load_design(_write(tmp_path, yaml.safe_dump(data), "complete.yaml"))  # the example itself loads
    cls = topology_class(topology_id)
    leave_out = [("values", name) for name in data.get("values") or {}]
    leave_out += [("options", name) for name in cls.required_options]
    for section, name in leave_out:
        broken = {**data, section: {k: v for k, v in (data.get(section) or {}).items() if k != name}}
        with pytest.raises(DesignError) as err:
            load_design(_write(tmp_path, yaml.safe_dump(broken), f"without_{name}.yaml"))
        hits = [p for p in err.value.problems if p.key == section and f"'{name}'" in p.message]
        assert hits and hits[0].line is not None, (section, name, str(err.value))


def test_topology_objection_is_located(tmp_path):
    """The mcu model rejects a prescaler its oscillator does not offer; the loader places it at the option."""
    data = _example("mcu")
    data["options"]["prescaler"] = 1000
    path = _write(tmp_path, yaml.safe_dump(data, default_flow_style=False))
    with pytest.raises(DesignError) as err:
        load_design(path)
    problem = err.value.problems[0]
    assert problem.file == str(path) and problem.key == "options.prescaler"
    assert problem.line == path.read_text().splitlines().index("  prescaler: 1000") + 1
    assert "32768" in problem.message


def test_unreadable_design_file(tmp_path):
    result = CliRunner().invoke(cli, ["analyze", str(tmp_path / "missing.yaml")])
    assert result.exit_code == 2 and "cannot read the design file" in result.output
