"""One topology's outcome for a brief: the best buildable designs from standard values, each
proven by the full model (worst-case corners and Monte Carlo), or the reasons it has none.

Verification: the selection program proposes its best design; the topology's full model
evaluates it (corners, limits and design rules first: a rejected design never pays for its Monte
Carlo, which decides nothing); a design that fails the brief is excluded by a no-good cut and the program solved
again, at most `MAX_ROUNDS` solves per design kept (`VerifiedDesign.rounds` counts them).

A topology that cannot meet the brief raises nothing here: its outcome carries the reasons, in
the designer's terms (tradeoff.trade_study runs every topology; tradeoff.relax re-runs one with a
requirement changed).
"""
from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Callable

from tradeoff.brief import Brief
from tradeoff.catalog import Catalog
from tradeoff.plain import schematic_values
from tradeoff.errors import CatalogError, InfeasibleError, TradeoffError
from tradeoff.optimise import SelectionProblem, SelectionResult
from tradeoff.topologies.shared_checks import margin_shortfalls
from tradeoff.topologies.registry import build_topology
from tradeoff.units import format_quantity

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.selection import SelectionModel
    from tradeoff.topologies.base import Evaluation, Topology

__all__ = ["VerifiedDesign", "TopologyOutcome", "verified_designs", "topology_outcome", "MAX_ROUNDS"]

MAX_ROUNDS = 20
"""Solves tried per kept design before a topology's verification gives up."""


@dataclass
class VerifiedDesign:
    """A design the selection program proposed and the full model proved: the program's result,
    the evaluation, and the solves it took (each failed verification adds one)."""

    selection: SelectionResult
    evaluation: "Evaluation"
    rounds: int


@dataclass
class TopologyOutcome:
    """What one topology achieved: verified designs best first, or why it has none."""

    topology: str
    description: str
    verified: list[VerifiedDesign] = field(default_factory=list)
    reasons: list[str] = field(default_factory=list)
    seconds: float = 0.0
    model: "Topology | None" = field(default=None, repr=False)

    @property
    def feasible(self) -> bool:
        """True when at least one design meets the brief."""
        return bool(self.verified)

    @property
    def evaluations(self) -> list["Evaluation"]:
        """Full-model evaluations of the verified designs, best first."""
        return [d.evaluation for d in self.verified]

    def statistics(self) -> dict[str, Any]:
        """Solver statistics for reports: designs, rounds, candidate table sizes (the same in every run
        with one seed; wall times are in `timing()`)."""
        problem = self.verified[0].selection.problem if self.verified else None
        sizes = {} if problem is None else {b.name: len(b.table) for b in problem.model.blocks}
        return {
            "topology": self.topology,
            "designs": len(self.verified),
            "rounds": [d.rounds for d in self.verified],
            "candidates": sizes,
        }

    def timing(self) -> dict[str, Any]:
        """Wall times of this topology [s]: the whole outcome and each solver call (vary from run to run)."""
        return {"topology": self.topology, "total_s": self.seconds,
                "solve_s": [d.selection.solve_s for d in self.verified]}



def verified_designs(topology: "Topology", brief: Brief, k: int = 1, solver: str = "highs",
                     max_rounds: int = MAX_ROUNDS, step: Callable[[str], None] | None = None) -> list[VerifiedDesign]:
    """The k best distinct designs of `topology` for `brief`, best first, each proven by the full
    model (see the module docstring) with the brief's margin kept at both band edges; fewer than k
    when the candidate tables run out.

    Raises InfeasibleError (reasons keyed by the topology id) when no design is found: the
    program's own explanation when it has no solution, or the best rejected design's shortfalls;
    when a design meets the band but not the margin, the reasons say so and name it. `step`, when
    given, is told what runs now (the candidate tables, each round of solve and verify).
    """
    if k < 1 or max_rounds < 1:
        raise ValueError(f"k and max_rounds must be at least 1, got k={k}, max_rounds={max_rounds}")
    margin = brief.analysis.margin
    step = step or _quiet
    step("candidate tables")
    tables = topology.selection()  # built once: the search without the margin below reuses it
    try:
        return _search(topology, tables, brief, k, solver, max_rounds, margin, lambda ev: ev.feasible, step)
    except InfeasibleError as exc:
        if margin == 0:
            raise
        try:  # the band alone: a design short only of the margin is reported, not dropped
            near = _search(topology, tables, brief, 1, solver, max_rounds, 0.0, lambda ev: set(ev.reasons) <= set(
                margin_shortfalls(ev.band, ev.margin_required_frac, ev.worst.min_s, ev.worst.max_s)), step)[0].evaluation
        except InfeasibleError:
            raise exc from None
        why = (f"no design keeps the brief's margin of {format_quantity(margin, '%')} of the band at both ends; "
               f"the best design meeting the band without it ({schematic_values(topology, near.design)}) keeps "
               f"{format_quantity(near.margin_short_frac, '%', 2)} at the short end and "
               f"{format_quantity(near.margin_long_frac, '%', 2)} at the long end")
        raise InfeasibleError(str(exc), {topology.id: [why, *exc.reasons.get(topology.id, [])]}) from None


