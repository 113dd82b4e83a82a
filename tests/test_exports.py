"""Study exports: the workbook read back with pandas against the JSON, CSV against the workbook,
plots as valid PNG/SVG with units on every axis, netlists checked by ngspice (the independent
reference), the mains cautions in every format (and in none for a low-voltage brief), and safe
writing (atomic, no overwrite without --force, a failure leaves earlier files intact)."""
from __future__ import annotations

import io
import itertools
import math
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest
from click.testing import CliRunner
from spice_measures import measures

from tradeoff.analysis import MonteCarlo
from tradeoff.brief import load_brief
from tradeoff.cautions import CAUTIONS, needs_cautions
from tradeoff.cli import cli
from tradeoff.errors import OutputError
from tradeoff.report import files, plots, style
from tradeoff.report.plots import HISTOGRAM_BINS, study_figures, time_scale
from tradeoff.report.review import REVIEW_LAYOUT, export, json_text, report_text
from tradeoff.report.labels import time_unit
from tradeoff.report.tables import NEVER_ENDS, TABLES, design_stem, monte_carlo_table, study_tables
from tradeoff.report.workbook import DECISION_SHEET, display_tables
from tradeoff.trade_study import study
from tradeoff.topologies.registry import topology_ids

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "examples"
SAMPLES = 2000
OSCILLATOR_BASED = ("rc-counter", "crystal-counter", "mcu")
"""Designs timed by an oscillator: issue 5 asks 2 % agreement with ngspice; RC holds 5 %."""

CAUTION_IDEAS = (
    ("shock", "fire", "licensed"),
    ("thermal cut-out", "bypass"),
    ("relay contacts", "margin", "inrush"),
    ("creepage", "clearance", "product standard"),
    ("not a certified protective control", "software", "safety function"),
    ("local", "codes"),
)
"""The key idea of each caution (issue 5 item 6 and RULES.md), in the order of cautions.CAUTIONS."""


@pytest.fixture(scope="module")
def mains():
    """Bathroom fan run-on (230 V fan, mains): an oscillator counter and a microcontroller meet it,
    the 555 monostable does not."""
    return study(EXAMPLES / "fan_run_on.yaml", samples=SAMPLES, only=["rc-counter", "mcu", "timer555"])


@pytest.fixture(scope="module")
def holds():
    """Bathroom fan run-on shortened to 1 to 4 min (mains fan): three RC-timed designs meet it."""
    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace(
        {"delay.nominal": "2 min", "delay.min": "1 min", "delay.max": "4 min", "limits.standby_after": "10 mA"})
    return study(brief, samples=SAMPLES, only=["rc-mosfet", "timer555", "rc-comparator"])


@pytest.fixture(scope="module")
def low_voltage():
    """Seed-propagator heat mat: a 12 V DC load, no mains anywhere."""
    return study(EXAMPLES / "propagator_mat.yaml", samples=SAMPLES, only=["mcu", "rc-mosfet", "timer555"])


@pytest.fixture(scope="module")
def mains_files(mains, tmp_path_factory):
    """The mains study's review set, written once."""
    folder = tmp_path_factory.mktemp("review") / "fan"
    done = export(mains, review=folder)
    return folder, done


def _read_workbook(path: Path) -> dict[str, pd.DataFrame]:
    return pd.read_excel(path, sheet_name=None)


def _same(stored: float, value: float) -> bool:
    """Equal to the JSON's float as far as the workbook keeps it: openpyxl writes 16 significant
    digits ("%.16g", openpyxl.compat.strings.safe_string)."""
    return stored == pytest.approx(value, rel=1e-15, abs=0.0)


