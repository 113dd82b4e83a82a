"""The brief's optional `production:` section: what a unit costs to make at a volume.

Every key is optional; the defaults are indicative figures (order of magnitude of small-batch
contract assembly and programming quotes, to be replaced by your own), all money in EUR:

    production:
      volume: 1000                     units made; engineering hours are spread over them
      prices: prices.csv               user price file (CSV: part, quantity, price [EUR]); its
                                       rows replace every catalog price of the part classes they
                                       name; a path relative to the brief's folder
      assembly_smd: 0.02               EUR per surface-mount placement
      assembly_through_hole: 0.08      EUR per through-hole placement (a part class without a
                                       catalog `mount` counts as through-hole)
      programming: 0.30                EUR per microcontroller unit, programming and test
      hourly_rate: 60                  EUR per engineering hour
      engineering_hours: {mcu: 120}    one-off hours per topology (firmware, verification),
                                       replacing the catalog's `engineering_hours`
      sweep_min: 100                   volume range of the break-even sweep
      sweep_max: 1000000

The price file has a header row `part,quantity,price` (any order, extra columns refused); each
row gives the unit price of a part class id when at least that many are bought.
"""
from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ConfigDict

from tradeoff import inputfile
from tradeoff.errors import BriefError, Problem
from tradeoff.fields import Invalid, number, show, text

__all__ = ["Production", "PriceRow", "read_production", "read_price_file", "PRICE_COLUMNS", "DEFAULTS"]

PRICE_COLUMNS = ("part", "quantity", "price")
"""Columns of a user price file."""

DEFAULTS = {"volume": 1000, "assembly_smd": 0.02, "assembly_through_hole": 0.08, "programming": 0.30,
            "hourly_rate": 60.0, "sweep_min": 100, "sweep_max": 1_000_000}
"""Default of every numeric key of `production:` (indicative: replace with your own quotes)."""

MAX_VOLUME = 100_000_000
"""Largest production volume accepted [units]."""


class PriceRow(BaseModel):
    """One user price: part class id, least quantity bought, unit price [EUR]."""

    model_config = ConfigDict(strict=True, extra="forbid", frozen=True)

    part: str
    quantity: int
    price_eur: float


class Production(BaseModel):
    """Production cost settings (see the module docstring); money in EUR, hours in hours."""

    model_config = ConfigDict(strict=True, extra="forbid", frozen=True)

    volume: int
    prices: tuple[PriceRow, ...]
    price_file: str | None
    assembly_smd_eur: float
    assembly_through_hole_eur: float
    programming_eur: float
    hourly_rate_eur: float
    engineering_hours: tuple[tuple[str, float], ...]
    sweep_min: int
    sweep_max: int

    def hours_for(self, topology: str) -> float | None:
        """The brief's engineering hours for `topology`, or None when the brief gives none."""
        return dict(self.engineering_hours).get(topology)


def _problem(source: str, line: int | None, column: int | None, key: str, message: str) -> Problem:
    return Problem(source, line, column, key, message)


def read_price_file(path: Path, source: str | None = None) -> tuple[PriceRow, ...]:
    """Rows of a user price file, read through the shared bounded reader; BriefError naming the file,
    line and column of every bad cell (at most 50)."""
    source = source or str(path)
    content = inputfile.read_text(path, source, BriefError, "the price file")
    rows = list(csv.reader(io.StringIO(content)))
    if not rows or not any(cell.strip() for cell in rows[0]):
        raise BriefError.single(source, "header", f"the price file is empty; accepted: a header row "
                                f"{','.join(PRICE_COLUMNS)} and one row per price", 1, 1)
    header = [cell.strip().lower() for cell in rows[0]]
    if sorted(header) != sorted(PRICE_COLUMNS):
        raise BriefError.single(source, "header", f"header {show(','.join(rows[0]))}; accepted: the columns "
                                f"{', '.join(PRICE_COLUMNS)} (any order, no others)", 1, 1)
    where = {name: header.index(name) for name in PRICE_COLUMNS}
    quantity, price = number(1, MAX_VOLUME, integer=True), number(0, 1e5)
    problems: list[Problem] = []
    out: list[PriceRow] = []
    seen: dict[tuple[str, int], int] = {}
    for line, row in enumerate(rows[1:], start=2):
        if not any(cell.strip() for cell in row):
            continue
        if len(row) != len(header):
            problems.append(_problem(source, line, 1, f"row {line}", f"{len(row)} cells; accepted: "
                                     f"{len(header)} ({', '.join(rows[0])})"))
            continue
        cells = {name: row[i].strip() for name, i in where.items()}
        column = {name: sum(len(c) + 1 for c in row[:i]) + 1 for name, i in where.items()}
        values: dict[str, Any] = {}
        for name, parse in (("part", text), ("quantity", quantity), ("price", price)):
            raw = cells[name]
            try:
                values[name] = parse(_number_or_text(raw) if name != "part" else raw) if raw else None
            except Invalid as exc:
                problems.append(_problem(source, line, column[name], f"row {line}.{name}", str(exc)))
                values[name] = None
                continue
            if values[name] is None:
                problems.append(_problem(source, line, column[name], f"row {line}.{name}",
                                         f"empty cell; accepted: {'a part class id' if name == 'part' else 'a number'}"))
        if any(v is None for v in values.values()):
            continue
        key = (values["part"], values["quantity"])
        if key in seen:
            problems.append(_problem(source, line, column["quantity"], f"row {line}.quantity",
                                     f"{values['part']} at {values['quantity']} is priced already on line "
                                     f"{seen[key]}; accepted: one price per part and quantity"))
            continue
        seen[key] = line
        out.append(PriceRow(part=values["part"], quantity=values["quantity"], price_eur=float(values["price"])))
    if problems:
        raise BriefError(problems[:50])
    return tuple(out)


