"""Sweeps: the --vary syntax and its errors, identical results on every engine (in-process, a local
process pool, a Dask LocalCluster), the decision map against the table, and the Python API."""
from __future__ import annotations

import re

import json
import os
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

import tradeoff
from tradeoff.brief import load_brief
from tradeoff.cli import cli
from tradeoff.errors import InputError
from tradeoff.report.sweep_report import NO_WINNER, cell_keys, plot_decision_map, write_workbook
from tradeoff.grid_sweep import _axes_and_briefs, sweep

from conftest import EXAMPLES, ROOT, dotted_keys, misplaced_units

FAST = ["mcu", "rc-counter", "crystal-counter"]  # the quickest topologies to optimise (measured here)
GRID = ["delay.nominal=10min,1h", "weights.parts=0,6"]
SAMPLES = 1000


@pytest.fixture(scope="module")
def brief_file(tmp_path_factory):
    """The fan run-on demo brief with a ±10 % delay tolerance instead of its wide min/max band."""
    text = (EXAMPLES / "fan_run_on.yaml").read_text(encoding="utf-8")
    text = text.replace("  min: 10 min               # shortest acceptable run-on\n", "  tolerance: 10 %\n")
    text = text.replace("  max: 20 min               # longest acceptable run-on\n", "")
    path = tmp_path_factory.mktemp("sweep") / "fan_tolerance.yaml"
    path.write_text(text, encoding="utf-8")
    assert load_brief(path).delay.max_s == pytest.approx(990.0)  # 15 min + 10 %
    return path


@pytest.fixture(scope="module")
def local(brief_file):
    """The reference sweep, run in this process."""
    return sweep(brief_file, GRID, only=FAST, samples=SAMPLES)


def _run(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


def test_grid_order_and_the_winner_changes(local):
    frame = local.to_frame()
    assert list(frame["delay_nominal_s"]) == [600.0, 600.0, 3600.0, 3600.0]
    assert list(frame["weights_parts"]) == [0.0, 6.0, 0.0, 6.0]
    assert frame["winner"].nunique() > 1  # the grid is chosen so the answer changes with the parts weight
    assert (frame["winner_score"] >= frame["runner_up_score"]).all()
    assert (frame["winner_delay_worst_min_s"] >= 0.9 * frame["delay_nominal_s"] - 1e-9).all()
    data = json.loads(json.dumps(local.to_dict(), allow_nan=False))
    assert dotted_keys(data) == [] and misplaced_units(data) == [] and set(data["points"][0]["values"]) == {"delay_nominal_s", "weights_parts"}


def test_jobs_2_gives_the_same_table_as_jobs_1(brief_file, tmp_path):
    tables = []
    for jobs in (1, 2):
        out = tmp_path / f"jobs{jobs}.csv"
        result = _run("sweep", brief_file, "--vary", GRID[0], "--vary", GRID[1], "--only", ",".join(FAST),
                      "--samples", SAMPLES, "--jobs", jobs, "--csv", out)
        assert result.exit_code == 0, result.output
        tables.append(out.read_text(encoding="utf-8"))
    assert tables[0] == tables[1]
    assert tables[0].count("\n") == 5  # header and four grid points


def test_dask_local_cluster_gives_identical_results(brief_file, local):
    distributed = pytest.importorskip("distributed") if not os.environ.get("CI") else __import__("distributed")
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, host="127.0.0.1", scheduler_port=0,
                                  dashboard_address=None) as cluster:
        remote = sweep(brief_file, GRID, only=FAST, samples=SAMPLES, scheduler=cluster.scheduler_address)
    pd.testing.assert_frame_equal(remote.to_frame(), local.to_frame())
    assert remote.points == local.points


def test_unreachable_scheduler_is_an_input_error(brief_file):
    result = _run("sweep", brief_file, "--vary", "weights.cost=1,2", "--only", "mcu", "--scheduler",
                  "tcp://127.0.0.1:9")
    assert result.exit_code == 2
    assert "cannot reach a Dask scheduler at 'tcp://127.0.0.1:9'" in result.output


