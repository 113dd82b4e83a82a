"""The library's entry points for scripts, next to `load_brief`, `study` and `sweep`:
`analyze` evaluates one concrete design against its brief, as `tradeoff analyze` does.
"""
from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # pragma: no cover
    import pandas as pd

    from tradeoff.brief import Brief
    from tradeoff.topologies.base import Design, Evaluation, Topology

__all__ = ["Analysis", "analyze"]


@dataclass
class Analysis:
    """One design evaluated against its brief: the inputs and the full-model Evaluation."""

    brief: "Brief"
    topology: "Topology"
    design: "Design"
    evaluation: "Evaluation"

    def to_dict(self) -> dict[str, Any]:
        """The same data as `tradeoff analyze --format json` (SI units in key suffixes; no NaN or infinity)."""
        from tradeoff.report.evaluation import evaluation_dict

        return evaluation_dict(self.evaluation, self.brief)

    def to_frame(self) -> "pd.DataFrame":
        """The headline figures as a one-row frame (see Evaluation.to_frame)."""
        return self.evaluation.to_frame()


def analyze(design: "str | Path | tuple[Topology, Design]", *, catalog_files: Sequence[str | Path] = (),
            brief_changes: Mapping[str, object] | None = None) -> Analysis:
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
    return Analysis(brief=brief, topology=topology, design=loaded, evaluation=topology.evaluate(loaded))
