"""Hostile and careless input: no code chosen by data files, located errors, exit codes scripts can rely on."""
from __future__ import annotations

import os
from pathlib import Path

import pytest
from click.testing import CliRunner

from tradeoff.cli import cli
from tradeoff.errors import EXIT_INPUT, EXIT_INTERNAL, EXIT_OUTPUT

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "examples"


def _run(*args, cwd: Path | None = None):
    old = Path.cwd()
    if cwd is not None:
        os.chdir(cwd)
    try:
        return CliRunner().invoke(cli, [str(a) for a in args])
    finally:
        os.chdir(old)


@pytest.mark.parametrize("module", ["evil_marker", "tradeoff.topologies.evil_marker", "os"])
def test_a_catalog_module_outside_the_package_is_a_located_error_and_imports_nothing(tmp_path, module):
    # issue 13 item 0: a data file never chooses code; the module would write a marker file when imported
    marker = tmp_path / "imported.marker"
    (tmp_path / "evil_marker.py").write_text(f"open({str(marker)!r}, 'w').write('ran')\n")
    catalog = tmp_path / "cat.yaml"
    catalog.write_text("parts:\n  - id: rc-darlington\n    category: topology\n"
                       "    description: replaced entry\n"
                       f"    module: {module}\n")
    for command in (["study", EXAMPLES / "towel_rail_boost.yaml"], ["topologies"],
                    ["analyze", EXAMPLES / "designs" / "rc-darlington.yaml"]):
        result = _run(*command, "--catalog", catalog, cwd=tmp_path)
        assert result.exit_code == EXIT_INPUT, result.output
        assert not marker.exists()
        assert f"{catalog}:5:13: rc-darlington.module:" in result.output  # file:line:column of the value
        assert "Traceback" not in result.output


def test_every_shipped_topology_module_is_one_of_the_package_modules():
    from tradeoff.catalog import load_catalog
    from tradeoff.topologies.registry import package_modules, topology_class, topology_ids

    catalog = load_catalog()
    for topology_id in topology_ids(catalog):
        assert catalog.part(topology_id).fields["module"] in package_modules()
        assert topology_class(topology_id, catalog).id == topology_id


def test_an_existing_output_is_refused_with_its_own_exit_code(tmp_path):
    target = tmp_path / "hold.cir"
    target.write_text("keep me")
    result = _run("netlist", EXAMPLES / "designs" / "rc-darlington.yaml", "-o", target)
    assert result.exit_code == EXIT_OUTPUT and str(target) in result.output
    assert target.read_text() == "keep me"


def test_an_unexpected_exception_is_one_line_with_the_internal_exit_code(monkeypatch):
    import tradeoff.brief

    def broken(*_args, **_kwargs):
        raise ZeroDivisionError("division by zero")

    monkeypatch.setattr(tradeoff.brief, "load_brief", broken)
    result = _run("check", EXAMPLES / "towel_rail_boost.yaml")
    assert result.exit_code == EXIT_INTERNAL
    assert "internal error (ZeroDivisionError" in result.output and "Traceback" not in result.output


# ---- one bounded reader for every input file (issue 13 items 1, 3, 8) -----------------------

GOOD_BRIEF = (EXAMPLES / "towel_rail_boost.yaml").read_text(encoding="utf-8")


def _subprocess(*args, timeout: float = 60):
    """The CLI in its own process (hang-prone cases: a timeout fails the test instead of hanging the suite)."""
    import subprocess
    import sys

    return subprocess.run([sys.executable, "-m", "tradeoff", *map(str, args)], capture_output=True, text=True,
                          timeout=timeout, cwd=ROOT)


def _check(path: Path):
    result = _run("check", path)
    assert "Traceback" not in result.output
    return result


