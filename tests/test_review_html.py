"""The review page's markup (no browser needed): self-contained, escaped, every section present,
cautions exactly for mains briefs, ids unique across the embedded figures."""
from __future__ import annotations

import functools
import re
from html.parser import HTMLParser
from pathlib import Path

import pytest
from click.testing import CliRunner

import tradeoff
from tradeoff.cli import cli
from tradeoff.report.html import review_html

ROOT = Path(__file__).resolve().parent.parent


@functools.cache
def _page(name: str, title: str | None = None) -> tuple[str, object]:
    brief = tradeoff.load_brief(ROOT / "examples" / name)
    if title is not None:
        brief = brief.replace({"title": title})
    result = tradeoff.study(brief, samples=2000)
    return review_html(result), result


class _Tags(HTMLParser):
    """Every start tag with its attributes."""

    def __init__(self):
        super().__init__()
        self.tags: list[tuple[str, dict[str, str | None]]] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))


def _tags(html: str) -> list[tuple[str, dict[str, str | None]]]:
    parser = _Tags()
    parser.feed(html)
    return parser.tags


def test_self_contained_no_script_no_outside_reference():
    html, _ = _page("towel_rail_boost.yaml")
    tags = _tags(html)
    assert not [t for t, _ in tags if t in ("script", "link", "img", "iframe", "object", "embed")]
    for tag, attrs in tags:
        for key in ("src", "href", "xlink:href"):
            if attrs.get(key):
                assert attrs[key].startswith("#"), (tag, attrs[key])
    assert "@import" not in html and "url(http" not in html


def test_ids_unique_with_several_figures():
    html, _ = _page("towel_rail_boost.yaml")
    ids = [attrs["id"] for _, attrs in _tags(html) if attrs.get("id")]
    assert len(ids) == len(set(ids))
    for ref in re.findall(r'url\(#([^)]+)\)|href="#([^"]+)"', html):
        assert (ref[0] or ref[1]) in ids


def test_markup_in_the_title_is_escaped():
    title = "<script>alert(1)</script> & <b>x</b>"
    html, _ = _page("towel_rail_boost.yaml", title)
    assert "<script>" not in html and "&lt;script&gt;alert(1)&lt;/script&gt; &amp; &lt;b&gt;x&lt;/b&gt;" in html


def test_sections_and_every_topology():
    html, result = _page("towel_rail_boost.yaml")
    for section in ("brief", "comparison", "designs", "pareto", "boms", "sensitivity", "infeasible", "cautions"):
        assert f'id="{section}"' in html
    for outcome in result.outcomes:
        assert f">{outcome.topology}<" in html
    for caution in result.cautions:
        assert caution.replace("'", "&#39;") in html
    assert f"tradeoff {tradeoff.__version__}" in html and f"seed {result.brief.analysis.seed}" in html


def test_no_cautions_section_for_a_low_voltage_brief():
    html, result = _page("propagator_mat.yaml")
    assert not result.cautions and 'id="cautions"' not in html


def test_cli_html_option_writes_the_page(tmp_path):
    target = tmp_path / "page.html"
    out = CliRunner().invoke(cli, ["study", str(ROOT / "examples" / "glue_pot_warmer.yaml"), "--samples", "1000",
                                   "--html", str(target)])
    assert out.exit_code == 0, out.output
    assert target.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    again = CliRunner().invoke(cli, ["study", str(ROOT / "examples" / "glue_pot_warmer.yaml"), "--samples", "1000",
                                     "--html", str(target)])
    assert again.exit_code != 0 and "--force" in again.output
