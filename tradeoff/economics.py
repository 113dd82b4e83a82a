"""A study's designs in money: cost per unit at the brief's production volume, a sweep over volume,
and the break-even volume of the winner and the runner-up (tradeoff.costing does the sums).

Money is EUR and indicative unless the brief's price file gives the user's own prices.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from tradeoff.costing import UnitCost, break_even, price_steps, unit_cost, volume_grid

__all__ = ["BreakEven", "cost_at", "break_even_of", "volume_sweep", "economics"]


@dataclass(frozen=True)
class BreakEven:
    """Where the winner and the runner-up cost the same per unit, searched over [low, high] units.

    volume: the least volume from which the cheaper of the two is the other one (None: never in the range);
    cheaper_below / cheaper_above: the cheaper design below and from that volume; crossings: every volume from
    which the cheaper changes, rising (price breaks can make it change back), exact to the unit
    (tradeoff.costing.break_even).
    """

    first: str
    second: str
    volume: int | None
    low: int
    high: int
    cheaper_below: str
    cheaper_above: str
    crossings: tuple[int, ...] = ()

    @property
    def text(self) -> str:
        """One sentence for reports."""
        if self.volume is None:
            return (f"{self.cheaper_below} costs less per unit than "
                    f"{self.second if self.cheaper_below == self.first else self.first} at every volume from "
                    f"{self.low:,} to {self.high:,} units: no break-even in the range")
        again = "".join(f"{', ' if i else '; the cheaper changes again from '}{v:,}"
                        for i, v in enumerate(self.crossings[1:]))
        return (f"break-even at {self.volume:,} units: below it {self.cheaper_below} costs less per unit, from it "
                f"{self.cheaper_above}{again + ' units' if again else ''}")

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready; `volume` null means never in the range."""
        return {"first": self.first, "second": self.second, "volume": self.volume, "range": [self.low, self.high],
                "cheaper_below": self.cheaper_below, "cheaper_above": self.cheaper_above,
                "crossings": list(self.crossings), "text": self.text}


def cost_at(ev: Any, model: Any, volume: int) -> UnitCost:
    """Cost per unit of the evaluated design `ev` (built by topology `model`) at `volume` units."""
    return unit_cost(ev.bom, ev.topology, model.engineering_hours(), model.brief.production, model.catalog, volume)


def break_even_of(result: Any) -> BreakEven | None:
    """Break-even of the rank-1 and rank-2 designs of a StudyResult over the brief's sweep range; None when
    fewer than two designs are feasible."""
    designs = result.designs()
    if len(designs) < 2:
        return None
    (name_a, ev_a, out_a), (name_b, ev_b, out_b) = designs[:2]
    production = result.brief.production
    low, high = production.sweep_min, production.sweep_max

    def a(v: int) -> float:
        return cost_at(ev_a, out_a.model, v).per_unit_eur

    def b(v: int) -> float:
        return cost_at(ev_b, out_b.model, v).per_unit_eur

    steps = price_steps(ev_a.bom, out_a.model.catalog, production) | price_steps(ev_b.bom, out_b.model.catalog,
                                                                                  production)
    crossings = break_even(a, b, low, high, steps)
    below = name_a if a(low) <= b(low) else name_b
    above = below if not crossings else (name_b if below == name_a else name_a)
    return BreakEven(name_a, name_b, crossings[0] if crossings else None, low, high, below, above, tuple(crossings))


def volume_sweep(result: Any, points: int = 61) -> dict[str, Any]:
    """Cost per unit [EUR] of every feasible design at log-spaced volumes over the brief's sweep range,
    and the cheapest design at each volume."""
    production = result.brief.production
    volumes = volume_grid(production.sweep_min, production.sweep_max, points)
    costs = {name: [cost_at(ev, outcome.model, v).per_unit_eur for v in volumes]
             for name, ev, outcome in result.designs()}
    cheapest = [min(costs, key=lambda n: costs[n][i]) for i in range(len(volumes))] if costs else []
    return {"volumes": volumes, "cost_per_unit_eur": costs, "cheapest": cheapest}


def economics(result: Any) -> dict[str, Any] | None:
    """The production-cost part of a study's JSON: volume, each design's cost per unit, the break-even
    and the sweep; None when nothing is feasible."""
    designs = result.designs()
    if not designs:
        return None
    even = break_even_of(result)
    return {
        "volume": result.brief.production.volume,
        "currency": "EUR",
        "user_prices": bool(result.brief.production.prices),
        "designs": {name: ev.production.to_dict() for name, ev, _ in designs if ev.production is not None},
        "break_even": None if even is None else even.to_dict(),
        "sweep": volume_sweep(result),
    }
