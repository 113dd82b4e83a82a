"""The one interface every timing topology implements, and what is built on it once.

A topology subclass implements the physics (`uncertain`, `delay`), the parts (`bom`,
`standby`, `rails`), its design rules (`checks`) and what the optimiser chooses from
(`roles`, `selection`). Corner search, Monte Carlo, yield, feasibility against the brief
and the result object are written here, once, for all of them; the value objects that name
no design live in `records` and the rules every design gets in `shared_checks`.
"""
from __future__ import annotations

import math
from abc import ABC, abstractmethod
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, Any, ClassVar, Mapping

import numpy as np

from tradeoff.analysis import MonteCarlo, Uncertain, WorstCase, monte_carlo, worst_case
from tradeoff.costing import UnitCost, unit_cost
from tradeoff.errors import CatalogError, DesignKeyError
from tradeoff.parts import OVERRIDE_ORIGIN
from tradeoff.topologies.records import BomLine, Finding, Pair, Role, Standby, Waveform, finite_or_none
from tradeoff.topologies.shared_checks import (band_shortfalls, life_findings, limit_shortfalls, margin_shortfalls,
                                               value_range_findings)

if TYPE_CHECKING:  # pragma: no cover - typing only
    import pandas as pd

    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part
    from tradeoff.selection import SelectionModel

__all__ = [
    "Role", "Pair", "Design", "BomLine", "Standby", "Finding", "Waveform", "Evaluation", "Topology",
    "margin_shortfalls", "ENVIRONMENT", "NOMINAL_AMBIENT_C",
]

ENVIRONMENT = ("ambient_c", "supply_v")
"""Names of the environment quantities every delay model receives: ambient [degC], supply [V]."""

NOMINAL_AMBIENT_C = 25.0
"""Ambient used for the nominal delay when the brief's range includes it [degC]; else the range's midpoint."""


@dataclass(frozen=True)
class Design:
    """A concrete design: topology id, component values [SI], discrete options, part overrides.

    values: role -> value [ohm, F]; options: e.g. {'darlington': 'darlington-npn-small', 'stage': 14};
    overrides: part id -> {param: SI value} replacing catalog parameters (for reference checks
    against one specific transistor or capacitor); pairs: role -> the `Pair` of two standard parts whose
    series or parallel combination makes the role's value (roles of one part are absent).
    """

    topology: str
    values: Mapping[str, float] = field(default_factory=dict)
    options: Mapping[str, Any] = field(default_factory=dict)
    overrides: Mapping[str, Mapping[str, float]] = field(default_factory=dict)
    pairs: Mapping[str, tuple[float, float]] = field(default_factory=dict)

    def key(self) -> tuple:
        """Hashable identity used to tell designs apart (alternatives, no-good cuts)."""
        return (self.topology, tuple(sorted(self.values.items())), tuple(sorted(self.options.items())),
                tuple(sorted(self.pairs.items())))

    def pairs_dict(self) -> dict[str, dict[str, Any]]:
        """JSON-ready pairs: role -> {first, second [ohm or F], pairing}."""
        return {role: pair._asdict() for role, pair in sorted(self.pairs.items())}


