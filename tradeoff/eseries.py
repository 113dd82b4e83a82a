"""IEC 60063 preferred-number series (E3 ... E192): tables, values over decades, nearest value.

The tables are read from `catalogs/eseries.yaml`, which holds the standard's printed tables
(not a generated geometric progression: E24 departs from 10^(i/24) at 2.7 ... 8.2, E192 at 9.20).
Values are built from the integer significant digits and a decimal exponent, so 4.7 uF is the
float 4.7e-06 exactly as Python reads the literal, never 4.699999e-06.
"""
from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
import yaml

from tradeoff.catalog import shipped_catalog_dir
from tradeoff.fields import did_you_mean
from tradeoff.errors import CatalogError

__all__ = ["mantissas", "values", "nearest", "at_least", "tolerance", "series_names", "significant_digits"]

_BOUND_SLACK = 1e-9
"""Relative slack on the bounds of `values`: a bound computed as 4.6999999e-6 still includes 4.7e-6."""


@dataclass(frozen=True)
class _Series:
    name: str
    digits: int
    tolerance: float | None
    tolerance_note: str
    mantissas: tuple[float, ...]
    codes: tuple[int, ...]  # the mantissas as integers of `digits` digits (47, 976)


def _path():
    return shipped_catalog_dir() / "eseries.yaml"


@functools.lru_cache(maxsize=1)
def _tables() -> dict[str, _Series]:
    """Every series of catalogs/eseries.yaml, in file order (shipped data: a defect raises CatalogError)."""
    path = _path()
    try:
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
        tables = {}
        for name, entry in data["series"].items():
            digits = int(entry["significant_digits"])
            found = tuple(float(m) for m in entry["mantissas"])
            codes = tuple(round(m * 10 ** (digits - 1)) for m in found)
            tables[name] = _Series(name, digits, entry["tolerance"], entry.get("tolerance_note", ""), found, codes)
        return tables
    except (OSError, yaml.YAMLError, KeyError, TypeError, ValueError) as exc:
        raise CatalogError.single(path, "series", f"the shipped E-series tables are unreadable "
                                                  f"({exc.__class__.__name__}: {exc}); reinstall tradeoff") from None


def _series(name: str) -> _Series:
    tables = _tables()
    try:
        return tables[name]
    except (KeyError, TypeError):
        raise CatalogError.single(_path(), "series", f"unknown E-series {name!r};{did_you_mean(str(name), tables)} "
                                                     f"accepted: {', '.join(tables)}") from None


def series_names() -> tuple[str, ...]:
    """Names of the series, coarsest first: ('E3', 'E6', ..., 'E192')."""
    return tuple(_tables())


def mantissas(name: str) -> tuple[float, ...]:
    """The series' values in one decade, as printed in IEC 60063: mantissas('E24') -> (1.0, 1.1, ..., 9.1)."""
    return _series(name).mantissas


def significant_digits(name: str) -> int:
    """Significant digits of the series' values: 2 for E3 to E24, 3 for E48 to E192."""
    return _series(name).digits


def tolerance(name: str) -> float | None:
    """Nominal tolerance IEC 60063 associates with the series (fraction: E24 -> 0.05).

    None for E3: the standard names no figure for it (it serves tolerances wider than 20 %).
    """
    return _series(name).tolerance


def _decade_values(series: _Series, first: int, last: int) -> np.ndarray:
    """All values of decades 10^first ... 10^last, each rounded to the series' digits (sorted)."""
    shift = series.digits - 1
    return np.array([float(f"{code}e{exponent - shift}")
                     for exponent in range(first, last + 1) for code in series.codes])


def values(name: str, lo: float, hi: float) -> np.ndarray:
    """Every standard value of series `name` in [lo, hi], over as many decades as needed (sorted).

    lo, hi: positive bounds in any unit [ohm, F, ...]; inclusive with a relative slack of 1e-9.
    """
    series = _series(name)
    if not (np.isfinite(lo) and np.isfinite(hi) and 0 < lo <= hi):
        raise ValueError(f"values() needs finite bounds 0 < lo <= hi, got lo={lo!r}, hi={hi!r}")
    table = _decade_values(series, int(np.floor(np.log10(lo))) - 1, int(np.floor(np.log10(hi))) + 1)
    keep = (table >= lo * (1 - _BOUND_SLACK)) & (table <= hi * (1 + _BOUND_SLACK))
    return table[keep]


def nearest(name: str, x):
    """Standard value of series `name` closest to `x` on a logarithmic scale (ties go to the lower value).

    x: positive value or array [any unit]; returns a float for a scalar, else an array of x's shape.
    """
    series = _series(name)
    target = np.asarray(x, dtype=float)
    if target.size == 0:
        return target.copy()
    if not np.all(np.isfinite(target)) or np.any(target <= 0):
        raise ValueError("nearest() needs finite positive values")
    table = _decade_values(series, int(np.floor(np.log10(target.min()))) - 1,
                           int(np.floor(np.log10(target.max()))) + 1)
    logs = np.log(table)
    upper = np.clip(np.searchsorted(table, target), 1, len(table) - 1)
    lower = upper - 1
    log_target = np.log(target)
    pick = np.where(logs[upper] - log_target < log_target - logs[lower], upper, lower)
    result = table[pick]
    return float(result) if result.ndim == 0 else result


def at_least(name: str, x):
    """Smallest standard value of series `name` not below `x` (x positive, scalar or array)."""
    target = np.asarray(x, dtype=float)
    if target.size == 0:
        return target.copy()
    if not np.all(np.isfinite(target)) or np.any(target <= 0):
        raise ValueError("at_least() needs finite positive values")
    table = _decade_values(_series(name), int(np.floor(np.log10(target.min()))) - 1,
                           int(np.floor(np.log10(target.max()))) + 2)
    result = table[np.searchsorted(table, target * (1 - 1e-9))]
    return float(result) if result.ndim == 0 else result