def _alias_bomb() -> str:
    lines = ["l0: &l0 [x, x, x, x, x, x, x, x, x, x]"]
    lines += [f"l{i}: &l{i} [{', '.join([f'*l{i - 1}'] * 10)}]" for i in range(1, 9)]
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("name, text, line, fragment", [
    ("alias bomb", GOOD_BRIEF + "extra:\n" + "".join("  " + row + "\n" for row in _alias_bomb().splitlines()),
     None, "once aliases are expanded; accepted: at most 200,000"),
    ("100k near-miss keys", GOOD_BRIEF + "".join(f"weightz{i}: 1\n" for i in range(100_000)), None,
     "more than 20,000 keys"),
    ("990-deep mapping", GOOD_BRIEF + "".join("  " * i + f"k{i}:\n" for i in range(990)) + "  " * 990 + "v\n",
     None, "nesting deeper than 40 levels"),
    ("20 MB title", "title: " + "x" * 20_000_000 + "\n", None, "is larger than 4 MB"),
    ("a 20 kB title", GOOD_BRIEF.replace("title:", f"title: {'y' * 20_000}\nold_title:", 1), 6,
     "a text of 20,000 characters; accepted: at most 10,000"),
    ("a 5000-digit integer", GOOD_BRIEF.replace("analysis:", "analysis:\n  seed: " + "9" * 5000 + "\nold:"), None,
     "a number of 5,000 characters"),
    ("recursive alias", GOOD_BRIEF + "loop: &loop [*loop]\n", None, "recursive alias"),
    ("NUL character", GOOD_BRIEF.replace("title:", "title:\x00", 1), 6, "control character U+0000"),
    ("escape character", GOOD_BRIEF + "x: a\x1bb\n", None, "control character U+001B"),
])
def test_input_limits_are_located_refusals(tmp_path, name, text, line, fragment):
    # issue 13 item 1: each limit is a located FILE:LINE:COLUMN error with exit 2, within seconds
    path = tmp_path / "brief.yaml"
    path.write_text(text, encoding="utf-8")
    result = _subprocess("check", path)
    assert result.returncode == EXIT_INPUT, result.stderr[-2000:]
    assert "Traceback" not in result.stderr
    first = result.stderr.splitlines()[0]
    assert first.startswith(f"Error: {path}"), first
    assert fragment in first, first
    if line is not None:
        assert first.startswith(f"Error: {path}:{line}:"), first
    if "MB" not in fragment:  # the size refusal has no place in the text to point at
        assert first.split(f"{path}:", 1)[1].split(":")[0].isdigit(), first


def test_non_utf8_bytes_are_located_by_line_and_column(tmp_path):
    path = tmp_path / "brief.yaml"
    path.write_bytes(GOOD_BRIEF.encode("utf-8").replace(b"title: ", b"title: caf\xe9 ", 1))
    result = _check(path)
    assert result.exit_code == EXIT_INPUT
    line = 1 + GOOD_BRIEF[:GOOD_BRIEF.index("title:")].count("\n")
    assert f"{path}:{line}:11: byte 0xe9 is not UTF-8" in result.output  # 'title: caf' is 10 characters


@pytest.mark.parametrize("special", ["fifo", "directory", "/dev/zero", "/dev/null"])
def test_only_regular_files_are_read(tmp_path, special):
    # a FIFO with no writer would block a plain open(); /dev/zero would fill the memory
    if special == "fifo":
        path = tmp_path / "pipe.yaml"
        os.mkfifo(path)
    elif special == "directory":
        path = tmp_path / "dir.yaml"
        path.mkdir()
    else:
        path = Path(special)
    for command in (["check", path], ["analyze", path], ["catalog", "--catalog", path]):
        result = _subprocess(*command, timeout=30)
        assert result.returncode == EXIT_INPUT, result.stderr
        assert str(path) in result.stderr and "Traceback" not in result.stderr


def test_a_bom_and_yaml_1_1_numbers_read_as_meant(tmp_path):
    from tradeoff.brief import load_brief

    path = tmp_path / "brief.yaml"
    path.write_text("\ufeff" + GOOD_BRIEF.replace("samples: 20000", "samples: 2e4", 1), encoding="utf-8")
    brief = load_brief(path)
    assert brief.analysis.samples == 20000 and isinstance(brief.analysis.samples, int)


def test_many_unknown_keys_get_few_suggestions_and_a_count(tmp_path):
    # issue 13 item 3: suggestions for the first few unknown keys, then "and N more"; problems capped
    path = tmp_path / "brief.yaml"
    path.write_text(GOOD_BRIEF + "".join(f"weightz{i}: 1\n" for i in range(5000)), encoding="utf-8")
    result = _check(path)
    assert result.exit_code == EXIT_INPUT
    rows = result.output.splitlines()
    assert sum("unknown key 'weightz" in row for row in rows) == 3
    assert any("and 4997 more unknown keys" in row for row in rows)


