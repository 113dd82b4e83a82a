"""The brief's design margin: every proven design keeps it between its worst case and both band
edges, every output reports both margins, and a design that meets the band but not the margin is
reported as such.

The margin is a guard band in % of the band's width (common practice for what a model leaves
out: a proven design parked a fraction of a percent inside the band is not safe to build). The
figures checked are plain arithmetic on the worst-case corners the study reports.
"""
from __future__ import annotations

import json

import pytest

from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.errors import BriefError
from tradeoff.report.labels import short_reason
from tradeoff.topologies.registry import build_topology
from tradeoff.trade_study import study

from conftest import EXAMPLES

SHIPPED = sorted(EXAMPLES.glob("*.yaml"))


@pytest.fixture(scope="module", params=[p.stem for p in SHIPPED])
def shipped_study(request):
    brief = load_brief(EXAMPLES / f"{request.param}.yaml").replace({"analysis.samples": 2000})
    return study(brief)


def test_no_proven_design_on_a_shipped_example_has_less_than_the_briefs_margin(shipped_study):
    brief = shipped_study.brief
    lo, hi = brief.delay.min_s, brief.delay.max_s
    need = brief.analysis.margin * (hi - lo)
    designs = shipped_study.to_dict()["designs"]
    assert designs, "every shipped example has at least one proven design"
    for entry in designs:
        delay = entry["delay"]
        # By hand from the corners: room above the minimum and below the maximum, against the brief's margin.
        assert delay["worst_min_s"] - lo >= need * (1 - 1e-9), entry["name"]
        assert hi - delay["worst_max_s"] >= need * (1 - 1e-9), entry["name"]
        assert delay["margin_short_frac"] == pytest.approx((delay["worst_min_s"] - lo) / (hi - lo))
        assert delay["margin_long_frac"] == pytest.approx((hi - delay["worst_max_s"]) / (hi - lo))
        assert delay["margin_required_frac"] == brief.analysis.margin


def test_default_margin_is_five_percent_of_the_band_and_out_of_range_values_are_refused():
    text = (EXAMPLES / "fan_run_on.yaml").read_text(encoding="utf-8")
    assert load_brief(text).analysis.margin == 0.05
    with pytest.raises(BriefError) as exc:
        load_brief(text).replace({"analysis.margin": "50 %"})
    assert "analysis.margin" in str(exc.value) and "below 50 %" in str(exc.value)


@pytest.fixture(scope="module")
def wide_margin():
    """The fan run-on brief, rc-counter only, asking 45 % of the band at each end: a 10 % wide window
    that no RC oscillator's worst case (about ±14 % of nominal, the counter's table above) fits."""
    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace({"analysis.samples": 2000, "analysis.margin": "45 %",
                                                               "topologies": ["rc-counter"]})
    return brief, study(brief)


def test_a_design_meeting_the_band_but_not_the_margin_is_reported_with_its_margins(wide_margin):
    brief, result = wide_margin
    assert not result.feasible
    (outcome,) = result.infeasible()
    first = outcome.reasons[0]
    assert first.startswith("no design keeps the brief's margin of 45 % of the band at both ends; "
                            "the best design meeting the band without it (")
    assert "at the short end and" in first and first.endswith("at the long end")
    assert short_reason(outcome.reasons).startswith("meets the band, not the 45 % margin: keeps ")
    # The reasons also say why the program found nothing with the margin: the band less 45 % at each end.
    assert any("less the 45 % margin" in r or "plus the 45 % margin" in r for r in outcome.reasons[1:])


def test_the_full_model_names_a_margin_shortfall_at_its_band_edge(wide_margin):
    brief, _ = wide_margin
    proven = study(brief.replace({"analysis.margin": "5 %"}))
    ((_, design_ev, _),) = proven.designs()
    ev = build_topology("rc-counter", brief, load_catalog()).evaluate(design_ev.design)  # proven at 5 %, now 45 %
    lo, hi = ev.band
    assert lo < ev.worst.min_s and ev.worst.max_s < hi
    assert not ev.feasible
    short = [r for r in ev.reasons if "the brief asks for a margin of 45 % of the band" in r]
    kept = [m for m in (ev.margin_short_frac, ev.margin_long_frac) if m < 0.45]
    assert len(short) == len(kept) >= 1 and set(ev.reasons) == set(short)
    assert json.loads(json.dumps(ev.to_dict()))["delay"]["margin_required_frac"] == 0.45
