"""Reading a brief's YAML sections: the reader that collects every problem (at its file, line and
column) and every value's origin, and one reader per section (delay, ambient, supply, load with its
switched circuit, limits, weights, series, topologies, analysis; environment and production in their
own modules) returning model input in SI units.
`tradeoff.brief` validates the result into the frozen `Brief`; the shapes, defaults and accepted
ranges are listed in its docstring.
"""
from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal

import yaml

from tradeoff import yamlpos
from tradeoff.errors import Problem, UnitParseError
from tradeoff.environment import read_environment
from tradeoff.production import read_production
from tradeoff.fields import (Invalid, Problems, boolean, choice, closest, dotted, first_unknown, fraction, number,
                             quantity, show, text)
from tradeoff.units import format_quantity

__all__ = ["SERIES_NAMES", "HAZARDOUS_VOLTAGE_V", "TOP_KEYS", "BriefValue", "SectionReader", "read_sections",
           "sorted_values"]

SERIES_NAMES = ("E3", "E6", "E12", "E24", "E48", "E96", "E192")
PAIRINGS = ("series", "parallel")
"""Ways two standard parts may be combined into one value (`series.pairs`)."""

DAY_S = 86400.0
HAZARDOUS_VOLTAGE_V = 50.0
"""Switched voltage above which the mains cautions apply even when the brief does not say 'mains' [V]
(the usual extra-low-voltage boundary, common practice)."""
MAINS_MIN_V = 100.0  # lowest public mains voltage in use (100 V, Japan), from memory
DEFAULT_MARGIN = 0.05
"""Share of the band's width kept between a proven design's worst case and each band edge, unless the brief
says otherwise: room for what the models leave out (common practice for a guard band, not a standard)."""
SUPPLY_SPREAD = {"unregulated": (-0.10, 0.20), "regulated": (-0.05, 0.05)}  # common practice


@dataclass(frozen=True)
class BriefValue:
    """One value of a normalised brief, for display: YAML key, SI value, unit, where it came from."""

    key: str
    value: object
    unit: str
    origin: Literal["given", "default", "derived"]
    note: str = ""

    @property
    def text(self) -> str:
        """The value with its unit, as shown to the user."""
        if self.value is None:
            return "none"
        if isinstance(self.value, bool):
            return "true" if self.value else "false"
        if isinstance(self.value, (int, float)) and self.unit == "EUR":
            return f"{self.value:.2f} EUR (indicative)"
        if isinstance(self.value, (int, float)):
            return format_quantity(self.value, self.unit)
        if isinstance(self.value, tuple):
            return ", ".join(self.value) or "none"
        return str(self.value)


_MISSING = object()


class SectionReader:
    """Reads the raw YAML data section by section, collecting every problem and every value's origin."""

    def __init__(self, source: str, root: yaml.Node | None, changed: frozenset[str]):
        self.source, self.root, self.changed = source, root, changed
        self.problems = Problems()
        self.values: list[BriefValue] = []

    def problem(self, path: Sequence[str | int], message: str, *, at_key: bool = False) -> None:
        if self.problems.full():
            return
        key = dotted(path)
        if any(key == c or key.startswith(c + ".") for c in self.changed):
            self.problems.append(Problem(self.source, None, None, key, f"{message} (value set by a change)"))
            return
        line, column = yamlpos.locate(self.root, path, at_key=at_key)
        self.problems.append(Problem(self.source, line, column, key, message))

    def mapping(self, path: tuple, raw: object, keys: Sequence[str], required: Sequence[str] = ()) -> dict | None:
        """`raw` as a mapping with only `keys`; None (after reporting) when it is not one."""
        if raw is None and not required:
            return {}
        if not isinstance(raw, dict):
            self.problem(path, f"got {show(raw)}; accepted: a mapping with keys {', '.join(keys)}")
            return None
        unknown, more = first_unknown(raw, keys)
        for key in unknown:
            close = closest(key, keys)
            hint = f" (did you mean '{close}'?)" if close else ""
            self.problem(path + (key,), f"unknown key {show(key)}{hint}; accepted keys: {', '.join(keys)}",
                         at_key=True)
        if more:
            self.problem(path, f"and {more} more unknown keys; accepted keys: {', '.join(keys)}", at_key=True)
        for key in required:
            if key not in raw:
                self.problem(path + (key,), f"missing required key '{key}'; add it under "
                             f"{dotted(path) or 'the top level'}")
        return raw

    def get(self, path: tuple, section: dict | None, key: str, parse: Callable[[object], Any], unit: str = "",
            default: object = _MISSING, note: str = "") -> Any:
        """Parsed value of `section[key]` (recorded as given), the default (recorded), or None on a problem."""
        if section is None:
            return None
        if key not in section:
            if default is _MISSING:
                return None
            self.record(path + (key,), default, unit, "default", note)
            return default
        try:
            value = parse(section[key])
        except (UnitParseError, Invalid) as exc:
            self.problem(path + (key,), str(exc))
            return None
        self.record(path + (key,), value, unit, "given")
        return value

    def record(self, path: tuple, value: object, unit: str, origin: str, note: str = "") -> None:
        self.values.append(BriefValue(dotted(path), value, unit, origin, note))

    def check(self, condition: bool, path: tuple, message: str) -> None:
        """Report `message` at `path` when `condition` (a contradiction) holds."""
        if condition:
            self.problem(path, message)


