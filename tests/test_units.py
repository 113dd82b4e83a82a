"""Quantity and percentage parsing, checked against pint's own conversions and designer spellings."""
from __future__ import annotations

import math

import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st

from tradeoff.units import UnitParseError, format_quantity, parse_fraction, parse_quantity

REFERENCE = pint.UnitRegistry()  # reference: pint's own conversions, a separate registry from ours

# Designer spellings and the pint spelling they must equal (reference: pint).
SPELLINGS = [
    ("2.2 Mohm", "ohm", "2.2 megaohm"),
    ("2.2 MΩ", "ohm", "2.2 megaohm"),
    ("2.2MΩ", "ohm", "2.2 megaohm"),
    ("2.2 M\u2126", "ohm", "2.2 megaohm"),  # the ohm sign, not the Greek capital omega
    ("2.2meg", "ohm", "2.2 megaohm"),
    ("2.2 Meg", "ohm", "2.2 megaohm"),
    ("2.2 megohm", "ohm", "2.2 megaohm"),
    ("3 MOhm", "ohm", "3 megaohm"),
    ("470 kΩ", "ohm", "470 kiloohm"),
    ("2.2 milliohm", "ohm", "2.2 milliohm"),
    ("47 uF", "F", "47 microfarad"),
    ("47 µF", "F", "47 microfarad"),
    ("47µF", "F", "47 microfarad"),
    ("47 μF", "F", "47 microfarad"),  # Greek mu
    ("100 nF", "F", "100 nanofarad"),
    ("150 mA", "A", "150 milliampere"),
    ("3 uA", "A", "3 microampere"),
    ("12 V", "V", "12 volt"),
    ("600 mV", "V", "600 millivolt"),
    ("0.3 W", "W", "0.3 watt"),
    ("4 h", "s", "4 hour"),
    ("3.5 hours", "s", "3.5 hour"),
    ("10 min", "s", "10 minute"),
    ("90 s", "s", "90 second"),
    ("2 hr", "s", "2 hour"),
    ("32.768 kHz", "Hz", "32.768 kilohertz"),
    ("50 ppm/K", "1/K", "50 ppm / kelvin"),
    ("1e3 ohm", "ohm", "1000 ohm"),
    ("10000", "dimensionless", "10000"),
]


@pytest.mark.parametrize("text, unit, pint_spelling", SPELLINGS)
def test_designer_spellings_match_pint(text, unit, pint_spelling):
    expected = REFERENCE.Quantity(pint_spelling).to_base_units().magnitude  # reference: pint
    assert parse_quantity(text, unit) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("text, expected_c", [
    ("25 degC", 25.0), ("25 °C", 25.0), ("-10 degC", -10.0), ("\u221210 °C", -10.0), ("0 degC", 0.0),
    ("300 K", 300 - 273.15), ("50 degF", 10.0),
])
def test_temperatures_in_degc_match_pint(text, expected_c):
    # reference: pint's offset conversion on a quantity built from (value, unit), no arithmetic on degC
    number, unit = text.replace("\u2212", "-").replace("°C", "degC").split()
    reference = REFERENCE.Quantity(float(number), unit).to("degC").magnitude
    assert reference == pytest.approx(expected_c)
    assert parse_quantity(text, "degC") == pytest.approx(reference, abs=1e-9)


@given(st.floats(min_value=1e-12, max_value=1e12), st.sampled_from(["Mohm", "kohm", "uF", "nF", "mA", "h", "min"]))
def test_random_values_agree_with_pint(value, unit):
    # reference: pint, through our parser's text route
    text = f"{value!r} {unit}"
    expected = REFERENCE.Quantity(value, unit).to_base_units().magnitude
    dimension_unit = {"Mohm": "ohm", "kohm": "ohm", "uF": "F", "nF": "F", "mA": "A", "h": "s", "min": "s"}[unit]
    assert parse_quantity(text, dimension_unit) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("text, unit, fragment", [
    ("12 V", "s", "'12 V' is a voltage; accepted: a time"),
    ("4 h", "V", "is a time; accepted: a voltage"),
    ("47 uF", "ohm", "is a capacitance; accepted: a resistance"),
    ("2.2M ohm", "ohm", "space between the prefix 'M' and the unit 'ohm'"),
    ("2.2 mohm", "ohm", "write '2.2 Mohm' for megohm or '2.2 milliohm' explicitly"),
    ("2.2 mOhm", "ohm", "mistyped megohm"),
    ("4k7", "ohm", "RKM code, not accepted; write '4.7 kohm'"),
    ("2M2", "ohm", "write '2.2 Mohm'"),
    ("47k", "ohm", "has the prefix 'k' but no unit; write '47 kΩ'"),
    ("2.2 M", "ohm", "prefix 'M' but no unit"),
    ("12", "V", "'12' has no unit; accepted: a voltage"),
    (12, "V", "the bare number 12 has no unit"),
    (True, "V", "got bool True"),
    (None, "s", "got NoneType None"),
    ("nan V", "V", "does not start with a number"),
    ("inf s", "s", "does not start with a number"),
    ("1e999 V", "V", "too large to be a number"),
    ("1e300 TV", "V", "overflows"),
    ("5 furlongs_per_fortnight", "s", "is not a unit pint knows"),
    ("", "s", "does not start with a number"),
    ("V 12", "V", "does not start with a number"),
])
def test_rejected_quantities_say_what_and_what_is_accepted(text, unit, fragment):
    with pytest.raises(UnitParseError) as info:
        parse_quantity(text, unit)
    assert fragment in str(info.value)
    assert "accepted: " in str(info.value)
    assert isinstance(info.value, ValueError)


