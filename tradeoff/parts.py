"""Part classes and their parameters: values kept as written, converted to SI when a model asks,
and checked against the ranges of `tradeoff.param_rules` when read in.

A value is a number (dimensionless), a quantity string (`"1.4 V"`), a percentage (`"20 %"`) or a
list of these; `Part.value(name, unit)` returns an SI float after checking the dimension.
"""
from __future__ import annotations

import dataclasses
import functools
import re
from collections.abc import Iterable, Mapping
from types import MappingProxyType
from typing import Any

from tradeoff import param_rules
from tradeoff.errors import CatalogError, Problem, UnitParseError
from tradeoff.fields import did_you_mean
from tradeoff.units import LEADING_NUMBER_RE, dimension, parse_fraction, parse_quantity

__all__ = ["COST_CURRENCY", "OVERRIDE_ORIGIN", "Param", "Part", "plain_source", "range_problems", "value_problem", "VALUE_ACCEPTED"]

COST_CURRENCY = "EUR"
"""Currency of the indicative costs (users replace them with their own prices)."""

OVERRIDE_ORIGIN = "design overrides"
"""Origin of a parameter a design file's `overrides` replaced: its errors are keyed `<part>.<param>`
and the design loader places them at that override."""

_BARE_PREFIXES = set("GMkmunpµμ")
_DIMENSIONLESS = ("", "1", "dimensionless")
VALUE_ACCEPTED = ("accepted: a number, a quantity with its unit ('1.4 V', '3 uA', '50 ppm/K'), "
                  "a percentage ('20 %') or a list of these")
"""What a parameter value may be, for messages."""


_FAMILY_WORDS = (
    (r"CD4060B datasheet \(Texas Instruments\)", "14-stage ripple counter datasheet"),
    (r"\bCD4060B\b|\b4060-type\b", "14-stage ripple counter"),
    (r"\bTLC555(?:/| and )LMC555\b|\bTLC555\b|\bLMC555\b", "CMOS 555-class timer"),
    (r"\bNE555\b", "bipolar 555-class timer"),
)
"""Datasheet families the shipped sources name by part number or maker, and their generic words."""


def plain_source(text: str) -> str:
    """A source text for messages: 'NE555 datasheets: ...' -> 'bipolar 555-class timer datasheets: ...'."""
    for pattern, words in _FAMILY_WORDS:
        text = re.sub(pattern, words, text)
    return text


# ---- values ---------------------------------------------------------------------------------

def _check_text(text: str) -> str | None:
    """What is wrong with a quantity or percent string whose dimension is not yet known, or None."""
    try:
        if "%" in text and not re.search(r"%\s*/", text):
            parse_fraction(text)
            return None
        match = LEADING_NUMBER_RE.match(text)
        own_unit = match.group(1) if match else ""
        if own_unit in _BARE_PREFIXES:
            return f"'{text.strip()}' has the prefix '{own_unit}' but no unit"
        try:
            parse_quantity(text, own_unit)
        except UnitParseError:
            raise
        except ValueError:  # pint does not know the unit: read as a plain number for the reason
            parse_quantity(text, "")
    except UnitParseError as exc:  # its tail names the dimension we guessed: drop it
        return exc.reason
    return None


def value_problem(value: Any) -> str | None:
    """What is wrong with a parameter value as written, or None when it is acceptable."""
    if isinstance(value, bool) or value is None:
        return f"{value!r} is not a value"
    if isinstance(value, (int, float)):
        return None if value == value and abs(value) != float("inf") else f"{value!r} is not a finite number"
    if isinstance(value, str):
        return _check_text(value)
    if isinstance(value, (list, tuple)):
        if not value:
            return "the list is empty"
        for item in value:
            if isinstance(item, (list, tuple)):
                return "a list of lists is not accepted"
            problem = value_problem(item)
            if problem:
                return f"list item {item!r}: {problem}"
        return None
    return f"a {type(value).__name__} is not a value"


