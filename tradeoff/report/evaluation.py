"""What is reported about one evaluated design, shared by the terminal report and the JSON.

`within_ratings(ev)` reads the design-rule findings about part ratings and the supply range;
`evaluation_dict(ev, brief)` is the JSON of `tradeoff analyze`: Evaluation.to_dict() plus the
normalised brief (SI), the rating verdict and the mains cautions. No NaN or infinity: a delay
that never ends is null, as in Evaluation.to_dict().
"""
from __future__ import annotations

from typing import TYPE_CHECKING, Any

from tradeoff.cautions import cautions

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.topologies.base import Evaluation, Finding

__all__ = ["rating_findings", "within_ratings", "evaluation_dict"]


def rating_findings(ev: "Evaluation") -> list["Finding"]:
    """Warnings and violations about part ratings or a part's supply range (codes '*rating*', '*supply-range*')."""
    return [f for f in ev.findings if f.severity != "info" and ("rating" in f.code or "supply-range" in f.code)]


def within_ratings(ev: "Evaluation") -> bool:
    """True when the brief's supply range is inside every part's rating (no rating finding)."""
    return not rating_findings(ev)


def evaluation_dict(ev: "Evaluation", brief: "Brief") -> dict[str, Any]:
    """JSON-ready result of one design: the evaluation, its brief (SI), ratings and cautions."""
    out = ev.to_dict()
    out["overrides"] = {part: dict(params) for part, params in ev.design.overrides.items()}
    out["within_ratings"] = within_ratings(ev)
    out["brief"] = brief.to_dict()
    out["cautions"] = cautions(brief)
    return out
