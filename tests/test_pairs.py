"""Pairs of two standard parts for one value: series and parallel resistors, parallel capacitors, series film
capacitors (tradeoff.candidates, devices.capacitor.pair_leakage_limit_a, the brief's `series.pairs`, BOM lines).

Leakage checks are hand calculations from the published rules: the aluminium electrolytic datasheets' limit
I <= 0.01·C·V or 3 uA whichever is greater (IEC 60384-4 sectional specification), the film datasheets'
insulation rule R_ins >= R_min or R_ins·C >= tau (IEC 60384-2), and the series/parallel combination of
resistances and capacitances (any circuits textbook). Standard values come from the independent `eseries`
package (IEC 60063).
"""
from __future__ import annotations

from pathlib import Path

import eseries as oracle  # independent IEC 60063 implementation, test-only
import numpy as np
import pytest

from tradeoff import candidates
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.devices.capacitor import pair_leakage_limit_a
from tradeoff.errors import BriefError
from tradeoff.topologies.base import Design, Pair, Role
from tradeoff.topologies.ic_common import value_lines

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


@pytest.fixture(scope="module")
def towel():
    return load_brief(EXAMPLES / "towel_rail_boost.yaml")


def _oracle(name: str, lo: float, hi: float) -> list[float]:
    return [v for v in oracle.erange(getattr(oracle, name), lo * 0.999, hi * 1.001)
            if lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9)]


# ---- leakage of a pair: hand calculations ---------------------------------------------------


def test_parallel_electrolytics_add_each_parts_limit_the_floor_counting_per_part(catalog):
    part = catalog.part("cap-electrolytic-85c")   # 0.01 A/(F·V), floor 3 uA (datasheet rule, IEC 60384-4)
    # 100 uF at 25 V: 0.01 · 100 · 25 = 25 uA; 4.7 uF: 1.175 uA, below the floor, so 3 uA; sum 28 uA
    assert float(pair_leakage_limit_a(part, 100e-6, 4.7e-6, 25.0)) == pytest.approx(28e-6, rel=1e-12)
    # two 4.7 uF parts: each on the floor, 6 uA, twice the 3 uA one 9.4 uF part is allowed
    assert float(pair_leakage_limit_a(part, 4.7e-6, 4.7e-6, 25.0)) == pytest.approx(6e-6, rel=1e-12)
    assert float(pair_leakage_limit_a(part, 9.4e-6, 0.0, 25.0)) == pytest.approx(3e-6, rel=1e-12)
    # both above the floor: 0.01·(100 + 47)·25 = 36.75 uA, the same as one 147 uF part
    assert float(pair_leakage_limit_a(part, 100e-6, 47e-6, 25.0)) == pytest.approx(36.75e-6, rel=1e-12)


def test_film_pairs_follow_the_insulation_rule_per_part(catalog):
    part = catalog.part("cap-film-pet-5pct")   # R_min 15 Gohm, tau 5000 s (film datasheets, IEC 60384-2)
    # parallel 1 uF (5000/1e-6 = 5 Gohm) and 0.1 uF (min(15, 50) = 15 Gohm) at 63 V: 12.6 nA + 4.2 nA
    assert float(pair_leakage_limit_a(part, 1e-6, 0.1e-6, 63.0)) == pytest.approx(16.8e-9, rel=1e-12)
    # series 1 uF and 2.2 uF: 5 Gohm + 2.2727 Gohm in series carry 63 V / 7.2727 Gohm = 8.6625 nA, which is the
    # time-constant law at the series value 0.6875 uF (5000 s / 0.6875 uF = 7.2727 Gohm)
    series = float(pair_leakage_limit_a(part, 2.2e-6, 1e-6, 63.0, "series"))
    assert series == pytest.approx(63.0 / (5e9 + 5000 / 2.2e-6), rel=1e-12)
    assert series == pytest.approx(float(pair_leakage_limit_a(part, 2.2e-6 / 3.2, 0.0, 63.0)), rel=1e-12)
    # two 0.1 uF on the fixed minimum in series: 30 Gohm, less leakage than the single law at 50 nF (15 Gohm)
    assert float(pair_leakage_limit_a(part, 0.1e-6, 0.1e-6, 63.0, "series")) == pytest.approx(63 / 30e9, rel=1e-12)