def test_the_reason_is_data_not_cut_back_out_of_the_message():
    # Callers that state their own accepted values read `reason`; a user's text that itself contains
    # "; accepted: " stays whole in it, and both parts survive the pickling a sweep worker's error goes through.
    import pickle

    with pytest.raises(UnitParseError) as info:
        parse_quantity("5 parsecs; accepted: 3", "s")
    err = info.value
    assert err.reason == "'parsecs; accepted: 3' in '5 parsecs; accepted: 3' is not a unit pint knows"
    assert err.accepted == "a time, e.g. '4 h', '90 min', '30 s'"
    assert str(err) == f"{err.reason}; accepted: {err.accepted}"
    copy = pickle.loads(pickle.dumps(err))
    assert (copy.reason, copy.accepted, str(copy)) == (err.reason, err.accepted, str(err))
    with pytest.raises(UnitParseError) as info:
        parse_fraction("±-5 %")
    assert (info.value.reason, info.value.accepted) == ("'±-5 %' puts a sign after '±'; write '±5 %'", "")


def test_mohm_is_rejected_but_milliohm_spelled_out_is_accepted():
    with pytest.raises(UnitParseError):
        parse_quantity("0.5 mohm", "ohm")
    assert parse_quantity("0.5 milliohm", "ohm") == pytest.approx(5e-4)
    assert parse_quantity("0.5 mΩ", "ohm") == pytest.approx(5e-4)


@pytest.mark.parametrize("text, expected", [
    ("20 %", 0.2), ("±20 %", 0.2), ("+/-20%", 0.2), ("+-20 %", 0.2), ("20%", 0.2), ("0.2", 0.2), (0.2, 0.2),
    ("75 %", 0.75), ("150 %", 1.5), ("-5 %", -0.05), ("0", 0.0), (0, 0.0), ("0.5 %", 0.005),
])
def test_fractions(text, expected):
    assert parse_fraction(text) == pytest.approx(expected)


def test_pint_misreads_plus_minus_which_is_why_we_parse_it():
    # reference: pint reads '±15 %' as +15 % and cannot read '+/-15 %' (LIBRARIES.md); ours reads both as 0.15
    assert REFERENCE.Quantity("15 %").to("dimensionless").magnitude == pytest.approx(0.15)
    assert parse_fraction("±15 %") == parse_fraction("+/-15 %") == pytest.approx(0.15)


@pytest.mark.parametrize("text, fragment", [
    ("20", "the bare number '20' is ambiguous (20 % or 20 times?); accepted: '20 %' for percent or 0.2"),
    (20, "ambiguous"),
    ("1", "ambiguous"),
    ("±-5 %", "sign after '±'"),
    ("twenty %", "not a percentage or fraction"),
    ("20 ppm", "not a percentage or fraction"),
    (float("nan"), "not a percentage or fraction"),
    (float("inf"), "not a percentage or fraction"),
    ("1e999 %", "too large"),
    (True, "got bool"),
    ([20], "got list"),
])
def test_rejected_fractions(text, fragment):
    with pytest.raises(UnitParseError, match="accepted|write") as info:
        parse_fraction(text)
    assert fragment in str(info.value)


@pytest.mark.parametrize("value, unit, text", [
    (2.2e6, "ohm", "2.2 MΩ"), (4.7e-5, "F", "47 µF"), (14400, "s", "4 h"), (5400, "s", "1.5 h"),
    (600, "s", "10 min"), (45, "s", "45 s"), (0.0021, "s", "2.1 ms"), (3599.9, "s", "1 h"),
    (999.96, "ohm", "1 kΩ"), (0, "V", "0 V"), (-0.6, "V", "-600 mV"), (25, "degC", "25 °C"),
    (0.2, "%", "20 %"), (20000, "", "20000"), (3e-6, "A", "3 µA"), (1234.5, "ohm", "1.23 kΩ"),
])
def test_format_quantity(value, unit, text):
    assert format_quantity(value, unit) == text