def test_suggestions_only_when_really_close():
    from tradeoff.fields import closest

    assert closest("nominl", ["nominal", "tolerance"]) == "nominal"  # one letter missing
    assert closest("E25", ["E24", "E12"]) == "E24"  # one substitution
    assert closest("comparator", ["comparator-nanopower"]) == "comparator-nanopower"  # start of the name
    assert closest("delay.tolerance", ["load.relay.coil_resistance", "delay.nominal"]) is None
    assert closest("weightz0", ["weights"]) == "weights"
    assert closest("xyz", ["title", "delay"]) is None


@pytest.mark.parametrize("written, fragment", [("1e308", "accepted: a number from 0 to 100"),
                                               ("9" * 309, "accepted: numbers of at most 100 characters")])
def test_a_huge_weight_is_refused_not_echoed(tmp_path, written, fragment):
    # weights.cost=1e308 used to come back as a 309-digit number; it is refused with the accepted range
    path = tmp_path / "brief.yaml"
    path.write_text(GOOD_BRIEF.replace("  cost: 1\n", f"  cost: {written}\n", 1), encoding="utf-8")
    result = _check(path)
    assert result.exit_code == EXIT_INPUT
    assert f"{path}:45:" in result.output and fragment in result.output
    assert "9" * 20 not in result.output  # never echoed as a 309-digit figure


@pytest.mark.parametrize("written, fragment", [
    ("\uff11\uff12 V", "supply.nominal: '\uff11\uff12 V' has digits other than ASCII 0-9"),  # never read as 12 V
    ("1e308 V", "supply.nominal: 1e308 V is outside the accepted range; accepted: 1 V to 60 V"),  # not '1e+296 TV'
])
def test_odd_numbers_are_refused_as_written(tmp_path, written, fragment):
    path = tmp_path / "brief.yaml"
    path.write_text(GOOD_BRIEF.replace("nominal: 12 V", f"nominal: {written}", 1), encoding="utf-8")
    result = _check(path)
    assert result.exit_code == EXIT_INPUT
    assert fragment in result.output and "TV" not in result.output


# ---- catalog and override parameters checked like brief fields (issue 13 items 2, 7) ------------

DESIGNS = EXAMPLES / "designs"


def _design(tmp_path: Path, example: str, extra: str = "", old: str = "", new: str = "") -> Path:
    """A copy of a shipped example design with `old` replaced by `new` and `extra` appended."""
    text = (DESIGNS / example).read_text(encoding="utf-8").replace("brief: ../", f"brief: {EXAMPLES}/")
    assert old in text
    path = tmp_path / "design.yaml"
    path.write_text(text.replace(old, new) + extra, encoding="utf-8")
    return path


@pytest.mark.parametrize("example, extra, fragment", [
    ("rc-counter.yaml", "overrides: {counter-cmos-14stage: {vt_max: -50 %}}\n",
     "vt_max: -50 % is outside the range of vt_max; accepted: above 0 % to below 100 %"),
    ("rc-counter.yaml", "overrides: {counter-cmos-14stage: {vt_max: 500 %}}\n", "vt_max: 500 % is outside"),
    ("rc-counter.yaml", "overrides: {counter-cmos-14stage: {output_supply: [5 V, 10 V]}}\n",
     "output_sink has 3 items but output_supply has 2"),  # was a traceback in the supply interpolation
    ("rc-darlington.yaml", "overrides: {darlington-npn-small: {vbe_test_current: 0}}\n",
     "vbe_test_current: 0 A is outside the range of vbe_test_current; accepted: above 0 A"),
    ("rc-darlington.yaml", "overrides: {cap-electrolytic-low-leakage: {cost: -5}}\n",
     "cost: -5 is outside the range of cost; accepted: from 0"),
    ("rc-darlington.yaml", "overrides: {cap-electrolytic-low-leakage: {tolerance: 99 %}}\n",
     "make a band of ±104 %, so the value could reach zero"),  # was a negative c_hold and delay, exit 0
    ("mcu.yaml", "overrides: {mcu-8bit-small: {internal_rc_dividers: [0]}}\n", "a whole number above 0"),
])
def test_override_outside_its_range_is_a_located_error(tmp_path, example, extra, fragment):
    path = _design(tmp_path, example, extra)
    result = _run("analyze", path)
    assert result.exit_code == EXIT_INPUT, result.output
    assert "Traceback" not in result.output
    line = path.read_text().count("\n")  # the override is the file's last line
    assert f"{path}:{line}:" in result.output and fragment in result.output, result.output


