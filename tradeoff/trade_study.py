"""The main job: for every topology a brief allows, the best buildable designs from standard
values, each proven by the full model (worst-case corners and Monte Carlo), then a ranking of
the feasible ones against the brief's weights.

Verification: the selection program proposes its best design; the topology's full model
evaluates it; a design that fails the brief is excluded by a no-good cut and the program solved
again, at most `MAX_ROUNDS` solves per design kept (`VerifiedDesign.rounds` counts them).

A topology that cannot meet the brief does not stop the study: its outcome carries the
reasons, in the designer's terms, and the other topologies go on.
"""
from __future__ import annotations

import functools
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any, Callable, Sequence

from tradeoff.brief import Brief, load_brief
from tradeoff.catalog import Catalog, load_catalog
from tradeoff.fields import did_you_mean
from tradeoff.cautions import cautions
from tradeoff.criteria import headline
from tradeoff.economics import BreakEven, break_even_of, economics
from tradeoff.plain import assumptions, part_classes, schematic_values
from tradeoff.errors import CatalogError, InfeasibleError, InputError, Problem, TradeoffError
from tradeoff.optimise import SelectionProblem, SelectionResult
from tradeoff.topologies.base import margin_shortfalls
from tradeoff.topologies.registry import build_topology, topology_ids
from tradeoff.units import format_quantity

if TYPE_CHECKING:  # pragma: no cover
    import pandas as pd

    from tradeoff.ranking import Ranking
    from tradeoff.selection import SelectionModel
    from tradeoff.topologies.base import Evaluation, Topology

__all__ = ["VerifiedDesign", "TopologyOutcome", "StudyResult", "study", "verified_designs", "resolve_topologies",
           "MAX_ROUNDS", "Progress"]

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


@dataclass
class StudyResult:
    """A whole study: every topology's outcome, the ranking of the feasible designs, the cautions."""

    brief: Brief
    outcomes: list[TopologyOutcome]
    ranking: "Ranking | None"
    method: str
    solver: str
    cautions: list[str]
    seconds: float
    relaxations: "list[Any] | None" = None
    """What each infeasible topology would need (tradeoff.relax.Relaxation items, filled by tradeoff.relax.relax;
    None when not asked)."""

    @property
    def feasible(self) -> bool:
        """True when some topology meets the brief."""
        return self.ranking is not None

    def designs(self) -> list[tuple[str, "Evaluation", TopologyOutcome]]:
        """(name, evaluation, outcome) of every feasible design, in rank order."""
        from tradeoff.ranking import design_names

        pool = [(ev, o) for o in self.outcomes for ev in o.evaluations]
        names = design_names([ev for ev, _ in pool])
        by_name = {n: (ev, o) for n, (ev, o) in zip(names, pool)}
        if self.ranking is None:
            return []
        return [(str(n), *by_name[str(n)]) for n in self.ranking.table.index]

    def winner(self) -> tuple[str, "Evaluation", TopologyOutcome] | None:
        """The rank-1 design, or None when nothing is feasible."""
        designs = self.designs()
        return designs[0] if designs else None

    def infeasible(self) -> list[TopologyOutcome]:
        """Topologies with no design that meets the brief."""
        return [o for o in self.outcomes if not o.feasible]

    def to_dict(self, timing: bool = False) -> dict[str, Any]:
        """The whole result, JSON-ready (SI units in key suffixes; never NaN or infinity).

        Byte-for-byte the same for two runs with one seed: wall times are left out, unless `timing`
        adds them as one separate "timing" block (total and per topology, in seconds)."""
        ranking = None if self.ranking is None else self.ranking.to_dict()
        ranked = {} if ranking is None else {d["name"]: d for d in ranking.pop("designs")}
        designs = []
        for name, ev, outcome in self.designs():
            entry = ev.to_dict()
            r = ranked[name]
            entry.update(
                name=name, rank=r["rank"], score=r["score"], pareto=r["pareto"], feasible=True,
                reasons=[r["reason"]], shortfalls=ev.reasons, criteria=r["criteria"],
                bom=[{"refs": b.refs, "part": b.part, "value": b.value, "quantity": b.quantity,
                      "unit_cost_eur": b.unit_cost, "cost_eur": b.cost, "note": b.note} for b in ev.bom],
                values_text=schematic_values(outcome.model, ev.design),
                part_classes=dict(part_classes(outcome.model, ev.design)),
            )
            designs.append(entry)
        return {
            "brief": self.brief.to_dict(),
            "designs": designs,
            "infeasible": [{"topology": o.topology, "description": o.description, "feasible": False,
                            "reasons": o.reasons} for o in self.infeasible()],
            "ranking": ranking,
            "production": economics(self),
            "method": self.method,
            "solver": {"name": self.solver, "topologies": [o.statistics() for o in self.outcomes]},
            "relaxations": None if self.relaxations is None else [r.to_dict() for r in self.relaxations],
            "cautions": list(self.cautions),
            "assumptions": assumptions(self.brief),
            **({"timing": {"total_s": self.seconds, "topologies": [o.timing() for o in self.outcomes]}}
               if timing else {}),
        }

    def break_even(self) -> "BreakEven | None":
        """Break-even volume of the winner and the runner-up (tradeoff.economics); None with fewer than two designs."""
        return break_even_of(self)

    def to_frame(self) -> "pd.DataFrame":
        """One row per feasible design in rank order: design, rank, the headline figures (see
        tradeoff.criteria; units in the column suffixes), values, score and Pareto flag."""
        import pandas as pd

        rows = []
        for name, ev, outcome in self.designs():
            row = self.ranking.table.loc[name]
            rows.append({"design": name, "rank": int(row["rank"]), **headline(ev),
                         "values": schematic_values(outcome.model, ev.design), "score": float(row["score"]),
                         "pareto": bool(row["pareto"])})
        return pd.DataFrame(rows)



