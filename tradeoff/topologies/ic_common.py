"""Pieces shared by the IC timers (555-class monostable, ripple counters with RC or crystal
oscillator): the part classes a design uses (with its overrides), the spread of a timing resistor or capacitor, small currents known as a
typical value and a datasheet limit, candidate tables for a timing R and C, and the power-on
RC network that starts the timing (trigger of a 555, reset of a counter; its release time is
`devices.start.power_on_release_s`).
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Mapping

import numpy as np
import pandas as pd

from tradeoff.analysis import Uncertain
from tradeoff.devices.start import power_on_release_s
from tradeoff.candidates import rated_voltage, role_candidates, voltage_coefficient
from tradeoff.topologies import bands, logic
from tradeoff.topologies.base import BomLine, Design, Finding, Role
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.topologies.base import Topology

__all__ = [
    "TEMPCO_REFERENCE_C", "role_part", "value_spread", "at_temperature",
    "typical_to_limit", "timing_candidates", "value_lines", "role_bom", "class_two_ceramic",
    "fixed_part", "drop_count", "supply_problem", "drop_dominated", "diode", "start_bom", "start_checks",
]

TEMPCO_REFERENCE_C = 25.0
"""Temperature at which resistor and capacitor values hold their nominal value [degC] (passives.yaml)."""


def _holds(part: "Part", role: Role, value: float, supply_max_v: float) -> bool:
    unit = "ohm" if role.kind == "resistor" else "F"
    lo, hi = part.value("min_value", unit), part.value("max_value", unit)
    if not lo * (1 - 1e-9) <= value <= hi * (1 + 1e-9):
        return False
    return role.kind == "resistor" or rated_voltage(part, supply_max_v) is not None


def role_part(topo: "Topology", design: Design, role: Role) -> "Part":
    """The part class filling `role`: design option `<role>_part`, else the cheapest class that holds its value."""
    chosen = design.options.get(f"{role.name}_part")
    if chosen:
        return topo.design_part(design, str(chosen), f"{role.name}_part")
    value = design.values[role.name]
    part = logic.cheapest(topo.catalog, role.kind,
                    lambda p: (not role.dielectrics or p.fields.get("dielectric") in role.dielectrics)
                    and _holds(p, role, value, topo.brief.supply.max_v),
                    f"{role.description}: {fq(value, 'ohm' if role.kind == 'resistor' else 'F')}")
    return topo.design_part(design, part.id)


def value_spread(name: str, value: float, part: "Part", unit: str, volts: float,
                 life_frac: float = 0.0) -> dict[str, Uncertain]:
    """A timing resistor or capacitor: its value at 25 degC within the class tolerance widened by a
    resistor's voltage coefficient at `volts` [V], the largest voltage across it (`devices.capacitor.band_frac`),
    and by `life_frac`, its change over the service life (`bands.life_change_frac`), and its temperature
    coefficient anywhere within the class bound (uniform)."""
    tol, tc = part.value("tolerance", ""), part.value("tempco", "1/K")
    by_voltage = voltage_coefficient(part) * volts
    note = f"{part.id}: ±{100 * tol:g} % tolerance ({part.source('tolerance')})"
    if by_voltage:
        note += (f" and ±{fq(by_voltage, '%')} by its voltage coefficient at {fq(volts, 'V')} "
                 f"({part.source('voltage_coefficient')})")
    if life_frac:
        note += f" ± {100 * life_frac:.3g} % over the service life ({part.source('endurance_drift')})"
    return {
        name: Uncertain.band(value, tol + by_voltage + life_frac, unit=unit, note=note),
        f"{name}_tempco": Uncertain(0.0, -tc, tc, unit="1/K",
                                    note=f"{part.id}: tempco within ±{tc * 1e6:g} ppm/K ({part.source('tempco')})"),
    }


def at_temperature(x: Mapping[str, np.ndarray], name: str) -> np.ndarray:
    """Value of the component `name` at the sample's ambient: value·(1 + tempco·(T − 25 degC))."""
    return x[name] * (1.0 + x[f"{name}_tempco"] * (x["ambient_c"] - TEMPCO_REFERENCE_C))


def typical_to_limit(typical: float, limit: float, unit: str, note: str) -> Uncertain:
    """A small current known by a typical value and a datasheet limit: log-normal with median at
    the typical value and the limit at 3 sigma, truncated symmetrically in log (a stated assumption)."""
    if typical <= 0 or limit <= typical:
        return Uncertain.fixed(max(typical, limit), unit=unit, note=note)
    return Uncertain(typical, typical * typical / limit, limit, dist="lognormal", unit=unit, note=note)


def class_two_ceramic(part: "Part") -> bool:
    """True for class 2 ceramics (capacitance moves with DC bias): kept out of timing roles."""
    return part.has("dc_bias_loss")