def test_decision_map_cells_match_the_table(local, tmp_path):
    import matplotlib.image

    drawn = plot_decision_map(local, tmp_path / "map.png")
    frame = local.to_frame()
    # rows follow the second field (weights.parts), columns the first (delay.nominal), both ascending here
    for r, parts in enumerate((0.0, 6.0)):
        for c, nominal in enumerate((600.0, 3600.0)):
            row = frame[(frame["delay_nominal_s"] == nominal) & (frame["weights_parts"] == parts)].iloc[0]
            assert drawn.winners[r, c] == row["winner"]
    assert drawn.x_text == ["10 min", "1 h"]
    pixels = matplotlib.image.imread(drawn.path)[..., :3]
    for (r, c), winner in np.ndenumerate(drawn.winners):
        x, y = (int(round(v)) for v in drawn.centres_px[r, c])
        x -= 40  # beside the cell's label, which sits at its centre
        expected = np.array([int(drawn.colours[winner][i:i + 2], 16) / 255 for i in (1, 3, 5)])
        np.testing.assert_allclose(pixels[y, x], expected, atol=2 / 255)
    with pytest.raises(Exception, match="exists and was left untouched"):
        plot_decision_map(local, tmp_path / "map.png")
    svg = plot_decision_map(local, tmp_path / "map.svg").path.read_text(encoding="utf-8")
    assert svg.lstrip().startswith("<?xml") and "delay.nominal [s]" in svg  # 2 values 6x apart: linear axis
    keys = cell_keys(list(drawn.colours))  # every cell labelled, so the map reads without colour
    labels = re.findall(r">([0-9–]) </text>|>([0-9–])</text>", svg)
    shown = [a or b for a, b in labels]
    for winner in drawn.winners.ravel():
        assert keys[winner or NO_WINNER] in shown
    assert len(shown) >= drawn.winners.size


def test_workbook_reads_back_with_the_same_numbers(local, tmp_path):
    write_workbook(local, tmp_path / "sweep.xlsx")
    sheets = pd.read_excel(tmp_path / "sweep.xlsx", sheet_name=None)
    assert set(sheets) == {"sweep", "axes", "settings"}
    back = sheets["sweep"]
    np.testing.assert_allclose(back["winner_score"], local.to_frame()["winner_score"])
    assert pd.api.types.is_numeric_dtype(back["winner_cost_eur"])


def test_ranges_are_read_with_the_fields_units(brief_file):
    base = load_brief(brief_file)
    axes, points = _axes_and_briefs(base, ["supply.nominal=10V..15V:3:log", "ambient.max=30degC..50degC:3"], {})
    supply, ambient = axes
    np.testing.assert_allclose(supply.values, np.geomspace(10, 15, 3))  # geometric progression by definition
    assert supply.log and not ambient.log
    assert ambient.values == (30.0, 40.0, 50.0)
    assert len(points) == 9 and points[5][0] == (1, 2)
    assert points[5][1].supply.nominal_v == pytest.approx(np.sqrt(150))
    # the brief gives supply min and max (10.8 V, 15 V at 12 V): they move with the nominal, same ratios
    assert points[5][1].supply.min_v == pytest.approx(np.sqrt(150) * 10.8 / 12)
    assert points[5][1].supply.max_v == pytest.approx(np.sqrt(150) * 15 / 12)


def test_a_given_delay_band_moves_with_the_nominal():
    base = load_brief(EXAMPLES / "fan_run_on.yaml")  # nominal 15 min, min 10 min, max 20 min
    axes, points = _axes_and_briefs(base, {"delay.nominal": ["30 min", "1 h"]}, {})
    assert [(p.delay.min_s, p.delay.max_s) for _, p in points] == [(1200.0, 2400.0), (2400.0, 4800.0)]


@pytest.mark.parametrize("option, message", [
    ("delay.nominal", "no '=' between the key and its values"),
    ("delay.nominl=1h", "is not a brief key (did you mean 'delay.nominal'?)"),
    ("title=a,b", "'title' cannot be varied in a sweep"),
    ("delay.nominal=", "no values after '='"),
    ("delay.nominal=1h,,2h", "an empty value in the list"),
    ("delay.nominal=1h,1h", "a value is listed twice"),
    ("delay.nominal=1 h,60 min", "'1 h' and '60 min' are the same value (1 h); accepted: each value once"),
    ("supply.nominal=12V,12000mV,24V", "'12V' and '12000mV' are the same value (12 V)"),
    ("delay.nominal=1h..2h", "a range is START..STOP:COUNT"),
    ("delay.nominal=1h..2h:1", "count '1' is not a whole number from 2 to 10000"),
    ("delay.nominal=1h..2h:3:geo", "spacing 'geo' is not known; use :lin or :log"),
    ("delay.nominal=1V..2V:3", "range endpoint:"),
    ("ambient.max=10degC..30degC:3:log", "temperatures have no log scale"),
    ("start=a..b:3", "this field takes a choice"),
    ("analysis.samples=1000..1001:5", "rounding to whole numbers leaves fewer than 5 distinct values"),
    ("delay.nominal=12", "bare number"),
    ("delay.nominal=30 days", "outside the accepted range"),
    ("weights.cost=1..1:3", "START and STOP are equal"),
])
def test_vary_errors_exit_2_naming_option_and_key(brief_file, option, message):
    result = _run("sweep", brief_file, "--vary", option, "--only", "mcu")
    assert result.exit_code == 2, result.output
    assert result.output.startswith("Error: --vary:")
    assert message in result.output
    assert "Traceback" not in result.output


