"""The brief's optional `environment:` section: where and how long the product serves.

    environment:
      board: humid          board-surface leakage at the high-impedance timing nodes: none (default),
                            clean, humid, contaminated, or a surface insulation resistance ("500 Mohm",
                            accepted 1 Mohm to 10 Tohm)
      life: 10 years        years of service at the brief's ambient (default: not stated, the parts
                            as delivered; accepted 1 to 50 years): electrolytic capacitance loss and
                            leakage change against the class's endurance rating, crystal ageing past
                            the first year

Neither key given leaves every result as without the section. The class figures are surface
insulation resistances of the kind measured on the comb pattern of the SIR test method
(IPC-TM-650 2.6.3.7, discussed in the IPC-9201 SIR handbook); a timing node's few pads and short
gaps have fewer squares than the test comb, so taking the comb's figure for the node is on the safe
side. The models place the surface path from the node to ground (its usual neighbour), at any
conductance between none and the figure's.
"""
from __future__ import annotations

from typing import Any

from pydantic import BaseModel, ConfigDict

from tradeoff.errors import UnitParseError
from tradeoff.fields import Invalid, quantity, show
from tradeoff.units import parse_quantity

__all__ = ["Environment", "SURFACE_CLASSES", "YEAR_S", "LIFE_YEARS", "read_environment"]

YEAR_S = 365.25 * 86400.0
"""One year of service [s]."""

SURFACE_CLASSES = {
    "clean": (1e11, "clean, dry board: 100 GΩ (from memory: cleaned boards in office conditions measure "
                    "10^11 to 10^13 Ω on the SIR comb)"),
    "humid": (1e9, "clean board in a humid place: 1 GΩ (from memory: SIR of clean no-clean-flux boards at "
                   "85 °C / 85 % RH, 10^9 to 10^10 Ω, IPC-9201 SIR handbook)"),
    "contaminated": (1e8, "flux residue or dust in humid air: 100 MΩ (from memory: the 100 MΩ pass limit of "
                          "the flux SIR test at 40 °C / 90 % RH, IPC J-STD-004 with IPC-TM-650 2.6.3.7)"),
}
"""Board-surface class -> (surface insulation resistance [ohm], what the figure rests on)."""

_SURFACE_OHM = quantity("ohm", 1e6, 1e13)
LIFE_YEARS = (1.0, 50.0)
"""Accepted service life [years]: below a year the parts' first-year figures already hold."""


class Environment(BaseModel):
    """Board-surface leakage (class name, or 'given' for a resistance, its resistance [ohm] and what it
    rests on) and service life [years]; None where the brief does not state them."""

    model_config = ConfigDict(strict=True, extra="forbid", frozen=True)

    board: str | None = None
    surface_ohm: float | None = None
    surface_basis: str | None = None
    life_years: float | None = None


def _surface(raw: object) -> tuple[str, float, str]:
    """(class, resistance [ohm], basis) of the `board` value: a class name or a resistance."""
    if isinstance(raw, str) and raw.strip().lower() in SURFACE_CLASSES:
        name = raw.strip().lower()
        return name, *SURFACE_CLASSES[name]
    accepted = f"none, {', '.join(SURFACE_CLASSES)} or a surface insulation resistance from 1 MΩ to 10 TΩ"
    if not isinstance(raw, str) or not raw.strip()[:1].isdigit():
        raise Invalid(f"got {show(raw)}; accepted: {accepted}")
    try:
        ohm = _SURFACE_OHM(raw)
    except UnitParseError as exc:
        raise Invalid(f"{exc.reason}; accepted: {accepted}") from None
    return "given", ohm, "surface insulation resistance given in the brief"


def _life_years(raw: object) -> float:
    """Service life [years] from a time ('10 years', '5 a')."""
    accepted = f"a service life from {LIFE_YEARS[0]:g} to {LIFE_YEARS[1]:g} years, such as '10 years'"
    try:
        years = parse_quantity(raw, "s") / YEAR_S
    except UnitParseError as exc:
        raise Invalid(f"{exc.reason}; accepted: {accepted}") from None
    if not LIFE_YEARS[0] * (1 - 1e-12) <= years <= LIFE_YEARS[1] * (1 + 1e-12):
        raise Invalid(f"{show(raw)} is {years:.3g} years, outside the accepted range; accepted: {accepted}")
    return years


def read_environment(r: Any, raw: object) -> dict | None:
    """The `environment:` section read with the brief's reader `r` (recording every value's origin);
    None when a value has a problem."""
    p = ("environment",)
    sec = r.mapping(p, raw, ("board", "life"))
    if sec is None:
        return None
    out: dict = {"board": None, "surface_ohm": None, "surface_basis": None, "life_years": None}
    board = sec.get("board", "none")
    if board in (None, "none"):
        r.record(p + ("board",), "none", "", "given" if "board" in sec else "default",
                 "no board-surface leakage modelled")
    else:
        try:
            out["board"], out["surface_ohm"], out["surface_basis"] = _surface(board)
        except Invalid as exc:
            r.problem(p + ("board",), str(exc))
            return None
        if out["board"] == "given":
            r.record(p + ("board",), out["surface_ohm"], "ohm", "given")
        else:
            r.record(p + ("board",), out["board"], "", "given")
            r.record(p + ("surface_resistance",), out["surface_ohm"], "ohm", "derived", out["surface_basis"])
    if "life" in sec:
        out["life_years"] = r.get(p, sec, "life", _life_years, "years")
        if out["life_years"] is None:
            return None
    else:
        r.record(p + ("life",), "not stated", "", "default", "parts as delivered (first-year crystal ageing)")
    return out