def timing_candidates(topo: "Topology", role: Role, dropped: dict[str, int]) -> pd.DataFrame:
    """Candidate table of a timing role with class 2 ceramics and classes the brief's service life outlives
    (`bands.outlived`) removed (counted in `dropped`)."""
    table = role_candidates(role, topo.brief, topo.catalog)
    if role.kind == "capacitor":
        banned = {p.id for p in topo.catalog.parts("capacitor") if class_two_ceramic(p)}
        out = table["part"].isin(banned)
        if out.any():
            key = (f"{role.description}: class 2 ceramic ({', '.join(sorted(banned))}) excluded, its capacitance "
                   "moves by tens of % with DC bias (common practice: C0G or film for timing)")
            dropped[key] = dropped.get(key, 0) + int(out.sum())
            table = table[~out].reset_index(drop=True)
    for part_id in table["part"].unique() if len(table) else ():
        part = topo.catalog.part(part_id)
        if role.kind == "capacitor" and bands.outlived(part, topo.brief):
            out = table["part"] == part_id
            key = (f"{role.description}: {part_id} is rated for less than the {topo.brief.environment.life_years:g}-"
                   f"year service life at {topo.brief.ambient.max_c:g} °C ({part.source('endurance')})")
            dropped[key] = dropped.get(key, 0) + int(out.sum())
            table = table[~out].reset_index(drop=True)
    return table


def value_lines(design: Design, role: str, ref: str, part: "Part", note: str, rated_v: float = 0.0) -> list[BomLine]:
    """BOM line(s) of the value role `role` filled by `part`: one part, or the two parts of its pair (refs
    <ref>a and <ref>b, one line with quantity 2 when both values are equal), the note naming the pairing;
    rated_v [V] > 0 adds a capacitor's rating to the value text."""
    unit = "ohm" if part.category == "resistor" else "F"
    rating = f" {fq(rated_v, 'V')}" if rated_v > 0 else ""
    pair = design.pairs.get(role)
    if not pair:
        return [BomLine(ref, part.id, fq(design.values[role], unit) + rating, 1, part.cost, note, role)]
    note = f"{note} ({pair.pairing} pair)"
    if pair.first == pair.second:
        return [BomLine(f"{ref}a, {ref}b", part.id, fq(pair.first, unit) + rating, 2, part.cost, note, role)]
    return [BomLine(f"{ref}a", part.id, fq(pair.first, unit) + rating, 1, part.cost, note, role),
            BomLine(f"{ref}b", part.id, fq(pair.second, unit) + rating, 1, part.cost, note, role)]


def role_bom(topo: "Topology", design: Design, role: Role, ref: str, note: str) -> list[BomLine]:
    """BOM line(s) of a value role (`value_lines`) filled by its part class (`role_part`)."""
    return value_lines(design, role.name, ref, role_part(topo, design, role), note)


def fixed_part(topo: "Topology", kind: str, value: float, ref: str, note: str, timing: bool = False) -> BomLine:
    """BOM line of a fixed resistor or capacitor: the cheapest class that holds the value (and the
    supply); `timing` keeps class 2 ceramics out (a capacitor that sets a frequency or a time)."""
    unit = "ohm" if kind == "resistor" else "F"
    role = Role(ref, kind, note, lo=value, hi=value)
    part = logic.cheapest(topo.catalog, kind, lambda p: _holds(p, role, value, topo.brief.supply.max_v)
                    and not (timing and class_two_ceramic(p)), f"{note}: {fq(value, unit)}")
    return BomLine(ref, part.id, fq(value, unit), 1, part.cost, note)


def drop_count(dropped: dict[str, int], reason: str, count: int) -> None:
    """Add `count` candidates removed for `reason` (designer's terms) to a block's `dropped` tally."""
    if count > 0:
        dropped[reason] = dropped.get(reason, 0) + count


def diode(topo: "Topology", ref: str, note: str, reverse_factor: float = 1.0) -> BomLine:
    """BOM line of a small diode: the cheapest class whose reverse rating is `reverse_factor` times the supply maximum."""
    need = reverse_factor * topo.brief.supply.max_v
    part = logic.cheapest(topo.catalog, "diode", lambda p: p.value("vr_max", "V") >= need,
                          f"{note}: a diode rated {fq(need, 'V')} reverse")
    return BomLine(ref, part.id, part.summary, 1, part.cost, note)


def _start_values(topo: "Topology") -> tuple[float, float, float]:
    e = topo.entry
    return e.value("start_r", "ohm"), e.value("start_c", "F"), e.value("supply_rise", "s")


def start_bom(topo: "Topology", pin: str, r_ref: str, c_ref: str, d_ref: str) -> list[BomLine]:
    """Parts that start the timing on the `pin` ('trigger' or 'reset'): at power-on an RC holding the
    pin (R and C from the topology entry's start_r, start_c) with a diode that empties C when the
    supply goes off, so a quick re-power starts again; with brief.start 'button' a push-button and
    the resistor that holds the pin idle."""
    r_ohm, c_f, _ = _start_values(topo)
    if topo.brief.start == "button":
        return [fixed_part(topo, "resistor", r_ohm, r_ref, f"holds the {pin} pin idle until the button is pressed"),
                BomLine("SW1", "push-button", "momentary, normally open", 1, topo.entry.value("button_cost", ""),
                        f"start button on the {pin} pin (not a catalog class; indicative cost)")]
    return [fixed_part(topo, "resistor", r_ohm, r_ref, f"power-on {pin} network"),
            fixed_part(topo, "capacitor", c_f, c_ref, f"power-on {pin} network"),
            diode(topo, d_ref, f"empties the power-on {pin} capacitor when the supply goes off")]


