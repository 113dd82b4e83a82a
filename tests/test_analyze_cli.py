"""`tradeoff analyze` on every registered topology's example design (text and JSON), and
`tradeoff topologies`: the JSON carries the required keys, holds no NaN or infinity, and its
numbers are exactly the library's evaluate() for the same design, samples and seed."""
from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from click.testing import CliRunner

from tradeoff.catalog import load_catalog
from tradeoff.cautions import cautions
from tradeoff.cli import cli
from tradeoff.design import load_design
from tradeoff.topologies.registry import topology_ids
from tradeoff.units import format_quantity as fq

from conftest import dotted_keys, misplaced_units

ROOT = Path(__file__).resolve().parents[1]
DESIGNS = ROOT / "examples" / "designs"
SAMPLES, SEED = 400, 7
IDS = topology_ids()


def _strict_json(text: str):
    """Parse JSON, failing on NaN / Infinity (Python's json accepts them by default)."""
    def reject(constant):
        raise AssertionError(f"non-finite number {constant} in the JSON output")

    return json.loads(text, parse_constant=reject)


def _design_path(topology_id: str) -> Path:
    path = DESIGNS / f"{topology_id}.yaml"
    assert path.is_file(), f"acceptance (issue 3): every registered topology has an example design; missing {path}"
    return path


def _run(*args: str):
    return CliRunner().invoke(cli, list(args), catch_exceptions=False)


@pytest.fixture(scope="module")
def results():
    """Library evaluation and CLI outputs per topology, computed once (None where the example is missing)."""
    cache = {}

    def get(topology_id):
        if topology_id not in cache:
            path = _design_path(topology_id)
            brief, topo, design = load_design(path, brief_changes={"analysis.samples": SAMPLES, "analysis.seed": SEED})
            ev = topo.evaluate(design)
            text = _run("analyze", str(path), "--samples", str(SAMPLES), "--seed", str(SEED))
            js = _run("analyze", str(path), "--samples", str(SAMPLES), "--seed", str(SEED), "--format", "json")
            cache[topology_id] = (brief, ev, text, js)
        return cache[topology_id]

    return get


def test_topologies_lists_every_registered_id():
    catalog = load_catalog()
    text = _run("topologies")
    assert text.exit_code == 0
    listed = [line.split()[0] for line in text.output.splitlines() if line.strip()]
    assert listed == IDS
    for line, topology_id in zip(text.output.splitlines(), IDS):
        assert line.split(None, 1)[1] == catalog.part(topology_id).description
    js = _run("topologies", "--format", "json")
    assert [t["id"] for t in _strict_json(js.output)] == IDS


@pytest.mark.parametrize("topology_id", IDS)
def test_analyze_json_has_the_required_keys_and_equals_the_library(results, topology_id):
    brief, ev, _, js = results(topology_id)
    assert js.exit_code == 0, js.output
    data = _strict_json(js.output)
    assert dotted_keys(data) == [] and misplaced_units(data) == []
    for key in ("topology", "values", "delay", "standby", "rails", "parts", "cost_eur", "warnings", "brief", "cautions"):
        assert key in data, key
    for key in ("nominal_s", "worst_min_s", "worst_max_s", "percentiles", "yield_frac"):
        assert key in data["delay"], key
    assert {"during_a", "after_a"} <= set(data["standby"])
    expected = ev.to_dict()
    for key, value in expected.items():  # json round-trips floats exactly (repr), so equality is exact
        assert data[key] == value, key
    assert data["topology"] == topology_id
    assert data["values"] == dict(ev.design.values)
    assert data["delay"]["samples"] == SAMPLES and data["delay"]["seed"] == SEED
    assert data["brief"] == brief.to_dict() and data["brief"]["analysis"]["samples"] == SAMPLES
    assert data["cautions"] == cautions(brief)
    assert data["feasible"] == (not data["reasons"])


@pytest.mark.parametrize("topology_id", IDS)
def test_analyze_text_reports_every_figure_with_its_unit(results, topology_id):
    brief, ev, text, _ = results(topology_id)
    assert text.exit_code == 0, text.output  # 0 whether or not the design meets the brief
    out = text.output
    assert "\x1b[" not in out  # no colour codes on a pipe
    shown = [fq(ev.nominal_s, "s"), fq(ev.standby.during_a, "A"), fq(ev.standby.after_a, "A"), f"{ev.cost:.2f} EUR",
             f"{ev.placements} placements", fq(ev.mc.yield_frac, "%"), "Bill of materials"]
    shown += [fq(v, "s") for v in (ev.worst.min_s, ev.worst.max_s, *ev.mc.percentiles.values()) if math.isfinite(v)]
    if ev.adapter_no_load_w is not None:
        shown.append(fq(ev.after_w + ev.adapter_no_load_w, "W"))
    for figure in shown:
        assert figure in out, figure
    for line in ev.bom:
        assert line.part in out
    assert ("Meets the brief" in out) == ev.feasible
    for reason in ev.reasons:
        assert reason in " ".join(out.split())
    assert ("CAUTION:" in out) == bool(cautions(brief))


def test_a_failing_design_exits_0_and_says_why(results):
    """The rc-comparator example fails by leakage (its own comment says so): reported, not an error."""
    _, ev, text, js = results("rc-comparator")
    assert not ev.feasible
    assert text.exit_code == 0 and "Does not meet the brief" in text.output
    assert _strict_json(js.output)["reasons"] == ev.reasons


def test_low_voltage_brief_carries_no_cautions(tmp_path):
    brief = (ROOT / "examples" / "propagator_mat.yaml").as_posix()
    design = tmp_path / "mat.yaml"
    design.write_text(f"brief: {brief}\ntopology: crystal-counter\n"
                      "options: {counter: counter-cmos-14stage, stage: 12, cascade: 1, link_stage: 14}\n")
    js = _run("analyze", str(design), "--samples", "200", "--format", "json")
    assert js.exit_code == 0, js.output
    assert _strict_json(js.output)["cautions"] == []
    text = _run("analyze", str(design), "--samples", "200")
    assert "CAUTION" not in text.output


def test_samples_out_of_range_is_an_input_error():
    result = CliRunner().invoke(cli, ["analyze", str(DESIGNS / "mcu.yaml"), "--samples", "5"])
    assert result.exit_code == 2 and "--samples" in result.output
