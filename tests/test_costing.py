"""Production cost model and break-even volume.

Every price, rate and hour figure below is INVENTED for these demos (marked where used); the
expected sums are worked by hand in the comments, not by calling the code under test.
"""
from __future__ import annotations

import json
import re

import pytest

import tradeoff
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.costing import break_even, price_breaks, price_steps, unit_cost, unit_price, volume_grid
from tradeoff.economics import cost_at
from tradeoff.errors import BriefError
from tradeoff.production import DEFAULTS
from tradeoff.topologies.base import BomLine

from conftest import EXAMPLES, ROOT

PRICES = "part,quantity,price\ncounter-cmos-14stage,1,3.00\ncounter-cmos-14stage,5000,2.50\n"
"""Invented demo prices: a counter IC made dear so that a microcontroller pays off at some volume."""


def _brief(tmp_path, production: str, prices: str | None = PRICES):
    text = (EXAMPLES / "fan_run_on.yaml").read_text(encoding="utf-8") + "\nproduction:\n" + production
    if prices is not None:
        (tmp_path / "prices.csv").write_text(prices, encoding="utf-8")
    path = tmp_path / "fan.yaml"
    path.write_text(text, encoding="utf-8")
    return path


def test_cost_per_unit_against_a_hand_calculation(tmp_path):
    # Invented demo figures: volume 2000, SMD 0.03 EUR, through-hole 0.10 EUR per placement, programming
    # 0.50 EUR per microcontroller, 50 EUR/h, 40 h of firmware for the mcu topology; the price file prices
    # the counter IC at 3.00 EUR from 1 and 2.50 EUR from 5000.
    brief = load_brief(_brief(tmp_path, "  volume: 2000\n  prices: prices.csv\n  assembly_smd: 0.03\n"
                              "  assembly_through_hole: 0.10\n  programming: 0.5\n  hourly_rate: 50\n"
                              "  engineering_hours: {mcu: 40}\n"))
    catalog = load_catalog()
    bom = [BomLine("U1", "mcu-8bit-small", "", 1, 0.60), BomLine("U2, U3", "counter-cmos-14stage", "", 2, 0.35),
           BomLine("C1, C2", "cap-electrolytic-85c", "", 2, 0.05), BomLine("SW1", "push-button", "", 1, 0.15)]
    cost = unit_cost(bom, "mcu", 80.0, brief.production, catalog)
    # parts: mcu at 2000 units -> catalog break 1000 -> 0.45; counters 2 x 2000 = 4000 bought -> user price
    # 3.00 (below the 5000 break); capacitors 2 x 0.05 (no breaks); button 0.15 (not a catalog class)
    assert cost.parts_eur == pytest.approx(0.45 + 2 * 3.00 + 2 * 0.05 + 0.15)  # 6.70
    # assembly: mcu and counters are SMD (3 placements), capacitors through-hole (2), the button has no
    # mount in the catalog and counts as through-hole (1)
    assert cost.assembly_eur == pytest.approx(3 * 0.03 + 3 * 0.10)  # 0.39
    assert cost.programming_eur == pytest.approx(0.50)
    assert cost.engineering_hours == 40.0  # the brief's hours replace the catalog's 80
    assert cost.engineering_eur == pytest.approx(40 * 50 / 2000)  # 1.00
    assert cost.per_unit_eur == pytest.approx(6.70 + 0.39 + 0.50 + 1.00)  # 8.59
    assert cost.notes and "push-button" in cost.notes[0]


def test_price_break_is_the_largest_quantity_not_above_the_volume():
    breaks = [(1, 0.60), (1000, 0.45), (10000, 0.36)]  # the shipped indicative microcontroller breaks
    assert [unit_price(breaks, v) for v in (1, 999, 1000, 9999, 10000, 10**6)] == [0.60, 0.60, 0.45, 0.45, 0.36, 0.36]
    assert unit_price([(100, 0.2), (1000, 0.1)], 10) == 0.2  # below every break: the smallest break's price
    catalog = load_catalog()
    production = load_brief(EXAMPLES / "fan_run_on.yaml").production
    assert price_breaks("mcu-8bit-small", catalog.part("mcu-8bit-small").cost, catalog, production) == breaks