def _number_or_text(raw: str) -> object:
    """A CSV cell as a number when it reads as one (the field parsers then check its range), else the text."""
    try:
        return int(raw) if raw.lstrip("+-").isdigit() else float(raw)
    except ValueError:
        return raw


def read_production(r: Any, raw: object, base_dir: Path) -> dict | None:
    """The `production:` section read with the brief's reader `r` (recording every value's origin);
    the price file is read here, relative to `base_dir`. None when a value has a problem."""
    p = ("production",)
    keys = ("volume", "prices", *list(DEFAULTS)[1:5], "engineering_hours", "sweep_min", "sweep_max")
    sec = r.mapping(p, raw, keys)
    if sec is None:
        return None
    volume = number(1, MAX_VOLUME, integer=True)
    money = number(0, 1e4)
    parsers = {"volume": (volume, ""), "assembly_smd": (money, "EUR"), "assembly_through_hole": (money, "EUR"),
               "programming": (money, "EUR"), "hourly_rate": (number(0, 1e4), "EUR"),
               "sweep_min": (volume, ""), "sweep_max": (volume, "")}
    values = {key: r.get(p, sec, key, parse, unit, default=DEFAULTS[key], note="indicative")
              for key, (parse, unit) in parsers.items()}
    hours = _read_hours(r, p + ("engineering_hours",), sec.get("engineering_hours"))
    price_file = r.get(p, sec, "prices", text, default=None)
    if any(v is None for v in values.values()) or hours is None:
        return None
    if values["sweep_min"] >= values["sweep_max"]:
        r.problem(p + ("sweep_min",), f"sweep_min {values['sweep_min']} is not below sweep_max "
                  f"{values['sweep_max']}; accepted: sweep_min below sweep_max")
        return None
    prices: tuple[PriceRow, ...] = ()
    if price_file is not None:
        path = Path(price_file) if Path(price_file).is_absolute() else base_dir / price_file
        try:
            prices = read_price_file(path, price_file)
        except BriefError as exc:
            for problem in exc.problems:
                r.problems.append(problem)
            return None
    return {"volume": values["volume"], "prices": prices, "price_file": price_file,
            "assembly_smd_eur": values["assembly_smd"], "assembly_through_hole_eur": values["assembly_through_hole"],
            "programming_eur": values["programming"], "hourly_rate_eur": values["hourly_rate"],
            "engineering_hours": hours, "sweep_min": values["sweep_min"], "sweep_max": values["sweep_max"]}


def _read_hours(r: Any, path: tuple, raw: object) -> tuple[tuple[str, float], ...] | None:
    """{topology: hours} as sorted pairs; topology names are checked where the registry is known."""
    if raw is None:
        return ()
    if not isinstance(raw, dict):
        r.problem(path, f"got {show(raw)}; accepted: a mapping of topology name to hours, e.g. {{mcu: 120}}")
        return None
    parse = number(0, 1e5)
    out = []
    for name, value in raw.items():
        try:
            out.append((str(name), float(parse(value))))
        except Invalid as exc:
            r.problem(path + (name,), f"{exc} (hours)")
            return None
        r.record(path + (name,), float(parse(value)), "h", "given")
    return tuple(sorted(out))