def _search(topology: "Topology", tables: "SelectionModel", brief: Brief, k: int, solver: str, max_rounds: int,
            margin: float, accept: Callable[["Evaluation"], bool], step: Callable[[str], None]) -> list[VerifiedDesign]:
    """Solve over `tables` (the topology's selection), verify by the full model (`accept`), cut and solve
    again; the band less `margin` in the program; `step` is told each round."""
    rows = sum(len(block.table) for block in tables.blocks)
    step(f"{rows:,} candidate rows, building the program")
    problem = SelectionProblem(tables, (brief.delay.min_s, brief.delay.max_s), brief.limits,
                               brief.weights, solver=solver, margin=margin)
    found: list[VerifiedDesign] = []
    failed: list["Evaluation"] = []
    seen: set[tuple] = set()
    rounds = 0
    while len(found) < k and rounds < max_rounds:
        step(f"{rows:,} candidate rows, solve and verify round {rounds + 1}")
        result = problem.solve()
        rounds += 1
        if not result.feasible:
            if not found and not failed:
                raise InfeasibleError(f"{topology.id}: no design meets the brief", {topology.id: result.reasons})
            break
        problem.exclude(result.rows)
        if result.design.key() in seen:
            continue
        seen.add(result.design.key())
        screened = topology.screen(result.design)  # the Monte Carlo only for a design that is kept
        if not accept(screened):
            failed.append(screened)
            continue
        found.append(VerifiedDesign(result, topology.with_monte_carlo(screened), rounds))
        rounds = 0
    if not found:
        why = (f"the {len(failed)} best designs of the candidate tables all failed full verification (worst-case "
               f"corners, limits and design rules); the best of them: {'; '.join(failed[0].reasons)}" if failed else
               f"{max_rounds} solves proposed no design not already seen")
        raise InfeasibleError(f"{topology.id}: no design passes verification", {topology.id: [why]})
    return found


def topology_outcome(topology_id: str, brief: Brief, catalog: Catalog, alternatives: int,
                     solver: str, step: Callable[[str], None] | None = None) -> TopologyOutcome:
    """One topology's verified designs for `brief`, or the reasons it has none (never raises for infeasibility);
    `step` is told what runs now (see verified_designs)."""
    start = time.perf_counter()
    model = build_topology(topology_id, brief, catalog)
    outcome = TopologyOutcome(topology=topology_id, description=model.description, model=model)
    try:
        outcome.verified = verified_designs(model, brief, k=alternatives, solver=solver, step=step)
    except InfeasibleError as exc:
        outcome.reasons = exc.reasons.get(topology_id) or [str(exc)]
    except CatalogError as exc:  # no part class of the catalog fits: this topology cannot be built, the rest go on
        outcome.reasons = [f"cannot be built from the catalog: {p.message}" for p in exc.problems]
    except TradeoffError:
        raise
    except (ValueError, ArithmeticError) as exc:  # a model outside its validity (e.g. a supply below its drops)
        outcome.reasons = [f"the model cannot evaluate this brief ({exc.__class__.__name__}: {exc}); this is a "
                           "limit of the tool's model, please report it"]
    outcome.seconds = time.perf_counter() - start
    return outcome


def _quiet(step: str) -> None:
    """A step hook that reports nothing."""
