"""One check for every registered topology: the corner shortcut its optimiser tables take (each
quantity at the end its declared direction says, or a closed form) gives the delays an exhaustive
search over every corner of the full model gives (tradeoff.analysis.worst_case with no limit on
the number of corners), for the designs the selection program picks.

A table of one block, or the product of an oscillator block and an exact count, must equal the
exhaustive extremes; the sum of several blocks (hold plus power-on start) may only bound them.
"""
from __future__ import annotations

import pytest

from tradeoff.analysis import worst_case
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.optimise import SelectionProblem
from tradeoff.topologies.registry import build_topology, topology_ids

from conftest import EXAMPLES

BRIEFS = {
    "10 s to 60 s, button": ("fan_run_on.yaml", {"start": "button", "delay.nominal": "35 s", "delay.min": "10 s",
                                                "delay.max": "60 s", "limits.standby_after": "1 mA"}),
    "1 min to 3 min, power-on": ("fan_run_on.yaml", {"start": "power-on", "delay.nominal": "2 min",
                                                     "delay.min": "1 min", "delay.max": "3 min",
                                                     "limits.standby_after": "1 mA"}),
    "1 s to 20 h, button": ("fan_run_on.yaml", {"start": "button", "delay.nominal": "10 min", "delay.min": "1 s",
                                               "delay.max": "20 h"}),
}
"""Short holds with both starts and a band wide enough for every topology: each has designs to check."""

SHORT_SERIES = {"series.resistor": "E6", "series.electrolytic": "E3", "series.film": "E3", "series.ceramic": "E3",
                "series.pairs": False}
"""Short E-series keep the tables small; the corners do not depend on how many values there are."""

DESIGNS_PER_BRIEF = 3

CATALOG = load_catalog()


@pytest.mark.parametrize("topology_id", topology_ids(CATALOG))
def test_table_extremes_equal_the_exhaustive_worst_case(topology_id):
    checked = 0
    for file, changes in BRIEFS.values():
        brief = load_brief(EXAMPLES / file).replace({**SHORT_SERIES, **changes})
        topology = build_topology(topology_id, brief, CATALOG)
        model = topology.selection()
        band = (brief.delay.min_s, brief.delay.max_s)
        exact = len(model.blocks) == 1 or model.combine == "product"
        for result in SelectionProblem(model, band, brief.limits, brief.weights).best(DESIGNS_PER_BRIEF):
            design = result.design
            worst = worst_case(lambda x: topology.delay(design, x), topology.quantities(design),
                               exhaustive_limit=1 << 30)
            assert worst.method.startswith("exhaustive")
            lo, hi = result.totals["delay_lo_s"], result.totals["delay_hi_s"]
            if exact:
                assert (lo, hi) == pytest.approx((worst.min_s, worst.max_s), rel=1e-9), (design, brief.start)
            else:
                assert lo <= worst.min_s * (1 + 1e-9) and hi >= worst.max_s * (1 - 1e-9), (design, brief.start)
            checked += 1
    assert checked > 0, "no brief gave this topology a design to check"