def _given(*values: object) -> bool:
    return all(v is not None for v in values)


def _read_delay(r: SectionReader, raw: object) -> dict | None:
    p = ("delay",)
    band = quantity("s", 0.01, 7 * DAY_S)
    sec = r.mapping(p, raw, ("nominal", "tolerance", "min", "max"))
    if sec is None:
        return None
    has_band = "min" in sec or "max" in sec
    if "tolerance" in sec and has_band:
        r.problem(p + ("tolerance",), "tolerance and min/max both given; accepted: either tolerance or min and max")
        return None
    if has_band and not ("min" in sec and "max" in sec):
        r.problem(p + ("max" if "min" in sec else "min",), "min and max go together; accepted: both, or tolerance")
        return None
    if "nominal" not in sec and not has_band:
        r.problem(p + ("nominal",), "missing required key 'nominal'; accepted: nominal, or min and max")
        return None
    nominal = r.get(p, sec, "nominal", band, "s") if "nominal" in sec else None
    if has_band:
        lo, hi = r.get(p, sec, "min", band, "s"), r.get(p, sec, "max", band, "s")
        if not _given(lo, hi):
            return None
        r.check(lo >= hi, p + ("min",), f"min {format_quantity(lo, 's')} is not below max "
                f"{format_quantity(hi, 's')}; accepted: min below max")
        if nominal is None and "nominal" not in sec:
            nominal = (lo + hi) / 2
            r.record(p + ("nominal",), nominal, "s", "derived", "midpoint of min and max")
        if nominal is not None:
            r.check(not lo <= nominal <= hi, p + ("nominal",), f"nominal {format_quantity(nominal, 's')} lies "
                    f"outside min..max ({format_quantity(lo, 's')} to {format_quantity(hi, 's')}); "
                    "accepted: a nominal within the band")
    else:
        tol = r.get(p, sec, "tolerance", fraction(0, 1, open_lo=True, open_hi=True), "%", default=0.10)
        if not _given(nominal, tol):
            return None
        lo, hi = nominal * (1 - tol), nominal * (1 + tol)
        r.record(p + ("min",), lo, "s", "derived", "nominal x (1 - tolerance)")
        r.record(p + ("max",), hi, "s", "derived", "nominal x (1 + tolerance)")
    return {"nominal_s": nominal, "min_s": lo, "max_s": hi} if _given(nominal) else None


def _read_ambient(r: SectionReader, raw: object) -> dict | None:
    p = ("ambient",)
    temp = quantity("degC", -55.0, 125.0)
    sec = r.mapping(p, raw, ("min", "max"))
    lo = r.get(p, sec, "min", temp, "degC", default=0.0)
    hi = r.get(p, sec, "max", temp, "degC", default=40.0)
    if not _given(lo, hi):
        return None
    r.check(lo > hi, p + ("min",), f"min {format_quantity(lo, 'degC')} is above max {format_quantity(hi, 'degC')}; "
            "accepted: min at or below max")
    return {"min_c": lo, "max_c": hi}