def test_same_key_twice_and_too_many_fields_for_a_map(brief_file, tmp_path):
    twice = _run("sweep", brief_file, "--vary", "analysis.seed=1,2", "--seed", 3, "--only", "mcu")
    assert twice.exit_code == 2 and "'analysis.seed' is set twice" in twice.output
    three = _run("sweep", brief_file, "--vary", "weights.cost=1,2", "--vary", "weights.parts=1,2", "--vary",
                 "weights.rails=1,2", "--plot", tmp_path / "m.png", "--only", "mcu")
    assert three.exit_code == 2 and "a decision map shows one or two varied fields; 3 are varied" in three.output


def test_a_point_with_nothing_feasible_says_so(tmp_path):
    # the propagator brief (8 to 10 h, 1 rail, cost 3) is beyond the mcu class here: nothing is feasible
    result = _run("sweep", EXAMPLES / "propagator_mat.yaml", "--vary", "weights.cost=1,2", "--only", "mcu",
                  "--samples", SAMPLES, "--format", "json", "--plot", tmp_path / "strip.png")
    assert result.exit_code == 1
    points = json.loads(result.output)["points"]
    assert [p["winner"] for p in points] == [None, None]
    assert all(p["note"] == "no topology meets the brief here" and p["infeasible"] == 1 for p in points)


def test_python_api(brief_file, tmp_path):
    brief = tradeoff.load_brief(brief_file).replace({"delay.nominal": "1 h"})
    assert brief.delay.max_s == pytest.approx(3960.0)  # the brief's ±10 % tolerance is kept
    frame = tradeoff.study(brief, only=["mcu", "crystal-counter"], samples=SAMPLES).to_frame()
    assert set(frame["topology"]) <= {"mcu", "crystal-counter"} and list(frame["rank"]) == list(range(1, len(frame) + 1))
    design = EXAMPLES / "designs" / "mcu.yaml"
    analysis = tradeoff.analyze(design, brief_changes={"analysis.samples": SAMPLES})
    cli_json = json.loads(_run("analyze", design, "--samples", SAMPLES, "--format", "json").output)
    assert json.loads(json.dumps(analysis.to_dict())) == cli_json
    row = analysis.to_frame().iloc[0]
    assert row["delay_nominal_s"] == pytest.approx(cli_json["delay"]["nominal_s"])
    with pytest.raises(AttributeError):
        tradeoff.no_such_function  # noqa: B018


def test_import_stays_light():
    code = "import sys, tradeoff; print(sorted(m for m in ('pandas', 'pint', 'numpy') if m in sys.modules))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, check=True,
                         env={**os.environ, "PYTHONPATH": str(ROOT)})
    assert out.stdout.strip() == "[]"


def test_example_script_runs():
    out = subprocess.run([sys.executable, str(ROOT / "examples" / "what_if.py")], capture_output=True, text=True,
                         cwd=ROOT, env={**os.environ, "PYTHONPATH": str(ROOT)}, timeout=300)
    assert out.returncode == 0, out.stderr
    assert "winner" in out.stdout and "delay_nominal_s" in out.stdout


def test_bad_value_at_a_grid_point_stops_before_running():
    base = load_brief(EXAMPLES / "fan_run_on.yaml")
    with pytest.raises(InputError, match="nominal 1 h lies outside min..max"):
        # delay.min is varied too, so the band does not move: 1 h is outside 10 to 20 min
        _axes_and_briefs(base, ["delay.nominal=15min,1h", "delay.min=5min,10min"], {})


