"""The PuLP program over a selection problem's tables: one binary per kept row, the
requirements as linear rows, no-good cuts, and a solve loop that accepts only combinations
meeting every requirement exactly (a solution within the solver's tolerances only is cut off).
"""
from __future__ import annotations

import functools
import os
import sys
import warnings
from typing import Sequence

import numpy as np
import pulp

from tradeoff.errors import SolverError
from tradeoff.optimise.bounds import prune
from tradeoff.optimise.formulation import Requirement, Tables, extreme

__all__ = ["SOLVERS", "Program"]

SOLVERS = ("highs", "cbc")
"""Solver names accepted: HiGHS in-process (default) or CBC as a subprocess."""

_GAP_ABS = 1e-9
"""Absolute optimality gap asked of the solver (objective terms are of order 1)."""


@functools.cache
def _silence_highs_banner() -> None:
    """HiGHS prints a banner on C-level stdout at its first instance; send that one to /dev/null."""
    import highspy

    sys.stdout.flush()
    saved = os.dup(1)
    try:
        with open(os.devnull, "w") as null:
            os.dup2(null.fileno(), 1)
            highspy.Highs()
    finally:
        os.dup2(saved, 1)
        os.close(saved)


def _solver(name: str) -> pulp.LpSolver:
    """A silent solver with a tight optimality gap."""
    if name == "highs":
        _silence_highs_banner()
        return pulp.HiGHS(msg=False, gapRel=0.0, gapAbs=_GAP_ABS)
    if name == "cbc":
        with warnings.catch_warnings():  # the CBC bundled with pulp is the one installed; pulp 3.3 flags it
            warnings.simplefilter("ignore", DeprecationWarning)
            return pulp.PULP_CBC_CMD(msg=False, gapRel=0.0, gapAbs=_GAP_ABS)
    raise SolverError(f"unknown solver {name!r}; accepted: {', '.join(map(repr, SOLVERS))}")


class Program:
    """One PuLP model over the rows of the tables (or of `rows`) that survive pruning by `requirements`."""

    def __init__(self, tables: Tables, requirements: Sequence[Requirement], solver: str,
                 rows: Sequence[np.ndarray] | None = None):
        self.tables, self.requirements, self.solver_name = tables, list(requirements), solver
        self.solver = _solver(solver)
        self.keep = prune(tables, self.requirements, rows)
        self.empty = not all(k.size for k in self.keep)
        self.lp = pulp.LpProblem("selection", pulp.LpMinimize)
        self.cuts = 0
        if self.empty:
            return
        self.x = [[self.lp.add_variable(f"x_{b}_{i}", cat=pulp.LpBinary) for i in k] for b, k in enumerate(self.keep)]
        for b, xs in enumerate(self.x):
            self.lp += pulp.LpAffineExpression([(v, 1.0) for v in xs]) == 1, f"one_{b}"
        for r in self.requirements:
            self._require(r)

    def expression(self, amounts: Sequence[np.ndarray], scale: float = 1.0) -> pulp.LpAffineExpression:
        """sum over kept rows of x · amount / scale."""
        return pulp.LpAffineExpression([(v, float(c) / scale) for xs, a, k in zip(self.x, amounts, self.keep)
                                        for v, c in zip(xs, a[k]) if c != 0])

    def _extremes(self, amounts: Sequence[np.ndarray]) -> tuple[float, float]:
        kept = [a[k] for a, k in zip(amounts, self.keep)]
        return extreme(kept, largest=False), extreme(kept, largest=True)

    @staticmethod
    def _scale(r: Requirement) -> float:
        """Row scaling so the solver's absolute tolerances act relatively (logs are left as they are)."""
        return 1.0 if r.log or r.rhs == 0 else abs(r.rhs)

    def _require(self, r: Requirement) -> None:
        """Add `r` unless the kept rows meet it whatever is chosen."""
        lo, hi = self._extremes(r.amounts)
        if (r.sense == "<=" and r.constant + hi <= r.rhs) or (r.sense == ">=" and r.constant + lo >= r.rhs):
            return
        f = self._scale(r)
        e, rhs = self.expression(r.amounts, f), (r.rhs - r.constant) / f
        self.lp += (e <= rhs) if r.sense == "<=" else (e >= rhs), r.key

    def minimise(self, expression: pulp.LpAffineExpression) -> None:
        """Set the objective."""
        self.lp.setObjective(expression)

    def absolute(self, amounts: Sequence[np.ndarray], centre: float, scale: float, name: str) -> pulp.LpVariable:
        """An auxiliary variable a >= |sum x·amount − centre| / scale (exact when a is minimised)."""
        a = self.lp.add_variable(name, lowBound=0)
        e = self.expression(amounts, scale)
        self.lp += a >= e - centre / scale, f"{name}_above"
        self.lp += a >= centre / scale - e, f"{name}_below"
        return a

    def worst_violation(self, requirements: Sequence[Requirement]) -> pulp.LpVariable:
        """An auxiliary variable z >= each requirement's violation (relative, or in log units)."""
        z = self.lp.add_variable("violation")
        for r in requirements:
            f = self._scale(r)
            e, rhs = self.expression(r.amounts, f), (r.rhs - r.constant) / f
            self.lp += (z >= e - rhs) if r.sense == "<=" else (z >= rhs - e), f"{r.key}_violation"
        return z

    def cut(self, rows: Sequence[int]) -> None:
        """Exclude this combination of rows (a no-good cut)."""
        self.cuts += 1
        if self.empty:
            return
        chosen = []
        for xs, k, r in zip(self.x, self.keep, rows):
            where = np.flatnonzero(k == r)
            if not where.size:
                return  # a pruned row: the combination is already excluded
            chosen.append((xs[int(where[0])], 1.0))
        self.lp += pulp.LpAffineExpression(chosen) <= len(rows) - 1, f"cut_{self.cuts}"

    def run(self) -> list[int] | None:
        """Rows of an optimal combination meeting every requirement exactly, or None when there is none."""
        if self.empty:
            return None
        while True:
            try:
                self.lp.solve(self.solver)
            except (pulp.PulpSolverError, KeyError) as exc:  # KeyError: a HiGHS status pulp cannot map
                raise SolverError(f"{self.solver_name} failed: {exc!r}; expected 'Optimal' or 'Infeasible'") from None
            status = pulp.LpStatus[self.lp.status]
            if status == "Infeasible":
                return None
            if status != "Optimal" or self.lp.sol_status != pulp.LpSolutionOptimal:
                raise SolverError(f"{self.solver_name} returned status {status!r} "
                                  f"({pulp.LpSolution.get(self.lp.sol_status, self.lp.sol_status)}); "
                                  "expected 'Optimal' or 'Infeasible'")
            rows = [int(k[int(np.argmax([v.varValue or 0.0 for v in xs]))]) for xs, k in zip(self.x, self.keep)]
            if self.tables.feasible(self.tables.index(rows), self.requirements)[0]:
                return rows
            self.cut(rows)  # accepted only within the solver's tolerances
