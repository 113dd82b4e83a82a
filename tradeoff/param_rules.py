"""Accepted ranges of part parameters, declared once and checked wherever a parameter is read in:
shipped catalogs, user catalogs (`--catalog`) and a design file's `overrides`.

A parameter's range follows from its name and the dimension it is written in:

- a tolerance (`tolerance`, `*_tolerance`, `*_tol`) or a loss/drift/error band is a fraction from 0 %
  to below 100 %; `must_operate` above 0 to 150 %, `must_release` 0 to below 100 %, a relay's
  typical release band (`release_typ_min`, `release_typ_max`) strictly between 0 and 100 %, switching
  thresholds (`vt_*`) strictly between 0 and 100 % of the supply (datasheet conventions);
- a temperature coefficient, ageing or band edge may have either sign; a temperature in degC lies
  from -273.15 degC to 1000 degC;
- a leakage, bias, offset, quiescent, sleep or standby current, a saturation or dropout
  voltage and a junction ideality (0: a fixed drop) may be 0; a cost (at most 100,000) or effort
  (at most 1) is at least 0;
- counts (`stages`, `max_counters`, `*_dividers`, `stages_out`, `p_channel`, `break_quantity`) are whole numbers;
- everything else is above 0 (resistances, capacitances, currents a test or rating names,
  voltages, times, frequencies, powers, gains, exponents);
- every value lies below a ceiling per dimension (`CEILINGS`), far above any real part.

Between parameters of one part: `X_min <= X_typ <= X_max` (also `X_typ <= X`, `X <= X_max`,
`min_value <= max_value`), a `*_supply` list rises and has as many items as each list it
tabulates (`r_max_supply` with `r_max`, `quiescent_supply` with `quiescent_typ` ...), and the
`*_band_*` lists of one part have equal lengths.
"""
from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from tradeoff.units import format_quantity

__all__ = ["CEILINGS", "Range", "range_of", "value_problem", "cross_problems"]

CEILINGS = {"ohm": 1e16, "F": 100.0, "A": 1e4, "V": 1e5, "s": 1e10, "Hz": 1e11, "W": 1e6, "K": 1e4, "degC": 1000.0,
            "1/K": 1.0, "": 1e13, "other": 1e13}
"""Largest magnitude accepted per dimension, in SI (degC for temperatures): far above any real part."""

_FRACTION_RE = re.compile(r"(^|_)(tolerance|tol|loss|drift|error|error_typ|aging_per_decade|typical_frac)$")
_SIGNED_RE = re.compile(r"(tempco|coefficient|temp_exponent|aging|_band_lo|_band_hi)$")
_MAY_BE_ZERO_RE = re.compile(r"(leakage|iceo|idss|igss|bias|offset|quiescent|sleep_current|brownout|active_current|"
                             r"threshold_current|vce_sat|high_drop|dropout|cost|effort|ideality)")
_COST_RE = re.compile(r"(^|_)cost$")
_INTEGER_RE = re.compile(r"^(stages|stages_out|max_counters|p_channel|break_quantity)$|_dividers$")
_EXPLICIT = {
    "must_operate": (0.0, 1.5, False, True),
    "must_release": (0.0, 1.0, True, False),
    "release_typ_min": (0.0, 1.0, False, False), "release_typ_max": (0.0, 1.0, False, False),
    "vt_min": (0.0, 1.0, False, False), "vt_typ": (0.0, 1.0, False, False), "vt_max": (0.0, 1.0, False, False),
    "effort": (0.0, 1.0, True, True),
    "p_channel": (0.0, 1.0, True, True),
    "stages": (1.0, 64.0, True, True), "stages_out": (1.0, 64.0, True, True), "max_counters": (1.0, 8.0, True, True),
}
"""name -> (low, high, low included, high included) where the name alone fixes the range."""


@dataclass(frozen=True)
class Range:
    """Accepted values of one parameter (SI, or degC): low/high bounds, whether each is included, whole numbers."""

    low: float
    high: float
    low_in: bool
    high_in: bool
    integer: bool
    unit: str

    def accepts(self, value: float) -> bool:
        """True when `value` lies in the range (and is whole when the range asks for it)."""
        if not math.isfinite(value) or (self.integer and not float(value).is_integer()):
            return False
        above = value >= self.low if self.low_in else value > self.low
        below = value <= self.high if self.high_in else value < self.high
        return above and below

    @property
    def text(self) -> str:
        """The range as a person reads it ('above 0 Ω to 10 PΩ', 'from 0 % to below 100 %')."""
        unit = "%" if self.unit == "%" else self.unit
        low = "from " + _bound(self.low, unit) if self.low_in else "above " + _bound(self.low, unit)
        high = ("to " if self.high_in else "to below ") + _bound(self.high, unit)
        return f"{'a whole number ' if self.integer else ''}{low} {high}"


