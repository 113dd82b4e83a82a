"""Quantity and fraction parsing for input files, and the one formatter every display uses.

Quantities (`"2.2 Mohm"`, `"47 µF"`, `"4 h"`, `"25 degC"`) are read with pint, through one
registry created on first use (pint's import costs about half a second). Percentages and
tolerances (`"±20 %"`) are read here, not by pint, which misreads `±` and rejects `+/-`.

Accepted spellings, beyond pint's own unit names:
- `Ω` (Greek omega or the ohm sign) and any capitalisation of `ohm` (`Ohm`, `OHM`);
- `µ` (micro sign) and `μ` (Greek mu) for micro, as well as `u`;
- `meg`, `Meg`, `MEG`, `megohm`, `Megohm` for megohm (`2.2meg`, `2.2 Meg`);
- `°C` for degC; `−` (Unicode minus) for a minus sign; `/degC` in a coefficient reads as `/K`.

Rejected on purpose, with a hint:
- a bare number where a unit belongs (`"12"` for a voltage): only dimensionless fields take numbers;
- a prefix separated from its unit (`"2.2M ohm"`: pint reads `M` as molar) or a prefix with no
  unit (`"47k"`);
- `mohm` (milliohm by the letter, almost always a mistyped megohm); write `milliohm` or `mΩ` when
  a milliohm is really meant;
- RKM codes (`4k7`, `2M2`, `4R7`): the hint gives the spelling to use instead;
- NaN, infinity, and values that overflow a float.

Results are SI floats in the coherent unit of the expected dimension (`"47 uF"` -> 4.7e-05
[F], `"4 h"` -> 14400.0 [s]), except temperatures asked for in `degC`, returned as degrees
Celsius (converted from K or degF without offset arithmetic).
"""
from __future__ import annotations

import functools
import hashlib
import math
import re
import sys
from pathlib import Path

from tradeoff.errors import UnitParseError

__all__ = ["UnitParseError", "LEADING_NUMBER_RE", "dimension", "parse_quantity", "parse_fraction", "format_quantity",
           "engineering_prefix", "pint_cache_folder"]

_UNSIGNED = r"(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?"
_NUMBER = rf"[+-]?{_UNSIGNED}"
"""A number as a person writes it, in ASCII digits only (a full-width '１２' is refused, not read as 12)."""
LEADING_NUMBER_RE = re.compile(rf"^\s*[+\-\u2212]?{_UNSIGNED}\s*(.*?)\s*$")
"""A leading number (any sign, ASCII digits) and the unit text after it, the one pattern every reader uses."""
_QUANTITY_RE = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")
_PREFIX_LETTERS = "GMkmunpµ"
_SPACED_PREFIX_RE = re.compile(rf"^([{_PREFIX_LETTERS}])\s+(\S.*)$")
_RKM_RE = re.compile(r"^\s*([0-9]+)([RrkKMG])([0-9]+)\s*$")
_RKM_PREFIX = {"R": "", "r": "", "k": "k", "K": "k", "M": "M", "G": "G"}
_CELSIUS = ("degC", "°C", "celsius", "degree_Celsius")

# Spelling fixes applied to the unit text before pint reads it, in this order.
_UNIT_SPELLINGS = (
    (re.compile("[\u03a9\u2126]"), "ohm"),  # Greek capital omega, ohm sign
    (re.compile(r"ohms?\b", re.IGNORECASE), "ohm"),
    (re.compile("[\u00b5\u03bc]"), "u"),  # micro sign, Greek mu
    (re.compile(r"[°º]\s*C\b"), "degC"),
    (re.compile(r"[°º]\s*F\b"), "degF"),
    (re.compile(r"^(?:meg|Meg|MEG)(?:ohm)?$"), "Mohm"),
    (re.compile(r"/\s*(?:degC|celsius)\b"), "/K"),
)