@pytest.mark.parametrize("example, old, new, fragment", [
    ("rc-counter.yaml", "cascade: 0", "cascade: 99", "options.cascade: 99 is outside what this chain can have"),
    # the rc-counter class chains two counters: cascade 15 (16 counters) was accepted with a 5.5e+63 h nominal
    ("rc-counter.yaml", "cascade: 0", "cascade: 15", "options.cascade: 15 is outside what this chain can have "
     "(rc-counter chains at most 2 counters); accepted: a whole number from 0 to 1"),
    ("rc-counter.yaml", "stage: 14", "stage: 9223372036854775808", "options.stage: 9223372036854775808 is outside"),
    ("rc-counter.yaml", "stage: 14", "stage: 40", "options.stage: 40 is outside what this chain can have "
     "(counter-cmos-14stage has 14 stages); accepted: a whole number from 0 to 14"),
    ("rc-counter.yaml", "c_timing: 5.6 uF", "c_timing: 1e308 F",
     "values.c_timing: '1e308 F' is outside what a capacitor can be; accepted: 1 pF to 100 F"),
    ("rc-darlington.yaml", "r_hold: 470 kohm", "r_hold: 1 pohm", "values.r_hold: '1 pohm' is outside"),
    ("rc-darlington.yaml", "c_hold: 470 uF", "c_hold: 1e6 F", "values.c_hold: '1e6 F' is outside"),
])
def test_absurd_design_values_are_refused(tmp_path, example, old, new, fragment):
    path = _design(tmp_path, example, old=old, new=new)
    result = _run("analyze", path)
    assert result.exit_code == EXIT_INPUT and fragment in result.output, result.output
    line = 1 + path.read_text().split(new)[0].count("\n")
    assert result.output.startswith(f"Error: {path}:{line}:"), result.output  # located at the value's line
    assert "e+" not in result.output.replace(new, "")  # no nominal of 5.5e+63 h or any other figure shown


@pytest.mark.parametrize("tolerance", ["-5", "-1e300", "1e308"])
def test_user_catalog_tolerance_out_of_range_is_located(tmp_path, tolerance):
    import yaml

    shipped = yaml.safe_load((ROOT / "catalogs" / "passives.yaml").read_text(encoding="utf-8"))
    entry = next(p for p in shipped["parts"] if p["id"] == "res-metal-film-1pct")
    entry["params"]["tolerance"] = {"value": float(tolerance), "source": "test"}
    catalog = tmp_path / "mine.yaml"
    catalog.write_text(yaml.safe_dump({"parts": [entry]}), encoding="utf-8")
    for command in ("analyze", "study"):
        target = DESIGNS / "rc-darlington.yaml" if command == "analyze" else EXAMPLES / "fan_run_on.yaml"
        result = _run(command, target, "--catalog", catalog)
        assert result.exit_code == EXIT_INPUT, result.output
        assert f"{catalog}:" in result.output and "res-metal-film-1pct.params.tolerance:" in result.output
        assert "accepted: from 0 % to below 100 %" in result.output and "Traceback" not in result.output


def test_shipped_catalogs_keep_every_rule():
    # the declared ranges hold for every shipped part (IEC 60062 tolerances are all below 100 %)
    from tradeoff.catalog import load_catalog, range_problems

    for part in load_catalog():
        assert range_problems(part.params) == [], part.id


def test_param_ranges_follow_names_and_dimensions():
    from tradeoff.param_rules import cross_problems, range_of, value_problem

    assert range_of("tolerance", "", True).accepts(0.2) and not range_of("tolerance", "", True).accepts(1.0)
    assert range_of("vbe_tempco", "other", False).accepts(-2e-3)  # a tempco may be negative
    assert range_of("iceo", "A", False).accepts(0.0) and not range_of("vbe_test_current", "A", False).accepts(0.0)
    assert range_of("temp_max", "degC", False).accepts(-40.0)
    assert value_problem("stages", [14.5], "", False) is not None
    assert cross_problems({"hfe_min": (300.0,), "hfe_typ": (250.0,)})[0][0] == "hfe_min"
    assert cross_problems({"r_max_supply": (15.0, 5.0), "r_max": (1e6, 1e7)})[0][1].endswith("rising order")


def _study_json(brief: Path, *extra):
    import json

    result = _run("study", brief, "--samples", 300, "--format", "json", *extra)
    assert result.exit_code in (0, 1), result.output
    return json.loads(result.stdout)