# ---- workbook ------------------------------------------------------------------------------------
def test_workbook_has_every_sheet_frozen_sized_and_numbers_as_numbers(mains, mains_files):
    folder, _ = mains_files
    path = folder / REVIEW_LAYOUT["workbook"]
    sheets = _read_workbook(path)
    assert list(sheets) == [DECISION_SHEET, *TABLES]
    book = openpyxl.load_workbook(path)
    for name in TABLES:
        ws = book[name]
        assert ws.freeze_panes == "A2", name
        widths = [ws.column_dimensions[c.column_letter].width for c in ws[1]]
        header_lengths = [len(str(c.value)) for c in ws[1]]
        assert all(w >= min(h, 60) for w, h in zip(widths, header_lengths)), name
        for row in ws.iter_rows(min_row=2):
            for cell in row:
                if isinstance(cell.value, float):
                    assert math.isfinite(cell.value), (name, cell.coordinate)
                if isinstance(cell.value, str) and (name, ws.cell(1, cell.column).value) != ("brief", "text"):
                    # no number hiding as text (the brief's `text` column is the display text by design)
                    assert not re.fullmatch(r"[-+]?\d+(\.\d*)?([eE][-+]?\d+)?", cell.value), (name, cell.coordinate)
    ranking = sheets["ranking"]
    unit = time_unit(mains.brief.delay.nominal_s)[0]  # the brief's own time unit
    for column in (f"delay nominal [{unit}]", "standby after [µA]", "cost per unit [EUR]", "yield [%]", "score [0 to 1]"):
        assert pd.api.types.is_numeric_dtype(ranking[column]), column
    for name, frame in ((n, f) for n, f in sheets.items() if n != DECISION_SHEET):
        for column in frame.columns:
            if "[" in column and frame[column].notna().any():  # a unit in the header: a number column
                assert pd.api.types.is_numeric_dtype(frame[column]), (name, column)
    corners = sheets["corners"]
    assert "key" not in corners and not corners["quantity"].str.contains("_").any()  # plain names for a reader
    delay = corners[corners["quantity"] == "delay"]
    assert set(delay["unit"]) == {unit} and (delay["nominal"] < 24).all()  # hours, not seconds
    assert not corners["unit"].isin(["ohm", "degC", "1/K", "dimensionless"]).any()


def test_si_tables_equal_the_json(mains, mains_files):
    """The CSV tables (SI units, for scripts) hold the JSON's numbers; the workbook holds the same
    in display units (test_csv_files_equal_the_workbook_tables)."""
    folder, _ = mains_files
    sheets = {name: pd.read_csv(folder / REVIEW_LAYOUT["csv"] / f"{name}.csv") for name in TABLES}
    data = mains.to_dict()
    ranking = sheets["ranking"].set_index("design")
    assert list(ranking.index) == [d["name"] for d in data["designs"]] and len(ranking) == 2
    mc = sheets["monte_carlo"].set_index("design")
    for d in data["designs"]:
        row, delay = ranking.loc[d["name"]], d["delay"]
        assert row["rank"] == d["rank"] and row["topology"] == d["topology"] and row["values"] == d["values_text"]
        assert _same(row["delay nominal [s]"], delay["nominal_s"])
        assert _same(row["delay worst min [s]"], delay["worst_min_s"]) and _same(row["delay worst max [s]"], delay["worst_max_s"])
        assert row["yield [%]"] == pytest.approx(100 * delay["yield_frac"], rel=1e-12)
        assert _same(row["standby after [A]"], d["standby"]["after_a"]) and _same(row["cost per unit [EUR]"], d["production"]["per_unit_eur"])
        assert row["parts [count]"] == d["parts"]["placements"] and _same(row["score [0 to 1]"], d["score"])
        assert bool(row["Pareto front"]) == d["pareto"] and row["reason"] == d["reasons"][0]
        m = mc.loc[d["name"]]
        for key, value in delay["percentiles"].items():  # p0_5_s -> "delay p0.5 [s]"
            assert _same(m[f"delay {key[:-2].replace('_', '.')} [s]"], value)
        assert _same(m["delay mean [s]"], delay["mean_s"]) and _same(m["delay std [s]"], delay["std_s"])
        assert m["samples [count]"] == delay["samples"] == SAMPLES and m["seed"] == delay["seed"]
        assert m["yield 95 % low [%]"] == pytest.approx(100 * delay["yield_ci95_frac"][0], rel=1e-12)
        assert m["yield 95 % high [%]"] == pytest.approx(100 * delay["yield_ci95_frac"][1], rel=1e-12)
        assert m["coverage [%]"] == pytest.approx(100 * delay["coverage"])
        bom = sheets["bom"][sheets["bom"]["design"] == d["name"]]
        assert list(bom["line cost [EUR]"]) == pytest.approx([b["cost_eur"] for b in d["bom"]], rel=1e-12)
        assert list(bom["refs"]) == [b["refs"] for b in d["bom"]]
        corners = sheets["corners"][sheets["corners"]["design"] == d["name"]].set_index("key")  # model keys, SI
        assert _same(corners.loc["delay", "at shortest delay"], delay["worst_min_s"])
        for q, value in delay["worst_min_corner"].items():
            assert _same(corners.loc[q, "at shortest delay"], value)
        for q, value in delay["worst_max_corner"].items():
            assert _same(corners.loc[q, "at longest delay"], value)
        assert corners["unit"].notna().all()
    infeasible = sheets["infeasible"]
    assert list(infeasible["reason"]) == [r for o in data["infeasible"] for r in o["reasons"]]
    assert set(infeasible["topology"]) == {"timer555"}
    brief = sheets["brief"].set_index("key")
    assert _same(brief.loc["delay.nominal", "value"], data["brief"]["delay"]["nominal_s"])
    assert _same(brief.loc["supply.min", "value"], data["brief"]["supply"]["min_v"])
    assert brief.loc["analysis.coverage", "value"] == pytest.approx(100 * data["brief"]["analysis"]["coverage_frac"])
    assert brief.loc["delay.nominal", "unit"] == "s" and brief.loc["delay.nominal", "origin"] == "given"
    assert brief.loc["load.relay.must_release", "value"] == pytest.approx(10.0)  # "10 %" in the brief


