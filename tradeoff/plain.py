"""A design and its quantities in plain words: names as a reader says them ('ambient_c' ->
'ambient') and the values a person writes on a schematic ('360 kΩ, 2.2 µF, stage 13').

Below the reports, so the study's JSON, the sweep's records and every report share one wording;
internal names (`ambient_c`, `r_timing_part`) and part class ids never reach a reader's values
text through here.
"""
from __future__ import annotations

import re

from typing import TYPE_CHECKING

from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief

__all__ = ["LEAKAGE_SPREAD_ASSUMPTION", "assumptions", "plain_label", "schematic_values", "option_texts", "part_classes", "FIXED_SCALE_UNITS", "quantity_text"]

_LABELS = {
    "ambient_c": "ambient", "supply_v": "supply", "leak_level": "leakage level",
    "rc_trim_position": "RC trim position", "hfe": "hFE", "vbe": "VBE", "vbe_on": "VBE (on)",
    "vto": "threshold voltage", "vth": "gate threshold", "vt_frac": "inverter threshold", "k": "oscillator constant k",
    "r_timing": "timing resistor", "c_timing": "timing capacitor", "r_hold": "hold resistor",
    "c_hold": "hold capacitor", "r_hyst": "hysteresis resistor", "mcu": "microcontroller", "link_stage": "link stage",
    "coil_ohm": "coil resistance", "release_frac": "relay release point", "rail_v": "logic rail",
    "drain_v": "drain voltage", "offset_v": "comparator offset", "bias_frac": "input bias", "ref_bias_frac": "reference-input bias", "v_ref": "reference voltage",
    "threshold_a": "threshold pin current", "gate_leak": "gate leakage", "board_leak": "board-surface leakage",
    "timer_error": "timer timing error",
    "timer_supply_coef": "timer supply coefficient", "crystal_aging": "crystal ageing",
    "pin_cap_f": "oscillator input pin and stray capacitance", "mos_vt_v": "inverter transistor threshold",
}
"""Names whose plain form is not just the name without its unit suffix and underscores."""

LEAKAGE_SPREAD_ASSUMPTION = (
    "Monte Carlo leakage (an assumption): a hold capacitor's leakage and a MOSFET's gate leakage are drawn normal "
    "about a typical part with the datasheet limit at 3 standard deviations (cut off at no leakage and at the "
    "limit); the 555's electrolytic leakage, threshold and discharge-pin currents log-normal about their typical "
    "values with the limit at 3 standard deviations (cut off there), its film capacitor at the guaranteed "
    "insulation resistance in every unit; a comparator's input bias uniform between "
    "plus and minus its limit at the unit's ambient; the worst case takes the datasheet limits.")
"""The one sentence every report prints about how leakage is spread in the Monte Carlo (its law:
tradeoff.devices.capacitor.leakage_level, tradeoff.topologies.ic_common.typical_to_limit)."""


def assumptions(brief: "Brief") -> list[str]:
    """The stated assumptions of a study of `brief`, as every report prints them: the leakage spread, and
    for a brief with a board-surface leakage how that is placed and spread (tradeoff.topologies.bands.board_leak)."""
    out = [LEAKAGE_SPREAD_ASSUMPTION]
    env = brief.environment
    if env.surface_ohm is not None:
        label = "the brief's figure" if env.board == "given" else f"{env.board} board"
        out.append(f"Board-surface leakage (an assumption): a path from each high-impedance timing node to ground, "
                   f"anywhere from none to {fq(env.surface_ohm, 'ohm')} ({label}), uniform in conductance in the "
                   "Monte Carlo, both ends in the worst case; a leak to the supply instead would lengthen a hold "
                   "and is not modelled.")
    return out

_UNIT_SUFFIX = re.compile(r"_(ohm|hz|s|v|a|f|c|w|frac|ppm|part)$")
_QUALIFIER = re.compile(r"^(?P<base>.+)_(?P<what>tempco|leakage|part)$")
_OF_TRANSISTOR = re.compile(r"^(?P<what>hfe|vbe)_(?P<q>q\d+)$")
_TRANSISTOR_RESISTOR = re.compile(r"^r_(?P<q>q\d+)_(?P<what>.+)$")