# What a dimension is called in messages, and what a user may write for it.
_DIMENSIONS = (
    ("s", "a time", "'4 h', '90 min', '30 s'"),
    ("V", "a voltage", "'12 V', '600 mV'"),
    ("A", "a current", "'150 mA', '3 uA'"),
    ("ohm", "a resistance", "'2.2 Mohm', '470 kΩ', '2.2meg'"),
    ("F", "a capacitance", "'47 uF', '100 nF'"),
    ("W", "a power", "'0.3 W', '250 mW'"),
    ("K", "a temperature", "'25 degC', '-10 °C'"),
    ("Hz", "a frequency", "'32.768 kHz', '1 MHz'"),
    ("1/K", "a temperature coefficient", "'50 ppm/K', '-0.1 %/K'"),
    ("J", "an energy", "'1 J'"),
    ("C", "a charge", "'1 uC'"),
    ("H", "an inductance", "'10 mH'"),
    ("m", "a length (pint reads a bare 'm' as metre)", "'1 m'"),
    ("kg", "a mass", "'1 g'"),
    ("M", "a concentration (pint reads a bare 'M' as molar)", "'1 M'"),
    ("dimensionless", "a plain number", "'10000', '50 ppm'"),
)

_SYMBOLS = {"ohm": "Ω", "degC": "°C"}
_ENGINEERING_PREFIXES = {-15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}
_SMALLEST_MANTISSA = 0.01
"""Smallest mantissa shown on the smallest prefix (0.01 fs); less displays as 0 (a display limit)."""
_SMALLEST_PLAIN = 1e-4
"""Smallest plain number or degree Celsius shown as a number; less displays as 0."""
_SMALLEST_PERCENT = 0.01
"""Smallest percentage shown as a number [%]; a smaller nonzero one prints "< 0.01 %"."""


def pint_cache_folder(pint_dir: Path) -> Path:
    """Folder of the parsed pint definitions for the pint installed in `pint_dir`.

    One folder per installation: pint's own shared folder (`cache_folder=":auto:"`) names a cache
    by the definition file's content but keeps the absolute paths of the files it includes, so
    after the first installation that wrote it is removed (a deleted virtual environment), every
    other one fails to load it and parses the definitions again on every start.
    """
    import platformdirs

    key = hashlib.sha256(str(pint_dir.resolve()).encode()).hexdigest()[:16]
    return platformdirs.user_cache_path("tradeoff", appauthor=False) / f"pint-{key}"


def _import_pint():
    """pint, loaded without its dask support.

    pint imports dask whenever dask is installed (here a test and cluster extra), some 0.08 s at every
    start, for quantities that wrap dask arrays, which this package never makes. While pint loads, a
    None entry for dask in sys.modules makes pint's check (importlib.util.find_spec) find no dask; the
    entry is removed afterwards, so a later `import dask` (the sweep's cluster) works as usual.
    """
    if "pint" in sys.modules or "dask" in sys.modules:
        import pint
        return pint
    sys.modules["dask"] = None
    try:
        import pint
    finally:
        if sys.modules.get("dask", False) is None:
            del sys.modules["dask"]
    return pint


@functools.lru_cache(maxsize=1)
def _registry():
    """The one pint registry, created on first use.

    pint parses its definition files on every start (0.2 to 0.4 s here); a cache of the parsed
    definitions (`pint_cache_folder`) cuts that to a few tens of ms. Where the folder cannot be
    written or read, the registry is built without the cache.
    """
    pint = _import_pint()
    try:
        return pint.UnitRegistry(cache_folder=pint_cache_folder(Path(pint.__file__).parent))
    except OSError:
        return pint.UnitRegistry()


def _normalise_unit(unit_text: str) -> str:
    """Rewrite designer spellings (Ω, µ, meg, °C) into names pint knows."""
    for pattern, replacement in _UNIT_SPELLINGS:
        unit_text = pattern.sub(replacement, unit_text)
    return unit_text


@functools.lru_cache(maxsize=1024)
def _pint_units(unit_text: str):
    """Parse unit text with pint; None when pint cannot read it."""
    try:
        return _registry().parse_units(unit_text)
    except Exception:  # pint's parser raises a zoo (AttributeError, TypeError, SyntaxError, ...)
        return None


@functools.lru_cache(maxsize=None)
def _describe(unit: str) -> tuple[str, str]:
    """(name, accepted spellings) of the dimension of `unit`, for messages."""
    registry = _registry()
    units = _pint_units(unit)
    if units is None:
        return f"a quantity in {unit}", f"'1 {unit}'"
    wanted = registry.Quantity(1, units).dimensionality
    for reference, name, examples in _DIMENSIONS:
        if registry.Quantity(1, reference).dimensionality == wanted:
            return name, examples
    return f"a quantity in {unit}", f"'1 {unit}'"


