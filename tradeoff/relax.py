"""What it would take: for a topology that cannot meet the brief, the smallest change of each
requirement alone (and of each part class alone) that makes it feasible, found on the real
selection and verification (tradeoff.trade_study.topology_outcome), not by an estimate.

Changes tried, one at a time, each from the brief's value towards a far end:

| change | far end |
| --- | --- |
| delay band minimum lowered | a tenth of it |
| delay band maximum raised | ten times it (at most 7 days) |
| delay band widened both ways by one factor | min / 10, max x 10 |
| design margin lowered | none |
| ambient range narrowed towards 25 degC (or its nearer end) | a single temperature |
| supply range narrowed towards the nominal | the nominal alone |
| standby, parts, rails and cost limits raised (when the brief sets them) | the brief's accepted maximum |
| relay must-release raised (a relay class with a narrower release band) | just below must-operate |
| capacitor leakage scaled down (a class with a guaranteed lower leakage) | 1 % of the catalog's |
| resistor tolerance and tempco scaled down (a tighter resistor class) | 5 % of the catalog's |

Six values are tried from the brief's towards the far end (evenly; geometrically for positive
quantities): none feasible gives "not reachable by this change alone". From the first feasible one a
bisection (geometric for positive quantities) narrows the change until the feasible and the
infeasible end differ by at most `TOLERANCE` (1 %) of the change found (whole counts: by one),
and the feasible end is reported with the design it gives. The study is assumed monotonic in each
change (a looser requirement never removes a design); 5 % short of a reported change the topology is
infeasible again (tested on the shipped examples).
"""
from __future__ import annotations

import math
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

from tradeoff.brief import Brief
from tradeoff.catalog import Catalog
from tradeoff.plain import schematic_values
from tradeoff.trade_study import StudyResult, TopologyOutcome, topology_outcome
from tradeoff.units import format_quantity as fq

__all__ = ["TOLERANCE", "Change", "Relaxation", "CHANGES", "changes_for", "relax_topology", "relax", "apply"]

TOLERANCE = 0.01
"""Bisection stops when the feasible and infeasible ends differ by this fraction of the change found."""

SCAN_STEPS = 6
"""Values tried from the brief's towards the far end (evenly, geometric for positive quantities) before bisecting."""

AMBIENT_CENTRE_C = 25.0
"""Temperature the ambient range narrows towards (clamped into the range) [degC] (datasheet reference)."""


@dataclass(frozen=True)
class Change:
    """One requirement or part class moved alone: how to read its value from a brief, its far end, and how
    to build the changed brief and catalog at value `x` (SI, or a factor for a part class)."""

    key: str
    label: str
    start: Callable[[Brief], float]
    end: Callable[[Brief], float]
    build: Callable[[Brief, Catalog, float], tuple[Brief, Catalog]]
    show: Callable[[Brief, float], str]
    applies: Callable[[Brief], bool] = lambda brief: True
    integer: bool = False


