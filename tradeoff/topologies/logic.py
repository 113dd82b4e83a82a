"""Logic rail and logic-output relay driver, shared by the timers built around an IC with a
low supply rating (the microcontroller, the micropower comparator and the ripple counters).

The logic rail: when the brief's supply is a regulated supply inside the IC's rating, the IC
runs straight from it (one rail); otherwise a linear regulator class from the catalog makes a
logic rail (two rails: the supply for the relay coil, the regulated rail for the logic). The
regulator draws its quiescent current for as long as the supply is on, after the timeout too.

The output driver: a logic-level N-channel MOSFET switches the relay coil (or dc load) to
ground, a gate resistor limits the pin's edge current and a pull-down keeps the MOSFET off
while the IC is in reset (its pins float then); a flyback diode clamps a relay coil.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Callable

from tradeoff.devices.mosfet import on_state_drop_v
from tradeoff.devices.relay import derated_power_w
from tradeoff.errors import CatalogError, DesignKeyError
from tradeoff.topologies.base import BomLine, Finding
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part

__all__ = [
    "NO_REGULATOR", "PREFERRED_RAIL_V", "LogicRail", "rail_options", "logic_rail", "rail_bom", "cheapest",
    "resistor_class", "output_driver_bom", "DIODE_REVERSE_FACTOR", "GATE_PULLDOWN_OHM",
    "GATE_RESISTOR_OHM", "output_driver_checks", "load_current_max", "output_mosfet", "on_state", "regulator_bom",
    "p_channel",
]

NO_REGULATOR = "none"
"""Design option value `regulator: none`: the IC runs straight from the brief's (regulated) supply."""

PREFERRED_RAIL_V = 3.3
"""Logic rail aimed at when a regulator class offers several outputs [V] (common practice)."""

GATE_PULLDOWN_OHM = 1e6
"""Gate pull-down of the output MOSFET [ohm]: holds it off while the IC's pin floats (common practice)."""

GATE_RESISTOR_OHM = 1e3
"""Series gate resistor of the output MOSFET [ohm] (common practice)."""

_RAIL_CAP_F = 1e-6
"""Input and output capacitor of the regulator [F] (common practice for small LDOs)."""

_DECOUPLING_F = 100e-9
"""Supply decoupling capacitor at the IC [F] (common practice)."""


@dataclass(frozen=True)
class LogicRail:
    """The supply an IC runs from: the regulator class (None: the brief's supply), rail voltages [V],
    the regulator's quiescent current [A] (0 without one)."""

    regulator: "Part | None"
    nominal_v: float
    min_v: float
    max_v: float
    quiescent_typ_a: float
    quiescent_max_a: float

    @property
    def option(self) -> str:
        """The design option value naming this rail (`regulator`)."""
        return NO_REGULATOR if self.regulator is None else self.regulator.id

    @property
    def rails(self) -> int:
        """Supply rails of the design: the brief's supply plus the regulated one, if any."""
        return 1 if self.regulator is None else 2


def _regulated(brief: "Brief", part: "Part", load_min_v: float, load_max_v: float,
               every_output: bool = False) -> LogicRail | list[LogicRail] | str:
    """The rail regulator class `part` makes for a load rated load_min_v..load_max_v [V] (with
    `every_output`, one rail per output voltage that fits), or why it cannot."""
    supply = brief.supply
    input_max = part.value("input_max", "V")
    if supply.max_v > input_max:
        return (f"{part.id}: input rating {fq(input_max, 'V')} is below the supply maximum "
                f"{fq(supply.max_v, 'V')}")
    tol = part.value("output_tolerance", "")
    dropout = part.value("dropout", "V")
    fits = [v for v in part.values("output_voltages", "V")
            if load_min_v <= v * (1 - tol) and v * (1 + tol) <= load_max_v and supply.min_v - dropout >= v * (1 + tol)]
    if not fits:
        return (f"{part.id}: no output voltage both inside the IC's {fq(load_min_v, 'V')} to {fq(load_max_v, 'V')} "
                f"(with its {100 * tol:g} % tolerance) and at least the {fq(dropout, 'V')} dropout below the supply "
                f"minimum {fq(supply.min_v, 'V')}")
    made = [LogicRail(part, v, v * (1 - tol), v * (1 + tol), part.value("quiescent_typ", "A"),
                      part.value("quiescent_max", "A")) for v in sorted(fits)]
    return made if every_output else min(made, key=lambda r: (abs(r.nominal_v - PREFERRED_RAIL_V), r.nominal_v))