def dimension(unit_text: str) -> str:
    """What `unit_text` measures, by the reference unit of its dimension: 's', 'V', 'A', 'ohm', 'F', 'W',
    'K' (a temperature difference), 'degC' (a temperature written in degC or °C), 'Hz', '1/K', '' for a
    plain number or percentage, 'other' for any other dimension (a compound such as A/V**2)."""
    text = unit_text.strip()
    if not text or text == "%" or text == "ppm":
        return ""
    normalised = _normalise_unit(text)
    if normalised in _CELSIUS:
        return "degC"
    units = _pint_units(normalised)
    if units is None:
        return "other"
    registry = _registry()
    found = registry.Quantity(1, units).dimensionality
    for reference, _, _ in _DIMENSIONS:
        if reference not in ("m", "kg", "M", "J", "C") and registry.Quantity(1, reference).dimensionality == found:
            return "" if reference == "dimensionless" else reference
    return "other"


def _reject(text: object, unit: str, what: str) -> UnitParseError:
    """Error saying what is wrong with `text` and what the field accepts."""
    name, examples = _describe(unit)
    return UnitParseError(what, f"{name}, e.g. {examples}")


def _spelling_problem(text: str, number: str, unit_text: str, unit: str) -> str | None:
    """What is wrong with a spelling pint would misread, or None."""
    symbol = _SYMBOLS.get(unit, unit)
    rkm = _RKM_RE.match(text)
    if rkm:
        whole, letter, decimals = rkm.groups()
        return (f"'{text.strip()}' is an RKM code, not accepted; "
                f"write '{whole}.{decimals} {_RKM_PREFIX[letter]}ohm'")
    spaced = _SPACED_PREFIX_RE.match(unit_text)
    if spaced:
        prefix, rest = spaced.groups()
        return (f"'{text.strip()}' has a space between the prefix '{prefix}' and the unit '{rest}', "
                f"so pint reads '{prefix}' as a unit of its own; write '{number} {prefix}{rest}'")
    if len(unit_text) == 1 and unit_text in _PREFIX_LETTERS and unit_text != unit:
        return f"'{text.strip()}' has the prefix '{unit_text}' but no unit; write '{number} {unit_text}{symbol}'"
    if re.fullmatch(r"m(?i:ohms?)", unit_text):
        return (f"'{text.strip()}' reads as milliohm, almost surely a mistyped megohm; "
                f"write '{number} Mohm' for megohm or '{number} milliohm' explicitly")
    return None


@functools.lru_cache(maxsize=None)
def _dimensionless(unit: str) -> bool:
    """Whether the field unit `unit` is a plain number (ValueError when pint cannot read it: a programming
    error, not user input)."""
    expected = _pint_units(_normalise_unit(unit))
    if expected is None:
        raise ValueError(f"unit {unit!r} is not known to pint")
    registry = _registry()
    return registry.Quantity(1, expected).dimensionality == registry.Quantity(1).dimensionality


@functools.lru_cache(maxsize=1024)
def _conversion(unit_text: str, unit: str):
    """How pint reads a quantity written in the normalised `unit_text` ('' for a plain number) for a field in
    `unit`, found once per pair: (the units pint reads, None when it cannot; whether their dimension is
    `unit`'s; the factor to the result unit when the conversion is a plain scaling, else None: offset and
    logarithmic units, and temperatures asked for in degC, are converted by pint every time)."""
    registry = _registry()
    found = _pint_units(unit_text) if unit_text else registry.dimensionless
    if found is None:
        return None, False, None
    same = registry.Quantity(1, found).dimensionality == registry.Quantity(1, _pint_units(_normalise_unit(unit))
                                                                             ).dimensionality
    if not same or unit in _CELSIUS:
        return found, same, None
    try:
        zero, one = (float(registry.Quantity(m, found).to_base_units().magnitude) for m in (0.0, 1.0))
    except Exception:  # offset units inside compound units: pint's own conversion reports it
        return found, same, None
    return found, same, one if zero == 0.0 and math.isfinite(one) else None


