"""Sources a reader can follow: catalogs cite documents (or the repository's docs/references.md),
never a file outside the repository; messages and reports name datasheet families in generic
words, while the raw catalog view keeps the part numbers that identify the datasheets."""
from __future__ import annotations

import functools
import json
import re
from pathlib import Path

import pytest
from click.testing import CliRunner

import tradeoff
from tradeoff.catalog import load_catalog
from tradeoff.cli import cli
from tradeoff.parts import plain_source

from conftest import ROOT

PART_NUMBER = re.compile(r"\b(?:NE|TLC|LMC|CD)\d{3,}[A-Z]?\b|\b4060\b|Texas Instruments")
"""The part numbers and the maker's name the shipped catalog sources carry (identifying datasheets)."""


@functools.cache
def _outputs(name: str) -> str:
    from tradeoff.report.review import json_text, report_text

    result = tradeoff.study(ROOT / "examples" / name, samples=1000)
    return report_text(result, verbose=True) + json_text(result)


def test_catalog_sources_point_inside_the_repository():
    references = (ROOT / "docs" / "references.md").read_text(encoding="utf-8")
    cited = 0
    for path in (ROOT / "catalogs").glob("*.yaml"):
        text = path.read_text(encoding="utf-8")
        assert "REFERENCES.md" not in text, path.name  # a file outside the repository
        cited += text.count("docs/references.md")
    assert cited > 50
    # every datasheet family the catalogs name is on the references page
    for family in ("NE555", "TLC555", "LMC555", "CD4060B", "IEC 60063", "IEC 60384-4", "Sedra"):
        assert family in references


def test_plain_source_words():
    assert plain_source("NE555 datasheets: supply 4.5 to 16 V") == "bipolar 555-class timer datasheets: supply 4.5 to 16 V"
    assert plain_source("TLC555 and LMC555 datasheets: 2 to 15 V") == "CMOS 555-class timer datasheets: 2 to 15 V"
    assert plain_source("CD4060B datasheet (Texas Instruments), RC oscillator") == (
        "14-stage ripple counter datasheet, RC oscillator")


def test_no_part_number_in_any_shown_source():
    catalog = load_catalog()
    for part in catalog.parts():
        for name in part.params:
            assert not PART_NUMBER.search(part.source(name)), (part.id, name, part.source(name))


@pytest.mark.parametrize("brief", sorted(p.name for p in (ROOT / "examples").glob("*.yaml")))
def test_no_part_number_or_maker_in_reports(brief):
    found = PART_NUMBER.findall(_outputs(brief))
    assert not found, found


def test_the_catalog_view_keeps_the_raw_sources():
    out = CliRunner().invoke(cli, ["catalog", "timer555"])
    assert out.exit_code == 0 and "NE555 datasheets" in out.output