# ---- candidate tables -----------------------------------------------------------------------


@pytest.mark.parametrize("role, series_key, series", [
    (Role("c", "capacitor", "test electrolytic", ("electrolytic",), lo=1e-6, hi=4.7e-3), "series.electrolytic", "E6"),
    (Role("c", "capacitor", "test film", ("film",), lo=10e-9, hi=10e-6), "series.film", "E12"),
    (Role("r", "resistor", "test resistor", lo=100e3, hi=1e6), "series.resistor", "E12"),
])
def test_pairs_combine_standard_values_one_per_total_and_never_a_singles_value(role, series_key, series, towel,
                                                                                catalog):
    table = candidates.role_candidates(role, towel.replace({series_key: series, "series.pairs": True}), catalog)
    for part_id, rows in table.groupby("part"):
        part = catalog.part(part_id)
        unit = "ohm" if role.kind == "resistor" else "F"
        made = (max(role.lo, part.value("min_value", unit)), min(role.hi, part.value("max_value", unit)))
        singles = {round(v, 18) for v in np.round(_oracle(series, *made), 18)}
        standard = set(np.round(_oracle(series, made[0] / 10, made[1] * 10), 18))
        pairs = rows[rows["second"] > 0]
        assert len(pairs), part_id
        assert rows["value"].is_unique   # one realisation per value and class
        assert not set(np.round(pairs["value"], 18)) & singles   # a single part of the class beats a pair
        assert set(np.round(pairs["first"], 18)) | set(np.round(pairs["second"], 18)) <= standard
        a, b = pairs["first"].to_numpy(), pairs["second"].to_numpy()
        adds = (pairs["pairing"] == "series") == (role.kind == "resistor")
        # series resistance / parallel capacitance add; parallel resistance / series capacitance: a·b/(a + b)
        assert np.allclose(np.where(adds, a + b, a * b / (a + b)), pairs["value"], rtol=1e-11)
        assert (a >= b).all() and (pairs["placements"] == 2).all() and np.allclose(pairs["cost"], 2 * part.cost)
        assert (rows["tolerance"] == part.value("tolerance", "")).all()
        # but series resistors, pairs fill only gaps between adjacent standard values wider than the class's
        # tolerance band (1 + t)², one total per gap and pairing (IEC 60063 spaces E12 for 10 %, E24 for 5 %)
        edges = np.unique(np.concatenate([[made[0]], _oracle(series, *made), [made[1]]]))
        for pairing in {"series", "parallel"} - ({"series"} if role.kind == "resistor" else set()):
            gap = np.searchsorted(edges, pairs.loc[pairs["pairing"] == pairing, "value"].to_numpy()) - 1
            assert len(set(gap)) == len(gap)
            assert (edges[gap + 1] > edges[gap] * (1 + part.value("tolerance", "")) ** 2).all()
        if role.kind == "capacitor":
            dielectric = part.fields["dielectric"]
            assert set(pairs["pairing"]) <= ({"parallel", "series"} if dielectric == "film" else {"parallel"})
            # the pair leaks as one part of its total (the topologies evaluate leakage at the total)
            rated = rows["rated_v"].iat[0]
            pair = pair_leakage_limit_a(part, a, b, rated, "parallel")
            single = pair_leakage_limit_a(part, pairs["value"].to_numpy(), 0.0, rated)
            parallel = (pairs["pairing"] == "parallel").to_numpy()
            assert np.allclose(pair[parallel], single[parallel], rtol=1e-9)
            if dielectric == "electrolytic":   # 0.01·C·V of each part at least the 3 uA floor
                assert (part.value("leakage_k", "A/(F*V)") * b * rated >= part.value("leakage_floor", "A") * (1 - 1e-9)).all()
        else:
            assert set(pairs["pairing"]) == {"series", "parallel"}


def test_a_pairs_limits_are_the_class_fraction_in_either_pairing():
    # both parts at +tol (or -tol) move the total by the same fraction: (a+b)(1+t) and ab(1+t)^2/((a+b)(1+t))
    a, b, t = 4.7e-6, 2.2e-6, 0.05
    for adds in (True, False):
        total = candidates.pair_total(a, b, adds)
        for sign in (1, -1):
            moved = candidates.pair_total(a * (1 + sign * t), b * (1 + sign * t), adds)
            assert float(moved) == pytest.approx(float(total) * (1 + sign * t), rel=1e-10)


