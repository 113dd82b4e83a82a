"""The study's terminal report: golden output at 80, 100 and 160 columns, no line wider than the
page, every topology considered in one comparison table, plain labels, counts only with --verbose.

Regenerate the golden files after an intended change of the report or the models with
`TRADEOFF_UPDATE_GOLDEN=1 python -m pytest tests/test_report_text.py` and read the diff. The golden
study compares a fixed list of topologies (GOLDEN_TOPOLOGIES), so adding a topology leaves the files as
they are.
"""
from __future__ import annotations

import functools
import io
import math
import os
import re
from pathlib import Path

import pytest
from click.testing import CliRunner
from rich.console import Console

import tradeoff
from tradeoff.cli import cli
from tradeoff.plain import plain_label
from tradeoff.report.labels import margin_frac, margin_text, short_reason, span_in, split_reason, time_unit
from tradeoff.report.study_text import comparison_rows, render_study

from conftest import example_study

ROOT = Path(__file__).resolve().parent.parent
GOLDEN = Path(__file__).parent / "golden"
EXAMPLES = sorted((ROOT / "examples").glob("*.yaml"))
GOLDEN_TOPOLOGIES = ("mcu", "rc-comparator", "timer555", "rc-counter", "crystal-counter", "rc-darlington",
                     "rc-mosfet", "rc-schmitt")
"""The topologies of the golden study, in catalog order: a new topology joins only when the files are regenerated."""


def _study(path: Path):
    return example_study(path)


def _text(result, width: int, verbose: bool = False) -> str:
    buffer = io.StringIO()
    render_study(result, Console(file=buffer, width=width, color_system=None, force_terminal=False), verbose=verbose)
    return buffer.getvalue()


@functools.cache
def _golden_study():
    return tradeoff.study(ROOT / "examples" / "towel_rail_boost.yaml", only=GOLDEN_TOPOLOGIES)


def test_the_golden_study_ignores_a_topology_added_to_the_registry(tmp_path):
    from tradeoff.brief import load_brief
    from tradeoff.catalog import load_catalog
    from tradeoff.trade_study import resolve_topologies

    extra = tmp_path / "extra.yaml"
    extra.write_text("parts:\n  - id: rc-later\n    category: topology\n    description: a ninth architecture\n"
                     "    module: tradeoff.topologies.rc_mosfet\n", encoding="utf-8")
    brief, catalog = load_brief(ROOT / "examples" / "towel_rail_boost.yaml"), load_catalog(extra=(extra,))
    assert "rc-later" in resolve_topologies(brief, catalog)  # the brief asks for all of them
    assert resolve_topologies(brief, catalog, GOLDEN_TOPOLOGIES) == list(GOLDEN_TOPOLOGIES)


@pytest.mark.parametrize("width", [80, 100, 160])
def test_golden_report_at_width(width):
    """The towel-rail report (mains cautions included) equals its golden file at each width."""
    text = _text(_golden_study(), width)
    golden = GOLDEN / f"towel_rail_boost_{width}.txt"
    if os.environ.get("TRADEOFF_UPDATE_GOLDEN"):
        golden.write_text(text, encoding="utf-8")
    assert text == golden.read_text(encoding="utf-8")
    assert max(len(line) for line in text.splitlines()) <= width


# A line that ends in a bare number whose unit or counted word opens the next line: "(9" / "parts)".
_SPLIT_FIGURE = re.compile(r"(?<![\w.])\d[\d.,]*\n\s*(?:of \d|(?:[kMµnpm]?(?:Ω|F|V|A|W|s)|h|min|°C|%|EUR|"
                           r"parts?|samples|stages?|rails?)(?![\w]))")


@pytest.mark.parametrize("brief", EXAMPLES, ids=lambda p: p.stem)
@pytest.mark.parametrize("width", [40, 72, 80])
def test_no_number_is_parted_from_its_unit_by_a_line_break(brief, width):
    """Wrapped prose keeps '9 parts', '2.3 h', '5 °C' and '0.7 of 1' on one line (tables excepted: their
    columns have unit headers), and wrapping loses no word."""
    text = _text(_study(brief), width, verbose=True)
    assert not _SPLIT_FIGURE.findall(text)


