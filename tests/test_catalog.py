"""Catalog loader: shipped catalogs, user overrides, located errors, sourced data, leakage rule."""
from __future__ import annotations

import re
import shutil
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest
import yaml
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from tradeoff.catalog import CATEGORIES, DIELECTRICS, load_catalog, shipped_catalog_dir, shipped_catalog_names
from tradeoff.cli import cli
from tradeoff.errors import CatalogError
from tradeoff.devices.capacitor import electrolytic_leakage_a, insulation_resistance_ohm

ROOT = Path(__file__).resolve().parents[1]

GOOD = """\
parts:
  - id: my-res
    category: resistor
    description: test resistor
    params:
      tolerance: {value: "1 %", source: test}
      cost: {value: 0.01, source: indicative}
"""


@pytest.fixture(scope="module")
def shipped():
    return load_catalog()


def write(tmp_path, text, name="mine.yaml"):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


# ---- shipped data -----------------------------------------------------------------------

def test_shipped_catalogs_load_from_the_source_tree(shipped):
    assert shipped_catalog_dir() == ROOT / "catalogs"
    assert {"passives", "relays", "regulators", "oscillators"} <= set(shipped_catalog_names())
    assert "eseries" not in shipped_catalog_names()  # the E-series tables are not a part catalog
    for part_id in ("res-metal-film-1pct", "cap-electrolytic-85c", "cap-ceramic-c0g", "relay-pcb-12v",
                    "ldo-micropower", "crystal-32k-20ppm"):
        assert part_id in shipped


