"""Candidate tables and the windowed evaluation helpers (tradeoff.candidates).

Series pairs are checked against a plain enumeration of IEC 60063 values taken from the
independent `eseries` package (PyPI, test-only); bisection against a linear count.
"""
from __future__ import annotations

import dataclasses
from pathlib import Path

import eseries as oracle  # independent IEC 60063 implementation, test-only
import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tradeoff import candidates
from tradeoff.brief import load_brief
from tradeoff.catalog import load_catalog
from tradeoff.topologies.base import Role

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


@pytest.fixture(scope="module")
def catalog():
    return load_catalog()


def _oracle_values(name: str, lo: float, hi: float) -> list[float]:
    series = getattr(oracle, name)
    return [v for v in oracle.erange(series, lo * 0.999, hi * 1.001) if lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9)]


@pytest.mark.parametrize("series", ["E24", "E96"])
def test_series_pairs_are_every_total_of_two_standard_values_a_single_lacks(series, catalog):
    brief = load_brief(EXAMPLES / "towel_rail_boost.yaml").replace({"series.resistor": series, "series.pairs": ["series"]})
    role = Role("r", "resistor", "test resistor", lo=100e3, hi=300e3)
    part = catalog.parts("resistor")[0]
    table = candidates.role_candidates(role, brief, catalog, [part])
    lo, hi = max(role.lo, part.value("min_value", "ohm")), min(role.hi, part.value("max_value", "ohm"))
    singles = _oracle_values(series, lo, hi)
    base = _oracle_values(series, lo / 10, hi)
    totals = {round(a + b, 6) for a in base for b in base if a >= b and lo <= a + b <= hi}
    expected = sorted({round(v, 6) for v in singles} | totals)
    got = table["value"].round(6).tolist()
    assert got == expected   # one row per value, sorted
    pairs = table[table["second"] > 0]
    assert not set(pairs["value"].round(6)) & {round(v, 6) for v in singles}   # a single part beats a pair
    assert np.allclose(pairs["first"] + pairs["second"], pairs["value"], rtol=1e-12)
    assert (pairs["first"] >= pairs["second"]).all() and (pairs["placements"] == 2).all()
    assert np.allclose(pairs["cost"], 2 * part.cost) and (table.loc[table["second"] == 0, "placements"] == 1).all()


@settings(max_examples=60, deadline=None)
@given(st.lists(st.lists(st.floats(-1e3, 1e3), min_size=0, max_size=40), min_size=1, max_size=6),
       st.floats(-1e3, 1e3), st.booleans(), st.sampled_from([1, 2, 7]), st.booleans())
def test_bisection_counts_as_a_linear_scan(groups, threshold, inclusive, probes, last_first):
    rows = [np.sort(np.array(g, dtype=float)) for g in groups]
    sizes = np.array([len(r) for r in rows])
    calls = []

    def evaluate(g, i):
        calls.append(len(g))
        assert len(g) <= probes * len(rows)
        return np.array([rows[a][b] for a, b in zip(g, i)])

    got, before, after = candidates.leading_below(evaluate, sizes, threshold, inclusive, probes, last_first, edges=True)
    expected = [int(np.sum(r <= threshold if inclusive else r < threshold)) for r in rows]
    assert got.tolist() == expected
    # the values either side of each count, as a scan finds them
    np.testing.assert_array_equal(before, [r[k - 1] if k else np.nan for r, k in zip(rows, expected)])
    np.testing.assert_array_equal(after, [r[k] if k < len(r) else np.nan for r, k in zip(rows, expected)])
    # each call shrinks every open window to at most 1/(probes + 1) of its length: a search, not a scan
    # (last_first: one more call, the last rows)
    assert len(calls) <= int(np.ceil(np.log(max(sizes.max(), 1) + 1) / np.log(probes + 1))) + 1 + last_first
    if last_first and (sizes > 0).any():   # a group lying wholly below costs one row
        assert calls[0] == int((sizes > 0).sum())


def test_window_rows_lists_each_window_in_order():
    group, row = candidates.window_rows(np.array([2, 0, 5]), np.array([4, 0, 7]))
    assert group.tolist() == [0, 0, 2, 2] and row.tolist() == [2, 3, 5, 6]


def test_chunks_cover_the_range_once():
    parts = list(candidates.chunks(10, 4))
    assert [(s.start, s.stop) for s in parts] == [(0, 4), (4, 8), (8, 10)]


@pytest.mark.parametrize("topology", ["rc-darlington", "rc-mosfet"])
@pytest.mark.parametrize("example, pairs", [("towel_rail_boost.yaml", True), ("glue_pot_warmer.yaml", False)])
def test_windowed_hold_table_equals_the_full_scan(topology, example, pairs, catalog, monkeypatch):
    # bisection along the monotone role (r_hold for the MOSFET, c_hold for the Darlington) keeps the rows and
    # dropped counts a scan of every (r_hold, c_hold) pair keeps; the scan also fails on a decreasing worst case
    import window_reference
    from tradeoff.topologies import bands, hold
    from tradeoff.topologies.registry import build_topology

    brief = load_brief(EXAMPLES / example).replace({"series.resistor": "E6", "series.electrolytic": "E6",
                                                    "series.film": "E6", "series.pairs": pairs})
    # hold values of 10 kohm to 10 Mohm and 1 uF to 4.7 mF keep the scan of every pair short
    limits = {"r_hold": (10e3, 10e6), "c_hold": (1e-6, 4.7e-3)}
    roles = hold.RcHoldTopology.roles
    monkeypatch.setattr(hold.RcHoldTopology, "roles", lambda self: [
        dataclasses.replace(r, lo=limits[r.name][0], hi=limits[r.name][1]) if r.name in limits else r
        for r in roles(self)])
    windowed = build_topology(topology, brief, catalog).selection().blocks[0]
    monkeypatch.setattr(bands, "leading_below", window_reference.full_scan)
    scanned = build_topology(topology, brief, catalog).selection().blocks[0]
    assert sum(scanned.dropped.values()) > 100
    pd.testing.assert_frame_equal(windowed.table, scanned.table)
    assert windowed.dropped == scanned.dropped