def _si_items(param: "Param") -> tuple[tuple[float, ...], str, bool] | None:
    """(SI values, dimension, written as a percentage) of a parameter as written; None when its unit
    is one pint does not know (its dimension is then checked when a model reads it)."""
    items = param.value if isinstance(param.value, tuple) else (param.value,)
    values, dimensions, percent = [], set(), False
    for item in items:
        if isinstance(item, (int, float)):
            values.append(float(item))
            dimensions.add("")
        elif "%" in item and not re.search(r"%\s*/", item):
            values.append(parse_fraction(item))
            dimensions.add("")
            percent = True
        else:
            match = LEADING_NUMBER_RE.match(item)
            own_unit = match.group(1) if match else ""
            try:
                values.append(parse_quantity(item, own_unit))
            except (UnitParseError, ValueError):
                return None
            dimensions.add(dimension(own_unit))
    return tuple(values), (dimensions.pop() if len(dimensions) == 1 else "other"), percent


def range_problems(params: Mapping[str, "Param"], only: Iterable[str] | None = None) -> list[tuple["Param", str]]:
    """(parameter, what is wrong) for each value outside its accepted range (tradeoff.param_rules) and each
    rule between parameters broken; with `only`, just the problems involving those names."""
    si: dict[str, tuple[float, ...]] = {}
    found: list[tuple[Param, str]] = []
    for name, param in params.items():
        written = _si_items(param)
        if written is None:
            continue
        problem = param_rules.value_problem(name, *written)
        if problem:
            found.append((param, problem))
        else:
            si[name] = written[0]
    wanted = set(params if only is None else only)
    found = [(param, message) for param, message in found if param.name in wanted]
    return found + [(params[name], message) for name, message, involved in param_rules.cross_problems(si)
                    if wanted.intersection(involved)]


@functools.lru_cache(maxsize=4096)
def _convert(value: int | float | str, unit: str, si: bool) -> float:
    """`value` as an SI float of the dimension of `unit`; `si` marks a bare number already in SI.

    Rounded to 15 significant digits so unit conversion leaves no artefacts ("10 uF" gives 1e-05,
    not 9.999999999999999e-06) and a catalog bound compares equal to the standard value it names.
    """
    if si and isinstance(value, (int, float)):
        return float(value)
    if isinstance(value, str) and "%" in value and unit in _DIMENSIONLESS:
        return parse_fraction(value)
    return float(f"{parse_quantity(value, unit):.15g}")


@dataclasses.dataclass(frozen=True)
class Param:
    """One part parameter as written in its file, with its source and location.

    value: number, quantity string, percent string, or tuple of these; si: True when a bare
    number is already an SI value (design-file overrides), False when it is dimensionless.
    """

    name: str
    value: Any
    source: str
    file: str
    line: int | None = None
    column: int | None = None
    note: str = ""
    si: bool = False

    @property
    def text(self) -> str:
        """The value as written, with its unit: list items joined by ', ', bare numbers marked."""
        items = self.value if isinstance(self.value, tuple) else (self.value,)
        text = ", ".join(str(item) for item in items)
        if self.name == "cost":
            return f"{text} {COST_CURRENCY}"
        if all(isinstance(item, (int, float)) for item in items):
            return f"{text} (SI)" if self.si else f"{text} (dimensionless)"
        return text


# ---- parts ----------------------------------------------------------------------------------