def _read_supply(r: SectionReader, raw: object) -> dict | None:
    p = ("supply",)
    volts = quantity("V", 1.0, 60.0)
    sec = r.mapping(p, raw, ("nominal", "min", "max", "kind", "no_load_power"), required=("nominal",))
    nominal = r.get(p, sec, "nominal", volts, "V")
    kind = r.get(p, sec, "kind", choice(tuple(SUPPLY_SPREAD)), default="unregulated")
    no_load = r.get(p, sec, "no_load_power", quantity("W", 0.0, 10.0), "W", default=None)
    if not _given(nominal, kind):
        return None
    below, above = SUPPLY_SPREAD[kind]
    lo = r.get(p, sec, "min", volts, "V", default=nominal * (1 + below), note=f"nominal {below * 100:+g} %, {kind}")
    hi = r.get(p, sec, "max", volts, "V", default=nominal * (1 + above), note=f"nominal {above * 100:+g} %, {kind}")
    if not _given(lo, hi):
        return None
    r.check(lo > nominal, p + ("min",), f"min {format_quantity(lo, 'V')} is above nominal "
            f"{format_quantity(nominal, 'V')}; accepted: min <= nominal <= max")
    r.check(nominal > hi, p + ("max",), f"max {format_quantity(hi, 'V')} is below nominal "
            f"{format_quantity(nominal, 'V')}; accepted: min <= nominal <= max")
    return {"nominal_v": nominal, "min_v": lo, "max_v": hi, "kind": kind, "no_load_power_w": no_load}


def _read_switched(r: SectionReader, raw: object) -> dict | None:
    p = ("load", "switched")
    sec = r.mapping(p, raw, ("voltage", "current", "mains"), required=("voltage", "current"))
    volts = r.get(p, sec, "voltage", quantity("V", 1.0, 440.0), "V")
    amps = r.get(p, sec, "current", quantity("A", 1e-3, 32.0), "A")
    if volts is None or sec is None:
        return None
    hazardous = volts > HAZARDOUS_VOLTAGE_V
    mains = r.get(p, sec, "mains", boolean, default=hazardous, note="true above 50 V, the extra-low-voltage boundary")
    if mains is None or amps is None:
        return None
    r.check(hazardous and not mains, p + ("mains",), f"mains is false but {format_quantity(volts, 'V')} is above "
            "the 50 V extra-low-voltage boundary; accepted: mains: true, so outputs carry the cautions")
    r.check(mains and volts < MAINS_MIN_V, p + ("mains",), f"mains is true but the voltage is "
            f"{format_quantity(volts, 'V')}; accepted: mains: true only from 100 V")
    return {"voltage_v": volts, "current_a": amps, "mains": mains}


