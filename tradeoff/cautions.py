"""Safety cautions shown wherever a brief switches a mains load.

One source of the wording, read by the terminal report, the JSON, the workbook and the
README check, so every output says the same thing.
"""
from __future__ import annotations

from tradeoff.brief import Brief
from tradeoff.brief_sections import HAZARDOUS_VOLTAGE_V

__all__ = ["HAZARDOUS_VOLTAGE_V", "needs_cautions", "cautions"]

CAUTIONS = (
    "Mains wiring is a shock and fire hazard: work on it only de-energised, and have it done or checked by a "
    "licensed person.",
    "Keep the appliance's own thermal cut-out and other protection in circuit; a timer must never replace or "
    "bypass it.",
    "Rate the relay contacts with margin over the load's current and voltage, including inrush.",
    "Keep creepage and clearance between mains parts and the low-voltage timer circuit as the product standard "
    "requires (IEC 60664-1 gives the basis; roughly 2 mm basic and 4 mm reinforced clearance at 230 V).",
    "An auto-off timer is not a certified protective control; software that performs a safety function falls "
    "under the software classes of the appliance-control standard (IEC 60730-1 Annex H, referred to by "
    "IEC 60335-1).",
    "Follow local wiring codes and regulations; this tool's results do not replace them.",
)


def needs_cautions(brief: Brief) -> bool:
    """True when the switched load is mains or above the extra-low-voltage boundary."""
    switched = brief.load.switched
    return bool(switched.mains) or switched.voltage_v > HAZARDOUS_VOLTAGE_V


def cautions(brief: Brief) -> list[str]:
    """The cautions that apply to `brief` (empty for a low-voltage-only brief)."""
    return list(CAUTIONS) if needs_cautions(brief) else []