@dataclass
class Evaluation:
    """Everything the tool says about one design against one brief."""

    topology: str
    design: Design
    nominal_s: float
    worst: WorstCase
    mc: MonteCarlo | None  # None only in a screening evaluation (`Topology.screen`), which is never reported
    standby: Standby
    rails: int
    bom: list[BomLine]
    findings: list[Finding]
    band: tuple[float, float]
    coverage: float
    supply_v: float
    adapter_no_load_w: float | None
    effort: float
    margin_required_frac: float = 0.0
    reasons: list[str] = field(default_factory=list)
    production: "UnitCost | None" = None
    """Cost per unit at the brief's production volume (tradeoff.costing); None for an evaluation built by hand."""

    @property
    def placements(self) -> int:
        """Parts placed on the board."""
        return sum(line.quantity for line in self.bom)

    @property
    def lines(self) -> int:
        """Distinct bill-of-materials lines."""
        return len(self.bom)

    @property
    def cost(self) -> float:
        """Indicative BOM cost [EUR]."""
        return float(sum(line.cost for line in self.bom))

    @property
    def unit_cost_eur(self) -> float:
        """Cost per unit at the brief's production volume [EUR, indicative]: parts, assembly, programming and
        amortised engineering; the BOM cost when no production cost was worked out."""
        return self.cost if self.production is None else self.production.per_unit_eur

    @property
    def feasible(self) -> bool:
        """True when the design meets the brief at every corner and breaks no design rule."""
        return not self.reasons

    @property
    def margin_short_frac(self) -> float:
        """Room between the band's minimum and the worst-case shortest delay, as a fraction of the
        band's width (negative below the band)."""
        lo, hi = self.band
        return (self.worst.min_s - lo) / (hi - lo)

    @property
    def margin_long_frac(self) -> float:
        """Room between the worst-case longest delay and the band's maximum, as a fraction of the
        band's width (negative above the band; -inf when some unit never times out)."""
        lo, hi = self.band
        return (hi - self.worst.max_s) / (hi - lo)

    @property
    def margin_frac(self) -> float:
        """The smaller of the two margins (fraction of the band's width)."""
        return min(self.margin_short_frac, self.margin_long_frac)

    @property
    def spread_frac(self) -> float:
        """Worst-case relative spread of the delay: (max - min) / nominal (inf if some unit never times out)."""
        return (self.worst.max_s - self.worst.min_s) / self.nominal_s

    @property
    def after_w(self) -> float:
        """Circuit power after the timeout at nominal supply [W], without the adapter's own draw."""
        return self.standby.after_a * self.supply_v

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready result (SI units in key suffixes, no dots in keys: percentile 0.5 % is `p0_5_s`;
        never NaN or infinity: null with a reason)."""
        pct = {f"p{100 * q:g}_s".replace(".", "_"): finite_or_none(v) for q, v in sorted(self.mc.percentiles.items())}
        adapter = self.adapter_no_load_w
        return {
            "topology": self.topology,
            "values": dict(self.design.values),
            "options": {k: (v if isinstance(v, (int, float, str)) else str(v)) for k, v in self.design.options.items()},
            "pairs": self.design.pairs_dict(),
            "delay": {
                "nominal_s": finite_or_none(self.nominal_s),
                "worst_min_s": finite_or_none(self.worst.min_s),
                "worst_max_s": finite_or_none(self.worst.max_s),
                "band_s": list(self.band),
                "margin_short_frac": finite_or_none(self.margin_short_frac),
                "margin_long_frac": finite_or_none(self.margin_long_frac),
                "margin_required_frac": self.margin_required_frac,
                "corner_method": self.worst.method,
                "worst_min_corner": self.worst.at_min,
                "worst_max_corner": self.worst.at_max,
                "percentiles": pct,
                "coverage": self.coverage,
                "mean_s": finite_or_none(self.mc.mean_s),
                "std_s": finite_or_none(self.mc.std_s),
                "yield_frac": self.mc.yield_frac,
                "yield_ci95_frac": list(self.mc.yield_ci),
                "never_ends_frac": self.mc.never_ends_frac,
                "samples": self.mc.samples,
                "seed": self.mc.seed,
            },
            "standby": {
                "during_a": self.standby.during_a,
                "after_a": self.standby.after_a,
                "after_w": self.after_w,
                "after_with_adapter_w": None if adapter is None else self.after_w + adapter,
            },
            "rails": self.rails,
            "parts": {"placements": self.placements, "lines": self.lines},
            "cost_eur": self.cost,
            "production": None if self.production is None else self.production.to_dict(),
            "effort": self.effort,
            "warnings": [f.message for f in self.findings if f.severity != "info"],
            "findings": [{"severity": f.severity, "code": f.code, "message": f.message} for f in self.findings],
            "feasible": self.feasible,
            "reasons": list(self.reasons),
        }

    def to_frame(self) -> "pd.DataFrame":
        """The headline figures as a one-row pandas frame (SI units in column suffixes; a delay that
        never ends is NaN here, null in to_dict())."""
        import pandas as pd

        from tradeoff.criteria import headline

        return pd.DataFrame([{**headline(self), "feasible": self.feasible, "reasons": "; ".join(self.reasons)}]
                            ).replace([math.inf, -math.inf], math.nan)


class Topology(ABC):
    """Base of every timing topology. Subclasses set `id` and implement the abstract methods.

    Constructed with the brief, the merged catalog and the topology's own catalog entry
    (category 'topology'), whose parameters (effort, default part classes) the subclass reads.
    """

    id: ClassVar[str]

    option_units: ClassVar[Mapping[str, str | None]] = {}
    """Design options the topology reads: name -> unit of a quantity option ('V', 'ohm'; SI float in
    Design.options), or None for a plain choice (a part class id, a named mode, an integer). The design
    loader rejects other names and converts quantities."""

    option_parts: ClassVar[Mapping[str, str]] = {}
    """Options that name a catalog part class: name -> catalog category the class must have."""

    required_options: ClassVar[tuple[str, ...]] = ()
    """Options a design must give (the topology has no default for them)."""

    def __init__(self, brief: "Brief", catalog: "Catalog", entry: "Part"):
        self.brief = brief
        self.catalog = catalog
        self.entry = entry

    # ---- what a subclass implements -------------------------------------------------
    @abstractmethod
    def roles(self) -> list[Role]:
        """The component values the optimiser picks, with their allowed ranges."""

    @abstractmethod
    def uncertain(self, design: Design) -> dict[str, Uncertain]:
        """Every spread quantity of `design` except the environment (SI units)."""

    @abstractmethod
    def delay(self, design: Design, x: Mapping[str, np.ndarray]) -> np.ndarray:
        """Delay [s] for each sample in `x` (uncertain names plus 'ambient_c' [degC], 'supply_v' [V]).

        Returns np.inf where a unit never times out; never NaN.
        """

    @abstractmethod
    def bom(self, design: Design) -> list[BomLine]:
        """Bill of materials of `design`."""

    @abstractmethod
    def standby(self, design: Design) -> Standby:
        """Supply current during timing and after the timeout at nominal supply [A]."""

    @abstractmethod
    def checks(self, design: Design) -> list[Finding]:
        """Design-rule checks (ratings, drive, chatter band, leakage versus charging current ...)."""

    @abstractmethod
    def selection(self) -> "SelectionModel":
        """Candidate tables and links for the optimiser."""

    # ---- defaults a subclass may override -------------------------------------------
    def rails(self, design: Design) -> int:
        """Supply rails the design needs (1: runs straight from the brief's supply)."""
        return 1

    def effort(self, design: Design) -> float:
        """Engineering effort score, 0 (none) to 1 (firmware, programming step, ...), from the catalog entry."""
        return self.entry.value("effort", "")

    def engineering_hours(self) -> float:
        """One-off engineering hours (firmware, verification) from the catalog entry; 0 when it gives none."""
        return self.entry.value("engineering_hours", "") if self.entry.has("engineering_hours") else 0.0

    def waveform(self, design: Design, x: Mapping[str, float]) -> Waveform | None:
        """Control signal against time at the point `x`, for plots; None if the topology has none."""
        return None

    def spice(self, design: Design) -> str | None:
        """SPICE netlist of `design` with a transient analysis and `.measure delay`; None if not available."""
        return None

    @property
    def description(self) -> str:
        """One-line description from the catalog entry."""
        return self.entry.description

    # ---- reading a design: one way for every topology --------------------------------
    def design_part(self, design: Design, part_id: str, option: str | None = None) -> "Part":
        """Catalog class `part_id` with the design's overrides for it applied; an id the catalog
        lacks is a DesignKeyError at `options.<option>` (the option that named it)."""
        try:
            part = self.catalog.part(part_id)
        except CatalogError:
            if option is None:
                raise
            category = self.option_parts.get(option)
            known = ", ".join(p.id for p in (self.catalog.parts(category) if category else self.catalog.parts()))
            raise DesignKeyError(("options", option), f"unknown part class {part_id!r}; accepted: {known} "
                                 "(see `tradeoff catalog`)") from None
        own = design.overrides.get(part.id)
        return part.with_overrides(own, origin=OVERRIDE_ORIGIN) if own else part

    def option_part(self, design: Design, option: str, default: str | None = None) -> "Part":
        """The class named by design option `option`, else `default`, else the catalog's first class
        of the option's category (`option_parts`); with the design's overrides."""
        chosen = design.options.get(option)
        if chosen in (None, ""):
            chosen = default if default is not None else self.catalog.parts(self.option_parts[option])[0].id
        return self.design_part(design, str(chosen), option)

    def design_value(self, design: Design, role: str) -> float:
        """The design's value of role `role` [ohm or F]; a DesignKeyError at `values.<role>` when missing."""
        if role not in design.values:
            raise DesignKeyError(("values", role), "missing; accepted: a value with a unit ('1 Mohm', '470 uF')")
        return float(design.values[role])

    # ---- built once, here ------------------------------------------------------------
    def environment(self) -> dict[str, Uncertain]:
        """Ambient [degC] and supply [V] over the brief's ranges (uniform in Monte Carlo: a stated assumption)."""
        amb, sup = self.brief.ambient, self.brief.supply
        t_nom = NOMINAL_AMBIENT_C if amb.min_c <= NOMINAL_AMBIENT_C <= amb.max_c else (amb.min_c + amb.max_c) / 2
        return {
            "ambient_c": Uncertain(t_nom, amb.min_c, amb.max_c, unit="degC", note="brief: ambient range"),
            "supply_v": Uncertain(sup.nominal_v, sup.min_v, sup.max_v, unit="V", note="brief: supply range"),
        }

    def quantities(self, design: Design) -> dict[str, Uncertain]:
        """Environment plus the design's own spread quantities."""
        return {**self.environment(), **self.uncertain(design)}

    def nominal_point(self, design: Design) -> dict[str, float]:
        """Every quantity at its nominal value."""
        return {n: q.nominal for n, q in self.quantities(design).items()}

    def nominal_delay(self, design: Design) -> float:
        """Delay at every quantity's nominal value [s]."""
        x = {n: np.array([v]) for n, v in self.nominal_point(design).items()}
        return float(np.asarray(self.delay(design, x), dtype=float).reshape(-1)[0])

    def worst_case(self, design: Design) -> WorstCase:
        """Extreme delays over the corners [s]."""
        return worst_case(lambda x: self.delay(design, x), self.quantities(design))

    def monte_carlo(self, design: Design, samples: int | None = None, seed: int | None = None) -> MonteCarlo:
        """Seeded, vectorised Monte Carlo of the delay with the brief's band and coverage."""
        a = self.brief.analysis
        return monte_carlo(
            lambda x: self.delay(design, x), self.quantities(design),
            samples=a.samples if samples is None else samples, seed=a.seed if seed is None else seed,
            band=(self.brief.delay.min_s, self.brief.delay.max_s), coverage=a.coverage,
        )

    def evaluate(self, design: Design, samples: int | None = None, seed: int | None = None) -> Evaluation:
        """Full verification of `design` against the brief: corners, Monte Carlo, limits, design rules."""
        return self.with_monte_carlo(self.screen(design), samples, seed)

    def screen(self, design: Design) -> Evaluation:
        """Verification of `design` without its Monte Carlo: the corners, limits and design rules, which alone
        decide whether it meets the brief (the Monte Carlo reports the spread, it decides nothing). The
        study screens each proposed design so a rejected one never pays for its samples."""
        bom = self.bom(design)
        findings = [*self.checks(design),
                    *value_range_findings(self.roles(), design.values, design.options, self.catalog),
                    *life_findings(self.brief, self.catalog, bom)]
        ev = Evaluation(
            topology=self.id, design=design, nominal_s=self.nominal_delay(design),
            worst=self.worst_case(design), mc=None,
            standby=self.standby(design), rails=self.rails(design), bom=bom, findings=findings,
            band=(self.brief.delay.min_s, self.brief.delay.max_s),
            coverage=self.brief.analysis.coverage, supply_v=self.brief.supply.nominal_v,
            adapter_no_load_w=self.brief.supply.no_load_power_w, effort=self.effort(design),
            margin_required_frac=self.brief.analysis.margin,
        )
        ev.production = unit_cost(ev.bom, self.id, self.engineering_hours(), self.brief.production, self.catalog)
        ev.reasons = self._shortfalls(ev)
        return ev

    def with_monte_carlo(self, screened: Evaluation, samples: int | None = None,
                         seed: int | None = None) -> Evaluation:
        """`screened` (from `screen`) completed by the seeded Monte Carlo of its design: the full evaluation."""
        return replace(screened, mc=self.monte_carlo(screened.design, samples, seed))

    def _shortfalls(self, ev: Evaluation) -> list[str]:
        """Why `ev` fails the brief, in the designer's terms with numbers; empty when it meets it."""
        out = band_shortfalls(ev.band, ev.worst.min_s, ev.worst.max_s)
        out.extend(margin_shortfalls(ev.band, ev.margin_required_frac, ev.worst.min_s, ev.worst.max_s))
        out.extend(limit_shortfalls(self.brief.limits, ev.standby.after_a, ev.rails, ev.placements, ev.cost))
        out.extend(f.message for f in ev.findings if f.severity == "violation")
        return out