def _read_load(r: SectionReader, raw: object, supply: dict | None) -> dict | None:
    p = ("load",)
    sec = r.mapping(p, raw, ("relay", "dc", "switched"))
    if sec is None:
        return None
    kinds = [k for k in ("relay", "dc") if k in sec]
    if len(kinds) != 1:
        r.problem(p + (kinds[1],) if kinds else p, f"{'both relay and dc' if kinds else 'neither relay nor dc'} "
                  "given; accepted: exactly one of relay: {...} or dc: {current: ...}", at_key=True)
        return None
    kind = kinds[0]
    if kind == "dc":
        q = p + ("dc",)
        dc = r.mapping(q, sec["dc"], ("current",), required=("current",))
        amps = r.get(q, dc, "current", quantity("A", 1e-6, 10.0), "A")
        if "switched" in sec:
            r.problem(p + ("switched",), "a dc load is switched by the timer itself; accepted: no switched "
                      "section with dc (use relay: to switch another load)", )
            return None
        if not _given(amps, supply):
            return None
        switched = {"voltage_v": supply["nominal_v"], "current_a": amps, "mains": False}
        for name, value, unit in (("voltage", switched["voltage_v"], "V"), ("current", amps, "A"), ("mains", False, "")):
            r.record(p + ("switched", name), value, unit, "derived", "the dc load itself")
        return {"kind": "dc", "coil_voltage_v": None, "coil_resistance_ohm": None, "must_operate_frac": None,
                "must_release_frac": None, "current_a": amps, "switched": switched}
    q = p + ("relay",)
    relay = r.mapping(q, sec["relay"], ("coil_voltage", "coil_resistance", "must_operate", "must_release"),
                      required=("coil_voltage", "coil_resistance"))
    coil_v = r.get(q, relay, "coil_voltage", quantity("V", 1.0, 60.0), "V")
    coil_ohm = r.get(q, relay, "coil_resistance", quantity("ohm", 1.0, 1e5), "ohm")
    operate = r.get(q, relay, "must_operate", fraction(0, 1, open_lo=True), "%", default=0.75)
    release = r.get(q, relay, "must_release", fraction(0, 1, open_hi=True), "%", default=0.10)
    if _given(coil_v, coil_ohm):
        r.record(q + ("current",), coil_v / coil_ohm, "A", "derived", "coil_voltage / coil_resistance")
    if "switched" not in sec:
        r.problem(p + ("switched",), "missing required key 'switched'; accepted: switched: "
                  "{voltage: 230 V, current: 2 A, mains: true} for what the relay contacts switch")
        switched = None
    else:
        switched = _read_switched(r, sec["switched"])
    if not _given(coil_v, coil_ohm, operate, release):
        return None
    r.check(release >= operate, q + ("must_release",), f"must_release {format_quantity(release, '%')} is not "
            f"below must_operate {format_quantity(operate, '%')}; accepted: must_release below must_operate")
    if supply is not None:
        r.check(operate * coil_v > supply["min_v"], q + ("coil_voltage",),
                f"the coil needs {format_quantity(operate * coil_v, 'V')} to operate (must_operate x coil_voltage) "
                f"but the supply can fall to {format_quantity(supply['min_v'], 'V')}; accepted: a coil the "
                "supply minimum can operate")
    if switched is None:
        return None
    return {"kind": "relay", "coil_voltage_v": coil_v, "coil_resistance_ohm": coil_ohm,
            "must_operate_frac": operate, "must_release_frac": release, "current_a": coil_v / coil_ohm,
            "switched": switched}


def _read_section(r: SectionReader, path: tuple, raw: object,
                  fields: Mapping[str, tuple[Callable, object, str]]) -> dict | None:
    """A section of independent fields {key: (parser, default, unit)}; None when any value has a problem."""
    sec = r.mapping(path, raw, tuple(fields))
    if sec is None:
        return None
    values = {key: r.get(path, sec, key, parse, unit, default=default) for key, (parse, default, unit) in fields.items()}
    return values if all(key not in sec or values[key] is not None for key in fields) else None


def pairings(raw: object) -> tuple[str, ...]:
    """Parser for `series.pairs`: true (every pairing), false (none) or a list of pairings, returned in
    `PAIRINGS` order."""
    accepted = f"accepted: true, false or a list of {', '.join(PAIRINGS)}"
    if isinstance(raw, bool):
        return PAIRINGS if raw else ()
    if not isinstance(raw, list) or not raw:
        raise Invalid(f"got {show(raw)}; {accepted}")
    for item in raw:
        if item not in PAIRINGS:
            close = closest(item, PAIRINGS)
            hint = f" (did you mean '{close}'?)" if close else ""
            raise Invalid(f"got {show(item)} in the list{hint}; {accepted}")
    if len(set(raw)) < len(raw):
        raise Invalid(f"got {show(raw)}, a pairing listed twice; {accepted}, each once")
    return tuple(p for p in PAIRINGS if p in raw)


def _read_limits(r: SectionReader, raw: object) -> dict | None:
    values = _read_section(r, ("limits",), raw, {
        "standby_after": (quantity("A", 1e-9, 1.0), None, "A"),
        "rails": (number(1, 10, integer=True), None, ""),
        "parts": (number(1, 500, integer=True), None, ""),
        "cost": (number(0, 1e4), None, "EUR"),
    })
    if values is None:
        return None
    values["standby_after_a"] = values.pop("standby_after")
    return values