def test_wrap_lines_keeps_every_word_and_the_width():
    """The no-break glue is only a wrapping aid: the words come back unchanged and no line is wider than asked."""
    from tradeoff.report.terminal import wrap_lines
    text = ("loses on highest cost per unit (6.08 EUR), most engineering effort (0.7 of 1), 17 parts, "
            "at 5 °C, 11 V against the band maximum 2.3 h (44.9 % of the band to spare)")
    for width in range(24, 90, 7):
        lines = wrap_lines(text, width, "  - ", "    ")
        assert " ".join(" ".join(lines).split()[1:]) == text
        assert max(map(len, lines)) <= width
        assert all(not re.search(r"\d$", line) for line in lines[:-1])


@pytest.mark.parametrize("brief", EXAMPLES, ids=lambda p: p.stem)
@pytest.mark.parametrize("width", [72, 80, 100, 160])
def test_no_line_wider_than_the_page(brief, width):
    for verbose in (False, True):
        lines = _text(_study(brief), width, verbose).splitlines()
        too_wide = [line for line in lines if len(line) > width]
        assert not too_wide, too_wide[:3]


@pytest.mark.parametrize("brief", EXAMPLES, ids=lambda p: p.stem)
def test_one_table_with_every_topology_considered(brief):
    result = _study(brief)
    rows = comparison_rows(result)
    assert [r.design for r in rows if r.feasible] == [name for name, _, _ in result.designs()]
    assert [r.design for r in rows if not r.feasible] == [o.topology for o in result.infeasible()]
    assert {o.topology for o in result.outcomes} <= {r.design.split(" #")[0] for r in rows}
    for row, (name, ev, _) in zip(rows, result.designs()):
        assert row.rank == str(int(result.ranking.table.loc[name, "rank"]))
        assert row.score == f"{float(result.ranking.table.loc[name, 'score']):.3f}"
    for row in rows:  # every entry is a value with its unit or a name with its value: no empty option
        assert row.values and all(" " in piece for piece in row.values.split(", ")), row.values


@pytest.mark.parametrize("brief", EXAMPLES, ids=lambda p: p.stem)
def test_plain_labels_only(brief):
    text = _text(_study(brief), 100, verbose=True)
    for internal in ("ambient_c", "supply_v", "leak_level", "rc_trim_position", "_part ", "r_timing ", "c_hold "):
        assert internal not in text


_EXPONENT = re.compile(r"\d(?:\.\d+)?[eE][-+]?\d")
"""A number written with an exponent ('4.34e-17 %', '1.29e-25 fs', '8.19e+03'): outside the display range."""


@pytest.mark.parametrize("brief", EXAMPLES, ids=lambda p: p.stem)
def test_no_figure_has_an_exponent(brief):
    """Every figure of every example's report is written out ('< 0.01 %', '0 s', '8190'), never in e-notation."""
    text = _text(_study(brief), 160, verbose=True)
    assert _EXPONENT.findall(text) == [], [line for line in text.splitlines() if _EXPONENT.search(line)][:3]


def test_counts_per_rule_only_when_verbose():
    result = _study(ROOT / "examples" / "towel_rail_boost.yaml")
    rules = [rule for o in result.infeasible() for r in o.reasons for rule in split_reason(r).rules]
    assert rules, "the towel-rail brief has topologies whose own rules removed candidates"
    plain, verbose = _text(result, 100), _text(result, 100, verbose=True)
    big = max(rules, key=lambda r: r.count)
    assert f"- {big.count}: " in " ".join(verbose.split()).replace("\n", " ")
    assert f"- {big.count}: " not in plain


def test_cli_width_option_and_default_page_width():
    runner = CliRunner()
    brief = str(ROOT / "examples" / "towel_rail_boost.yaml")
    narrow = runner.invoke(cli, ["study", brief, "--width", "80"])
    assert narrow.exit_code == 0, narrow.output
    assert max(len(line) for line in narrow.output.splitlines()) <= 80
    default = runner.invoke(cli, ["study", brief])  # not a terminal: 100 columns
    assert max(len(line) for line in default.output.splitlines()) <= 100
    assert "Every topology considered" in default.output
    refused = runner.invoke(cli, ["study", brief, "--width", "20"])
    assert refused.exit_code == 2 and "--width" in refused.output