def parse_quantity(text: str | int | float, unit: str) -> float:
    """Parse `text` (e.g. "2.2 Mohm") checked against the dimension of `unit` (e.g. "ohm").

    Returns the value in the coherent SI unit of that dimension ([ohm], [F], [s], ...), or in
    [degC] when `unit` is degC. A bare number (str or int/float) is accepted only when `unit`
    is dimensionless. Raises UnitParseError saying what was expected and what was found.
    """
    dimensionless = _dimensionless(unit)
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise _reject(text, unit, f"got {type(text).__name__} {text!r}, not a quantity string")
    if isinstance(text, (int, float)):
        if not dimensionless:
            raise _reject(text, unit, f"the bare number {text!r} has no unit")
        text = repr(text)
    raw = text
    text = text.replace("\u2212", "-")
    match = _QUANTITY_RE.match(text)
    if not match:
        if any(ch.isdigit() and not ch.isascii() for ch in raw):
            raise _reject(raw, unit, f"'{raw.strip()}' has digits other than ASCII 0-9 (full-width or another "
                          "script); write them as 0-9")
        raise _reject(raw, unit, f"'{raw.strip()}' does not start with a number")
    number, unit_text = match.groups()
    problem = _spelling_problem(text, number, unit_text, unit)
    if problem:
        raise _reject(raw, unit, problem)
    magnitude = float(number)
    if not math.isfinite(magnitude):
        raise _reject(raw, unit, f"'{raw.strip()}' is too large to be a number")
    if not unit_text and not dimensionless:
        raise _reject(raw, unit, f"'{raw.strip()}' has no unit")
    found, same_dimension, scale = _conversion(_normalise_unit(unit_text), unit)
    if found is None:
        raise _reject(raw, unit, f"'{unit_text}' in '{raw.strip()}' is not a unit pint knows")
    if not same_dimension:
        found_name = _describe(str(found))[0] if unit_text else "a plain number"
        raise _reject(raw, unit, f"'{raw.strip()}' is {found_name}")
    if scale is not None:
        value = magnitude * scale   # what pint computes: the magnitude times its conversion factor
    else:
        quantity = _registry().Quantity(magnitude, found)
        try:
            if unit in _CELSIUS:
                value = float(quantity.to("degC").magnitude)
            else:
                value = float(quantity.to_base_units().magnitude)
        except Exception as exc:  # offset units inside compound units cannot be converted
            raise _reject(raw, unit, f"'{raw.strip()}' cannot be converted ({type(exc).__name__})") from None
    if not math.isfinite(value):
        raise _reject(raw, unit, f"'{raw.strip()}' overflows")
    return value


_FRACTION_RE = re.compile(rf"^\s*(±|\+/-|\+-)?\s*({_NUMBER})\s*(%?)\s*$")
_FRACTION_ACCEPTED = "'20 %', '±20 %', '+/-20%' or a fraction below 1 (0.2)"


def parse_fraction(text: str | int | float) -> float:
    """Parse a percentage or fraction into a fraction: "20 %", "±20 %", "+/-20%" and 0.2 give 0.2.

    A bare number is a fraction and must lie in (-1, 1); a bare number of 1 or more (e.g. 20) is
    rejected as ambiguous (20 % or 20 times?). `±`/`+/-` mark a symmetric tolerance and need a
    non-negative number. Raises UnitParseError.
    """
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise UnitParseError(f"got {type(text).__name__} {text!r}, not a percentage", _FRACTION_ACCEPTED)
    shown = text.strip() if isinstance(text, str) else repr(text)
    match = _FRACTION_RE.match(repr(text) if isinstance(text, (int, float)) else text.replace("\u2212", "-"))
    if not match:
        raise UnitParseError(f"'{shown}' is not a percentage or fraction", _FRACTION_ACCEPTED)
    plus_minus, number, percent = match.groups()
    value = float(number)
    if not math.isfinite(value):
        raise UnitParseError(f"'{shown}' is too large to be a number", _FRACTION_ACCEPTED)
    if plus_minus and value < 0:
        raise UnitParseError(f"'{shown}' puts a sign after '±'; write '±{number.lstrip('+-')} %'")
    if percent:
        return value / 100.0
    if abs(value) >= 1:
        raise UnitParseError(f"the bare number '{shown}' is ambiguous ({number} % or {number} times?)",
                             f"'{number} %' for percent or {value / 100:g}, a fraction below 1")
    return value