def test_loading_needs_no_install(tmp_path):
    # Run from another directory with only PYTHONPATH pointing at the checkout: no `pip install .`.
    code = ("from tradeoff.catalog import load_catalog, shipped_catalog_dir; c = load_catalog(); "
            "print(shipped_catalog_dir()); print(c.part('relay-pcb-12v').value('coil_resistance', 'ohm'))")
    out = subprocess.run([sys.executable, "-c", code], cwd=tmp_path, capture_output=True, text=True,
                         env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"}, check=True).stdout.split()
    assert out == [str(ROOT / "catalogs"), "400.0"]


def test_installed_wheel_layout_finds_catalogs_inside_the_package(tmp_path):
    # pyproject force-includes catalogs/ as tradeoff/catalogs in the wheel: mimic that layout.
    shutil.copytree(ROOT / "tradeoff", tmp_path / "tradeoff", ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copytree(ROOT / "catalogs", tmp_path / "tradeoff" / "catalogs")
    code = ("from tradeoff.catalog import load_catalog, shipped_catalog_dir; from tradeoff import eseries; "
            "print(shipped_catalog_dir()); print(len(load_catalog()), eseries.nearest('E12', 4.4))")
    out = subprocess.run([sys.executable, "-c", code], cwd=tmp_path, capture_output=True, text=True,
                         env={"PYTHONPATH": str(tmp_path), "PATH": "/usr/bin:/bin"}, check=True).stdout.split()
    assert out == [str(tmp_path / "tradeoff" / "catalogs"), str(len(load_catalog())), "4.7"]


def test_every_shipped_entry_is_well_formed(shipped):
    for part in shipped:
        assert part.category in CATEGORIES
        assert part.description.strip()
        if part.category == "capacitor":
            assert part.fields["dielectric"] in DIELECTRICS
        if part.category in ("resistor", "capacitor"):
            unit = "ohm" if part.category == "resistor" else "F"
            assert 0 < part.value("tolerance", "") < 1
            assert part.value("tempco", "1/K") >= 0
            assert 0 < part.value("min_value", unit) < part.value("max_value", unit)
        if part.category == "capacitor":
            ratings = part.values("rated_voltages", "V")
            assert list(ratings) == sorted(ratings) and ratings[0] > 0
        if part.category != "topology":
            assert part.cost >= 0
            assert "indicative" in part.source("cost")  # CONTRIBUTING.md: costs are marked indicative


def test_every_shipped_param_has_a_source(shipped):
    for part in shipped:
        for name, param in part.params.items():
            assert param.source.strip(), f"{part.id}.{name} has no source"


def test_passive_relay_regulator_crystal_sources_say_their_kind():
    # RULES.md: a value from memory says "from memory". In these catalogs every source names
    # its kind: a document class, the standard, docs/references.md, common practice, or memory.
    kinds = ("from memory", "common practice", "indicative", "datasheet", "IEC", "EIA", "docs/references.md",
             "class definition", "handbook")
    for part in load_catalog(shipped=["passives", "relays", "regulators", "oscillators"]):
        for name, param in part.params.items():
            assert any(kind in param.source for kind in kinds), f"{part.id}.{name}: {param.source}"


PART_NUMBER = re.compile(
    r"\b(?:[A-Z]{1,5}\d{2,}[A-Z0-9]*"     # NE555, LM7805, BC547, CD4060, MCP1700
    r"|\d[A-Z]\d{3,}[A-Z]?"               # 1N4001, 2N3904
    r"|\d{3,}[A-Z]{2,}"                   # 123AB-style relay codes
    r"|AT(?:tiny|mega)\d+|PIC\d+\w*)\b")
ALLOWED = re.compile(r"^(?:E\d+|IEC\d+|EN\d+|X7R|C0G|NP0)$")


def _part_numbers(text):
    return [m for m in PART_NUMBER.findall(text) if not ALLOWED.match(m)]


def test_no_part_numbers_in_shipped_part_classes(shipped):
    # RULES.md: shipped catalogs hold generic part classes, no manufacturer part numbers: no
    # id, description, field or value of any shipped entry names one.
    for part in shipped:
        texts = [part.id, part.description, *part.fields.values(), *(p.text for p in part.params.values())]
        assert not _part_numbers(" ".join(texts)), part.id


def test_no_part_numbers_even_in_sources_of_these_catalogs():
    # Stricter for passives, relays, regulators and crystals: their sources name datasheet
    # classes, not part numbers, and the whole file text is free of them.
    for name in ("passives", "relays", "regulators", "oscillators"):
        text = (shipped_catalog_dir() / f"{name}.yaml").read_text(encoding="utf-8")
        assert not _part_numbers(text), name


def test_the_part_number_pattern_catches_typical_shapes():
    for text in ("NE555", "LM7805", "1N4001", "2N3904", "CD4060B", "ATtiny13", "123AB"):
        assert PART_NUMBER.search(text), text
    for text in ("0805 size", "10 A 250 V", "32.768 kHz", "E24", "IEC 60384-4", "X7R"):
        assert not _part_numbers(text), text


# ---- leakage rule ---------------------------------------------------------------------------

@pytest.mark.parametrize("c_uf, v, expected_ua", [(100, 25, 25.0), (1000, 16, 160.0), (10, 16, 3.0),
                                                  (1, 6.3, 3.0), (4700, 35, 1645.0)])
def test_leakage_limit_is_the_datasheet_rule(shipped, c_uf, v, expected_ua):
    # Aluminium electrolytic datasheets (sectional specification IEC 60384-4), docs/references.md:
    # I <= 0.01 CV (uA, uF, V) or 3 uA, whichever is greater, after 2 min at rated voltage, 20 degC.
    part = shipped.part("cap-electrolytic-85c")
    datasheet_ua = max(0.01 * c_uf * v, 3.0)
    assert datasheet_ua == pytest.approx(expected_ua)
    got = electrolytic_leakage_a(c_uf * 1e-6, v, v, 20.0, part)
    assert float(got) == pytest.approx(expected_ua * 1e-6, rel=1e-12)


def test_leakage_is_vectorised_and_scales_as_documented(shipped):
    part = shipped.part("cap-electrolytic-85c")
    c = np.array([100e-6, 100e-6, 100e-6, 10e-6])
    limit = electrolytic_leakage_a(c, np.array([25, 12.5, 25, 16]), 25, np.array([20, 20, 85, 20]), part)
    assert limit.shape == (4,)
    assert limit[1] == pytest.approx(limit[0] / 2)  # worst case: linear below rated voltage
    # docs/references.md (from memory): leakage rises roughly 5 to 10 times at 85 degC
    assert 5 <= limit[2] / limit[0] <= 10
    typical = electrolytic_leakage_a(c, 25, 25, 20, part, typical=True)
    assert np.all(typical < electrolytic_leakage_a(c, 25, 25, 20, part))
    half = electrolytic_leakage_a(100e-6, 12.5, 25, 20, part, typical=True)
    assert half < typical[0] / 2  # typical parts fall faster than linearly below rated voltage


def test_leakage_rejects_reverse_voltage(shipped):
    with pytest.raises(ValueError, match="forward voltage"):
        electrolytic_leakage_a(1e-6, -1.0, 16, 20, shipped.part("cap-electrolytic-85c"))


def test_insulation_resistance_rule(shipped):
    # Film datasheets: R_ins >= R_min for small C, R_ins*C >= tau for large C, whichever is lower.
    part = shipped.part("cap-film-pet-10pct")
    r_min, tau = part.value("insulation_resistance_min", "ohm"), part.value("insulation_time_constant", "s")
    got = insulation_resistance_ohm(np.array([1e-9, 10e-6]), part)
    np.testing.assert_allclose(got, [r_min, tau / 10e-6])


# ---- values, overrides ------------------------------------------------------------------------

def test_value_is_si_and_dimension_checked(shipped):
    part = shipped.part("cap-electrolytic-85c")
    assert part.value("leakage_floor", "A") == 3e-6
    assert part.value("max_value", "F") == 0.01
    assert part.value("tolerance", "") == 0.2
    assert part.values("rated_voltages", "V")[:3] == (6.3, 10.0, 16.0)
    with pytest.raises(CatalogError, match=r"passives\.yaml:\d+:\d+: cap-electrolytic-85c\.params\.leakage_floor: "
                                           r"'3 uA' is a current; accepted: a voltage"):
        part.value("leakage_floor", "V")
    with pytest.raises(CatalogError, match=r"rated_voltages: is a list of 8 values"):
        part.value("rated_voltages", "V")
    with pytest.raises(CatalogError, match=r"has no parameter 'tolerence'; did you mean 'tolerance'\?"):
        part.value("tolerence", "")


def test_with_overrides_accepts_si_floats_and_quantity_strings(shipped):
    part = shipped.part("cap-electrolytic-85c")
    changed = part.with_overrides({"leakage_floor": 1e-6, "tolerance": "10 %", "max_value": "4700 uF"},
                                  origin="design.yaml")
    assert changed.value("leakage_floor", "A") == 1e-6
    assert changed.value("tolerance", "") == 0.1
    assert changed.value("max_value", "F") == 4.7e-3
    assert "design.yaml" in changed.source("tolerance")
    assert part.value("tolerance", "") == 0.2  # the original is untouched
    with pytest.raises(CatalogError, match=r"design\.yaml: cap-electrolytic-85c\.tolerence: .*did you mean"):
        part.with_overrides({"tolerence": "5 %"}, origin="design.yaml")
    with pytest.raises(CatalogError, match="'47k' has the prefix 'k' but no unit"):
        part.with_overrides({"max_value": "47k"})


def test_catalog_lookup_errors_suggest(shipped):
    with pytest.raises(CatalogError, match=r"no part class 'relay-pcb-12'; did you mean 'relay-pcb-12v'\?"):
        shipped.part("relay-pcb-12")
    with pytest.raises(CatalogError, match=r"unknown category 'capacitors'; did you mean 'capacitor'\?"):
        shipped.parts("capacitors")


def test_select_by_category_id_dielectric_and_substring(shipped):
    assert {p.category for p in shipped.select("relay")} == {"relay"}
    assert [p.id for p in shipped.select("ldo-classic")] == ["ldo-classic"]
    assert {p.fields["dielectric"] for p in shipped.select("film")} == {"film"}
    assert {p.id for p in shipped.select("Polypropylene")} == {"cap-film-pp-5pct"}


# ---- merging user files ---------------------------------------------------------------------

def test_user_entry_overrides_shipped_entry_by_id(tmp_path, shipped):
    user = write(tmp_path, """\
        parts:
          - id: cap-electrolytic-85c
            category: capacitor
            dielectric: electrolytic
            description: my own electrolytic
            params:
              tolerance: {value: "10 %", source: my datasheet}
              cost: {value: 0.04, source: my supplier}
          - id: my-res
            category: resistor
            description: my resistor
            params:
              cost: {value: 0.01, source: my supplier}
        """)
    merged = load_catalog(extra=[user])
    part = merged.part("cap-electrolytic-85c")
    assert part.description == "my own electrolytic" and part.value("tolerance", "") == 0.1
    assert part.file == str(user) and not part.has("leakage_k")  # replaced whole, not merged
    assert "my-res" in merged and len(merged) == len(shipped) + 1
    later = write(tmp_path, GOOD.replace("test resistor", "later resistor"), "later.yaml")
    assert load_catalog(extra=[user, later]).part("my-res").description == "later resistor"


def test_load_by_catalog_name_or_path(tmp_path):
    only = load_catalog(shipped=["relays"])
    assert {p.category for p in only} == {"relay"}
    with pytest.raises(CatalogError, match=r"relay: no such catalog file or shipped catalog name; "
                                           r"did you mean 'relays'\?"):
        load_catalog(shipped=["relay"])
    user = write(tmp_path, GOOD)
    assert [p.id for p in load_catalog(shipped=[], extra=[str(user)])] == ["my-res"]


def test_duplicate_id_across_shipped_files_is_an_error(tmp_path):
    a = write(tmp_path, GOOD, "a.yaml")
    b = write(tmp_path, GOOD, "b.yaml")
    with pytest.raises(CatalogError, match=rf"b\.yaml:2:5: my-res\.id: duplicate id 'my-res' \(also in {a}:2\)"):
        load_catalog(shipped=[a, b])


# ---- malformed files: table of cases, each with its location ---------------------------------------

MALFORMED = [
    # (replace this, with this, line, column, key, message fragment)
    ("category: resistor", "category: resistr", 3, 15, "my-res.category",
     "unknown category 'resistr'; did you mean 'resistor'? accepted: resistor, capacitor"),
    ("description: test resistor", "descripton: test resistor", 4, 5, "my-res.descripton",
     "unknown key 'descripton'; did you mean 'description'?"),
    ("  - id: my-res\n", "  - name: my-res\n", 2, 5, "parts[0].name", "unknown key 'name'"),
    ("source: test}", "source: \"\"}", 6, 41, "my-res.params.tolerance.source", "expected a non-empty source"),
    ("{value: \"1 %\", source: test}", "{value: \"1 %\"}", 6, 18, "my-res.params.tolerance.source",
     "missing 'source'"),
    ("{value: \"1 %\", source: test}", "{value: \"1 %\", sorce: test}", 6, 33, "my-res.params.tolerance.sorce",
     "unknown key 'sorce'; did you mean 'source'?"),
    ("\"1 %\"", "\"3 uAmp\"", 6, 26, "my-res.params.tolerance.value", "'uAmp' in '3 uAmp' is not a unit pint knows"),
    ("\"1 %\"", "\"47k\"", 6, 26, "my-res.params.tolerance.value", "has the prefix 'k' but no unit"),
    ("\"1 %\"", "\"4k7\"", 6, 26, "my-res.params.tolerance.value", "RKM code"),
    ("\"1 %\"", "\"2.2M ohm\"", 6, 26, "my-res.params.tolerance.value", "space between the prefix 'M'"),
    ("\"1 %\"", "true", 6, 26, "my-res.params.tolerance.value", "True is not a value"),
    ("\"1 %\"", "[]", 6, 26, "my-res.params.tolerance.value", "the list is empty"),
    ("\"1 %\"", ".nan", 6, 26, "my-res.params.tolerance.value", "is not a finite number"),
    ("{value: \"1 %\", source: test}", "1 %", 6, 18, "my-res.params.tolerance",
     "expected {value: ..., source: ...}"),
    ("      cost: {value: 0.01, source: indicative}\n", "", 6, 7, "my-res.params.cost", "missing 'cost'"),
    ("category: resistor", "category: capacitor", 2, 5, "my-res.dielectric", "a capacitor entry needs 'dielectric'"),
    ("    category: resistor\n", "    category: resistor\n    dielectric: film\n", 4, 17, "my-res.dielectric",
     "belongs to capacitor entries only"),
    ("id: my-res", "id: my res", 2, 9, "parts[0].id", "characters other than letters"),
    ("  - id: my-res\n", "  - id: my-res\n    id: other\n", 3, 5, "my-res.id", "duplicate key 'id' (line 2)"),
    ("tolerance: {", "Tolerance: {", 6, 18, "my-res.params.Tolerance", "not lower_case_with_underscores"),
    ("parts:", "part:", 1, 1, "part", "unknown key 'part'; did you mean 'parts'?"),
    ("description: test resistor", "description: [a, b]", 4, 18, "my-res.description",
     "expected a non-empty text"),
    ("category: resistor", "category: [resistor", 4, None, "", "YAML syntax error"),
]


@pytest.mark.parametrize("old, new, line, column, key, fragment", MALFORMED,
                         ids=[case[4] or "syntax" for case in MALFORMED])
def test_malformed_catalog_reports_location(tmp_path, old, new, line, column, key, fragment):
    assert old in GOOD
    path = write(tmp_path, GOOD.replace(old, new, 1))
    with pytest.raises(CatalogError) as caught:
        load_catalog(shipped=[], extra=[path])
    where = f"{path}:{line}:" + (f"{column}:" if column is not None else "")
    lines = str(caught.value).splitlines()
    assert any(text.startswith(where) and (f" {key}: " in text if key else True) and fragment in text
               for text in lines), lines
    # the same through the command line: exit code 2, message on stderr, no traceback
    result = CliRunner().invoke(cli, ["catalog", "--catalog", str(path)])
    assert result.exit_code == 2
    assert where in result.stderr and fragment in result.stderr and "Traceback" not in result.output


def test_malformed_whole_documents(tmp_path):
    cases = [("", "the file is empty"), ("- a\n", "expected a mapping with a 'parts:' list"),
             (GOOD.replace('"1 %"', "&loop [*loop]"), "an alias inside its own anchor (a recursive alias)"),
             (GOOD.replace('"1 %"', "[[1, 2]]"), "a list of lists is not accepted"),
             (GOOD.replace('"1 %"', "{a: 1}"), "a dict is not a value"),
             ("parts: &p\n  - *p\n", "an alias inside its own anchor"),
             ("parts: 3\n", "expected a list of part entries"), ("other: 1\n", "unknown key 'other'"),
             ("parts:\n  - 3\n", "expected a part entry")]
    for text, fragment in cases:
        path = write(tmp_path, text)
        with pytest.raises(CatalogError, match=re.escape(fragment)):
            load_catalog(shipped=[], extra=[path])


def test_all_problems_of_a_file_are_reported_at_once(tmp_path):
    text = GOOD.replace("category: resistor", "category: resistr").replace("source: test", "source: \"\"")
    text += GOOD.split("parts:\n", 1)[1]  # the same entry again: duplicate id
    path = write(tmp_path, text)
    with pytest.raises(CatalogError) as caught:
        load_catalog(shipped=[], extra=[path])
    messages = [str(p) for p in caught.value.problems]
    assert len(messages) == 3, messages
    assert any("unknown category 'resistr'" in m for m in messages)
    assert any("non-empty source" in m for m in messages)
    assert any(m.startswith(f"{path}:8:5: parts[1].id: duplicate id 'my-res' (first at line 2)") for m in messages)


def test_an_errors_reason_is_its_message_whole_whatever_the_file_name_holds(tmp_path):
    # A folder named with ": " inside: the reason a topology reports must not be cut at the first ": ".
    folder = tmp_path / "bench: spare"
    folder.mkdir()
    part = load_catalog(shipped=[], extra=[write(folder, GOOD)]).part("my-res")
    with pytest.raises(CatalogError) as caught:
        part.value("tolerance", "V")
    assert caught.value.reason == "'1 %' is a plain number; accepted: a voltage, e.g. '12 V', '600 mV'"
    assert str(caught.value) == f"{folder / 'mine.yaml'}:6:26: my-res.params.tolerance: {caught.value.reason}"

SCALARS = st.one_of(st.none(), st.booleans(), st.integers(), st.floats(allow_nan=True), st.text(max_size=12),
                    st.sampled_from(["resistor", "capacitor", "film", "20 %", "3 uA", "2.2M ohm", "47k", "id",
                                     "value", "source", "parts", "params", "category", "description"]))
DOCUMENTS = st.recursive(SCALARS, lambda children: st.one_of(
    st.lists(children, max_size=4),
    st.dictionaries(st.sampled_from(["parts", "id", "category", "description", "params", "value", "source",
                                     "dielectric", "module", "tolerance", "cost", "x"]), children, max_size=5)),
    max_leaves=25)


@settings(max_examples=150, deadline=None)
@given(document=DOCUMENTS)
def test_random_documents_give_only_catalog_errors(tmp_path_factory, document):
    # Fuzz: any YAML document either loads or raises CatalogError with located problems.
    path = tmp_path_factory.mktemp("fuzz") / "fuzz.yaml"
    path.write_text(yaml.safe_dump(document), encoding="utf-8")
    try:
        load_catalog(shipped=[], extra=[path])
    except CatalogError as exc:
        assert exc.problems and all(p.file == str(path) and p.message for p in exc.problems)


@settings(max_examples=100, deadline=None)
@given(text=st.text(alphabet=st.sampled_from(list("parts:-[]{}\"'&*!|>%@`# \n\tidvalue1.,")), max_size=60))
def test_random_text_gives_only_catalog_errors(tmp_path_factory, text):
    path = tmp_path_factory.mktemp("fuzz") / "fuzz.yaml"
    path.write_text(text, encoding="utf-8")
    try:
        load_catalog(shipped=[], extra=[path])
    except CatalogError as exc:
        assert exc.problems


def test_every_shipped_file_parses_as_plain_yaml():
    # Shipped files stay readable by any YAML tool (yaml.safe_load, never a custom loader).
    for path in shipped_catalog_dir().glob("*.yaml"):
        assert isinstance(yaml.safe_load(path.read_text(encoding="utf-8")), dict), path


# ---- command line -----------------------------------------------------------------------------

def test_catalog_command_lists_units_and_sources():
    result = CliRunner().invoke(cli, ["catalog", "relay-pcb-12v"])
    assert result.exit_code == 0, result.output
    assert result.output.startswith("relay-pcb-12v  [relay]  PCB power relay, 12 V DC coil")
    assert re.search(r"coil_resistance\s+400 ohm\s+relay manufacturers' datasheets", result.output)
    assert re.search(r"cost\s+0\.9 EUR\s+indicative", result.output)
    electrolytic = CliRunner().invoke(cli, ["catalog", "electrolytic"]).output
    assert re.search(r"leakage_typical_frac\s+0\.1 \(dimensionless\)\s+from memory", electrolytic)
    assert "relay" not in electrolytic


def test_catalog_command_merges_user_file_and_rejects_unknown_query(tmp_path):
    user = write(tmp_path, GOOD)
    result = CliRunner().invoke(cli, ["catalog", "my-res", "--catalog", str(user)])
    assert result.exit_code == 0 and f"({user}:2)" in result.output
    missing = CliRunner().invoke(cli, ["catalog", "capacitr"])
    assert missing.exit_code == 2
    assert "Error: catalog: query: nothing matches 'capacitr'; did you mean 'capacitor'?" in missing.stderr


def test_every_module_or_function_a_catalog_names_exists():
    """Catalog comments point readers at the code that uses a figure (`tradeoff.devices.capacitor.…`); a name
    that no longer exists sends them nowhere (one named a `tradeoff.physics` module that had been split up)."""
    import importlib

    named = set()
    for path in (ROOT / "catalogs").glob("*.yaml"):
        named |= set(re.findall(r"\btradeoff(?:\.[A-Za-z_][A-Za-z0-9_]*)+", path.read_text(encoding="utf-8")))
    assert named, "the catalogs name no code"
    missing = []
    for name in sorted(named):
        module, _, attribute = name.rpartition(".")
        try:
            importlib.import_module(name)
        except ImportError:
            try:
                getattr(importlib.import_module(module), attribute)
            except (ImportError, AttributeError):
                missing.append(name)
    assert missing == []
