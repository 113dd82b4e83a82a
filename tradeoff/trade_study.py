"""The main job: for every topology a brief allows, the best buildable designs from standard
values, each proven by the full model (tradeoff.outcome: worst-case corners and Monte Carlo),
then a ranking of the feasible ones against the brief's weights.

A topology that cannot meet the brief does not stop the study: its outcome carries the
reasons, in the designer's terms, and the other topologies go on. The brief's analysis.relax
adds what would make each infeasible one feasible (tradeoff.relax).
"""
from __future__ import annotations

import functools
import time
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any, Callable, Sequence

from tradeoff.brief import Brief, load_brief
from tradeoff.catalog import Catalog, load_catalog
from tradeoff.fields import did_you_mean
from tradeoff.cautions import cautions
from tradeoff.criteria import headline
from tradeoff.economics import BreakEven, break_even_of, economics
from tradeoff.outcome import MAX_ROUNDS, TopologyOutcome, VerifiedDesign, topology_outcome, verified_designs
from tradeoff.plain import assumptions, part_classes, schematic_values
from tradeoff.errors import InputError, Problem
from tradeoff.topologies.registry import topology_ids

if TYPE_CHECKING:  # pragma: no cover
    import pandas as pd

    from tradeoff.ranking import Ranking
    from tradeoff.topologies.base import Evaluation

__all__ = ["VerifiedDesign", "TopologyOutcome", "StudyResult", "study", "verified_designs", "resolve_topologies",
           "topology_outcome", "MAX_ROUNDS", "Progress"]

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
    slack: "list[Any] | None" = None
    """How far each requirement could tighten for each feasible topology (Relaxation items of kind "slack",
    filled by tradeoff.relax.slack_of; None when not asked)."""

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
            "slack": None if self.slack is None else [r.to_dict() for r in self.slack],
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


Progress = Callable[[int, int, str], None]
"""A study's progress hook: progress(done, total, step) with the topologies finished, the number studied
and what runs now ("rc-schmitt: candidate tables"); the command shell shows it on a terminal."""



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
    result = StudyResult(brief=brief, outcomes=outcomes, ranking=ranking, method=method, solver=solver,
                         cautions=cautions(brief), seconds=time.perf_counter() - start)
    if brief.analysis.relax != "none":  # the brief asks for what it would take (and the slack with "all")
        from tradeoff.relax import relax

        relax(result, slack=brief.analysis.relax == "all")
        result.seconds = time.perf_counter() - start
    return result
