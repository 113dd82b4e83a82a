"""What it would take: for a topology that cannot meet the brief, the smallest change of each
requirement alone (and of each part class alone) that makes it feasible, found on the real
selection and verification (tradeoff.outcome.topology_outcome), not by an estimate; and, on
request, the slack of every feasible topology: how far each requirement alone can be tightened
before it stops being feasible, found the same way.

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
infeasible end differ by at most `TOLERANCE` (1 %) of the change found (whole counts: by one;
and at most by `FLOOR`, 0.01 %, of the range tried), and the feasible end is reported with the
design it gives. The study is assumed monotonic in each change (a looser requirement never removes
a design); 5 % short of a reported change the topology is infeasible again (tested on the shipped
examples).

Every class of the catalog is already open to the selection, so a part-class answer is a hypothetical
class: each class of the kind changed by one factor (the leakage limit, or the tolerance and tempco).
It is reported as "a capacitor class with leakage at most 4.6 % of the catalog's (<the design's own
class> with <its changed figures>; no such class in the catalog)", with the design it gives (JSON:
hypothetical_class true).

Slack tightens the other way, towards the `tight` far end of each change:

| change | tightened towards |
| --- | --- |
| delay band minimum raised, maximum lowered, both narrowed | the nominal, keeping 2.5 design margins of width |
| design margin raised | 45 % of the band |
| ambient range widened about its centre | -55 or 125 degC, whichever end it reaches first |
| supply range widened about the nominal | half or 1.5 times the nominal (within 1 V to 60 V) |
| standby, parts, rails and cost limits lowered (when the brief sets them) | a thousandth, 1, 1, 0 EUR |
| relay must-release lowered (a relay class with a wider release band) | 0 % |
| capacitor leakage scaled up, resistor tolerance and tempco scaled up | 100 times, 10 times the catalog's |

The same scan and bisection find the first infeasible value; the last feasible one is reported
with its design (still feasible at the far end: said so); 5 % beyond it the topology is infeasible
(tested). A tightened brief the brief's own rules refuse (a coil that would not operate at the
lowest supply, say) counts as infeasible there.
"""
from __future__ import annotations

import math
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any, Protocol

from tradeoff.brief import Brief
from tradeoff.catalog import Catalog
from tradeoff.parts import Part
from tradeoff.errors import BriefError
from tradeoff.plain import schematic_values
from tradeoff.outcome import TopologyOutcome, topology_outcome
from tradeoff.units import format_quantity as fq

__all__ = ["TOLERANCE", "Change", "Relaxation", "CHANGES", "changes_for", "tightenings_for", "relax_topology",
           "slack_topology", "relax", "slack_of", "apply"]

TOLERANCE = 0.01
"""Bisection stops when the feasible and infeasible ends differ by this fraction of the change found."""

FLOOR = 1e-4
"""... and in any case when they differ by this fraction of the whole range tried (a change of almost nothing)."""

SCAN_STEPS = 6
"""Values tried from the brief's towards the far end (evenly, geometric for positive quantities) before bisecting."""

AMBIENT_CENTRE_C = 25.0
"""Temperature the ambient range narrows towards (clamped into the range) [degC] (datasheet reference)."""


@dataclass(frozen=True)
class Change:
    """One requirement or part class moved alone: how to read its value from a brief, its far end, and how
    to build the changed brief and catalog at value `x` (SI, or a factor for a part class); `tight` gives the
    far end the other way (the requirement tightened, for slack; None: not tightened) and `tight_label` says so."""

    key: str
    label: str
    start: Callable[[Brief], float]
    end: Callable[[Brief], float]
    build: Callable[[Brief, Catalog, float], tuple[Brief, Catalog]]
    show: Callable[[Brief, float], str]
    applies: Callable[[Brief], bool] = lambda brief: True
    integer: bool = False
    tight: Callable[[Brief], float | None] = lambda brief: None
    tight_label: str = ""
    category: str = ""
    """Catalog category the change makes a hypothetical class of ('' for a change of the brief)."""
    describe: Callable[[Part], str] | None = None
    """The changed figures of one such class, in words (for the design's own classes)."""