@dataclasses.dataclass(frozen=True)
class Part:
    """A generic part class: id, category, description, parameters and extra fields.

    fields: non-parameter keys (`dielectric` for capacitors, `module` for topologies, `notes`).
    """

    id: str
    category: str
    description: str
    params: Mapping[str, Param]
    fields: Mapping[str, str]
    file: str
    line: int | None = None
    column: int | None = None
    field_positions: Mapping[str, tuple[int, int]] = dataclasses.field(default_factory=lambda: MappingProxyType({}))
    """(line, column) of each field's value in its file, for messages about a field."""

    def _error(self, name: str, message: str, param: Param | None = None) -> CatalogError:
        where = param or self
        return CatalogError.single(where.file, f"{self.id}.params.{name}", message, where.line, where.column)

    def param_error(self, name: str, message: str) -> CatalogError:
        """A located error about parameter `name` (in its catalog file, or at a design's override of it)."""
        param = self.param(name)
        key = f"{self.id}.{name}" if param.file == OVERRIDE_ORIGIN else f"{self.id}.params.{name}"
        return CatalogError.single(param.file, key, message, param.line, param.column)

    def param(self, name: str) -> Param:
        """The parameter `name`; CatalogError naming the part's file and line when missing."""
        try:
            return self.params[name]
        except KeyError:
            known = ", ".join(self.params) or "none"
            raise self._error(name, f"part class '{self.id}' has no parameter '{name}';"
                              f"{did_you_mean(name, self.params)} it has: {known}") from None

    def has(self, name: str) -> bool:
        """True when the part class defines parameter `name`."""
        return name in self.params

    def _convert(self, param: Param, item: Any, unit: str) -> float:
        try:
            return _convert(item, unit, param.si)
        except UnitParseError as exc:
            raise self._error(param.name, str(exc), param) from None

    def value(self, name: str, unit: str) -> float:
        """Parameter `name` as an SI float, checked against the dimension of `unit` ('V', 'F', '1/K', '' ...)."""
        param = self.param(name)
        if isinstance(param.value, tuple):
            raise self._error(name, f"is a list of {len(param.value)} values where one value in "
                                    f"'{unit or 'dimensionless'}' is needed", param)
        return self._convert(param, param.value, unit)

    def values(self, name: str, unit: str) -> tuple[float, ...]:
        """List parameter `name` (e.g. rated voltages) as SI floats; a single value gives a 1-tuple."""
        param = self.param(name)
        items = param.value if isinstance(param.value, tuple) else (param.value,)
        return tuple(self._convert(param, item, unit) for item in items)

    def source(self, name: str) -> str:
        """Where parameter `name` comes from (a document, 'common practice', 'from memory', 'indicative'),
        as messages show it: datasheet families in generic words, no part number or maker's name
        (`plain_source`; the raw text stays in `Param.source`, listed by `tradeoff catalog`)."""
        return plain_source(self.param(name).source)

    @property
    def summary(self) -> str:
        """The description up to its first comma, without '(generic class)': the short text a BOM's value column shows."""
        return self.description.split(", ")[0].replace(" (generic class)", "").strip()

    @property
    def cost(self) -> float:
        """Indicative unit cost [EUR]: a default to be replaced by the user's own prices."""
        return self.value("cost", "")

    def with_overrides(self, overrides: Mapping[str, Any], origin: str = "override") -> "Part":
        """A copy with parameters replaced: SI floats (taken as SI) or quantity/percent strings.

        origin: where the overrides come from (e.g. a design file's name), shown in errors and sources.
        """
        params = dict(self.params)
        problems = []
        for name, value in overrides.items():
            if name not in self.params:
                problems.append(Problem(origin, None, None, f"{self.id}.{name}",
                                        f"part class '{self.id}' has no parameter '{name}';"
                                        f"{did_you_mean(name, self.params)} it has: {', '.join(self.params)}"))
                continue
            value = tuple(value) if isinstance(value, list) else value
            problem = value_problem(value)
            if problem:
                problems.append(Problem(origin, None, None, f"{self.id}.{name}", f"{problem}; {VALUE_ACCEPTED}"))
                continue
            params[name] = Param(name, value, f"{origin} (replaces: {self.params[name].source})", origin,
                                 si=isinstance(value, (int, float)))
        problems += [Problem(origin, None, None, f"{self.id}.{param.name}", message)
                     for param, message in range_problems(params, only=overrides)]
        if problems:
            raise CatalogError(problems)
        return dataclasses.replace(self, params=MappingProxyType(params))