def resolve_topologies(brief: Brief, catalog: Catalog, only: Sequence[str] | None = None) -> list[str]:
    """Topology ids to study: the brief's list ('all' = every registered one), narrowed by `only`."""
    known = topology_ids(catalog)
    brief.check_topologies(known)
    chosen = known if "all" in brief.topologies else [t for t in known if t in brief.topologies]
    if only:
        problems = [Problem("--only", None, None, name,
                            f"unknown topology{did_you_mean(name, known)}; accepted: {', '.join(known)}")
                    for name in only if name not in known]
        if problems:
            raise InputError(problems)
        chosen = [t for t in chosen if t in only]
        if not chosen:
            raise InputError(Problem("--only", None, None, "only",
                                     f"none of {', '.join(only)} is among the brief's topologies "
                                     f"({', '.join(brief.topologies)})"))
    return chosen


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
            near = _search(topology, tables, brief, 1, solver, max_rounds, 0.0,
                           lambda ev: set(ev.reasons) <= set(margin_shortfalls(ev)), step)[0].evaluation
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
        evaluation = topology.evaluate(result.design)
        if not accept(evaluation):
            failed.append(evaluation)
            continue
        found.append(VerifiedDesign(result, evaluation, rounds))
        rounds = 0
    if not found:
        why = (f"the {len(failed)} best designs of the candidate tables all failed full verification (worst-case "
               f"corners and Monte Carlo); the best of them: {'; '.join(failed[0].reasons)}" if failed else
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


Progress = Callable[[int, int, str], None]
"""A study's progress hook: progress(done, total, step) with the topologies finished, the number studied
and what runs now ("rc-schmitt: candidate tables"); the command shell shows it on a terminal."""


def _quiet(step: str) -> None:
    """A step hook that reports nothing."""


def _topology_step(tell: Progress, done: int, total: int, topology_id: str, step: str) -> None:
    """Tell the hook `tell` the step now running for the topology `topology_id` (done of total finished)."""
    tell(done, total, f"{topology_id}: {step}")


def study(brief: Brief | str | Path, catalog: Catalog | None = None, *, only: Sequence[str] | None = None,
          alternatives: int = 1, method: str = "wsm", solver: str = "highs", samples: int | None = None,
          seed: int | None = None, catalog_files: Sequence[str | Path] = (),
          progress: Progress | None = None) -> StudyResult:
    """Run the trade study for `brief` (a Brief, or a path to a brief file).

    alternatives: designs kept per topology (the k best distinct ones); method: 'wsm' or
    'topsis'; solver: 'highs' or 'cbc'; samples, seed: override the brief's Monte Carlo settings;
    catalog_files: user catalogs merged over the shipped ones (ignored when `catalog` is given);
    progress: called as progress(done, total, step) while the topologies are studied (quiet when None).
    """
    from tradeoff.ranking import rank

    start = time.perf_counter()
    if not isinstance(brief, Brief):
        brief = load_brief(Path(brief))
    changes = {k: v for k, v in (("analysis.samples", samples), ("analysis.seed", seed)) if v is not None}
    if changes:
        brief = brief.replace(changes)
    catalog = catalog if catalog is not None else load_catalog(extra=tuple(catalog_files))
    chosen = resolve_topologies(brief, catalog, only)
    tell = progress or (lambda done, total, step: None)
    outcomes = []
    for done, topology_id in enumerate(chosen):
        step = functools.partial(_topology_step, tell, done, len(chosen), topology_id)
        step("building the model")
        outcomes.append(topology_outcome(topology_id, brief, catalog, alternatives, solver, step))
    tell(len(chosen), len(chosen), "ranking")
    evaluations = [ev for o in outcomes for ev in o.evaluations]
    ranking = rank(evaluations, brief.weights, method=method) if evaluations else None
    return StudyResult(brief=brief, outcomes=outcomes, ranking=ranking, method=method, solver=solver,
                       cautions=cautions(brief), seconds=time.perf_counter() - start)