def test_study_reports_the_cost_and_the_cost_criterion_uses_it(tmp_path):
    result = tradeoff.study(_brief(tmp_path, "  volume: 1000\n  prices: prices.csv\n"), only=["rc-counter", "mcu"],
                            samples=300)
    data = json.loads(json.dumps(result.to_dict(), allow_nan=False))
    for name, ev, _ in result.designs():
        entry = data["production"]["designs"][name]
        assert entry["per_unit_eur"] == pytest.approx(entry["parts_eur"] + entry["assembly_eur"]
                                                      + entry["programming_eur"] + entry["engineering_eur"])
        assert float(result.ranking.table.loc[name, "cost_eur"]) == pytest.approx(entry["per_unit_eur"])
    mcu = data["production"]["designs"]["mcu"]
    # indicative defaults: 80 catalog hours at 60 EUR/h over 1000 units, 0.30 EUR programming
    assert mcu["engineering_eur"] == pytest.approx(80 * 60 / 1000) and mcu["programming_eur"] == pytest.approx(0.30)
    assert data["production"]["currency"] == "EUR" and data["production"]["user_prices"] is True


def test_break_even_volume_flips_the_cheaper_design(tmp_path):
    path = _brief(tmp_path, "  prices: prices.csv\n")
    result = tradeoff.study(path, only=["rc-counter", "mcu"], samples=300)
    even = result.break_even()
    assert even is not None and even.volume is not None and 100 < even.volume < 10**6
    # hand check with the invented prices: rc-counter 3.512 EUR + 720 EUR / V against mcu 1.276 EUR + 4800 EUR / V
    # (both within the same price breaks between 1000 and 5000 units) -> V = 4080 / 2.236 = 1824.7
    assert even.volume == 1825 and even.crossings == (1825,)
    cheaper = {}
    for volume in (even.volume - 1, even.volume):
        rerun = tradeoff.study(load_brief(path).replace({"production.volume": volume}), only=["rc-counter", "mcu"],
                               samples=300)
        costs = {name: ev.unit_cost_eur for name, ev, _ in rerun.designs()}
        cheaper[volume] = min(costs, key=costs.get)
    assert cheaper[even.volume - 1] == even.cheaper_below == "rc-counter"
    assert cheaper[even.volume] == even.cheaper_above == "mcu"


def test_break_even_never_in_the_range():
    result = tradeoff.study(EXAMPLES / "fan_run_on.yaml", only=["rc-counter", "mcu"], samples=300)
    even = result.break_even()
    assert even.volume is None and even.cheaper_below == even.cheaper_above == "rc-counter"
    assert "no break-even" in even.text
    # the search itself: a step difference found to the unit, and none when one side is always cheaper
    # equal at 1000 units (a tie counts for the first design), so the second is cheaper from 1001
    assert break_even(lambda v: 5.0, lambda v: 1.0 + 4000.0 / v, 10, 10**5) == [1001]
    assert break_even(lambda v: 5.0, lambda v: 6.0, 10, 10**5) == []


def test_break_even_finds_every_crossing_even_between_sampled_volumes():
    # Two made-up designs (demo figures): `a` drops from 2.00 to 1.50 EUR of parts at a 1010-unit price break, with
    # 100 EUR of engineering; `b` has 1.00 EUR of parts and 676 EUR of engineering. `b` is cheaper from about 576
    # units, `a` again inside 1010 .. 1152 units only, a window between two points of a 61-point log grid
    # (1000 and 1166 units), and `b` after it. Reference: the sign of a - b at every whole volume.
    def a(v: int) -> float:
        return (2.0 if v < 1010 else 1.5) + 100.0 / v

    def b(v: int) -> float:
        return 1.0 + 676.0 / v

    grid = volume_grid(10, 10**5)
    assert not any(1010 <= v <= 1152 for v in grid)  # sampling alone would miss the window
    scanned = [v for v in range(11, 10**5 + 1) if (a(v) <= b(v)) != (a(v - 1) <= b(v - 1))]
    assert len(scanned) == 3 and scanned[1] == 1010
    assert break_even(a, b, 10, 10**5, steps={1010}) == scanned