def test_csv_files_equal_the_workbook_tables(mains, mains_files):
    folder, _ = mains_files
    sheets = _read_workbook(folder / REVIEW_LAYOUT["workbook"])
    csv_dir = folder / REVIEW_LAYOUT["csv"]
    assert sorted(p.name for p in csv_dir.iterdir()) == sorted(f"{name}.csv" for name in TABLES)
    si = {name: pd.read_csv(csv_dir / f"{name}.csv") for name in TABLES}
    unit = time_unit(mains.brief.delay.nominal_s)
    shown = display_tables(si, unit)
    assert f"delay nominal [{unit[0]}]" in shown["ranking"] and "standby after [µA]" in shown["ranking"]
    for name in TABLES:
        pd.testing.assert_frame_equal(shown[name], sheets[name], check_dtype=False, rtol=1e-12)


def test_a_unit_that_never_ends_is_an_empty_cell_with_a_note(mains, monkeypatch):
    name, ev, _ = mains.designs()[0]
    p = dict(ev.mc.percentiles)
    p[max(p)] = math.inf
    monkeypatch.setattr(ev, "mc", MonteCarlo(ev.mc.samples, ev.mc.seed, math.inf, math.inf, p, ev.mc.yield_frac,
                                             ev.mc.yield_ci, 0.01, ev.mc.delays))
    row = monte_carlo_table(mains).set_index("design").loc[name]
    assert row["note"] == NEVER_ENDS
    assert pd.isna(row[f"delay p{100 * max(p):g} [s]"]) and pd.isna(row["delay mean [s]"])
    assert row["never ends [%]"] == pytest.approx(1.0)


def test_empty_study_keeps_every_header(low_voltage):
    tables = study_tables(low_voltage)
    assert not low_voltage.feasible and list(tables) == list(TABLES)
    assert tables["ranking"].empty and "delay nominal [s]" in tables["ranking"].columns
    assert len(tables["infeasible"]) >= 3 and len(tables["brief"]) > 20


# ---- plots ---------------------------------------------------------------------------------------
def test_plots_are_valid_png_and_svg_with_documented_names(mains, mains_files):
    from PIL import Image

    folder, _ = mains_files
    plot_dir = folder / REVIEW_LAYOUT["plots"]
    stems = {"pareto", "volume"} | {f"{kind}-{design_stem(n)}" for n, _, _ in mains.designs() for kind in ("waveform", "histogram")}
    assert sorted(p.name for p in plot_dir.iterdir()) == sorted(f"{s}.{f}" for s in stems for f in ("png", "svg"))
    for stem in stems:
        png = (plot_dir / f"{stem}.png").read_bytes()
        assert png[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948)
        with Image.open(io.BytesIO(png)) as image:
            image.verify()
        with Image.open(io.BytesIO(png)) as image:
            assert image.size[0] > 500 and image.size[1] > 300
        root = ET.parse(plot_dir / f"{stem}.svg").getroot()
        assert root.tag == "{http://www.w3.org/2000/svg}svg"