def _direct(brief: "Brief", load_min_v: float, load_max_v: float, regulated_only: bool = True) -> LogicRail | str:
    """The brief's own supply as the logic rail, or why it cannot be (`regulated_only`: the IC needs
    a regulated supply, as a microcontroller does; a CMOS counter runs from any supply in its rating)."""
    s = brief.supply
    if regulated_only and s.kind != "regulated":
        return (f"none: the supply is unregulated ({fq(s.min_v, 'V')} to {fq(s.max_v, 'V')}); the IC needs a "
                "regulated rail")
    if s.min_v < load_min_v or s.max_v > load_max_v:
        return (f"none: the supply {fq(s.min_v, 'V')} to {fq(s.max_v, 'V')} is outside the IC's rating "
                f"{fq(load_min_v, 'V')} to {fq(load_max_v, 'V')}")
    return LogicRail(None, s.nominal_v, s.min_v, s.max_v, 0.0, 0.0)


def rail_options(brief: "Brief", catalog: "Catalog", load_min_v: float, load_max_v: float,
                 regulated_only: bool = True, every_output: bool = False) -> tuple[list[LogicRail], list[str]]:
    """Every way to power an IC rated load_min_v..load_max_v [V] from the brief's supply, and the
    reasons the other ways fail (in the designer's terms). regulated_only: the IC cannot run from
    an unregulated supply even inside its rating; every_output: one rail per regulator output
    voltage that fits (else the one nearest PREFERRED_RAIL_V)."""
    rails, reasons = [], []
    for made in (_direct(brief, load_min_v, load_max_v, regulated_only),
                 *(_regulated(brief, p, load_min_v, load_max_v, every_output) for p in catalog.parts("ldo"))):
        if isinstance(made, str):
            reasons.append(made)
        else:
            rails.extend(made if isinstance(made, list) else [made])
    return rails, reasons


def logic_rail(brief: "Brief", catalog: "Catalog", option: str, load_min_v: float, load_max_v: float) -> LogicRail:
    """The rail named by design option `regulator` (a regulator class id or 'none'); a DesignKeyError
    at that option when the rail cannot power the IC."""
    regulators = {p.id: p for p in catalog.parts("ldo")}
    if option == NO_REGULATOR:
        made = _direct(brief, load_min_v, load_max_v)
    elif option in regulators:
        made = _regulated(brief, regulators[option], load_min_v, load_max_v)
    else:
        made = f"unknown regulator class {option!r}"
    if isinstance(made, str):
        raise DesignKeyError(("options", "regulator"), f"{made}; accepted: {NO_REGULATOR!r} or a regulator "
                             f"class id ({', '.join(regulators)}) that fits")
    return made


def cheapest(catalog: "Catalog", category: str, need: Callable[["Part"], bool], what: str,
             dielectric: str | None = None) -> "Part":
    """The cheapest catalog class of `category` (and dielectric) that satisfies `need`; CatalogError
    saying `what` was needed when none does."""
    found = [p for p in catalog.parts(category)
             if (dielectric is None or p.fields.get("dielectric") == dielectric) and need(p)]
    if not found:
        raise CatalogError.single("catalog", category, f"no {category} class fits: {what}; accepted: add one "
                                  "to a catalog file (see `tradeoff catalog`)")
    return min(found, key=lambda p: p.cost)