def test_pairs_list_selects_the_pairings(towel, catalog):
    role = Role("r", "resistor", "test resistor", lo=100e3, hi=1e6)
    only_parallel = candidates.role_candidates(role, towel.replace({"series.pairs": ["parallel"]}), catalog)
    assert set(only_parallel["pairing"]) == {"", "parallel"}
    none = candidates.role_candidates(role, towel.replace({"series.pairs": False}), catalog)
    assert set(none["pairing"]) == {""} and (none["second"] == 0).all()


# ---- brief syntax ---------------------------------------------------------------------------


@pytest.mark.parametrize("given, expected", [(True, ("series", "parallel")), (False, ()),
                                             (["parallel", "series"], ("series", "parallel")),
                                             (["series"], ("series",))])
def test_brief_pairs_accepts_true_false_or_a_list(given, expected, towel):
    assert towel.replace({"series.pairs": given}).series.pairs == expected


@pytest.mark.parametrize("given, says", [(["paralel"], "did you mean 'parallel'"), ([], "accepted: true, false"),
                                         ("yes", "accepted: true, false or a list of series, parallel"),
                                         (["series", "series"], "listed twice")])
def test_brief_pairs_errors_name_the_key_and_what_is_accepted(given, says, towel):
    with pytest.raises(BriefError) as caught:
        towel.replace({"series.pairs": given})
    assert "series.pairs" in str(caught.value) and says in str(caught.value)


def test_brief_pairs_error_points_at_its_line(tmp_path):
    text = (EXAMPLES / "glue_pot_warmer.yaml").read_text()
    assert "  pairs: false" in text
    path = tmp_path / "brief.yaml"
    path.write_text(text.replace("  pairs: false", "  pairs: [serial]"))
    line = 1 + text.splitlines().index(next(l for l in text.splitlines() if l.startswith("  pairs: false")))
    with pytest.raises(BriefError) as caught:
        load_brief(path)
    assert f"brief.yaml:{line}:" in str(caught.value) and "got 'serial' in the list" in str(caught.value)


# ---- BOM and JSON ---------------------------------------------------------------------------


def test_bom_lists_both_parts_of_a_pair_with_its_pairing(catalog):
    part = catalog.part("cap-electrolytic-85c")
    design = Design("rc-mosfet", {"c_hold": 147e-6}, pairs={"c_hold": Pair(100e-6, 47e-6, "parallel")})
    lines = value_lines(design, "c_hold", "C1", part, "hold capacitor", 25.0)
    assert [(l.refs, l.value, l.quantity, l.note) for l in lines] == [
        ("C1a", "100 µF 25 V", 1, "hold capacitor (parallel pair)"),
        ("C1b", "47 µF 25 V", 1, "hold capacitor (parallel pair)")]
    assert {l.role for l in lines} == {"c_hold"}  # the optimiser's fixed cost leaves out a role's lines by this
    equal = Design("rc-mosfet", {"c_hold": 200e-6}, pairs={"c_hold": Pair(100e-6, 100e-6, "parallel")})
    (line,) = value_lines(equal, "c_hold", "C1", part, "hold capacitor", 25.0)
    assert (line.refs, line.quantity, line.cost) == ("C1a, C1b", 2, pytest.approx(2 * part.cost))
    single = value_lines(Design("rc-mosfet", {"c_hold": 220e-6}), "c_hold", "C1", part, "hold capacitor", 25.0)
    assert [(l.refs, l.value, l.quantity) for l in single] == [("C1", "220 µF 25 V", 1)]
    assert design.pairs_dict() == {"c_hold": {"first": 100e-6, "second": 47e-6, "pairing": "parallel"}}


# ---- a study that picks pairs ---------------------------------------------------------------