@dataclass
class Relaxation:
    """The answer for one topology and one change. kind "relax" (an infeasible topology): the value that makes
    it feasible (None: not reachable by this change alone); kind "slack" (a feasible one): the tightest value
    that keeps it feasible (bounded False: still feasible at the far end tried). In words, with the design it
    gives and the solves it took."""

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
    kind: str = "relax"
    bounded: bool = True
    fails_at: float | None = None
    hypothetical: bool = False
    """True when the answer is a part class the catalog does not have (the design's classes so changed)."""

    @property
    def reachable(self) -> bool:
        """True when this change alone makes the topology feasible."""
        return self.value is not None

    @property
    def line(self) -> str:
        """One line for reports."""
        cost = "" if self.cost_per_unit_eur is None else f", {self.cost_per_unit_eur:.2f} EUR per unit"
        if self.kind == "slack":
            if not self.bounded:
                return f"{self.label}: still feasible at {self.text}, the far end tried (brief: {self.original})"
            if self.text == self.original:
                return f"{self.label}: no slack, the smallest step tried already fails (brief: {self.original})"
            return f"{self.label}: as far as {self.text} (brief: {self.original}), with {self.design}{cost}"
        if not self.reachable:
            return f"{self.label}: not reachable by this change alone (brief: {self.original})"
        return f"{self.label}: {self.text} (brief: {self.original}) gives {self.design}{cost}"

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready (the value in SI or as a factor of the catalog's; null when not reachable)."""
        return {"kind": self.kind, "topology": self.topology, "change": self.key, "label": self.label,
                "original": self.original, "reachable": self.reachable, "value": self.value,
                "text": self.text if self.reachable else None, "bounded": self.bounded, "fails_at": self.fails_at,
                "design": self.design or None, "cost_per_unit_eur": self.cost_per_unit_eur, "solves": self.solves,
                "hypothetical_class": self.hypothetical}


class Study(Protocol):
    """What the search needs of a study result (tradeoff.trade_study.StudyResult, which calls this module when its
    brief asks, so it is not imported here): the brief, the solver, every outcome, and where the answers go."""

    brief: Brief
    solver: str
    outcomes: list[TopologyOutcome]
    relaxations: list[Any] | None
    slack: list[Any] | None

    def infeasible(self) -> list[TopologyOutcome]: ...


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


def _capacitor_leakage(part: Part) -> str:
    """A capacitor class's guaranteed leakage in its own terms: the electrolytic rule or the insulation resistance."""
    if part.has("leakage_k"):
        return (f"leakage at most {fq(part.value('leakage_k', 'A/(F*V)'), '')} CV (µA, µF, V) or "
                f"{fq(part.value('leakage_floor', 'A'), 'A')}, whichever is greater")
    if part.has("insulation_resistance_min"):
        return (f"insulation resistance at least {fq(part.value('insulation_resistance_min', 'ohm'), 'ohm')}, "
                f"or a time constant of {fq(part.value('insulation_time_constant', 's'), 's')} for large values")
    return "no leakage figure"


def _resistor_grade(part: Part) -> str:
    """A resistor class's tolerance and tempco bound."""
    return (f"tolerance {fq(part.value('tolerance', ''), '%')}, "
            f"tempco at most {fq(part.value('tempco', '1/K') * 1e6, '')} ppm/K")


MARGIN_TIGHT = 0.45
"""Design margin the slack search raises it to at most (the brief accepts below 50 % of the band)."""

AMBIENT_LIMITS_C = (-55.0, 125.0)
"""Ambient range the slack search widens to at most [degC] (the brief's accepted range)."""

SUPPLY_LIMITS_V = (1.0, 60.0)
"""Supply range the slack search widens to at most [V] (the brief's accepted range) ..."""

SUPPLY_WIDEST = (0.5, 1.5)
"""... and at most to half and one and a half times the nominal (an unregulated supply rarely swings more)."""


def _narrowest(brief: Brief) -> float:
    """Least band width the slack search narrows the delay band to [s]: 2.5 design margins (the margin is kept in
    seconds, and the brief accepts a margin below half the band), at least 1 % of the brief's width."""
    width = brief.delay.max_s - brief.delay.min_s
    return max(2.5 * brief.analysis.margin * width, 0.01 * width)


def _band_tight(brief: Brief) -> float:
    """Factor x < 1 of the band min / x .. max * x at which it is narrowest: the nominal still inside and the width
    at least `_narrowest` (x is the root of max * x - min / x = width)."""
    lo, hi, nominal, width = brief.delay.min_s, brief.delay.max_s, brief.delay.nominal_s, _narrowest(brief)
    return max(lo / nominal, nominal / hi, (width + math.sqrt(width ** 2 + 4 * hi * lo)) / (2 * hi))


def _widest(lo: float, hi: float, centre: float, floor: float, ceiling: float) -> float | None:
    """The (negative) step s of `_narrowed` that widens lo..hi about `centre` until one end reaches floor or ceiling;
    None when it cannot widen."""
    steps = [-(lo - floor) / (centre - lo) if centre > lo else None,
             -(ceiling - hi) / (hi - centre) if hi > centre else None]
    found = max((s for s in steps if s is not None), default=None)
    return found if found is not None and found < 0 else None


def _percent(x: float) -> str:
    return fq(x, "%")


def _share(x: float, noun: str) -> str:
    """A part class change at factor x in words: '<noun> at most 5 % of the catalog's', '... 100 times the
    catalog's'; at 1 the catalog's classes as they are."""
    if x == 1:
        return "the catalog's classes"
    return f"{noun} at most {_percent(x) + ' of' if x < 1 else fq(x, '') + ' times'} the catalog's"


CHANGES: tuple[Change, ...] = (
    Change("delay.min", "delay band minimum lowered", lambda b: b.delay.min_s, lambda b: b.delay.min_s / 10,
           _brief_change(lambda b, x: _delay(b, x, b.delay.max_s)),
           lambda b, x: f"band {fq(x, 's')} to {fq(b.delay.max_s, 's')}",
           tight=lambda b: min(b.delay.nominal_s, b.delay.max_s - _narrowest(b)),
           tight_label="delay band minimum raised"),
    Change("delay.max", "delay band maximum raised", lambda b: b.delay.max_s,
           lambda b: min(b.delay.max_s * 10, 7 * 86400.0),
           _brief_change(lambda b, x: _delay(b, b.delay.min_s, x)),
           lambda b, x: f"band {fq(b.delay.min_s, 's')} to {fq(x, 's')}",
           tight=lambda b: max(b.delay.nominal_s, b.delay.min_s + _narrowest(b)),
           tight_label="delay band maximum lowered"),
    Change("delay.band", "delay band widened both ways", lambda b: 1.0, lambda b: 10.0,
           _brief_change(lambda b, x: _delay(b, b.delay.min_s / x, min(b.delay.max_s * x, 7 * 86400.0))),
           lambda b, x: f"band {fq(b.delay.min_s / x, 's')} to {fq(min(b.delay.max_s * x, 7 * 86400.0), 's')}",
           tight=_band_tight, tight_label="delay band narrowed both ways"),
    Change("analysis.margin", "design margin lowered", lambda b: b.analysis.margin, lambda b: 0.0,
           _brief_change(lambda b, x: {"analysis.margin": max(0.0, x)}),
           lambda b, x: f"margin {_percent(max(0.0, x))} of the band",
           applies=lambda b: b.analysis.margin > 0,
           tight=lambda b: MARGIN_TIGHT if b.analysis.margin < MARGIN_TIGHT else None,
           tight_label="design margin raised"),
    Change("ambient", "ambient range narrowed", lambda b: 0.0, lambda b: 1.0,
           _brief_change(lambda b, s: dict(zip(("ambient.min", "ambient.max"), (
               f"{t!r} degC" for t in _narrowed(b.ambient.min_c, b.ambient.max_c, _ambient_centre(b), s))))),
           lambda b, s: "ambient {} to {}".format(*(fq(t, "degC") for t in _narrowed(
               b.ambient.min_c, b.ambient.max_c, _ambient_centre(b), s))),
           applies=lambda b: b.ambient.min_c < b.ambient.max_c,
           tight=lambda b: _widest(b.ambient.min_c, b.ambient.max_c, _ambient_centre(b), *AMBIENT_LIMITS_C),
           tight_label="ambient range widened"),
    Change("supply", "supply range narrowed", lambda b: 0.0, lambda b: 1.0,
           _brief_change(lambda b, s: dict(zip(("supply.min", "supply.max"), (
               f"{v!r} V" for v in _narrowed(b.supply.min_v, b.supply.max_v, b.supply.nominal_v, s))))),
           lambda b, s: "supply {} to {}".format(*(fq(v, "V") for v in _narrowed(
               b.supply.min_v, b.supply.max_v, b.supply.nominal_v, s))),
           applies=lambda b: b.supply.min_v < b.supply.max_v,
           tight=lambda b: _widest(b.supply.min_v, b.supply.max_v, b.supply.nominal_v,
                                   max(SUPPLY_LIMITS_V[0], SUPPLY_WIDEST[0] * b.supply.nominal_v),
                                   min(SUPPLY_LIMITS_V[1], SUPPLY_WIDEST[1] * b.supply.nominal_v)),
           tight_label="supply range widened"),
    Change("limits.standby_after", "standby limit raised", lambda b: b.limits.standby_after_a, lambda b: 1.0,
           _brief_change(lambda b, x: {"limits.standby_after": f"{x!r} A"}), lambda b, x: f"limit {fq(x, 'A')}",
           applies=lambda b: b.limits.standby_after_a is not None and b.limits.standby_after_a < 1.0,
           tight=lambda b: None if b.limits.standby_after_a is None else max(1e-9, b.limits.standby_after_a / 1000),
           tight_label="standby limit lowered"),
    Change("limits.parts", "parts limit raised", lambda b: b.limits.parts, lambda b: 500.0,
           _brief_change(lambda b, x: {"limits.parts": int(x)}), lambda b, x: f"at most {int(x)} parts",
           applies=lambda b: b.limits.parts is not None and b.limits.parts < 500, integer=True,
           tight=lambda b: None if b.limits.parts is None else 1.0, tight_label="parts limit lowered"),
    Change("limits.rails", "rails limit raised", lambda b: b.limits.rails, lambda b: 10.0,
           _brief_change(lambda b, x: {"limits.rails": int(x)}), lambda b, x: f"at most {int(x)} rails",
           applies=lambda b: b.limits.rails is not None and b.limits.rails < 10, integer=True,
           tight=lambda b: None if b.limits.rails is None else 1.0, tight_label="rails limit lowered"),
    Change("limits.cost", "parts cost limit raised", lambda b: b.limits.cost, lambda b: 1e4,
           _brief_change(lambda b, x: {"limits.cost": x}), lambda b, x: f"at most {x:.2f} EUR (indicative)",
           applies=lambda b: b.limits.cost is not None and 0 < b.limits.cost < 1e4,
           tight=lambda b: None if b.limits.cost is None else 0.0, tight_label="parts cost limit lowered"),
    Change("load.relay.must_release", "relay class with a narrower release band (must-release raised)",
           lambda b: b.load.must_release_frac, lambda b: b.load.must_operate_frac - 0.01,
           _brief_change(lambda b, x: {"load.relay.must_release": x}),
           lambda b, x: f"must-release {_percent(x)} (release band {_percent(x)} to "
                        f"{_percent(b.load.must_operate_frac)} of the coil voltage)",
           applies=lambda b: b.load.kind == "relay" and b.load.must_release_frac < b.load.must_operate_frac - 0.01,
           tight=lambda b: 0.0 if b.load.kind == "relay" else None,
           tight_label="relay class with a wider release band (must-release lowered)"),
    Change("capacitor.leakage", "capacitor class with a lower guaranteed leakage", lambda b: 1.0, lambda b: 0.01,
           _class_change("capacitor", _leakage_scale), lambda b, x: _share(x, "leakage"),
           tight=lambda b: 100.0, tight_label="leakier capacitor class", category="capacitor",
           describe=_capacitor_leakage),
    Change("resistor.tolerance", "tighter resistor class", lambda b: 1.0, lambda b: 0.05,
           _class_change("resistor", _resistor_scale),
           lambda b, x: _share(x, "tolerance and tempco"),
           tight=lambda b: 10.0, tight_label="looser resistor class", category="resistor", describe=_resistor_grade),
)
"""Every change tried, in report order."""


def changes_for(brief: Brief) -> list[Change]:
    """The changes that can be made to `brief` (limits it sets, a relay load ...)."""
    return [c for c in CHANGES if c.applies(brief)]


def tightenings_for(brief: Brief) -> list[Change]:
    """The changes that can tighten `brief` (for slack): those with a tightened far end other than the brief's."""
    return [c for c in CHANGES if (end := c.tight(brief)) is not None and end != c.start(brief)]


# ---- the search -----------------------------------------------------------------------------

def apply(change: Change, brief: Brief, catalog: Catalog, x: float) -> tuple[Brief, Catalog]:
    """The brief and catalog with `change` made to value `x`."""
    return change.build(brief, catalog, x)


def _outcome_at(change: Change, topology: str, brief: Brief, catalog: Catalog, x: float,
                solver: str) -> TopologyOutcome:
    """The topology's outcome with the change made; a changed brief its own rules refuse is an infeasible one."""
    try:
        changed_brief, changed_catalog = apply(change, brief, catalog, x)
    except BriefError as exc:
        return TopologyOutcome(topology=topology, description="", model=None, reasons=[str(exc)])
    return topology_outcome(topology, changed_brief, changed_catalog, 1, solver)


def _middle(lo: float, hi: float, geometric: bool, integer: bool) -> float:
    mid = math.sqrt(lo * hi) if geometric else (lo + hi) / 2
    return float(round(mid)) if integer else mid


@dataclass
class _Boundary:
    """Where feasibility flips between the brief's value (`inside`, as at the start) and `end` (`outside`, None when
    it never flips), with the outcomes at both and the solves it took."""

    inside: float
    outside: float | None = None
    inside_outcome: TopologyOutcome | None = None
    outside_outcome: TopologyOutcome | None = None
    solves: int = 0


def _boundary(change: Change, topology: str, brief: Brief, catalog: Catalog, end: float, solver: str,
              feasible_at_start: bool) -> _Boundary:
    """The scan and bisection of the module docstring, from the brief's value towards `end`."""
    start = float(change.start(brief))
    geometric = start > 0 and end > 0 and not change.integer
    found = _Boundary(inside=start)
    # a scan, not the far end alone: a wider delay band also widens the margin a design must keep
    for step in range(1, SCAN_STEPS + 1):
        x = start * (end / start) ** (step / SCAN_STEPS) if geometric else start + (end - start) * step / SCAN_STEPS
        x = float(round(x)) if change.integer else x
        if x == found.inside:
            continue
        outcome = _outcome_at(change, topology, brief, catalog, x, solver)
        found.solves += 1
        if outcome.feasible != feasible_at_start:
            found.outside, found.outside_outcome = x, outcome
            break
        found.inside, found.inside_outcome = x, outcome
    if found.outside is None:
        return found
    while True:
        flip = found.outside
        if change.integer:
            if abs(flip - found.inside) <= 1:
                break
        elif abs(flip - found.inside) <= max(TOLERANCE * abs((found.inside if feasible_at_start else flip) - start),
                                             FLOOR * abs(end - start)):
            break
        mid = _middle(found.inside, flip, geometric, change.integer)
        if mid in (found.inside, flip):
            break
        outcome = _outcome_at(change, topology, brief, catalog, mid, solver)
        found.solves += 1
        if outcome.feasible != feasible_at_start:
            found.outside, found.outside_outcome = mid, outcome
        else:
            found.inside, found.inside_outcome = mid, outcome
    return found


def _hypothetical_classes(change: Change, outcome: TopologyOutcome) -> str:
    """The design's own classes of the changed category, with their changed figures: 'cap-film-pp-5pct with
    insulation resistance at least ...' ('' when the design has none)."""
    catalog = outcome.model.catalog
    used = dict.fromkeys(line.part for line in outcome.verified[0].evaluation.bom
                         if line.part in catalog and catalog.part(line.part).category == change.category)
    return "; ".join(f"{part_id} with {change.describe(catalog.part(part_id))}" for part_id in used)


def _with_design(answer: Relaxation, change: Change, brief: Brief, value: float, outcome: TopologyOutcome
                 ) -> Relaxation:
    ev = outcome.verified[0].evaluation
    answer.value, answer.text, answer.outcome = value, change.show(brief, value), outcome
    if change.category and answer.kind == "relax":  # a class the catalog lacks: say which and what it would need
        classes = _hypothetical_classes(change, outcome)
        answer.hypothetical = True
        answer.text = (f"a {change.category} class with {answer.text}"
                       f" ({classes + '; ' if classes else ''}no such class in the catalog)")
    answer.design = schematic_values(outcome.model, ev.design) or "the design of the catalog's parts"
    answer.cost_per_unit_eur = ev.unit_cost_eur
    return answer


def relax_topology(topology: str, brief: Brief, catalog: Catalog, change: Change, solver: str = "highs") -> Relaxation:
    """The smallest `change` alone that makes `topology` feasible for `brief` (see the module docstring)."""
    start = float(change.start(brief))
    answer = Relaxation(topology, change.key, change.label, change.show(brief, start), None, "")
    found = _boundary(change, topology, brief, catalog, float(change.end(brief)), solver, feasible_at_start=False)
    answer.solves = found.solves
    if found.outside is None:
        return answer
    return _with_design(answer, change, brief, found.outside, found.outside_outcome)


def slack_topology(outcome: TopologyOutcome, brief: Brief, change: Change, solver: str = "highs") -> Relaxation:
    """How far `change` tightens the brief before the feasible `outcome`'s topology stops being feasible: the
    tightest value that still is (kind "slack"; bounded False when it still is at `change.tight`'s far end,
    fails_at the nearest value found that is not)."""
    start, end = float(change.start(brief)), float(change.tight(brief))
    answer = Relaxation(outcome.topology, change.key, change.tight_label, change.show(brief, start), None, "",
                        kind="slack")
    found = _boundary(change, outcome.topology, brief, outcome.model.catalog, end, solver, feasible_at_start=True)
    answer.solves, answer.bounded, answer.fails_at = found.solves, found.outside is not None, found.outside
    return _with_design(answer, change, brief, found.inside, found.inside_outcome or outcome)


def relax(result: Study, only: Sequence[str] | None = None, slack: bool = False) -> list[Relaxation]:
    """Every change of `changes_for(result.brief)` for each infeasible topology of `result` (those in `only`
    when given), on the catalog the study used; the list is also kept on `result.relaxations` for the reports
    and to_dict(). slack: also `slack_of(result, only)`."""
    found = []
    for outcome in result.infeasible():
        if only and outcome.topology not in only:
            continue
        for change in changes_for(result.brief):
            found.append(relax_topology(outcome.topology, result.brief, outcome.model.catalog, change,
                                        result.solver))
    result.relaxations = found
    if slack:
        slack_of(result, only)
    return found


def slack_of(result: Study, only: Sequence[str] | None = None) -> list[Relaxation]:
    """Every change of `tightenings_for(result.brief)` for each feasible topology of `result` (those in `only` when
    given); also kept on `result.slack`."""
    found = [slack_topology(outcome, result.brief, change, result.solver)
             for outcome in result.outcomes if outcome.feasible and (not only or outcome.topology in only)
             for change in tightenings_for(result.brief)]
    result.slack = found
    return found