def _bound(value: float, unit: str) -> str:
    if unit in ("", "other"):
        return f"{value:g}"
    if unit == "%":
        return f"{value * 100:g} %"
    return format_quantity(value, unit)


def range_of(name: str, dimension: str, percent: bool) -> Range:
    """The accepted range of parameter `name` written in `dimension` (see tradeoff.units.dimension);
    `percent` when it is written as a percentage."""
    ceiling = CEILINGS.get(dimension, CEILINGS["other"])
    unit = "%" if percent else dimension if dimension not in ("", "other") else ""
    if name in _EXPLICIT:
        low, high, low_in, high_in = _EXPLICIT[name]
        return Range(low, high, low_in, high_in, bool(_INTEGER_RE.search(name)), unit)
    if _COST_RE.search(name):
        return Range(0.0, 1e5, True, True, False, "")
    if _FRACTION_RE.search(name) and dimension == "":
        return Range(0.0, 1.0, True, False, False, "%")
    if dimension == "degC":
        return Range(-273.15, ceiling, True, True, False, unit)
    if _SIGNED_RE.search(name) or dimension == "1/K":
        return Range(-ceiling, ceiling, True, True, False, unit)
    integer = bool(_INTEGER_RE.search(name))
    may_be_zero = bool(_MAY_BE_ZERO_RE.search(name))
    return Range(0.0, ceiling, may_be_zero, True, integer, unit)


def value_problem(name: str, values: Sequence[float], dimension: str, percent: bool) -> str | None:
    """What is wrong with the SI `values` of parameter `name` (one, or a list), or None."""
    accepted = range_of(name, dimension, percent)
    for value in values:
        if not accepted.accepts(value):
            shown = f"{value * 100:g} %" if accepted.unit == "%" else _bound(value, accepted.unit)
            return f"{shown} is outside the range of {name}; accepted: {accepted.text}"
    return None


def _order_pairs(names: Sequence[str]) -> list[tuple[str, str]]:
    """(lower, upper) parameter pairs that must be ordered, among `names`."""
    pairs = [("min_value", "max_value")]
    for name in names:
        for low_tail, high_tail in (("_min", "_typ"), ("_typ", "_max"), ("_min", "_max")):
            if name.endswith(low_tail):
                pairs.append((name, name[: -len(low_tail)] + high_tail))
        if name.endswith("_typ"):
            pairs.append((name, name[:-4]))
        pairs.append((name, name + "_max"))
    return [(a, b) for a, b in pairs if a in names and b in names]


def cross_problems(params: Mapping[str, Sequence[float]]) -> list[tuple[str, str, tuple[str, str]]]:
    """(parameter, what is wrong, the two parameters involved) for rules between the parameters of one
    part, from their SI values."""
    problems: list[tuple[str, str, tuple[str, str]]] = []
    for low, high in _order_pairs(list(params)):
        a, b = params[low], params[high]
        if len(a) == len(b):
            broken = any(x > y for x, y in zip(a, b))
        else:
            broken = min(a) > max(b)
        if broken:
            problems.append((low, f"{low} is above {high}; accepted: {low} <= {high}", (low, high)))
    for name, table in params.items():
        if not name.endswith("_supply") or len(table) < 2:
            continue
        if any(x >= y for x, y in zip(table, table[1:])):
            problems.append((name, f"{name} does not rise; accepted: supply voltages in rising order", (name, name)))
        stem = name[: -len("_supply")]
        for other, items in params.items():
            if other != name and not other.endswith("_supply") and (other == stem or other.startswith(stem + "_")) \
                    and len(items) > 1 and len(items) != len(table):
                problems.append((other, f"{other} has {len(items)} items but {name} has {len(table)}; accepted: one "
                                        f"{other} item per {name} item", (other, name)))
    bands = {name: len(items) for name, items in params.items() if "_band_" in name}
    if len(set(bands.values())) > 1:
        first = next(iter(bands))
        for name, count in bands.items():
            if count != bands[first]:
                problems.append((name, f"{name} has {count} items but {first} has {bands[first]}; accepted: "
                                       "band lists of equal length", (name, first)))
    return problems
