"""Nearest feasible requirement (tradeoff.relax): every reported change, applied, makes the topology
feasible on the real selection and verification, and the same change 5 % short of it does not;
a change that cannot do it alone says so. Small Monte Carlo samples and one topology per study keep
this quick."""
from __future__ import annotations

import json

import pytest

import tradeoff
from tradeoff.brief import load_brief
from tradeoff.catalog import Catalog, load_catalog
from tradeoff.errors import BriefError
from tradeoff.relax import (CHANGES, FLOOR, TOLERANCE, _scaled, apply, changes_for, relax, relax_topology, slack_of,
                            tightenings_for)
from tradeoff.outcome import topology_outcome
from tradeoff.units import format_quantity as fq

from conftest import EXAMPLES, ROOT

SAMPLES = 300
CASES = [("fan_run_on", "rc-darlington"), ("towel_rail_boost", "crystal-counter"), ("glue_pot_warmer", "timer555"),
         ("propagator_mat", "timer555")]
"""(shipped example, an infeasible topology of it): a delay-band answer, a parts-limit answer, and two where no
change alone does it. Every infeasible topology of every example, measured once outside the suite (300 samples,
about 5 minutes): each change answers, 7 answers reachable; the 5 % checks hold wherever tried."""


@pytest.fixture(scope="module", params=CASES, ids=lambda case: "-".join(case))
def relaxed(request):
    example, topology = request.param
    result = tradeoff.study(EXAMPLES / f"{example}.yaml", only=[topology], samples=SAMPLES)
    assert not result.feasible
    return result, relax(result)


def test_every_change_answers_and_reachable_ones_hold_5_percent_short_fails(relaxed):
    result, found = relaxed
    outcome = result.outcomes[0]
    assert [r.key for r in found] == [c.key for c in changes_for(result.brief)]
    by_key = {c.key: c for c in CHANGES}
    for r in found:
        assert r.reachable or r.line.endswith(f"not reachable by this change alone (brief: {r.original})")
        if not r.reachable:
            continue
        change = by_key[r.key]
        start = float(change.start(result.brief))
        brief, catalog = apply(change, result.brief, outcome.model.catalog, r.value)
        assert topology_outcome(outcome.topology, brief, catalog, 1, "highs").feasible, r.line
        short = start + 0.95 * (r.value - start)
        if change.integer:
            short = float(int(short)) if int(short) < r.value else r.value - 1
        brief, catalog = apply(change, result.brief, outcome.model.catalog, short)
        assert not topology_outcome(outcome.topology, brief, catalog, 1, "highs").feasible, (r.line, short)


def test_answers_reach_the_json_and_the_report(relaxed, tmp_path):
    from tradeoff.report.review import report_text
    from tradeoff.report.tables import study_tables

    result, found = relaxed
    data = json.loads(json.dumps(result.to_dict(), allow_nan=False))
    assert [d["change"] for d in data["relaxations"]] == [r.key for r in found]
    assert all((d["value"] is None) == (not d["reachable"]) for d in data["relaxations"])
    text = report_text(result)
    assert all(r.line.split(":")[0] in text for r in found)
    assert list(study_tables(result)["relax"]["reachable"]) == [r.reachable for r in found]


def test_expected_answers_of_the_cases():
    # fan run-on, RC hold into a Darlington (the brief's own numbers): the hold's worst-case spread is wider than the 10..20 min band,
    # so neither edge alone is enough but widening both is; the towel rail's crystal counter needs 23 parts
    # against the limit of 20, so only a raised parts limit does it.
    fan = tradeoff.study(EXAMPLES / "fan_run_on.yaml", only=["rc-darlington"], samples=SAMPLES)
    answers = {r.key: r for r in relax(fan)}
    assert answers["delay.band"].reachable and not answers["delay.min"].reachable
    towel = tradeoff.study(EXAMPLES / "towel_rail_boost.yaml", only=["crystal-counter"], samples=SAMPLES)
    parts = next(r for r in relax(towel) if r.key == "limits.parts")
    assert parts.value > 20 and parts.text == f"at most {int(parts.value)} parts"
    assert "limits.parts" in [r.key for r in relax(towel) if r.reachable]