def test_price_steps_are_where_a_line_reaches_a_break():
    # the shipped microcontroller breaks at 1000 and 10000 units bought: 1, 1000 and 10000 units for one per board;
    # two per board reach them at 500 and 5000 boards
    catalog = load_catalog()
    production = load_brief(EXAMPLES / "fan_run_on.yaml").production
    price = catalog.part("mcu-8bit-small").cost
    assert price_steps([BomLine("U1", "mcu-8bit-small", "", 1, price)], catalog, production) == {1, 1000, 10000}
    assert price_steps([BomLine("U1, U2", "mcu-8bit-small", "", 2, price)], catalog, production) == {1, 500, 5000}


def test_volume_plot_and_tables(tmp_path):
    from tradeoff.report.plots import study_figures
    from tradeoff.report.tables import study_tables

    result = tradeoff.study(_brief(tmp_path, "  prices: prices.csv\n"), only=["rc-counter", "mcu"], samples=300)
    figure = study_figures(result)["volume"]
    assert "break-even 1,825 units" in [t.get_text() for t in figure.axes[0].texts]
    table = study_tables(result)["production"]
    head = table[table["parts [EUR]"].notna()].set_index("design")
    _, mcu, outcome = result.designs()[1]
    assert head.loc["mcu", "cost per unit [EUR]"] == pytest.approx(cost_at(mcu, outcome.model, 1000).per_unit_eur)
    assert "break-even at 1,825 units" in head.loc["rc-counter", "note"]


@pytest.mark.parametrize("production, prices, where", [
    ("  volume: 0\n", None, r"fan.yaml:\d+:\d+: production.volume: 0 is outside the accepted range"),
    ("  volme: 10\n", None, r"production.volme: unknown key 'volme' \(did you mean 'volume'\?\)"),
    ("  sweep_min: 5000\n  sweep_max: 100\n", None, r"production.sweep_min: sweep_min 5000 is not below sweep_max"),
    ("  prices: prices.csv\n", "part,qty,price\n", r"prices.csv:1:1: header: header 'part,qty,price'"),
    ("  prices: prices.csv\n", "part,quantity,price\nmcu-8bit-small,ten,0.5\n",
     r"prices.csv:2:16: row 2.quantity: got 'ten'; accepted: an integer"),
    ("  prices: prices.csv\n", "part,quantity,price\nmcu-8bit-small,10,-1\n",
     r"prices.csv:2:19: row 2.price: -1 is outside the accepted range"),
    ("  prices: prices.csv\n", "part,quantity,price\na,1,0.5\na,1,0.4\n", r"prices.csv:3:3: .*priced already on line 2"),
    ("  prices: missing.csv\n", None, r"missing.csv"),
])
def test_bad_production_input_is_a_located_error(tmp_path, production, prices, where):
    with pytest.raises(BriefError, match=where):
        load_brief(_brief(tmp_path, production, prices))


def test_unknown_topology_in_engineering_hours(tmp_path):
    path = _brief(tmp_path, "  engineering_hours: {mcuu: 10}\n", None)
    with pytest.raises(BriefError, match=r"fan.yaml:\d+:\d+: production.engineering_hours.mcuu: unknown topology "
                                         r"'mcuu' \(did you mean 'mcu'\?\)"):
        tradeoff.study(path, only=["mcu"], samples=300)


def test_the_readme_gives_the_production_defaults():
    # the README's field table states every numeric default of production.DEFAULTS as the code has it
    readme = (ROOT / "README.md").read_text(encoding="utf-8").split("## Production cost and break-even")[1]
    rows = dict(re.findall(r"^\| `(\w+)`(?:, `\w+`)? \| ([^|]+) \|", readme.split("\n## ")[0], flags=re.MULTILINE))
    rows["sweep_min"], rows["sweep_max"] = rows["sweep_min"].split(",")
    assert {key: float(rows[key]) for key in DEFAULTS} == {key: float(value) for key, value in DEFAULTS.items()}