def test_a_centred_mosfet_hold_takes_pairs_into_its_design_bom_and_json(catalog):
    # with only accuracy weighted the nominal nearest the band's centre wins, which the E3 singles miss
    from tradeoff.optimise import SelectionProblem
    from tradeoff.topologies.registry import build_topology

    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace({
        "series.resistor": "E3", "series.electrolytic": "E3", "series.film": "E3", "series.ceramic": "E3",
        "start": "button", "delay.nominal": "35 s", "delay.min": "10 s", "delay.max": "60 s", "series.pairs": True,
        **{f"weights.{w}": 0 for w in ("parts", "cost", "effort", "standby", "rails")}})
    topo = build_topology("rc-mosfet", brief, catalog)
    result = SelectionProblem(topo.selection(), (brief.delay.min_s, brief.delay.max_s), brief.limits,
                              brief.weights).solve()
    design = result.design
    assert set(design.pairs) == {"r_hold", "c_hold"}
    for role, pair in design.pairs.items():   # the role's value is the pair's combination
        adds = (pair.pairing == "series") == role.startswith("r_")
        assert design.values[role] == pytest.approx(
            pair.first + pair.second if adds else pair.first * pair.second / (pair.first + pair.second), rel=1e-11)
    bom = topo.bom(design)
    hold = [line for line in bom if line.refs.startswith(("R1", "C1"))]
    assert sum(line.quantity for line in hold) == 4 and all("pair)" in line.note for line in hold)
    assert [line for line in bom if line.role] == hold  # the lines the blocks choose, found by role
    evaluation = topo.evaluate(design, samples=200)
    assert evaluation.to_dict()["pairs"] == design.pairs_dict()
    # the placements the program counted are the parts the BOM lists
    assert result.totals["placements"] == sum(line.quantity for line in bom)
    assert result.totals["cost"] == pytest.approx(evaluation.cost)  # fixed parts + the chosen rows = the BOM


# ---- design files -----------------------------------------------------------------------------


def _design_file(tmp_path, pairs_line: str, values: str = "{r_hold: 4.7 Mohm, c_hold: 1 mF}") -> Path:
    text = (f"brief: {EXAMPLES / 'towel_rail_boost.yaml'}\ntopology: rc-mosfet\nvalues: {values}\n"
            "options: {mosfet: mosfet-n-logic-small, r_hold_part: res-metal-film-1pct, "
            "c_hold_part: cap-electrolytic-low-leakage}\n" + pairs_line + "\n")
    path = tmp_path / "design.yaml"
    path.write_text(text)
    return path


def test_design_file_reads_pairs_and_a_plain_list_as_series_resistors(tmp_path, catalog):
    from tradeoff.design import load_design

    path = _design_file(tmp_path, "pairs: {r_hold: [2.7 Mohm, 2 Mohm], c_hold: {parallel: [680 uF, 320 uF]}}")
    _, topo, design = load_design(path)
    # 2.7 + 2 = 4.7 Mohm in series; 680 + 320 = 1000 uF in parallel
    assert design.pairs["r_hold"] == (pytest.approx(2.7e6), pytest.approx(2e6), "series")
    assert design.pairs["c_hold"] == (pytest.approx(680e-6), pytest.approx(320e-6), "parallel")
    assert [line.refs for line in topo.bom(design)][:4] == ["R1a", "R1b", "C1a", "C1b"]


@pytest.mark.parametrize("pairs_line, says", [
    ("pairs: {c_hold: [680 uF, 320 uF]}", "accepted: {series: [A, B]} or {parallel: [A, B]}, two quantities in F"),
    ("pairs: {r_hold: {parallel: [2.7 Mohm, 2 Mohm]}}", "the parallel pair makes 1.15 MΩ, but values.r_hold is 4.7 MΩ"),
    ("pairs: {r_hold: {sideways: [2.7 Mohm, 2 Mohm]}}", "got the pairing 'sideways'"),
    ("pairs: {r_hold: [2.7 Mohm]}", "got ['2.7 Mohm']"),
    ("pairs: {r_bleed: [2.7 Mohm, 2 Mohm]}", "r_bleed"),
])
def test_design_file_pair_errors_are_located(pairs_line, says, tmp_path):
    from tradeoff.design import load_design
    from tradeoff.errors import DesignError

    with pytest.raises(DesignError) as caught:
        load_design(_design_file(tmp_path, pairs_line))
    text = str(caught.value)
    assert "design.yaml:5:" in text and says in text, text