def test_every_axis_says_its_unit_and_the_figures_show_the_data(mains):
    figures = study_figures(mains)
    for stem, fig in figures.items():
        for ax in fig.axes:
            assert re.search(r"\[.+\]", ax.get_xlabel()), (stem, ax.get_xlabel())
            ticks = [t.get_text() for t in ax.get_yticklabels()]
            assert re.search(r"\[.+\]", ax.get_ylabel()) or (ticks and all(t and not re.match(r"[-−\d]", t)
                                                                             for t in ticks)), (stem, ax.get_ylabel())
    for name, ev, outcome in mains.designs():
        hist = figures[f"histogram-{design_stem(name)}"].axes[0]
        heights = [bar.get_height() for bar in hist.containers[0]]
        assert len(heights) == HISTOGRAM_BINS and sum(heights) == np.isfinite(ev.mc.delays).sum() == SAMPLES
        factor, _ = time_scale(max(ev.band[1], float(np.max(ev.mc.delays))))
        band = [p for p in hist.patches if p.get_label().startswith("delay band")][0]
        assert (band.get_x(), band.get_x() + band.get_width()) == pytest.approx((ev.band[0] / factor,
                                                                                ev.band[1] / factor))
        top = figures[f"waveform-{design_stem(name)}"].axes[0]
        wave = outcome.model.waveform(ev.design, outcome.model.nominal_point(ev.design))
        assert np.allclose(top.lines[0].get_ydata(), wave.signal)
        assert any(np.allclose(line.get_ydata(), wave.threshold) for line in top.lines[1:])


def test_pareto_view_tells_topologies_apart_by_marker_and_colour(holds):
    pareto = study_figures(holds)["pareto"]
    handles = pareto.legends[0].legend_handles
    drawn = {h.get_label(): (h.get_marker(), h.get_color()) for h in handles if h.get_label() in topology_ids()}
    assert set(drawn) == {ev.topology for _, ev, _ in holds.designs()}
    assert len({m for m, _ in drawn.values()}) == len(drawn) and len({c for _, c in drawn.values()}) == len(drawn)
    filled = [line for line in pareto.axes[1].lines if line.get_markerfacecolor() != "none"]
    assert len(filled) == int(holds.ranking.table["pareto"].sum())


def test_palette_lightness_steps_and_styles():
    # CIE 1976 L* of sRGB white, black, red and grey #777777 (from memory: 100, 0, 53.24, 50.03)
    assert style.lightness("#ffffff") == pytest.approx(100, abs=0.01)
    assert style.lightness("#000000") == pytest.approx(0, abs=0.01)
    assert style.lightness("#ff0000") == pytest.approx(53.24, abs=0.05)
    assert style.lightness("#777777") == pytest.approx(50.03, abs=0.05)
    gaps = [abs(style.lightness(a) - style.lightness(b)) for a, b in itertools.combinations(style.PALETTE, 2)]
    assert min(gaps) >= style.MIN_LIGHTNESS_STEP
    many = style.topology_styles([f"t{i}" for i in range(30)])
    assert len({(s.colour, s.marker) for s in many.values()}) == 30


# ---- netlists ------------------------------------------------------------------------------------
@pytest.mark.parametrize("which", ["holds", "mains"])
def test_every_netlist_runs_in_ngspice_and_agrees_with_the_nominal(ngspice, request, tmp_path, which):
    result = request.getfixturevalue(which)
    done = export(result, netlists=tmp_path / "netlists")
    with_netlist = {n: (ev, o) for n, ev, o in result.designs() if o.model.spice(ev.design) is not None}
    assert sorted(p.name for p in done.written) == sorted(f"{design_stem(n)}.cir" for n in with_netlist)
    assert done.without_netlist == [n for n, _, _ in result.designs() if n not in with_netlist]
    assert with_netlist, "the fixture must give at least one design with a netlist"
    for path in done.written:
        name = next(n for n in with_netlist if f"{design_stem(n)}.cir" == path.name)
        ev, _ = with_netlist[name]
        run = tmp_path / design_stem(name)
        run.mkdir()
        simulated = measures(ngspice, path.read_text(), ("delay",), run)["delay"]
        # ngspice is the independent reference (issue 5: 5 % for RC holds, 2 % for oscillator-based designs)
        tolerance = 0.02 if ev.topology in OSCILLATOR_BASED else 0.05
        assert simulated == pytest.approx(ev.nominal_s, rel=tolerance), name