def test_margin_is_distance_from_each_band_edge():
    """Hand example: band 1.7 h to 2.3 h (0.6 h wide), worst case 1.97 h to 2.03 h: 0.27 h from
    either edge, 45 % of the band; 2.28 h at the top is 0.02 h / 0.6 h = 3.3 %; outside is negative."""
    band = (1.7 * 3600, 2.3 * 3600)
    assert margin_frac(1.97 * 3600, 2.03 * 3600, band) == pytest.approx((0.45, 0.45))
    assert margin_frac(1.84 * 3600, 2.28 * 3600, band) == pytest.approx((0.14 / 0.6, 0.02 / 0.6))
    assert margin_frac(1.6 * 3600, 2.0 * 3600, band) == pytest.approx((-0.1 / 0.6, 0.3 / 0.6))
    assert margin_text(1.84 * 3600, 2.28 * 3600, band) == "23 / 3.3"
    assert margin_text(1.84 * 3600, math.inf, band) == "23 / never"


def test_delays_in_the_briefs_unit():
    hours, minutes = time_unit(2 * 3600), time_unit(10 * 60)
    assert hours == ("h", 3600.0) and minutes == ("min", 60.0) and time_unit(5.0) == ("s", 1.0)
    assert span_in(1.84 * 3600, 2.28 * 3600, hours) == "1.84–2.28 h"
    assert span_in(600.0, 600.06, minutes) == "10–10.001 min"  # digits added until the ends differ


def test_plain_label_words():
    assert [plain_label(n) for n in ("ambient_c", "supply_v", "leak_level", "rc_trim_position", "r_timing_part",
                                     "coil_ohm", "release_frac", "c_timing_tempco", "c_timing_leakage", "hfe_q1",
                                     "vbe_q2", "r_q1_collector", "r_divider_top", "crystal_turnover_c")] == [
        "ambient", "supply", "leakage level", "RC trim position", "timing resistor part class", "coil resistance",
        "relay release point", "timing capacitor tempco", "timing capacitor leakage", "hFE of Q1", "VBE of Q2",
        "Q1 collector resistor", "divider top resistor", "crystal turnover"]


_INTERNAL_NAME = re.compile(r"\b[a-z]+_[a-z0-9_]+\b")
"""A name with an underscore (`ambient_c`, `hfe_q1`, `r_hold_part`): the model's key, not a reader's word."""


@pytest.mark.parametrize("design", sorted((ROOT / "examples" / "designs").glob("*.yaml")), ids=lambda p: p.stem)
def test_analyze_report_speaks_plainly(design):
    """`tradeoff analyze` names values, part classes, options and corner quantities in plain words."""
    out = CliRunner().invoke(cli, ["analyze", str(design), "--samples", "200"], env={"COLUMNS": "100"}).output
    head = out.split("Bill of materials")[0]
    assert "values: " in head and "worst-case minimum" in head
    assert _INTERNAL_NAME.findall(head) == []
    assert not re.search(r"µ1/K|fraction of|dimensionless", head)  # tempcos in ppm/K, thresholds in % of VDD
    assert _EXPONENT.findall(out) == []  # no '1.29e-25 fs' anywhere in the report


def test_short_reasons_of_the_optimiser_sentences():
    assert short_reason(["even the longest-delay candidates time out too early: the worst-case shortest delay "
                         "reaches at most 6.97 min; the band's minimum is 1.7 h"]) == "too short: worst case at most 6.97 min"
    assert short_reason(["the fewest parts reachable is 23; the limit is 20"]) == "needs 23 parts, limit 20"
    tally = ("hold: the topology's own rules removed 30 candidates (10: worst-case longest hold above the band's "
             "maximum 2.3 h; 20: cap-x: leakage too high (limit (datasheet)))")
    assert short_reason(["no candidate is left for hold", tally]) == "no hold candidate left; most removed by: leakage too high"
    parts = split_reason(tally)
    assert [(r.count, r.rule) for r in parts.rules] == [
        (10, "worst-case longest hold above the band's maximum 2.3 h"), (20, "cap-x: leakage too high (limit (datasheet))")]
