"""Production cost lines shared by the terminal report and the review page: each design's cost per
unit at the brief's volume, broken down, and the break-even sentence (EUR, indicative)."""
from __future__ import annotations

from typing import TYPE_CHECKING

from tradeoff.economics import break_even_of

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.trade_study import StudyResult

__all__ = ["money_heading", "money_lines"]


def money_heading(result: "StudyResult") -> str:
    """Heading of the cost section: the volume and what the money rests on."""
    production = result.brief.production
    basis = "your price file where it names a part class, else indicative" if production.prices \
        else "indicative: put your own prices and rates in the brief's production section"
    return f"Cost per unit at {production.volume:,} units (EUR, {basis})"


def money_lines(result: "StudyResult") -> list[str]:
    """One line per feasible design, then the break-even of the winner and the runner-up."""
    rate = result.brief.production.hourly_rate_eur
    lines = []
    for name, ev, _ in result.designs():
        c = ev.production
        if c is None:
            continue
        lines.append(f"{name}: {c.per_unit_eur:.2f} EUR = parts {c.parts_eur:.2f} + assembly {c.assembly_eur:.2f} + "
                     f"programming {c.programming_eur:.2f} + engineering {c.engineering_eur:.2f} "
                     f"({c.engineering_hours:g} h at {rate:g} EUR/h over {c.volume:,} units)"
                     + "".join(f"; {note}" for note in c.notes))
    even = break_even_of(result)
    if even is not None:
        lines.append(f"{even.first} against {even.second}: {even.text}")
    return lines