def _read_topologies(r: SectionReader, raw: object) -> tuple[str, ...] | None:
    p = ("topologies",)
    accepted = "all, or a list of topology names (see `tradeoff topologies`)"
    if raw == "all":
        r.record(p, ("all",), "", "given")
        return ("all",)
    if not isinstance(raw, list) or not raw:
        r.problem(p, f"got {show(raw)}; accepted: {accepted}")
        return None
    names: list[str] = []
    for index, name in enumerate(raw):
        if not isinstance(name, str):
            r.problem(p + (index,), f"got {show(name)}; accepted: {accepted}")
        elif name == "all":
            r.problem(p + (index,), "'all' inside a list; accepted: topologies: all, on its own")
        elif name in names:
            r.problem(p + (index,), f"'{name}' is listed twice; accepted: each topology once")
        else:
            names.append(name)
    if len(names) != len(raw):
        return None
    r.record(p, tuple(names), "", "given")
    return tuple(names)


RELAX_CHOICES = ("none", "infeasible", "all")
"""analysis.relax: no search, what would make each infeasible topology feasible, and also each feasible one's slack."""

TOP_KEYS = ("title", "delay", "ambient", "environment", "supply", "start", "load", "limits", "weights", "series",
             "topologies", "analysis", "production")


def read_sections(r: SectionReader, data: object, base_dir: Path, weight_names: Sequence[str]
                  ) -> dict | None:
    """Every section of the brief as model input; None when any problem was found."""
    top = r.mapping((), data, TOP_KEYS, required=("title", "delay", "supply", "load"))
    if top is None:
        return None
    weight = number(0, 100)
    series = choice(SERIES_NAMES)
    supply = _read_supply(r, top.get("supply")) if "supply" in top else None
    values = {
        "title": r.get((), top, "title", text),
        "delay": _read_delay(r, top["delay"]) if "delay" in top else None,
        "ambient": _read_ambient(r, top.get("ambient")),
        "environment": read_environment(r, top.get("environment")),
        "supply": supply,
        "start": r.get((), top, "start", choice(("power-on", "button")), default="power-on",
                       note="timing starts when power is applied"),
        "load": _read_load(r, top["load"], supply) if "load" in top else None,
        "limits": _read_limits(r, top.get("limits")),
        "weights": _read_section(r, ("weights",), top.get("weights"),
                                 {k: (weight, 1.0, "") for k in weight_names}),
        "series": _read_section(r, ("series",), top.get("series"), {
            "resistor": (series, "E24", ""), "electrolytic": (series, "E6", ""), "film": (series, "E12", ""),
            "ceramic": (series, "E12", ""), "pairs": (pairings, (), "")}),
        "topologies": _read_topologies(r, top["topologies"]) if "topologies" in top else None,
        "analysis": _read_section(r, ("analysis",), top.get("analysis"), {
            "samples": (number(100, 10_000_000, integer=True), 20000, ""),
            "seed": (number(0, 2**32 - 1, integer=True), 1, ""),
            "coverage": (fraction(0.5, 1, open_lo=True, open_hi=True), 0.99, "%"),
            "margin": (fraction(0, 0.5, open_hi=True), DEFAULT_MARGIN, "%"),
            "relax": (choice(RELAX_CHOICES), "none", "")}),
        "production": read_production(r, top.get("production"), base_dir),
    }
    if "topologies" not in top:
        values["topologies"] = ("all",)
        r.record(("topologies",), ("all",), "", "default")
    weights = values["weights"]
    if weights is not None and not any(weights.values()):
        r.problem(("weights",), "every weight is 0; accepted: at least one weight above 0")
    if r.problems:
        return None
    return values


def sorted_values(values: list[BriefValue]) -> tuple[BriefValue, ...]:
    """Values in brief order (section order, then the order read)."""
    def rank(v: BriefValue) -> int:
        head = v.key.split(".")[0].split("[")[0]
        return TOP_KEYS.index(head) if head in TOP_KEYS else len(TOP_KEYS)

    return tuple(sorted(values, key=rank))