@pytest.mark.parametrize("value, unit, text", [
    (4.34e-19, "%", "< 0.01 %"), (-4.34e-19, "%", "> -0.01 %"), (1e-4, "%", "0.01 %"),  # was '4.34e-17 %'
    (1.29e-40, "s", "0 s"), (1.29e-40, "A", "0 A"), (3e-16, "s", "0.3 fs"),  # was '1.29e-25 fs'
    (8190.4, "", "8190"), (1234567.8, "", "1230000"), (4.2e-17, "", "0"), (0.00047, "", "0.00047"),
    (1e-17, "degC", "0 °C"), (2.5e-9, "ohm", "2.5 nΩ"),
])
def test_tiny_and_large_figures_are_written_out(value, unit, text):
    """A figure below the display range reads as '< 0.01 %' or '0 s', never in e-notation (issue 13)."""
    assert format_quantity(value, unit) == text


@given(st.floats(min_value=-1e12, max_value=1e12), st.sampled_from(["", "%", "s", "F", "degC", "A"]))
def test_no_format_uses_an_exponent(value, unit):
    assert "e" not in format_quantity(value, unit).replace("µ", "")


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf])
def test_format_rejects_non_finite(value):
    with pytest.raises(ValueError, match="non-finite"):
        format_quantity(value, "V")


@given(st.floats(min_value=1e-9, max_value=1e9), st.sampled_from([("ohm", "ohm"), ("F", "F"), ("V", "V"), ("A", "A")]))
def test_format_then_parse_round_trips_to_three_digits(value, units):
    unit, dimension = units
    shown = format_quantity(value, unit)
    assert parse_quantity(shown, dimension) == pytest.approx(value, rel=5e-3)


@given(st.floats(min_value=0.01, max_value=7 * 86400.0))
def test_format_time_round_trips(value):
    assert parse_quantity(format_quantity(value, "s"), "s") == pytest.approx(value, rel=5e-3)


# ---- the cache of pint's parsed definitions ---------------------------------------------------------

_CACHED_PROBE = ("from tradeoff.units import parse_quantity; "
                 "print(repr([parse_quantity(t, u) for t, u in (('47 uF', 'F'), ('2.2 Mohm', 'ohm'), ('90 min', 's'), "
                 "('-10 °C', 'degC'), ('50 ppm/K', '1/K'), ('3 mA/V**2', 'A/V**2'))]))")


def test_pint_definitions_are_cached_per_installation_and_read_back_alike(tmp_path):
    """A cache keyed by pint's install folder (pint's shared one breaks for every installation once the
    first that wrote it is deleted); the values read with a fresh and with a filled cache are those of
    an uncached pint registry (pint's own conversions, computed here)."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    from tradeoff.units import pint_cache_folder

    here = Path(pint.__file__).parent
    assert pint_cache_folder(here) == pint_cache_folder(here) != pint_cache_folder(tmp_path)
    env = {**os.environ, "XDG_CACHE_HOME": str(tmp_path), "PYTHONPATH": str(Path(__file__).resolve().parents[1])}
    runs = [subprocess.run([sys.executable, "-c", _CACHED_PROBE], env=env, capture_output=True, text=True,
                           check=True).stdout for _ in range(2)]
    folder = pint_cache_folder(here)
    written = list((tmp_path / folder.parent.name / folder.name).glob("*.pickle"))
    registry = pint.UnitRegistry()
    expected = [float(registry.Quantity(m, unit).to(base).magnitude) for m, unit, base in (
        (47, "uF", "F"), (2.2, "Mohm", "ohm"), (90, "min", "s"), (-10, "degC", "degC"), (50, "ppm/K", "1/K"),
        (3, "mA/V**2", "A/V**2"))]
    assert written and runs[0] == runs[1] == repr(expected) + "\n"


def test_pint_loads_without_dask_and_dask_still_imports_after():
    """pint imports dask whenever it is installed (about 0.08 s at every start); the registry is built
    with dask hidden from pint, and a later `import dask` (the sweep's cluster) still works."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    probe = ("import sys; from tradeoff.units import parse_quantity; v = parse_quantity('47 uF', 'F'); "
             "print('dask' in sys.modules, 'pint' in sys.modules, v); import dask.base; "
             "print(parse_quantity('4 h', 's'), callable(dask.base.compute))")
    root = Path(__file__).resolve().parents[1]
    done = subprocess.run([sys.executable, "-c", probe], cwd=root, env={**os.environ, "PYTHONPATH": str(root)},
                          capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == ["False", "True", "4.7e-05", "14400.0", "True"]