def start_checks(topo: "Topology", pin: str, hold_frac: float, ic_supply_min_v: float,
                 pulse_min_s: float) -> list[Finding]:
    """Power-on network: the supply ramps up in `supply_rise`; the pin is held active until its
    capacitor reaches `hold_frac` of the supply (power_on_release_s). The IC only works from
    `ic_supply_min_v` [V] on, so the pulse it sees lasts from then until release; it must last at
    least `pulse_min_s` [s], and it should end well before the shortest delay."""
    if topo.brief.start == "button":
        return [Finding("info", "start", f"timing starts when the button on the {pin} pin is pressed")]
    r_ohm, c_f, rise_s = _start_values(topo)
    release = power_on_release_s(r_ohm * c_f, rise_s, hold_frac)
    awake = rise_s * min(1.0, ic_supply_min_v / topo.brief.supply.min_v)
    pulse = release - awake
    out = []
    if pulse < pulse_min_s:
        out.append(Finding("violation", "start-pulse",
                           f"the power-on {pin} pulse lasts {fq(max(pulse, 0.0), 's')} after the IC's supply reaches "
                           f"{fq(ic_supply_min_v, 'V')} (supply rise {fq(rise_s, 's')}); it needs {fq(pulse_min_s, 's')}"))
    else:
        out.append(Finding("info", "start-pulse",
                           f"power-on {pin} held for {fq(pulse, 's')} after the IC's supply reaches "
                           f"{fq(ic_supply_min_v, 'V')} (supply rise {fq(rise_s, 's')}, needs {fq(pulse_min_s, 's')})"))
    if release > 0.01 * topo.brief.delay.min_s:
        out.append(Finding("warning", "start-length",
                           f"the power-on {pin} network holds the pin for {fq(release, 's')}, over 1 % of the "
                           f"shortest delay {fq(topo.brief.delay.min_s, 's')}"))
    return out


def supply_problem(topo: "Topology", part: "Part") -> str | None:
    """Why the brief's supply range is outside the IC class's rated supply, or None when inside."""
    s = topo.brief.supply
    lo, hi = part.value("supply_min", "V"), part.value("supply_max", "V")
    if s.min_v < lo or s.max_v > hi:
        return (f"supply {fq(s.min_v, 'V')} to {fq(s.max_v, 'V')} is outside the {part.id} rating "
                f"{fq(lo, 'V')} to {fq(hi, 'V')}")
    return None


DOMINANCE_CELLS = 1 << 22
"""Row-pair column comparisons `drop_dominated` makes at once (some 4 MB of booleans per temporary)."""


def drop_dominated(table: "pd.DataFrame", group: tuple[str, ...], lower: tuple[str, ...], reason: str,
                   dropped: dict[str, int], higher: tuple[str, ...] = ()) -> "pd.DataFrame":
    """`table` without the rows another row of the same `group` beats: no worse in every column
    of `lower` (smaller is better) and `higher` (larger is better) and better in one. Exact when
    the rows act only through those columns; the removed rows are counted under `reason`.
    Group columns are numbers >= 0, compared to 1e-9 relative. Groups of one size are compared
    together, every pair of rows at once, DOMINANCE_CELLS comparisons at a time."""
    if len(table) < 2:
        return table
    values = [table[c].to_numpy(dtype=float) for c in group]
    keys = np.stack([np.where(v > 0, np.round(np.log(np.where(v > 0, v, 1.0)) * 1e9), -1e300) for v in values], axis=1)
    order = np.lexsort(keys.T[::-1])
    ordered = keys[order]
    starts = np.flatnonzero(np.concatenate([[True], (ordered[1:] != ordered[:-1]).any(axis=1)]))
    counts = np.diff(np.append(starts, len(order)))
    a = table[[*lower, *higher]].to_numpy(dtype=float) * np.array([1.0] * len(lower) + [-1.0] * len(higher))
    worse = np.zeros(len(table), dtype=bool)
    for size in np.unique(counts[counts > 1]):
        first = starts[counts == size]
        step = max(1, DOMINANCE_CELLS // (int(size) ** 2 * a.shape[1]))
        for at in range(0, len(first), step):
            rows = order[first[at:at + step, None] + np.arange(size)]   # (groups, size)
            g = a[rows]
            no_better = (g[:, :, None, :] >= g[:, None, :, :]).all(axis=3)
            strictly = (g[:, :, None, :] > g[:, None, :, :]).any(axis=3)
            worse[rows[(no_better & strictly).any(axis=2)]] = True
    drop_count(dropped, reason, int(worse.sum()))
    return table[~worse].reset_index(drop=True)