def test_a_topology_that_cannot_be_built_is_infeasible_and_the_study_goes_on(tmp_path):
    # a 30 V supply with a 24 V relay: before, one topology's "no diode class fits" ended the whole study
    text = GOOD_BRIEF.replace("nominal: 12 V ", "nominal: 30 V ").replace("coil_voltage: 12 V", "coil_voltage: 24 V")
    text = text.replace("  min: 11 V ", "  min: 27 V ").replace("  max: 16 V ", "  max: 33 V ")
    path = tmp_path / "thirty.yaml"
    path.write_text(text, encoding="utf-8")
    data = _study_json(path)
    reported = {d["topology"] for d in data["infeasible"]} | {d["topology"] for d in data["designs"]}
    from tradeoff.topologies.registry import topology_ids

    assert reported == set(topology_ids())
    assert all(d["reasons"] for d in data["infeasible"])


def test_a_one_volt_supply_is_a_study_not_a_crash(tmp_path):
    path = tmp_path / "one_volt.yaml"
    path.write_text("title: one volt\ndelay: {nominal: 1 h}\nsupply: {nominal: 1 V}\nload: {dc: {current: 10 mA}}\n")
    data = _study_json(path)
    assert data["infeasible"] and all(d["reasons"] for d in data["infeasible"])


def test_a_python_tag_in_a_user_catalog_is_a_located_error(tmp_path):
    """A tag the safe loader refuses (`!!python/object:...`) is named at its line and column, exit 2,
    never run and never an internal error."""
    path = tmp_path / "tagged.yaml"
    path.write_text("parts:\n  - id: res-tagged\n    category: resistor\n"
                    "    description: !!python/object:os.system x\n", encoding="utf-8")
    result = CliRunner().invoke(cli, ["catalog", "res-tagged", "--catalog", str(path)])
    assert result.exit_code == 2, result.output
    assert f"{path}:4:18: value: unsupported YAML tag 'tag:yaml.org,2002:python/object:os.system'" in result.output


# ---- unit errors say what is accepted, once (issue 13: "such as" rather than "accepted:") --------

@pytest.mark.parametrize("where, old, new, fragment", [
    ("brief", "nominal: 2 h ", "nominal: 12 V ", "delay.nominal: '12 V' is a voltage; accepted: a time"),
    ("brief", "tolerance: ±15 %", "tolerance: 15",
     "the bare number '15' is ambiguous (15 % or 15 times?); accepted: '15 %' for percent or 0.15"),
    ("design", "c_hold: 470 uF", "c_hold: 470 V", "values.c_hold: '470 V' is a voltage; accepted: a positive"),
    ("design", "r_hold: 470 kohm, ", "", "missing value role 'r_hold'"),
    ("design", "values:", "overrides: {darlington-npn-small: {vbe_test_current: 3 V}}\nvalues:",
     "vbe_test_current: '3 V' is a voltage; accepted: a quantity in mA (as the catalog's '10 mA')"),
    ("design", "values:", "overrides: {cap-electrolytic-low-leakage: {tolerance: 20}}\nvalues:",
     "the bare number '20' is ambiguous (20 % or 20 times?); accepted: a percentage ('20 %') or a fraction"),
    ("design", "options: {", "options: {shunt: 10 V, ", "options.shunt: '10 V' is a voltage; accepted: a "
     "positive quantity with its unit (in ohm)"),
])
def test_unit_errors_say_accepted_once_and_never_such_as(tmp_path, where, old, new, fragment):
    if where == "brief":
        path = tmp_path / "brief.yaml"
        path.write_text(GOOD_BRIEF.replace(old, new, 1), encoding="utf-8")
        result = _check(path)
    else:
        path = _design(tmp_path, "rc-darlington.yaml", old=old, new=new)
        result = _run("analyze", path)
    assert result.exit_code == EXIT_INPUT, result.output
    error = next(line for line in result.output.splitlines() if line.startswith("Error:"))
    assert error.startswith(f"Error: {path}:") and fragment in error, error
    assert error.count("accepted:") == 1 and "such as" not in error, error


def test_a_sweep_range_endpoint_in_the_wrong_unit_names_the_fields_unit_once():
    result = _run("sweep", EXAMPLES / "fan_run_on.yaml", "--vary", "delay.nominal=1V..2V:3")
    assert result.exit_code == EXIT_INPUT
    assert "range endpoint: '1V' is a voltage; accepted: a time" in result.output
    assert result.output.count("accepted:") == 1