def _ceramic(catalog: "Catalog", value_f: float, rated_min_v: float) -> "Part":
    return cheapest(catalog, "capacitor",
                    lambda p: p.value("min_value", "F") <= value_f <= p.value("max_value", "F")
                    and max(p.values("rated_voltages", "V")) >= rated_min_v,
                    f"a ceramic capacitor of {fq(value_f, 'F')} rated {fq(rated_min_v, 'V')}", dielectric="ceramic")


def resistor_class(catalog: "Catalog", value_ohm: float) -> "Part":
    """The cheapest resistor class that makes `value_ohm` [ohm]."""
    return cheapest(catalog, "resistor",
                    lambda p: p.value("min_value", "ohm") <= value_ohm <= p.value("max_value", "ohm"),
                    f"a resistor of {fq(value_ohm, 'ohm')}")


def rail_bom(brief: "Brief", catalog: "Catalog", rail: LogicRail, ic_ref: str, ic: "Part") -> list[BomLine]:
    """The IC with its decoupling capacitor, and the regulator with its two capacitors when there is one."""
    decoupling = _ceramic(catalog, _DECOUPLING_F, rail.max_v)
    lines = [BomLine(ic_ref, ic.id, ic.summary, 1, ic.cost),
             BomLine("C1", decoupling.id, fq(_DECOUPLING_F, "F"), 1, decoupling.cost, "decoupling at the IC")]
    return lines + regulator_bom(brief, catalog, rail)


def regulator_bom(brief: "Brief", catalog: "Catalog", rail: LogicRail, ref: str = "U2",
                  cap_refs: str = "C2, C3") -> list[BomLine]:
    """The rail's regulator with its input and output capacitors; nothing for the brief's own supply."""
    if rail.regulator is None:
        return []
    cap = _ceramic(catalog, _RAIL_CAP_F, brief.supply.max_v)
    reg = rail.regulator
    return [BomLine(ref, reg.id, f"{fq(rail.nominal_v, 'V')} regulator", 1, reg.cost, "logic rail"),
            BomLine(cap_refs, cap.id, fq(_RAIL_CAP_F, "F"), 2, cap.cost, "regulator input and output")]


def load_current_max(brief: "Brief") -> float:
    """Largest load current [A]: a relay coil at the supply maximum, or the dc load current."""
    if brief.load.kind == "relay":
        return brief.supply.max_v / brief.load.coil_resistance_ohm
    return brief.load.current_a


def p_channel(part: "Part") -> bool:
    """True for a P-channel MOSFET class (param `p_channel`); the low-side drivers here need N-channel."""
    return part.has("p_channel")


def output_mosfet(brief: "Brief", catalog: "Catalog", rail: LogicRail) -> "Part":
    """The cheapest logic-level N-MOSFET class rated for the load that the rail's minimum turns on, whose gate
    takes the rail's maximum, and whose on-state loss at the weakest corner stays within its dissipation
    rating derated linearly from 25 degC to Tj max at the brief's hottest ambient (datasheets' derating curve)."""
    current = load_current_max(brief)
    return cheapest(catalog, "mosfet",
                    lambda p: not p_channel(p) and p.value("vds_max", "V") >= brief.supply.max_v
                    and p.value("id_max", "A") >= current
                    and p.value("vth_max", "V") < rail.min_v and p.value("vgs_max", "V") >= rail.max_v
                    and on_state(p, brief, rail)[1] <= derated_power_w(p.value("p_tot", "W"), p.value("tj_max", "degC"),
                                                                        brief.ambient.max_c),
                    f"an N-MOSFET for {fq(current, 'A')} at {fq(brief.supply.max_v, 'V')} whose threshold a "
                    f"{fq(rail.min_v, 'V')} gate drive exceeds, gate rated {fq(rail.max_v, 'V')}, and whose "
                    f"on-state loss its dissipation rating covers at {fq(brief.ambient.max_c, 'degC')}")