def test_a_hypothetical_resistor_class_holds_and_5_percent_short_fails():
    # No part-class change alone rescues an infeasible topology of the shipped examples (all 60 answers "not
    # reachable", measured once outside the suite), so the case is made: the fan run-on's RC counter with its band
    # narrowed to 12 min to 18 min, on the catalog without its two 1 % resistor classes. A tighter 5 % class then
    # does it: the resistor's share of the spread is what the narrower band no longer allows.
    full = load_catalog()
    catalog = Catalog([p for p in full if p.id not in ("res-thick-film-chip-1pct", "res-metal-film-1pct")], full.files)
    brief = load_brief(EXAMPLES / "fan_run_on.yaml").replace({"delay.min": "12 min", "delay.max": "18 min"})
    result = tradeoff.study(brief, catalog=catalog, only=["rc-counter"], samples=SAMPLES)
    assert not result.feasible
    change = next(c for c in CHANGES if c.key == "resistor.tolerance")
    found = relax_topology("rc-counter", result.brief, catalog, change)
    assert found.reachable and found.hypothetical and 0.05 < found.value < 1
    assert found.text.startswith(f"a resistor class with tolerance and tempco at most {fq(found.value, '%')} of")
    # the design's own class so changed, in its catalog figures (5 %, 200 ppm/K: thick-film chip datasheets)
    tolerance, tempco = fq(0.05 * found.value, "%"), fq(200 * found.value, "")
    assert f"res-thick-film-chip-5pct with tolerance {tolerance}, tempco at most {tempco} ppm/K" in found.text
    assert found.text.endswith("no such class in the catalog)") and found.to_dict()["hypothetical_class"] is True
    brief, changed = apply(change, result.brief, catalog, found.value)
    assert topology_outcome("rc-counter", brief, changed, 1, "highs").feasible
    brief, changed = apply(change, result.brief, catalog, 1 + 0.95 * (found.value - 1))
    assert not topology_outcome("rc-counter", brief, changed, 1, "highs").feasible
    # the answer in the terminal report, the workbook's relax sheet and the review page
    from tradeoff.report.html import review_html
    from tradeoff.report.review import report_text
    from tradeoff.report.tables import study_tables

    result.relaxations = [found]
    assert found.line in " ".join(report_text(result).split())
    assert list(study_tables(result)["relax"]["hypothetical class"]) == [True]
    assert "no such class in the catalog" in review_html(result)


def test_a_hypothetical_capacitor_class_is_described_in_its_own_terms():
    # at a fifth of the catalog's leakage: the electrolytic rule 0.01 CV or 3 uA (IEC 60384-4, datasheets) becomes
    # 0.002 CV or 600 nA; polyester film's 15 Gohm or 5000 s (IEC 60384-2, from memory) becomes 75 Gohm or 25000 s
    change = next(c for c in CHANGES if c.key == "capacitor.leakage")
    _, catalog = apply(change, load_brief(EXAMPLES / "fan_run_on.yaml"), load_catalog(), 0.2)
    assert change.describe(catalog.part("cap-electrolytic-85c")) == \
        "leakage at most 0.002 CV (µA, µF, V) or 600 nA, whichever is greater"
    assert change.describe(catalog.part("cap-film-pet-5pct")) == \
        f"insulation resistance at least 75 GΩ, or a time constant of {fq(25000.0, 's')} for large values"


def test_catalog_values_scale_as_written():
    assert _scaled("0.01 A/(F*V)", 0.5) == "0.005 A/(F*V)" and _scaled("15 Gohm", 2.0) == "30.0 Gohm"
    assert _scaled(0.2, 0.5) == 0.1 and TOLERANCE < 0.05  # the tolerance is well inside the 5 % check


SLACK_CASES = [("fan_run_on", "mcu"), ("glue_pot_warmer", "crystal-counter")]
"""(shipped example, a feasible topology of it): both select in well under a second, so the slack of every
change takes seconds; between them every kind of answer appears (bounded, still feasible at the far end)."""


@pytest.fixture(scope="module", params=SLACK_CASES, ids=lambda case: "-".join(case))
def slackened(request):
    example, topology = request.param
    result = tradeoff.study(EXAMPLES / f"{example}.yaml", only=[topology], samples=SAMPLES)
    assert result.feasible
    return result, slack_of(result)


