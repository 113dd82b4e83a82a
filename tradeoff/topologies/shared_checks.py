"""The design rules every topology's evaluation adds to its own, written once: each value within what its role
and its part class allow (the rules the study's candidate tables apply, so analyze and the study agree), each
capacitor's endurance against the brief's service life, the worst case against the band, and the brief's limits
on standby, rails, parts and cost.
"""
from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any, Iterable, Mapping

from tradeoff.devices.life import HOURS_PER_YEAR, LIFE_DOUBLING_K, electrolytic_ageing, rated_life_h
from tradeoff.topologies.records import BomLine, Finding, Role
from tradeoff.units import format_quantity

if TYPE_CHECKING:  # pragma: no cover - typing only
    from tradeoff.brief import Brief, Limits
    from tradeoff.catalog import Catalog

__all__ = ["value_range_findings", "life_findings", "band_shortfalls", "margin_shortfalls", "limit_shortfalls"]


def value_range_findings(roles: Iterable[Role], design_values: Mapping[str, float], options: Mapping[str, Any],
                         catalog: "Catalog") -> list[Finding]:
    """A violation for each value outside the limit the circuit sets for its role (`Role.lo` to `hi`),
    each value on a capacitor class of a dielectric the role does not take, and each value outside the
    practical range (`min_value` to `max_value`) of the part class the design names for it (option
    '<role>_part'): the same rules the study's candidate tables apply, so analyze and the study agree on
    what can be built."""
    out = []
    for role in roles:
        part_id = options.get(f"{role.name}_part")
        value = design_values.get(role.name)
        if value is None:
            continue
        unit = "ohm" if role.kind == "resistor" else "F"
        if not role.lo * (1 - 1e-9) <= value <= role.hi * (1 + 1e-9):
            accepted = (f"at least {format_quantity(role.lo, unit)}" if math.isinf(role.hi) else
                        f"{format_quantity(role.lo, unit)} to {format_quantity(role.hi, unit)}")
            out.append(Finding("violation", "value-range", f"{role.description} {format_quantity(value, unit)} "
                               f"is outside what the circuit allows ({role.limit}); accepted: {accepted}"))
        if not isinstance(part_id, str) or part_id not in catalog:
            continue
        part = catalog.part(part_id)
        dielectric = part.fields.get("dielectric")
        if role.kind == "capacitor" and role.dielectrics and dielectric not in role.dielectrics:
            out.append(Finding("violation", "value-range", f"{role.description} on {part.id}: a {dielectric} "
                               f"capacitor; accepted: {' or '.join(role.dielectrics)} classes"))
        if not (part.has("min_value") and part.has("max_value")):
            continue
        lo, hi = part.value("min_value", unit), part.value("max_value", unit)
        if not lo * (1 - 1e-9) <= value <= hi * (1 + 1e-9):
            out.append(Finding("violation", "value-range",
                               f"{role.description} {format_quantity(value, unit)} is outside the {part.id} "
                               f"class's range {format_quantity(lo, unit)} to {format_quantity(hi, unit)} "
                               f"({part.source('max_value')}); accepted: a value within it, or a class "
                               "that makes it"))
    return out


def life_findings(brief: "Brief", catalog: "Catalog", bom: Iterable[BomLine]) -> list[Finding]:
    """With a service life in the brief, each capacitor class on the parts list that has an endurance
    rating, against it at the hottest ambient (`devices.life`): information while the rating covers the
    life, a violation when it does not."""
    years, hot = brief.environment.life_years, brief.ambient.max_c
    if years is None:
        return []
    out = []
    for part_id in dict.fromkeys(line.part for line in bom):
        part = catalog.part(part_id) if part_id in catalog else None
        if part is None or not part.has("endurance"):
            continue
        endurance_h, t_max = part.value("endurance", "s") / 3600.0, part.value("temp_max", "degC")
        lasts = rated_life_h(endurance_h, t_max, hot) / HOURS_PER_YEAR
        ageing = electrolytic_ageing(part, years, hot)
        text = (f"{part.id}: rated {endurance_h:.0f} h at {t_max:g} °C ({part.source('endurance')}), about "
                f"{lasts:.3g} years at {hot:g} °C (life doubles every {LIFE_DOUBLING_K:g} K cooler, common "
                f"practice)")
        if ageing.used_frac > 1:
            out.append(Finding("violation", "service-life", f"{text}: shorter than the {years:g}-year service "
                               "life; accepted: a class rated for longer or hotter, or a shorter life"))
        else:
            out.append(Finding("info", "service-life", f"{text}: the {years:g}-year service life uses "
                               f"{ageing.used_frac * 100:.3g} % of it, so its value band widens by ±"
                               f"{ageing.capacitance_change_frac * 100:.3g} % (leakage stays within its limit)"))
    return out


def limit_shortfalls(limits: "Limits", after_a: float, rails: int, placements: int, cost: float) -> list[str]:
    """The brief's limits a design exceeds (standby current after the timeout [A], rails, parts, indicative
    cost [EUR]), each with both figures; empty when it keeps every limit."""
    out = []
    if limits.standby_after_a is not None and after_a > limits.standby_after_a:
        out.append(f"standby current after the timeout {format_quantity(after_a, 'A')} exceeds the limit "
                   f"{format_quantity(limits.standby_after_a, 'A')}")
    if limits.rails is not None and rails > limits.rails:
        out.append(f"needs {rails} supply rails; the limit is {limits.rails}")
    if limits.parts is not None and placements > limits.parts:
        out.append(f"needs {placements} parts; the limit is {limits.parts}")
    if limits.cost is not None and cost > limits.cost:
        out.append(f"indicative cost {cost:.2f} EUR exceeds the limit {limits.cost:.2f} EUR")
    return out


def band_shortfalls(band: tuple[float, float], worst_min_s: float, worst_max_s: float) -> list[str]:
    """Where the worst-case delays [s] leave the band (min, max) [s], with both figures; empty inside it."""
    lo, hi = band
    out = []
    if worst_min_s < lo:
        out.append(f"worst-case shortest delay {format_quantity(worst_min_s, 's')} is below the band's minimum "
                   f"{format_quantity(lo, 's')}")
    if not math.isfinite(worst_max_s):
        out.append("at some corners the unit never times out (the end condition is never reached)")
    elif worst_max_s > hi:
        out.append(f"worst-case longest delay {format_quantity(worst_max_s, 's')} exceeds the band's maximum "
                   f"{format_quantity(hi, 's')}")
    return out


def margin_shortfalls(band: tuple[float, float], need_frac: float, worst_min_s: float, worst_max_s: float) -> list[str]:
    """Band edges (min, max) [s] the worst-case delays [s] meet but without the brief's margin `need_frac`
    (a fraction of the band's width) at each end."""
    lo, hi = band
    width = hi - lo
    out = []
    for name, kept, side, worst in (("minimum", (worst_min_s - lo) / width, "above", worst_min_s),
                                    ("maximum", (hi - worst_max_s) / width, "below", worst_max_s)):
        if 0 <= kept < need_frac:
            out.append(f"the worst-case {'shortest' if name == 'minimum' else 'longest'} delay "
                       f"{format_quantity(worst, 's')} lies only {format_quantity(kept, '%', 2)} of the band {side} "
                       f"the band's {name}; the brief asks for a margin of {format_quantity(need_frac, '%')} of the "
                       f"band ({format_quantity(need_frac * width, 's')}) at each end")
    return out