# ---- cautions ------------------------------------------------------------------------------------
def _workbook_text(path: Path) -> str:
    return "\n".join(str(v) for frame in _read_workbook(path).values() for v in frame.to_numpy().ravel())


def test_mains_cautions_in_every_format(mains, mains_files):
    folder, _ = mains_files
    assert needs_cautions(mains.brief) and mains.cautions == list(CAUTIONS)
    text = " ".join((folder / REVIEW_LAYOUT["report"]).read_text().split())  # undo the report's line wrapping
    import json

    data = json.loads((folder / REVIEW_LAYOUT["json"]).read_text())
    cautions = _read_workbook(folder / REVIEW_LAYOUT["workbook"])["cautions"]
    assert data["cautions"] == list(CAUTIONS)
    assert list(cautions["caution"]) == list(CAUTIONS) and list(cautions["no. [count]"]) == [1, 2, 3, 4, 5, 6]
    for caution in CAUTIONS:
        assert caution in text


def test_no_cautions_for_a_low_voltage_brief(low_voltage, tmp_path):
    brief = low_voltage.brief
    assert brief.load.kind == "dc" and brief.load.switched.voltage_v == 12.0 and not brief.load.switched.mains
    assert not needs_cautions(brief) and low_voltage.cautions == []
    done = export(low_voltage, review=tmp_path / "review")
    assert done.written
    text = report_text(low_voltage)
    import json

    assert json.loads(json_text(low_voltage))["cautions"] == []
    book = _workbook_text(tmp_path / "review" / REVIEW_LAYOUT["workbook"])
    sheet = _read_workbook(tmp_path / "review" / REVIEW_LAYOUT["workbook"])["cautions"]
    assert len(sheet) == 1 and sheet["caution"][0].startswith("None apply") and "12 V" in sheet["caution"][0]
    for output in (text, book, (tmp_path / "review" / "tables" / "cautions.csv").read_text()):
        for caution in CAUTIONS:
            assert caution not in output
        assert "shock" not in output.lower() and "Cautions" not in output


def test_readme_and_module_carry_each_caution_idea():
    readme = (ROOT / "README.md").read_text()
    section = readme.split("## Cautions for mains loads", 1)[1].split("\n## ", 1)[0].lower()
    assert len(CAUTIONS) == len(CAUTION_IDEAS)
    for caution, ideas in zip(CAUTIONS, CAUTION_IDEAS):
        for idea in ideas:
            assert idea in caution.lower(), (idea, caution)
            assert idea in section, idea
    assert "50 v" in section  # when they apply (cautions.HAZARDOUS_VOLTAGE_V)


# ---- writing safely ------------------------------------------------------------------------------
def test_existing_files_are_not_overwritten_without_force(mains, tmp_path):
    target = tmp_path / "study.xlsx"
    target.write_bytes(b"my own workbook")
    with pytest.raises(OutputError, match="exists and was left untouched"):
        export(mains, xlsx=target, csv=tmp_path / "tables")
    assert target.read_bytes() == b"my own workbook"
    assert not (tmp_path / "tables").exists() or not any((tmp_path / "tables").iterdir())
    export(mains, xlsx=target, force=True)
    assert list(_read_workbook(target)) == [DECISION_SHEET, *TABLES]
    assert sorted(p.name for p in tmp_path.iterdir() if p.is_file()) == ["study.xlsx"]  # no temporary file left