def _exponent(value: float) -> int:
    """Power of ten (a multiple of 3, femto to tera) of the engineering prefix for a nonzero `value`."""
    return max(-15, min(12, 3 * math.floor(math.log10(abs(value)) / 3)))


def engineering_prefix(value: float) -> tuple[str, float]:
    """The engineering prefix for showing `value` and its factor: 4.7e-5 -> ('µ', 1e-6); 0 -> ('', 1)."""
    if value == 0 or not math.isfinite(value):
        return "", 1.0
    exponent = _exponent(value)
    return _ENGINEERING_PREFIXES[exponent], 10.0 ** exponent


def _engineering(value: float, symbol: str, digits: int) -> str:
    """`value` with an engineering prefix on `symbol`, `digits` significant digits; below a
    hundredth of the smallest prefix (femto) it is "0" (a 1e-25 fs rounding residue is zero)."""
    exponent = _exponent(value) if value else 0
    mantissa = float(f"{value / 10 ** exponent:.{digits}g}")
    if abs(mantissa) >= 1000 and exponent < 12:
        exponent += 3
        mantissa = float(f"{value / 10 ** exponent:.{digits}g}")
    if abs(mantissa) < _SMALLEST_MANTISSA:
        return f"0 {symbol}"
    return f"{_plain(mantissa, digits)} {_ENGINEERING_PREFIXES[exponent]}{symbol}"


def _rounded(value: float, digits: int) -> float:
    """`value` rounded to `digits` significant digits."""
    return float(f"{value:.{digits}g}")


def _plain(value: float, digits: int) -> str:
    """`value` to `digits` significant digits written out without an exponent ('8190', '1230000',
    '0.00047'); a magnitude of 1e15 or more keeps its exponent, being beyond every accepted input."""
    rounded = _rounded(value, digits)
    text = f"{rounded:.{digits}g}"
    if "e" not in text or abs(rounded) >= 1e15:
        return text
    decimals = max(0, digits - 1 - math.floor(math.log10(abs(rounded))))
    return f"{rounded:.{decimals}f}"


def format_quantity(value: float, unit: str, digits: int = 3) -> str:
    """Display text for an SI `value` in `unit`: 2.2e6, "ohm" -> "2.2 MΩ"; 4.7e-5, "F" -> "47 µF".

    Times ("s") below a minute use s/ms/µs, below an hour min, otherwise h (14400 -> "4 h");
    "degC" prints "25 °C"; "%" takes a fraction (0.2 -> "20 %"); "" prints a plain number.
    No figure is written with an exponent: a percentage below 0.01 % prints "< 0.01 %", a time
    or prefixed quantity below 0.01 of femto "0 s" ("0 A"), a plain number or temperature below
    1e-4 "0". Raises ValueError for NaN or infinity, which must never reach a display.
    """
    if not math.isfinite(value):
        raise ValueError(f"cannot display a non-finite value {value!r} {unit}")
    value = float(value)
    if unit == "s":
        if abs(_rounded(value / 3600, digits)) >= 1:
            return f"{_plain(value / 3600, digits)} h"
        if abs(_rounded(value / 60, digits)) >= 1:
            return f"{_plain(value / 60, digits)} min"
        return _engineering(value, "s", digits)
    if unit == "%":
        percent = value * 100
        if 0 < abs(percent) < _SMALLEST_PERCENT:
            return f"< {_SMALLEST_PERCENT:g} %" if percent > 0 else f"> -{_SMALLEST_PERCENT:g} %"
        return f"{_plain(percent, digits)} %"
    shown = _plain(value, digits) if abs(value) >= _SMALLEST_PLAIN else "0"
    if unit in _CELSIUS:
        return f"{shown} °C"
    if unit in ("", "dimensionless", "1"):
        if value.is_integer() and abs(value) < 1e15:
            return str(int(value))
        return shown
    return _engineering(value, _SYMBOLS.get(unit, unit), digits)

