"""Cost per unit at a production volume, and the volume where two designs cost the same.

Per unit [EUR, indicative unless your price file replaces the catalog's prices]:

    parts        sum over the BOM of quantity x unit price at the volume's price break
    assembly     placements x (assembly_smd or assembly_through_hole, by the class's `mount`)
    programming  microcontrollers on the board x programming (and test) per unit
    engineering  one-off engineering hours x hourly rate / volume

Price breaks: a part class's catalog `cost` is its price from one unit; `break_quantity` and
`break_cost` lists add lower prices from larger quantities; the user's price rows for a class
replace all of them. The price at a volume is the one of the largest break quantity not above
it (or the smallest break when the volume is below every break).

Settings come from the brief's `production:` section (tradeoff.production).
"""
from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Catalog
    from tradeoff.production import Production

__all__ = ["UnitCost", "price_breaks", "unit_price", "unit_cost", "price_steps", "break_even", "volume_grid"]


@dataclass(frozen=True)
class UnitCost:
    """What one unit costs at `volume` [EUR]: the four parts of the sum and the engineering hours behind one."""

    volume: int
    parts_eur: float
    assembly_eur: float
    programming_eur: float
    engineering_eur: float
    engineering_hours: float
    notes: tuple[str, ...] = ()

    @property
    def per_unit_eur(self) -> float:
        """Parts + assembly + programming + amortised engineering [EUR]."""
        return self.parts_eur + self.assembly_eur + self.programming_eur + self.engineering_eur

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready (EUR in key suffixes)."""
        return {"volume": self.volume, "parts_eur": self.parts_eur, "assembly_eur": self.assembly_eur,
                "programming_eur": self.programming_eur, "engineering_eur": self.engineering_eur,
                "engineering_hours": self.engineering_hours, "per_unit_eur": self.per_unit_eur,
                "notes": list(self.notes)}


def price_breaks(part_id: str, bom_price: float, catalog: "Catalog", production: "Production") -> list[tuple[int, float]]:
    """(least quantity, unit price [EUR]) rising in quantity: the user's rows for the class, else the catalog's
    `cost` from 1 unit plus its `break_quantity`/`break_cost` lists; the BOM's price for a part not in the catalog."""
    user = sorted((row.quantity, row.price_eur) for row in production.prices if row.part == part_id)
    if user:
        return user
    if part_id not in catalog:
        return [(1, bom_price)]
    part = catalog.part(part_id)
    breaks = [(1, bom_price)]
    if part.has("break_quantity") or part.has("break_cost"):
        quantities, costs = part.values("break_quantity", ""), part.values("break_cost", "")
        if len(quantities) != len(costs):
            raise part.param_error("break_cost", f"{len(costs)} prices for {len(quantities)} break quantities; "
                                   "accepted: one price per quantity")
        breaks += [(int(q), float(c)) for q, c in zip(quantities, costs)]
    return sorted(breaks)


def unit_price(breaks: Sequence[tuple[int, float]], volume: int) -> float:
    """The price of the largest break quantity not above `volume` (the smallest break below them all) [EUR]."""
    eligible = [price for quantity, price in breaks if quantity <= volume]
    return eligible[-1] if eligible else breaks[0][1]


def unit_cost(bom: Sequence[Any], topology: str, default_hours: float, production: "Production",
              catalog: "Catalog", volume: int | None = None) -> UnitCost:
    """Cost per unit of a BOM (tradeoff.topologies.base.BomLine items) at `volume` (the brief's volume when None); `default_hours` are the catalog's
    engineering hours for `topology`, used when the brief gives none."""
    volume = production.volume if volume is None else volume
    parts = assembly = programming = 0.0
    unmounted: set[str] = set()
    for line in bom:
        known = line.part in catalog
        part = catalog.part(line.part) if known else None
        units = line.quantity * volume
        parts += line.quantity * unit_price(price_breaks(line.part, line.unit_cost, catalog, production), units)
        mount = part.fields.get("mount") if part is not None else None
        if mount is None:
            unmounted.add(line.part)
        rate = production.assembly_smd_eur if mount == "smd" else production.assembly_through_hole_eur
        assembly += line.quantity * rate
        if part is not None and part.category == "mcu":
            programming += line.quantity * production.programming_eur
    hours = production.hours_for(topology)
    hours = default_hours if hours is None else hours
    notes = (f"{', '.join(sorted(unmounted))} counted as through-hole (no mount in the catalog)",) if unmounted else ()
    return UnitCost(volume=volume, parts_eur=parts, assembly_eur=assembly, programming_eur=programming,
                    engineering_eur=hours * production.hourly_rate_eur / volume, engineering_hours=hours, notes=notes)


def volume_grid(low: int, high: int, points: int = 61) -> list[int]:
    """Distinct whole volumes spaced evenly on a log scale from `low` to `high`."""
    if points < 2 or low < 1 or high <= low:
        raise ValueError(f"need 1 <= low < high and 2+ points, got {low}, {high}, {points}")
    step = math.log(high / low) / (points - 1)
    return sorted({int(round(low * math.exp(i * step))) for i in range(points)} | {high})


def price_steps(bom: Sequence[Any], catalog: "Catalog", production: "Production") -> set[int]:
    """Volumes at which a BOM's parts cost per unit may change: where the units bought of a line (its quantity x
    the volume) first reach one of its price breaks. Between two of them the cost per unit is a constant plus
    engineering over volume."""
    steps = set()
    for line in bom:
        if line.quantity > 0:
            breaks = price_breaks(line.part, line.unit_cost, catalog, production)
            steps |= {max(1, math.ceil(quantity / line.quantity)) for quantity, _ in breaks}
    return steps


def break_even(a: Callable[[int], float], b: Callable[[int], float], low: int, high: int,
               steps: Iterable[int] = ()) -> list[int]:
    """Every whole volume in [low, high] from which the cheaper of designs `a` and `b` (cost per unit; a tie
    counts for `a`) is the other one than just below it, rising; [] when one is cheaper all through ("never in
    the range").

    Exact, not sampled: `steps` are the volumes where either cost may jump (price_steps of both BOMs). Between
    two steps each cost is a constant plus engineering over volume, so their difference c + e / v is monotonic
    and changes sign at most once there; that one change is found by bisection to the unit, so volume - 1 and
    volume are on opposite sides of every crossing.
    """
    def cheaper_is_a(v: int) -> bool:
        return a(v) <= b(v)

    starts = sorted({low} | {s for s in steps if low < s <= high})
    crossings = []
    side = cheaper_is_a(low)
    for first, after in zip(starts, starts[1:] + [high + 1]):
        last = after - 1
        if cheaper_is_a(first) != side:  # a jump at the step itself
            crossings.append(first)
            side = not side
        if cheaper_is_a(last) == side:
            continue
        lo, hi = first, last  # side at lo, the other side at hi
        while hi - lo > 1:
            mid = (lo + hi) // 2
            lo, hi = (mid, hi) if cheaper_is_a(mid) == side else (lo, mid)
        crossings.append(hi)
        side = not side
    return crossings