@pytest.mark.parametrize("width", [80, 100])
def test_terminal_table_fits_and_names_each_points_winner(local, width):
    """The sweep's terminal table stays within the width and shows each point's winner, its score and
    its runner-up (or why nothing wins) in the brief's time unit."""
    from rich.console import Console

    from tradeoff.report.sweep_report import render_sweep

    console = Console(width=width, record=True, file=open(os.devnull, "w"))
    render_sweep(local, console)
    text = console.export_text()
    assert max(len(line) for line in text.splitlines()) <= width
    for point in local.points:
        w = point["winner"]
        assert (f"{w['design']}" in text and f"{w['score']:.3f}" in text) if w else point["note"] in text
        if point["runner_up"]:
            assert f"runner-up {point['runner_up']['design']} ({point['runner_up']['score']:.3f})" in text
    assert "min" in text and " s " not in text  # worst cases of minutes-long delays in minutes


# ---- a grid beyond the confirmation limits needs --yes (issue 13 item 6) -------------------------

def test_a_grid_over_the_point_limit_is_refused_with_its_estimate(brief_file):
    from tradeoff.grid_sweep import CONFIRM_POINTS
    from tradeoff.units import parse_quantity

    result = _run("sweep", brief_file, "--vary", f"weights.cost=0..100:{CONFIRM_POINTS + 1}", "--only", "mcu",
                  "--samples", 100)
    assert result.exit_code == 2, result.output
    found = re.search(r"1,001 points would take about (.+?) on one worker \(estimated from the first point, which "
                      r"took (.+?)\); accepted without --yes: at most 1,000 points and about 10 min", result.output)
    assert found, result.output
    total, first = (parse_quantity(text, "s") for text in found.groups())
    assert total == pytest.approx(first * 1001, rel=0.06)  # both shown to two digits


def test_yes_runs_a_grid_beyond_the_limits(brief_file, monkeypatch):
    import tradeoff.grid_sweep as grid_sweep

    monkeypatch.setattr(grid_sweep, "CONFIRM_POINTS", 1)  # a 2-point grid is then beyond the limit
    args = ["sweep", brief_file, "--vary", "weights.cost=1,2", "--only", "mcu", "--samples", 100, "--format", "json"]
    refused = _run(*args)
    assert refused.exit_code == 2 and "2 points would take about" in refused.output
    assert "accepted without --yes: at most 1 points" in refused.output
    confirmed = _run(*args, "--yes")
    assert confirmed.exit_code == 0, confirmed.output
    assert [p["index"] for p in json.loads(confirmed.output)["points"]] == [[0], [1]]


def test_an_estimate_over_the_time_limit_is_refused_unless_confirmed(brief_file, monkeypatch):
    import tradeoff.grid_sweep as grid_sweep

    monkeypatch.setattr(grid_sweep, "CONFIRM_SECONDS", 1e-6)  # every real point takes longer
    with pytest.raises(InputError, match=r"3 points would take about .+ over 2 workers \(estimated from the first"):
        sweep(brief_file, ["weights.cost=1,2,3"], only=["mcu"], samples=100, jobs=2)
    result = sweep(brief_file, ["weights.cost=1,2,3"], only=["mcu"], samples=100, confirmed=True)
    assert [p["index"] for p in result.points] == [[0], [1], [2]]


def test_estimate_is_the_first_point_times_the_points_per_worker():
    from tradeoff.grid_sweep import estimated_seconds

    assert estimated_seconds(10, 2.0, 1) == 20.0  # ten points one after another
    assert estimated_seconds(10, 2.0, 2) == 12.0  # the first here, then nine over two workers: five rounds
    assert estimated_seconds(1, 3.0, 4) == 3.0


def test_the_limits_are_documented_as_the_code_has_them():
    from tradeoff.grid_sweep import CONFIRM_POINTS, CONFIRM_SECONDS, MAX_POINTS
    from tradeoff.units import format_quantity

    readme = (ROOT / "README.md").read_text(encoding="utf-8").split("## What-if sweeps")[1].split("\n## ")[0]
    helptext = " ".join(_run("sweep", "--help").output.split())
    for text in (readme, helptext):
        assert f"more than {CONFIRM_POINTS:,} points" in text and format_quantity(CONFIRM_SECONDS, "s") in text
        assert "--yes" in text
    assert f"{MAX_POINTS:,} points" in readme
