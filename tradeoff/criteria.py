"""The result vocabulary, written once: the brief's weight names, a design's headline figures
and the ranking criteria drawn from them. The optimiser, the study, the ranking, the sweep and
the reports all read these names from here.

Headline figures of one evaluated design (`headline(ev)`, SI units in the key suffixes):

| key | figure |
| --- | --- |
| `topology` | topology id |
| `delay_nominal_s`, `delay_worst_min_s`, `delay_worst_max_s` | delay at nominal and at the worst-case corners [s] |
| `delay_spread_frac` | worst-case (max − min) / nominal delay |
| `delay_margin_short_frac`, `delay_margin_long_frac` | room between the worst case and the band's minimum, and its maximum, as fractions of the band's width |
| `delay_margin_frac` | the smaller of the two |
| `yield_frac` | Monte Carlo fraction inside the band |
| `standby_during_a`, `standby_after_a` | supply current while timing and after the timeout [A] |
| `standby_after_w` | circuit power after the timeout at nominal supply [W] |
| `rails` | supply rails needed |
| `parts` | placements on the board |
| `bom_lines` | distinct bill-of-materials lines |
| `cost_eur` | cost per unit at the brief's production volume: parts, assembly, programming, amortised engineering [EUR, indicative] |
| `effort` | engineering effort, 0 to 1 |

A delay that never ends is infinite here; each output decides how to show it (null in JSON,
an empty cell in tables).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Callable

from tradeoff.units import format_quantity

__all__ = ["WEIGHT_NAMES", "HEADLINE", "headline", "Criterion", "CRITERIA", "criterion", "share"]

WEIGHT_NAMES = ("accuracy", "standby", "rails", "parts", "cost", "effort")
"""The brief's weights, in the order `brief.weights` lists them; also the optimiser's objective terms."""

HEADLINE = ("topology", "delay_nominal_s", "delay_worst_min_s", "delay_worst_max_s", "delay_spread_frac",
            "delay_margin_short_frac", "delay_margin_long_frac", "delay_margin_frac", "yield_frac", "standby_during_a", "standby_after_a", "standby_after_w", "rails", "parts", "bom_lines",
            "cost_eur", "effort")
"""Keys of the headline figures, in display order."""


def headline(ev: Any) -> dict[str, Any]:
    """The headline figures of an Evaluation (keys `HEADLINE`, SI floats, counts as ints)."""
    return {
        "topology": ev.topology, "delay_nominal_s": float(ev.nominal_s), "delay_worst_min_s": float(ev.worst.min_s),
        "delay_worst_max_s": float(ev.worst.max_s), "delay_spread_frac": float(ev.spread_frac),
        "delay_margin_short_frac": float(ev.margin_short_frac), "delay_margin_long_frac": float(ev.margin_long_frac),
        "delay_margin_frac": float(ev.margin_frac),
        "yield_frac": float(ev.mc.yield_frac), "standby_during_a": float(ev.standby.during_a),
        "standby_after_a": float(ev.standby.after_a), "standby_after_w": float(ev.after_w), "rails": int(ev.rails),
        "parts": int(ev.placements), "bom_lines": int(ev.lines), "cost_eur": float(ev.unit_cost_eur),
        "effort": float(ev.effort),
    }


def _percent(value: float) -> str:
    return format_quantity(value, "%")


def _current(value: float) -> str:
    return format_quantity(value, "A")


def _count(noun: str) -> Callable[[float], str]:
    def show(value: float) -> str:
        n = int(round(value))
        return f"{n} {noun}{'' if n == 1 else 's'}"
    return show


@dataclass(frozen=True)
class Criterion:
    """One ranking criterion: its headline key, the brief weight it takes a share of, its sense and wording."""

    column: str
    weight: str
    share: float
    higher_is_better: bool
    noun: str
    best: str
    worst: str
    show: Callable[[float], str]


CRITERIA = (
    Criterion("delay_spread_frac", "accuracy", 0.5, False, "delay spread", "tightest worst-case delay spread",
              "widest worst-case delay spread", lambda v: f"{_percent(v)} of nominal"),
    Criterion("delay_margin_frac", "accuracy", 0.25, True, "margin", "widest margin inside the band",
              "narrowest margin inside the band", lambda v: f"{_percent(v)} of the band"),
    Criterion("yield_frac", "accuracy", 0.25, True, "yield", "highest Monte Carlo yield",
              "lowest Monte Carlo yield", _percent),
    Criterion("standby_after_a", "standby", 0.75, False, "standby after timeout", "lowest standby after timeout",
              "highest standby after timeout", _current),
    Criterion("standby_during_a", "standby", 0.25, False, "current while timing", "lowest current while timing",
              "highest current while timing", _current),
    Criterion("rails", "rails", 1.0, False, "supply rails", "fewest supply rails", "most supply rails",
              _count("rail")),
    Criterion("parts", "parts", 1.0, False, "part count", "fewest parts", "most parts", _count("part")),
    Criterion("cost_eur", "cost", 1.0, False, "cost per unit", "lowest cost per unit", "highest cost per unit",
              lambda v: f"{v:.2f} EUR"),
    Criterion("effort", "effort", 1.0, False, "effort", "least engineering effort", "most engineering effort",
              lambda v: f"{v:.3g} of 1"),
)
"""Every ranking criterion, in table order. The accuracy weight goes 1/2 to the worst-case spread, 1/4 to
the margin the worst case keeps inside the band at its nearer edge (room for what no model holds) and 1/4
to the Monte Carlo yield. The standby weight goes 3/4 to the current after the
timeout (it flows for as long as the product sits switched off) and 1/4 to the current while timing."""


def criterion(column: str) -> Criterion:
    """The criterion of headline key `column` (KeyError when it is not a criterion)."""
    for c in CRITERIA:
        if c.column == column:
            return c
    raise KeyError(column)


def share(column: str) -> float:
    """Share of its brief weight that the criterion `column` takes (the optimiser splits its terms alike)."""
    return criterion(column).share
