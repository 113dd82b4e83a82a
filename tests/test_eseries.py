"""E-series tables and helpers, checked against an independent implementation of IEC 60063
(the `eseries` package, test-only) and against brute-force searches."""
from __future__ import annotations

import math

import eseries as oracle  # independent IEC 60063 implementation (PyPI `eseries` 1.2.1), test-only
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from tradeoff import eseries
from tradeoff.errors import CatalogError

NAMES = ("E3", "E6", "E12", "E24", "E48", "E96", "E192")
ORACLE_KEYS = {name: getattr(oracle, name) for name in NAMES}


def test_series_names_coarsest_first():
    assert eseries.series_names() == NAMES


@pytest.mark.parametrize("name", NAMES)
def test_tables_match_independent_iec60063_implementation(name):
    # Source: `eseries` package, an independent implementation of IEC 60063; series() gives the
    # significant digits as integers (10 ... 91 to E24, 100 ... 988 from E48 up).
    digits = eseries.significant_digits(name)
    ours = tuple(round(m * 10 ** (digits - 1)) for m in eseries.mantissas(name))
    assert ours == tuple(oracle.series(ORACLE_KEYS[name]))
    assert len(ours) == int(name[1:])
    assert digits == (2 if int(name[1:]) <= 24 else 3)  # IEC 60063: two digits to E24, three from E48


@pytest.mark.parametrize("name", NAMES)
def test_values_over_decades_match_independent_implementation(name):
    # Source: `eseries.erange` (independent IEC 60063 implementation) over 1 pF .. 10 mF scale decades.
    ours = eseries.values(name, 1e-12, 1e-2)
    theirs = np.array(list(oracle.erange(ORACLE_KEYS[name], 1e-12, 1e-2)))
    np.testing.assert_allclose(ours, theirs, rtol=1e-12)


def test_e24_departs_from_rounded_geometric_values():
    # IEC 60063:2015 (docs/references.md): E24 departs from round(10^(i/24), 1) at exactly these values,
    # so the tables must be stored, not generated.
    geometric = [round(10 ** (i / 24), 1) for i in range(24)]
    differ = {m for m, g in zip(eseries.mantissas("E24"), geometric) if not math.isclose(m, g)}
    assert differ == {2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2}


def test_e192_departs_at_920():
    # IEC 60063:2015 (docs/references.md): E192 uses 9.20 where round(10^(186/192), 2) gives 9.19.
    geometric = [round(10 ** (i / 192), 2) for i in range(192)]
    differ = [m for m, g in zip(eseries.mantissas("E192"), geometric) if not math.isclose(m, g)]
    assert differ == [9.20]


@pytest.mark.parametrize("name, expected", [("E6", 0.20), ("E12", 0.10), ("E24", 0.05), ("E48", 0.02),
                                            ("E96", 0.01), ("E192", 0.005)])
def test_tolerances(name, expected):
    # IEC 60063 nominal tolerances (docs/references.md), also those of the `eseries` package.
    assert eseries.tolerance(name) == expected == oracle.tolerance(ORACLE_KEYS[name])


def test_e3_has_no_tolerance_in_the_standard():
    # IEC 60063 names no tolerance for E3 (used beyond 20 %); the `eseries` package says 0.4,
    # its own choice, so we do not follow it there.
    assert eseries.tolerance("E3") is None


@pytest.mark.parametrize("name", NAMES)
def test_values_are_exact_decimal_floats(name):
    # Each value is the float of its decimal literal (4.7e-06, never 4.699999e-06): printing it
    # with the series' significant digits and reading it back gives the same float.
    digits = eseries.significant_digits(name)
    table = eseries.values(name, 1e-13, 1e10)
    assert all(float(f"{v:.{digits}g}") == v for v in table)
    assert len(table) == int(name[1:]) * 23 + 1  # 23 decades from 1e-13 to 1e10, plus 1e10 itself


def test_values_known_entries_and_inclusive_bounds():
    table = eseries.values("E12", 1e-6, 1e-5)
    assert 4.7e-6 in table and 1e-6 in table and 1e-5 in table and len(table) == 13
    # a bound carrying float error from a computation still includes the value it names
    assert 4.7e-6 in eseries.values("E12", 4.7e-6 * (1 + 1e-12), 5e-6)
    assert list(eseries.values("E6", 2.0, 3.0)) == [2.2]
    assert list(eseries.values("E3", 5.0, 9.0)) == []


@pytest.mark.parametrize("lo, hi", [(0, 1), (-1, 1), (2, 1), (float("nan"), 1), (1, float("inf"))])
def test_values_rejects_bad_bounds(lo, hi):
    with pytest.raises(ValueError, match="0 < lo <= hi"):
        eseries.values("E12", lo, hi)


def test_unknown_series_names_accepted_ones():
    with pytest.raises(CatalogError, match=r"unknown E-series 'E25'; did you mean 'E24'\? "
                                           r"accepted: E3, E6, E12, E24, E48, E96, E192"):
        eseries.mantissas("E25")
    with pytest.raises(CatalogError, match="accepted: E3"):
        eseries.nearest("e24", 1.0)


def _brute_nearest(name, x):
    """Nearest value by exhaustive logarithmic distance over the neighbouring decades."""
    exponent = math.floor(math.log10(x))
    candidates = eseries.values(name, 10.0 ** (exponent - 1), 10.0 ** (exponent + 2))
    distances = [abs(math.log(v) - math.log(x)) for v in candidates]
    return candidates[int(np.argmin(distances))], min(distances)


@settings(max_examples=300, deadline=None)
@given(name=st.sampled_from(NAMES), mantissa=st.floats(1.0, 10.0, exclude_max=True),
       exponent=st.integers(-12, 9))
def test_nearest_matches_brute_force_logarithmic_search(name, mantissa, exponent):
    x = mantissa * 10.0 ** exponent
    ours = eseries.nearest(name, x)
    best, best_distance = _brute_nearest(name, x)
    assert abs(math.log(ours) - math.log(x)) <= best_distance + 1e-12
    if not math.isclose(abs(math.log(ours) - math.log(x)), best_distance, rel_tol=0, abs_tol=1e-12):
        assert ours == best


def test_nearest_is_logarithmic_not_linear():
    # Geometric midpoint of 1.0 and 1.5 (E6) is 1.2247: 1.24 goes up on a log scale,
    # while a linear search (the `eseries` package's find_nearest) keeps 1.0.
    assert eseries.nearest("E6", 1.24) == 1.5
    assert oracle.find_nearest(oracle.E6, 1.24) == 1.0
    # docs/references.md example: find_nearest(E24, 319) returns 330; log distance agrees here.
    assert eseries.nearest("E24", 319) == 330.0 == oracle.find_nearest(oracle.E24, 319)


def test_nearest_crosses_decades_and_keeps_array_shape():
    assert eseries.nearest("E12", 9.6) == 10.0  # 9.6 is nearer 10 than 8.2 on a log scale
    assert eseries.nearest("E12", 0.0009) == 0.00082  # ln(9/8.2) = 0.093 < ln(10/9) = 0.105
    result = eseries.nearest("E24", np.array([[3.2e3, 4.6e-6], [1.0, 95.0]]))
    assert result.shape == (2, 2)
    np.testing.assert_array_equal(result, [[3.3e3, 4.7e-6], [1.0, 91.0]])


@pytest.mark.parametrize("bad", [0.0, -1.0, float("nan"), float("inf")])
def test_nearest_rejects_non_positive(bad):
    with pytest.raises(ValueError, match="finite positive"):
        eseries.nearest("E24", bad)
