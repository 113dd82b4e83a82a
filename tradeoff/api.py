"""One concrete design evaluated against its brief, as `tradeoff analyze` does: `analyze`
returns a `DesignResult` (the library's entry points for scripts are `load_brief`, `study`,
`analyze` and `sweep`).

`DesignResult.to_dict()` is the JSON of `tradeoff analyze`: the evaluation (SI units in key
suffixes, no NaN or infinity: a delay that never ends is null), the part overrides, the rating
verdict (`within_ratings`), the normalised brief and the mains cautions.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from tradeoff.cautions import cautions

if TYPE_CHECKING:  # pragma: no cover
    import pandas as pd

    from tradeoff.brief import Brief
    from tradeoff.topologies.base import Design, Evaluation, Finding, Topology

__all__ = ["DesignResult", "analyze", "rating_findings", "within_ratings"]


def rating_findings(ev: "Evaluation") -> list["Finding"]:
    """Warnings and violations about part ratings or a part's supply range (codes '*rating*', '*supply-range*')."""
    return [f for f in ev.findings if f.severity != "info" and ("rating" in f.code or "supply-range" in f.code)]


def within_ratings(ev: "Evaluation") -> bool:
    """True when the brief's supply range is inside every part's rating (no rating finding)."""
    return not rating_findings(ev)


@dataclass
class DesignResult:
    """One design evaluated against its brief: the inputs and the full-model Evaluation."""

    brief: "Brief"
    topology: "Topology"
    design: "Design"
    evaluation: "Evaluation"

    def to_dict(self) -> dict[str, Any]:
        """The same data as `tradeoff analyze --format json` (SI units in key suffixes; no NaN or infinity)."""
        ev = self.evaluation
        out = ev.to_dict()
        out["overrides"] = {part: dict(params) for part, params in ev.design.overrides.items()}
        out["within_ratings"] = within_ratings(ev)
        out["brief"] = self.brief.to_dict()
        out["cautions"] = cautions(self.brief)
        return out

    def to_frame(self) -> "pd.DataFrame":
        """The headline figures as a one-row frame (see Evaluation.to_frame)."""
        return self.evaluation.to_frame()


def analyze(design: "str | Path | tuple[Topology, Design]", *, catalog_files: Sequence[str | Path] = (),
            brief_changes: Mapping[str, object] | None = None) -> DesignResult:
    """Evaluate a design: a design file path (see tradeoff.design), or a (topology, design) pair
    already built in code, whose topology carries its brief. `brief_changes` ({'analysis.samples':
    5000}) apply to a design file's brief; raises DesignError, BriefError or CatalogError on bad input.
    """
    if isinstance(design, (str, Path)):
        from tradeoff.design import load_design

        brief, topology, loaded = load_design(design, catalog_files, brief_changes=brief_changes)
    else:
        topology, loaded = design
        brief = topology.brief
    return DesignResult(brief=brief, topology=topology, design=loaded, evaluation=topology.evaluate(loaded))
