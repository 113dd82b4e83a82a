"""Why a selection problem has no solution, in the designer's terms with numbers: a block left
empty, a requirement no candidate reaches, the tolerance spread against the band, or a smallest
set of requirements that cannot hold together, each with the best it reaches.
"""
from __future__ import annotations

import math
from typing import Sequence

import numpy as np
import pulp

from tradeoff.optimise.program import Program
from tradeoff.optimise.formulation import TOLERANCE, Requirement, Tables, seconds

__all__ = ["Explainer"]


class Explainer:
    """Explanations over `tables`, solving small programs with `solver` ('highs' or 'cbc')."""

    def __init__(self, tables: Tables, solver: str):
        self.tables, self.model, self.solver = tables, tables.model, solver

    def explain(self) -> list[str]:
        """Why no combination meets the requirements, with numbers; empty when one does."""
        t = self.tables
        reasons = [f"no candidate is left for {b.name}" for b in self.model.blocks if b.table.empty]
        if not reasons:
            # The spread first: it binds wherever the band lies, while a band edge no candidate reaches may only
            # say that the topology's rules dropped the candidates whose nominal delay lies beyond the band.
            reasons = self._spread_reasons() + [r.sentence(r.best()) for r in t.requirements if not r.holds(r.best())]
        if not reasons:
            reasons = self._band_reasons()
        if not reasons and Program(t, t.requirements, self.solver).run() is None:
            reasons = self._conflict()
        return reasons + self._dropped()

    def _dropped(self) -> list[str]:
        out = []
        for b in self.model.blocks:
            if b.dropped:
                counts = "; ".join(f"{n}: {why}" for why, n in b.dropped.items())
                out.append(f"{b.name}: the topology's own rules removed {sum(b.dropped.values())} candidates ({counts})")
        return out

    def _band(self) -> list[Requirement]:
        return [r for r in self.tables.requirements if r.group == "band"]

    def _spread_reasons(self) -> list[str]:
        """The spread between the worst-case corners (every uncertain quantity, not only the tolerances) against
        the band's ratio, when no combination's worst-case corners fit in it."""
        t = self.tables
        lo, hi = t.required
        ratio = self._smallest_spread()
        if ratio > (hi / lo) * (1 + TOLERANCE):
            return [f"the uncertainties alone (part tolerances, supply, temperature and any leakage) spread the delay "
                    f"by ×{ratio:.3g} between the worst-case corners; {t.band_text()} allows ×{hi / lo:.3g}"]
        return []

    def _band_reasons(self) -> list[str]:
        """The band alone: how close the standard values come (the spread fits, see `_spread_reasons`)."""
        t = self.tables
        if Program(t, self._band(), self.solver).run() is not None:
            return []
        return [self._closest(others=[], prefix="no combination of standard values puts both worst-case delays "
                                               "inside the band")]

    def _smallest_spread(self) -> float:
        """Smallest ratio of worst-case longest to shortest delay any combination reaches."""
        t = self.tables
        lo, hi = t.delay["delay_lo"], t.delay["delay_hi"]
        if t.product:
            return math.exp(sum(float(np.min(h - l)) for l, h in zip(lo, hi)))
        # Dinkelbach's method for min sum(hi)/sum(lo): each step minimises sum(hi − λ·lo), separable by block.
        # Any start converges; the shortest longest-delay row avoids dividing by a zero-delay fixed block.
        rows = [int(np.argmin(h)) for h in hi]
        ratio = math.inf
        while True:
            new = sum(h[r] for h, r in zip(hi, rows)) / sum(l[r] for l, r in zip(lo, rows))
            if new >= ratio * (1 - 1e-15):
                return ratio
            ratio = new
            rows = [int(np.argmin(h - ratio * l)) for l, h in zip(lo, hi)]

    def _closest(self, others: Sequence[Requirement], prefix: str) -> str:
        """How close the worst-case delays come to the band while `others` hold."""
        t = self.tables
        program = Program(t, others, self.solver)
        if not program.empty:
            program.minimise(pulp.LpAffineExpression(program.worst_violation(self._band())))
        rows = program.run()
        if rows is None:
            return f"{prefix} (the other requirements leave no candidate)"
        idx = t.index(rows)
        return (f"{prefix}: the closest is {seconds(t.combined('delay_lo', idx))} to "
                f"{seconds(t.combined('delay_hi', idx))} at the worst-case corners against {t.band_text()}")

    def _conflict(self) -> list[str]:
        """A smallest set of requirement groups that cannot hold together, each with the best it reaches."""
        groups: dict[str, list[Requirement]] = {}
        for r in self.tables.requirements:
            groups.setdefault(r.group, []).append(r)
        order = [g for g in groups if g != "band"] + (["band"] if "band" in groups else [])
        conflict = list(order)
        for g in order:
            trial = [h for h in conflict if h != g]
            if Program(self.tables, [r for h in trial for r in groups[h]], self.solver).run() is None:
                conflict = trial
        names = {g: groups[g][0].label for g in conflict}
        out = [f"these requirements cannot all be met together: {', '.join(names.values())}"]
        for g in conflict:
            others = [r for h in conflict if h != g for r in groups[h]]
            with_text = "with " + " and ".join(names[h] for h in conflict if h != g) + " met"
            if g == "band":
                out.append(self._closest(others, f"{with_text}, the worst-case delays miss the band"))
                continue
            for r in groups[g]:
                out.append(f"{with_text}, {self._best_under(r, others)}")
        return out

    def _best_under(self, r: Requirement, others: Sequence[Requirement]) -> str:
        """The best `r` reaches while `others` hold, as a sentence."""
        program = Program(self.tables, others, self.solver)
        if not program.empty:
            e = program.expression(r.amounts)
            program.minimise(e if r.sense == "<=" else -e)
        rows = program.run()
        if rows is None:
            return f"no candidate is left for {r.label}"
        return r.sentence(float(r.value(self.tables.index(rows))[0]))