def _feasible(change, result, x):
    """The study's one topology at the changed brief; a brief the brief's own rules refuse counts as infeasible."""
    outcome = result.outcomes[0]
    try:
        brief, catalog = apply(change, result.brief, outcome.model.catalog, x)
    except BriefError:
        return False
    return topology_outcome(outcome.topology, brief, catalog, 1, "highs").feasible


def test_slack_holds_and_5_percent_beyond_fails(slackened):
    result, found = slackened
    assert [r.key for r in found] == [c.key for c in tightenings_for(result.brief)]
    assert all(r.kind == "slack" for r in found) and any(r.bounded for r in found)
    by_key = {c.key: c for c in CHANGES}
    for r in found:
        change = by_key[r.key]
        start, end = float(change.start(result.brief)), float(change.tight(result.brief))
        assert r.value is not None and _feasible(change, result, r.value), r.line
        if not r.bounded:
            assert r.value == end and "the far end tried" in r.line
            continue
        assert min(start, end) <= r.value <= max(start, end) and r.fails_at is not None
        beyond = start + 1.05 * (r.value - start)
        if change.integer:
            beyond = r.value + (1 if end > start else -1)
        # 5 % beyond the reported slack is past the first failing value the bisection found (1 % tolerance)
        assert abs(r.fails_at - start) <= abs(beyond - start) or r.value == start, r.line
        assert not _feasible(change, result, beyond if r.value != start else r.fails_at), (r.line, beyond)


def test_slack_reaches_the_json_the_workbook_tables_and_the_pages(slackened):
    from tradeoff.report.html import review_html
    from tradeoff.report.review import report_text
    from tradeoff.report.tables import study_tables

    result, found = slackened
    data = json.loads(json.dumps(result.to_dict(), allow_nan=False))
    assert [(d["change"], d["bounded"]) for d in data["slack"]] == [(r.key, r.bounded) for r in found]
    assert list(study_tables(result)["slack"]["bounded"]) == [r.bounded for r in found]
    text, page = report_text(result), review_html(result)
    assert all(r.label in text and r.label in page for r in found)


def test_the_brief_field_turns_relax_and_slack_on(tmp_path):
    # the towel rail's crystal counter (infeasible: 23 parts against 20) and mcu (feasible) select quickly
    brief = load_brief(EXAMPLES / "towel_rail_boost.yaml")
    assert brief.analysis.relax == "none"
    result = tradeoff.study(brief.replace({"analysis.relax": "all"}), only=["mcu", "crystal-counter"], samples=SAMPLES)
    assert {r.topology for r in result.relaxations} == {"crystal-counter"}
    assert {r.topology for r in result.slack} == {"mcu"}
    only_infeasible = tradeoff.study(brief.replace({"analysis.relax": "infeasible"}), only=["mcu"], samples=SAMPLES)
    assert only_infeasible.relaxations == [] and only_infeasible.slack is None
    assert tradeoff.study(brief, only=["mcu"], samples=SAMPLES).relaxations is None
    # a wrong value is a located error naming the key and what is accepted
    source = (EXAMPLES / "fan_run_on.yaml").read_text()
    assert "analysis:" not in source
    bad = tmp_path / "bad.yaml"
    text = source.rstrip("\n") + "\nanalysis:\n  relax: yes please\n"
    bad.write_text(text)
    with pytest.raises(BriefError) as caught:
        load_brief(bad)
    problem = caught.value.problems[0]
    assert problem.key == "analysis.relax" and problem.line == text.count("\n") and problem.column == 10
    assert "accepted: none, infeasible, all" in str(caught.value)


def test_the_readme_states_the_bisection_tolerance():
    readme = (ROOT / "README.md").read_text(encoding="utf-8").split("## What it would take")[1].split("\n## ")[0]
    assert f"differ by at most {fq(TOLERANCE, '%')} of the change found (or {fq(FLOOR, '%')} of the range" in readme
    assert "5 % short" in readme
    assert "`analysis.relax: none | infeasible | all`" in readme and "`--slack`" in readme