@dataclass
class Relaxation:
    """The answer for one topology and one change: the value that makes it feasible (None: not reachable by
    this change alone), in words, with the design it gives and the solves it took."""

    topology: str
    key: str
    label: str
    original: str
    value: float | None
    text: str
    design: str = ""
    cost_per_unit_eur: float | None = None
    solves: int = 0
    outcome: TopologyOutcome | None = field(default=None, repr=False)

    @property
    def reachable(self) -> bool:
        """True when this change alone makes the topology feasible."""
        return self.value is not None

    @property
    def line(self) -> str:
        """One line for reports."""
        if not self.reachable:
            return f"{self.label}: not reachable by this change alone (brief: {self.original})"
        cost = "" if self.cost_per_unit_eur is None else f", {self.cost_per_unit_eur:.2f} EUR per unit"
        return f"{self.label}: {self.text} (brief: {self.original}) gives {self.design}{cost}"

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready (the value in SI or as a factor of the catalog's; null when not reachable)."""
        return {"topology": self.topology, "change": self.key, "label": self.label, "original": self.original,
                "reachable": self.reachable, "value": self.value, "text": self.text if self.reachable else None,
                "design": self.design or None, "cost_per_unit_eur": self.cost_per_unit_eur, "solves": self.solves}


# ---- the changes ----------------------------------------------------------------------------

def _delay(brief: Brief, lo: float, hi: float) -> dict[str, object]:
    """The band moved to lo..hi [s], the nominal kept, and the design margin kept the same in seconds (it is a
    share of the band's width: kept as a share, a wider band would ask for a wider margin)."""
    margin = brief.analysis.margin * (brief.delay.max_s - brief.delay.min_s) / (hi - lo)
    return {"delay.tolerance": None, "delay.nominal": f"{brief.delay.nominal_s!r} s", "delay.min": f"{lo!r} s",
            "delay.max": f"{hi!r} s", "analysis.margin": margin}


def _brief_change(changes: Callable[[Brief, float], dict[str, object]]):
    def build(brief: Brief, catalog: Catalog, x: float) -> tuple[Brief, Catalog]:
        return brief.replace(changes(brief, x)), catalog
    return build


def _narrowed(lo: float, hi: float, centre: float, s: float) -> tuple[float, float]:
    return lo + s * (centre - lo), hi - s * (hi - centre)


def _ambient_centre(brief: Brief) -> float:
    return min(max(AMBIENT_CENTRE_C, brief.ambient.min_c), brief.ambient.max_c)


_SCALED_RE = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def _scaled(value: object, factor: float) -> object:
    """A catalog value as written, multiplied by `factor` ('0.01 A/(F*V)' x 0.5 -> '0.005 A/(F*V)')."""
    if isinstance(value, (int, float)):
        return value * factor
    match = _SCALED_RE.match(str(value))
    if match is None:
        raise ValueError(f"cannot scale {value!r}")
    number, unit = match.groups()
    return f"{float(number) * factor!r} {unit}".strip()


def _class_change(category: str, scale: Callable[[str], float | None]):
    """A catalog with every part class of `category` changed: parameter p scaled by `scale(p)(x)`."""
    def build(brief: Brief, catalog: Catalog, x: float) -> tuple[Brief, Catalog]:
        parts = []
        for part in catalog:
            if part.category == category:
                changes = {name: _scaled(part.params[name].value, factor) for name in part.params
                           if (factor := scale(name, x)) is not None}
                part = part.with_overrides(changes, origin="relaxed part class") if changes else part
            parts.append(part)
        return brief, Catalog(parts, catalog.files)
    return build


def _leakage_scale(name: str, x: float) -> float | None:
    if name in ("leakage_k", "leakage_floor"):
        return x
    if name in ("insulation_resistance_min", "insulation_time_constant"):
        return 1 / x
    return None


def _resistor_scale(name: str, x: float) -> float | None:
    return x if name in ("tolerance", "tempco") else None


def _percent(x: float) -> str:
    return f"{100 * x:.3g} %"


CHANGES: tuple[Change, ...] = (
    Change("delay.min", "delay band minimum lowered", lambda b: b.delay.min_s, lambda b: b.delay.min_s / 10,
           _brief_change(lambda b, x: _delay(b, x, b.delay.max_s)),
           lambda b, x: f"band {fq(x, 's')} to {fq(b.delay.max_s, 's')}"),
    Change("delay.max", "delay band maximum raised", lambda b: b.delay.max_s,
           lambda b: min(b.delay.max_s * 10, 7 * 86400.0),
           _brief_change(lambda b, x: _delay(b, b.delay.min_s, x)),
           lambda b, x: f"band {fq(b.delay.min_s, 's')} to {fq(x, 's')}"),
    Change("delay.band", "delay band widened both ways", lambda b: 1.0, lambda b: 10.0,
           _brief_change(lambda b, x: _delay(b, b.delay.min_s / x, min(b.delay.max_s * x, 7 * 86400.0))),
           lambda b, x: f"band {fq(b.delay.min_s / x, 's')} to {fq(min(b.delay.max_s * x, 7 * 86400.0), 's')}"),
    Change("analysis.margin", "design margin lowered", lambda b: b.analysis.margin, lambda b: 0.0,
           _brief_change(lambda b, x: {"analysis.margin": max(0.0, x)}),
           lambda b, x: f"margin {_percent(max(0.0, x))} of the band",
           applies=lambda b: b.analysis.margin > 0),
    Change("ambient", "ambient range narrowed", lambda b: 0.0, lambda b: 1.0,
           _brief_change(lambda b, s: dict(zip(("ambient.min", "ambient.max"), (
               f"{t!r} degC" for t in _narrowed(b.ambient.min_c, b.ambient.max_c, _ambient_centre(b), s))))),
           lambda b, s: "ambient {} to {}".format(*(fq(t, "degC") for t in _narrowed(
               b.ambient.min_c, b.ambient.max_c, _ambient_centre(b), s))),
           applies=lambda b: b.ambient.min_c < b.ambient.max_c),
    Change("supply", "supply range narrowed", lambda b: 0.0, lambda b: 1.0,
           _brief_change(lambda b, s: dict(zip(("supply.min", "supply.max"), (
               f"{v!r} V" for v in _narrowed(b.supply.min_v, b.supply.max_v, b.supply.nominal_v, s))))),
           lambda b, s: "supply {} to {}".format(*(fq(v, "V") for v in _narrowed(
               b.supply.min_v, b.supply.max_v, b.supply.nominal_v, s))),
           applies=lambda b: b.supply.min_v < b.supply.max_v),
    Change("limits.standby_after", "standby limit raised", lambda b: b.limits.standby_after_a, lambda b: 1.0,
           _brief_change(lambda b, x: {"limits.standby_after": f"{x!r} A"}), lambda b, x: f"limit {fq(x, 'A')}",
           applies=lambda b: b.limits.standby_after_a is not None and b.limits.standby_after_a < 1.0),
    Change("limits.parts", "parts limit raised", lambda b: b.limits.parts, lambda b: 500.0,
           _brief_change(lambda b, x: {"limits.parts": int(x)}), lambda b, x: f"at most {int(x)} parts",
           applies=lambda b: b.limits.parts is not None and b.limits.parts < 500, integer=True),
    Change("limits.rails", "rails limit raised", lambda b: b.limits.rails, lambda b: 10.0,
           _brief_change(lambda b, x: {"limits.rails": int(x)}), lambda b, x: f"at most {int(x)} rails",
           applies=lambda b: b.limits.rails is not None and b.limits.rails < 10, integer=True),
    Change("limits.cost", "parts cost limit raised", lambda b: b.limits.cost, lambda b: 1e4,
           _brief_change(lambda b, x: {"limits.cost": x}), lambda b, x: f"at most {x:.2f} EUR (indicative)",
           applies=lambda b: b.limits.cost is not None and 0 < b.limits.cost < 1e4),
    Change("load.relay.must_release", "relay class with a narrower release band (must-release raised)",
           lambda b: b.load.must_release_frac, lambda b: b.load.must_operate_frac - 0.01,
           _brief_change(lambda b, x: {"load.relay.must_release": x}), lambda b, x: f"must-release {_percent(x)}",
           applies=lambda b: b.load.kind == "relay" and b.load.must_release_frac < b.load.must_operate_frac - 0.01),
    Change("capacitor.leakage", "capacitor class with a lower guaranteed leakage", lambda b: 1.0, lambda b: 0.01,
           _class_change("capacitor", _leakage_scale), lambda b, x: f"{_percent(x)} of the catalog's leakage"),
    Change("resistor.tolerance", "tighter resistor class", lambda b: 1.0, lambda b: 0.05,
           _class_change("resistor", _resistor_scale),
           lambda b, x: f"{_percent(x)} of the catalog's tolerance and tempco"),
)
"""Every change tried, in report order."""


def changes_for(brief: Brief) -> list[Change]:
    """The changes that can be made to `brief` (limits it sets, a relay load ...)."""
    return [c for c in CHANGES if c.applies(brief)]


# ---- the search -----------------------------------------------------------------------------

def apply(change: Change, brief: Brief, catalog: Catalog, x: float) -> tuple[Brief, Catalog]:
    """The brief and catalog with `change` made to value `x`."""
    return change.build(brief, catalog, x)


def _outcome_at(change: Change, topology: str, brief: Brief, catalog: Catalog, x: float,
                solver: str) -> TopologyOutcome:
    changed_brief, changed_catalog = apply(change, brief, catalog, x)
    return topology_outcome(topology, changed_brief, changed_catalog, 1, solver)


def _middle(lo: float, hi: float, geometric: bool, integer: bool) -> float:
    mid = math.sqrt(lo * hi) if geometric else (lo + hi) / 2
    return float(round(mid)) if integer else mid


def relax_topology(topology: str, brief: Brief, catalog: Catalog, change: Change, solver: str = "highs") -> Relaxation:
    """The smallest `change` alone that makes `topology` feasible for `brief` (see the module docstring)."""
    start, end = float(change.start(brief)), float(change.end(brief))
    original = change.show(brief, start)
    answer = Relaxation(topology, change.key, change.label, original, None, "")
    geometric = start > 0 and end > 0 and not change.integer
    bad, good, best = start, None, None
    # a scan, not the far end alone: a wider delay band also widens the margin a design must keep
    for step in range(1, SCAN_STEPS + 1):
        x = start * (end / start) ** (step / SCAN_STEPS) if geometric else start + (end - start) * step / SCAN_STEPS
        x = float(round(x)) if change.integer else x
        if x == bad:
            continue
        outcome = _outcome_at(change, topology, brief, catalog, x, solver)
        answer.solves += 1
        if outcome.feasible:
            good, best = x, outcome
            break
        bad = x
    if best is None:
        return answer
    while True:
        if change.integer:
            if abs(good - bad) <= 1:
                break
        elif abs(good - bad) <= TOLERANCE * abs(good - start):
            break
        mid = _middle(bad, good, geometric, change.integer)
        if mid in (bad, good):
            break
        outcome = _outcome_at(change, topology, brief, catalog, mid, solver)
        answer.solves += 1
        if outcome.feasible:
            good, best = mid, outcome
        else:
            bad = mid
    ev = best.verified[0].evaluation
    answer.value, answer.text, answer.outcome = good, change.show(brief, good), best
    answer.design = schematic_values(best.model, ev.design) or "the design of the catalog's parts"
    answer.cost_per_unit_eur = ev.unit_cost_eur
    return answer


def relax(result: StudyResult, only: Sequence[str] | None = None) -> list[Relaxation]:
    """Every change of `changes_for(result.brief)` for each infeasible topology of `result` (those in `only`
    when given), on the catalog the study used; the list is also kept on `result.relaxations` for the reports
    and to_dict()."""
    found = []
    for outcome in result.infeasible():
        if only and outcome.topology not in only:
            continue
        for change in changes_for(result.brief):
            found.append(relax_topology(outcome.topology, result.brief, outcome.model.catalog, change,
                                        result.solver))
    result.relaxations = found
    return found