def plain_label(name: str) -> str:
    """A quantity, role or option name as a reader says it: 'ambient_c' -> 'ambient',
    'r_timing_part' -> 'timing resistor part class', 'c_timing_tempco' -> 'timing capacitor
    tempco', 'hfe_q1' -> 'hFE of Q1', 'r_q1_collector' -> 'Q1 collector resistor'."""
    if name in _LABELS:
        return _LABELS[name]
    if m := _QUALIFIER.match(name):
        return f"{plain_label(m['base'])} {'part class' if m['what'] == 'part' else m['what']}"
    if m := _OF_TRANSISTOR.match(name):
        return f"{_LABELS[m['what']]} of {m['q'].upper()}"
    if m := _TRANSISTOR_RESISTOR.match(name):
        return f"{m['q'].upper()} {m['what'].replace('_', ' ')} resistor"
    stem = _UNIT_SUFFIX.sub("", name)
    if stem in _LABELS:
        return _LABELS[stem]
    if re.match(r"^[rc]_", stem):
        kind = "resistor" if stem[0] == "r" else "capacitor"
        return f"{stem[2:].replace('_', ' ')} {kind}"
    return stem.replace("_", " ")


FIXED_SCALE_UNITS = {"1/K": ("ppm/K", 1e6), "degC": ("°C", 1.0), "dimensionless": ("—", 1.0),
                     "fraction of VDD": ("% of VDD", 100.0)}
"""Units a reader sees at one fixed scale, not with an engineering prefix: SI unit -> (shown unit,
factor from SI). A tempco of 1e-4 /K reads '100 ppm/K', not '100 µ1/K'."""


def quantity_text(value: float, unit: str) -> str:
    """A quantity with its unit as a reader writes it: '100 ppm/K', '30 % of VDD', '4.7 µF'."""
    if unit in FIXED_SCALE_UNITS and unit != "degC":
        shown, factor = FIXED_SCALE_UNITS[unit]
        number = fq(value * factor, "")
        return number if shown == "—" else f"{number} {shown}"
    return fq(value, unit)


def _option_text(value: object, unit: str | None) -> str:
    return fq(value, unit) if unit and isinstance(value, (int, float)) else str(value)


def schematic_values(model, design) -> str:
    """What a person writes on the schematic: component values with units, then the plain choices
    (stage, ticks), no part class ids and no empty options: '360 kΩ, 2.2 µF, stage 13'."""
    kinds = {r.name: r.kind for r in model.roles()} if model is not None else {}
    parts = []
    for name, value in design.values.items():
        unit = "ohm" if kinds.get(name, "resistor" if name.startswith("r_") else "capacitor") == "resistor" else "F"
        text = fq(value, unit)
        pair = design.pairs.get(name)
        if pair and pair[1]:
            text += f" ({fq(pair[0], unit)} + {fq(pair[1], unit)})"
        parts.append(text)
    parts += option_texts(model, design)
    return ", ".join(parts) or "no values to choose"


def option_texts(model, design) -> list[str]:
    """The design's options other than part class choices, each in plain words with its unit
    ('stage 13', 'oscillator internal-rc'); empty options left out."""
    units = getattr(model, "option_units", {}) or {}
    return [f"{plain_label(name)} {_option_text(value, units.get(name))}" for name, value in design.options.items()
            if value not in ("", None) and not _is_part_choice(model, name, value)]


def _is_part_choice(model, name: str, value: object) -> bool:
    """True when a design option names a catalog part class (declared so, or its value is a part id)."""
    catalog = getattr(model, "catalog", None)
    return (name in (getattr(model, "option_parts", {}) or {}) or name.endswith("_part")
            or (isinstance(value, str) and catalog is not None and value in catalog))


def part_classes(model, design) -> list[tuple[str, str]]:
    """(plain option name, part class id) of the design's part class choices, in design order."""
    return [(plain_label(name.removesuffix("_part")), str(value)) for name, value in design.options.items()
            if value not in ("", None) and _is_part_choice(model, name, value)]