def on_state(fet: "Part", brief: "Brief", rail: LogicRail) -> tuple[float, float]:
    """On-state drop [V] and loss [W] of the output MOSFET at the load's largest current, weakest corner:
    the square-law linear region (SPICE level 1) at the lowest rail, the highest threshold at the coldest
    ambient and the smallest K; where the class gives R_DS(on) (at its rated gate drive, max, 25 degC),
    at least I·R_DS(on) raised by its tempco to the junction maximum (datasheets' normalised R_DS(on))."""
    vth = fet.value("vth_max", "V") + fet.value("vth_tempco", "V/K") * (brief.ambient.min_c - 25.0)
    current = load_current_max(brief)
    drop = on_state_drop_v(rail.min_v - vth, fet.value("k_min", "A/V**2"), current)
    if fet.has("rds_on"):
        hot = fet.value("tj_max", "degC") - 25.0
        drop = max(drop, current * fet.value("rds_on", "ohm") * (1.0 + fet.value("rds_on_tempco", "1/K") * hot))
    return drop, current * drop


DIODE_REVERSE_FACTOR = 3.0
"""Flyback diode reverse rating over the supply maximum (relay makers' application notes, docs/references.md)."""


def _diode(brief: "Brief", catalog: "Catalog") -> "Part":
    need = DIODE_REVERSE_FACTOR * brief.supply.max_v
    return cheapest(catalog, "diode", lambda p: p.value("vr_max", "V") >= need,
                    f"a flyback diode rated {fq(need, 'V')} reverse (3 times the supply maximum)")


def output_driver_bom(brief: "Brief", catalog: "Catalog", rail: LogicRail, first_r: int) -> list[BomLine]:
    """Output MOSFET, its gate resistor and pull-down (R<first_r>, R<first_r + 1>) and, for a relay, the
    flyback diode; the relay coil itself is the brief's load and not in the bill of materials."""
    fet = output_mosfet(brief, catalog, rail)
    r_gate, r_pull = resistor_class(catalog, GATE_RESISTOR_OHM), resistor_class(catalog, GATE_PULLDOWN_OHM)
    lines = [BomLine("Q1", fet.id, fet.summary, 1, fet.cost, "switches the load to ground"),
             BomLine(f"R{first_r}", r_gate.id, fq(GATE_RESISTOR_OHM, "ohm"), 1, r_gate.cost, "gate resistor"),
             BomLine(f"R{first_r + 1}", r_pull.id, fq(GATE_PULLDOWN_OHM, "ohm"), 1, r_pull.cost,
                     "gate pull-down: off while the IC is in reset")]
    if brief.load.kind == "relay":
        diode = _diode(brief, catalog)
        lines.append(BomLine("D1", diode.id, diode.summary, 1, diode.cost, "flyback diode across the coil"))
    return lines


def output_driver_checks(brief: "Brief", catalog: "Catalog", rail: LogicRail) -> list[Finding]:
    """The output MOSFET must exist in the catalog, and at the weakest corner (lowest rail, highest threshold
    at the coldest ambient, smallest K) its on-state drop must leave the coil its must-operate voltage."""
    try:
        fet = output_mosfet(brief, catalog, rail)
    except CatalogError as exc:
        return [Finding("violation", "output-driver", exc.reason)]
    current = load_current_max(brief)
    drop, loss = on_state(fet, brief, rail)
    if brief.load.kind != "relay":
        return [Finding("info", "output-loss", f"output MOSFET {fet.id} drops at most {fq(drop, 'V')} and "
                        f"dissipates at most {fq(loss, 'W')} at {fq(current, 'A')} (weakest corner)")]
    need = brief.load.must_operate_frac * brief.load.coil_voltage_v
    if brief.supply.min_v - drop < need:
        return [Finding("violation", "coil-drive",
                        f"the output MOSFET, driven from the {fq(rail.min_v, 'V')} rail minimum, drops "
                        f"{fq(drop, 'V') if drop < float('inf') else 'more than the supply'} at "
                        f"{fq(current, 'A')}; the coil needs {fq(need, 'V')} from the {fq(brief.supply.min_v, 'V')} "
                        "supply minimum")]
    return [Finding("info", "coil-drive", f"output MOSFET drop at most {fq(drop, 'V')} at {fq(current, 'A')} "
                    "(square-law model, weakest corner)")]