def test_review_set_refuses_as_a_whole_and_overlapping_exports(mains, mains_files, tmp_path, monkeypatch):
    def no_drawing(make):
        raise AssertionError("a refused export must not draw anything")

    monkeypatch.setattr(plots, "_encoded", no_drawing)
    folder, _ = mains_files
    with pytest.raises(OutputError, match="exists"):
        export(mains, review=folder)
    partial = tmp_path / "partial"
    (partial / "plots").mkdir(parents=True)
    (partial / "plots" / "pareto.png").write_bytes(b"mine")
    with pytest.raises(OutputError, match="pareto.png"):
        export(mains, review=partial)
    assert not (partial / REVIEW_LAYOUT["report"]).exists() and (partial / "plots" / "pareto.png").read_bytes() == b"mine"
    with pytest.raises(OutputError, match="two of the requested exports"):
        export(mains, review=tmp_path / "r", csv=tmp_path / "r" / "tables")


def test_a_failure_part_way_leaves_the_folder_as_it_was(mains, tmp_path, monkeypatch):
    # the set is made in a staging folder and moved in at the end: a failure on the third file leaves nothing
    real_fsync, calls = files.os.fsync, []

    def fsync_failing_on_the_third(fd):
        calls.append(fd)
        if len(calls) == 3:
            raise OSError(28, "No space left on device")
        real_fsync(fd)

    (tmp_path / "mine.txt").write_text("earlier")
    monkeypatch.setattr(files.os, "fsync", fsync_failing_on_the_third)
    with pytest.raises(OutputError, match="No space left on device"):
        export(mains, csv=tmp_path / "tables", xlsx=tmp_path / "study.xlsx")
    assert len(calls) == 3 and sorted(p.name for p in tmp_path.iterdir()) == ["mine.txt"]
    monkeypatch.setattr(files.os, "fsync", real_fsync)
    export(mains, csv=tmp_path / "tables")
    expected = study_tables(mains)
    for name in ("ranking", "bom"):
        pd.testing.assert_frame_equal(pd.read_csv(tmp_path / "tables" / f"{name}.csv"),
                                      pd.read_csv(io.StringIO(expected[name].to_csv(index=False))))


# ---- CLI -----------------------------------------------------------------------------------------
def test_study_cli_writes_each_export_and_refuses_to_overwrite(tmp_path):
    args = ["study", str(EXAMPLES / "glue_pot_warmer.yaml"), "--only", "mcu", "--samples", "500",
            "--xlsx", str(tmp_path / "s.xlsx"), "--csv", str(tmp_path / "csv"), "--plots", str(tmp_path / "plots"),
            "--netlist", str(tmp_path / "net")]
    runner = CliRunner()
    first = runner.invoke(cli, args)
    assert first.exit_code == 0, first.output
    assert "no SPICE netlist for mcu" in first.output and f"wrote {tmp_path / 's.xlsx'}" in first.output
    assert list(_read_workbook(tmp_path / "s.xlsx")) == [DECISION_SHEET, *TABLES]
    assert (tmp_path / "plots" / "histogram-mcu.svg").is_file() and (tmp_path / "csv" / "ranking.csv").is_file()
    before = {p: p.stat().st_mtime_ns for p in tmp_path.rglob("*") if p.is_file()}
    again = runner.invoke(cli, args)
    assert again.exit_code == 3 and "Error:" in again.output and "--force" in again.output
    assert {p: p.stat().st_mtime_ns for p in tmp_path.rglob("*") if p.is_file()} == before
    forced = runner.invoke(cli, [*args, "--force", "--review", str(tmp_path / "review")])
    assert forced.exit_code == 0, forced.output
    assert {p.name for p in (tmp_path / "review").iterdir()} == set(REVIEW_LAYOUT.values())


def test_readme_review_command_matches_the_makefile():
    readme = (ROOT / "README.md").read_text()
    assert "tradeoff study examples/towel_rail_boost.yaml --review out/review" in readme
    makefile = (ROOT / "Makefile").read_text()
    target = makefile.split("\nreview:", 1)[1].split("\n\n", 1)[0]
    assert "tradeoff study $(BRIEF) --review $(REVIEW)" in target
    assert "BRIEF ?= examples/towel_rail_boost.yaml" in makefile and "REVIEW ?= out/review" in makefile
