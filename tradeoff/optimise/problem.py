"""The selection problem (built once; solve, exclude, solve again), its result object, and
exhaustive search over the same tables for tests and benchmarks.
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Mapping, Sequence

import numpy as np

from tradeoff.optimise.bounds import lower_bounds, partner_bounds, prune
from tradeoff.optimise.explain import Explainer
from tradeoff.optimise.program import Program
from tradeoff.optimise.formulation import TOLERANCE, Scales, Tables
from tradeoff.selection import SelectionModel
from tradeoff.topologies.base import Design

__all__ = ["SelectionResult", "SelectionProblem", "exhaustive"]

_INCUMBENT_ROWS = 64
"""Rows per block, those with the smallest objective bounds, in the small program solved first for an incumbent."""

_CHUNK = 1 << 18
"""Combinations evaluated per vectorised step of exhaustive search."""


@dataclass
class SelectionResult:
    """One outcome of the selection program (or of exhaustive search).

    status: 'Optimal' or 'Infeasible'; objective: weighted sum of normalised terms (None when
    infeasible); rows: block name -> chosen row of its table; design: the Design those rows
    describe; terms: normalised objective terms before weights; totals: corner delays [s] and
    summed attributes (cost [EUR], placements, lines, during_a/after_a [A], effort, rails);
    solve_s: solver wall time [s]; problem: the SelectionProblem (None for exhaustive search);
    reasons: why infeasible, in the designer's terms.
    """

    status: str
    objective: float | None
    rows: dict[str, int] = field(default_factory=dict)
    design: Design | None = None
    terms: dict[str, float] = field(default_factory=dict)
    totals: dict[str, float] = field(default_factory=dict)
    solve_s: float = 0.0
    problem: "SelectionProblem | None" = None
    reasons: list[str] = field(default_factory=list)

    @property
    def feasible(self) -> bool:
        """True when the program found a combination meeting every requirement."""
        return self.status == "Optimal"


def _result(tables: Tables, rows: Sequence[int], solve_s: float, problem: "SelectionProblem | None"
            ) -> SelectionResult:
    """Result for chosen rows, every number recomputed from the tables."""
    return SelectionResult(
        status="Optimal", objective=float(tables.objective(tables.index(rows))[0]),
        rows={b.name: int(r) for b, r in zip(tables.model.blocks, rows)}, design=tables.design(rows),
        terms=tables.terms(rows), totals=tables.totals(rows), solve_s=solve_s, problem=problem,
    )


class SelectionProblem:
    """The integer program for one SelectionModel, built once; solve, exclude, solve again.

    band: (min, max) delay [s]; limits: object with standby_after_a [A], parts, cost [EUR],
    rails (None where not limited), e.g. `brief.limits`; weights: object with the attributes in
    criteria.WEIGHT_NAMES (>= 0), e.g. `brief.weights`; scales: objective normalisation (default `Scales.of`);
    solver: 'highs' or 'cbc'; margin: fraction of the band's width the worst-case delays keep from each
    edge (`brief.analysis.margin`).
    """

    def __init__(self, model: SelectionModel, band: tuple[float, float], limits, weights,
                 scales: Scales | None = None, solver: str = "highs", margin: float = 0.0):
        start = time.perf_counter()
        self.model = model
        self.tables = Tables(model, band, limits, weights, scales, margin)
        self.solver = solver
        self.excluded: list[tuple[int, ...]] = []
        self._rows_meeting = prune(self.tables, self.tables.requirements)
        self.bound, kept = self._incumbent()
        self.program = self._build(self._within(kept, self.bound))
        self.build_s = time.perf_counter() - start
        """Time to prune and build the program [s]."""

    def _build(self, rows: Sequence[np.ndarray]) -> Program:
        """The program over `rows` with the weighted objective and every cut made so far."""
        t = self.tables
        p = Program(t, t.requirements, self.solver, rows)
        if not p.empty:
            objective = p.expression(t.linear) + t.linear_constant
            if t.accuracy_k > 0:
                objective += t.accuracy_k * p.absolute(t.nominal, t.centre, 1.0, "accuracy")
            p.minimise(objective)
        for rows_cut in self.excluded:
            p.cut(rows_cut)
        return p

    def _incumbent(self) -> tuple[float, list[np.ndarray]]:
        """Objective of a good feasible combination not yet excluded (inf when the tables are small
        enough or none is found), and the rows that can still be in a combination no worse.

        Small programs over the rows with the smallest objective bounds (the quick bounds while the
        tables are whole, the partner bounds once pruned); after a combination is found, the rows
        its objective bounds out are dropped and the next program tried. The row count grows
        fourfold whenever a program finds nothing better, until it takes every row left.
        """
        rows, bound, count = self._rows_meeting, math.inf, _INCUMBENT_ROWS
        if not all(k.size for k in rows) or max(k.size for k in rows) <= count:
            return bound, rows
        while all(k.size for k in rows):
            # The quick bounds until an incumbent has pruned the tables, the tighter ones then.
            bounds = (lower_bounds if math.isinf(bound) else partner_bounds)(self.tables, rows)
            best = [k[np.sort(np.argpartition(b, count)[:count])] if b.size > count else k
                    for k, b in zip(rows, bounds)]
            found = self._build(best).run()
            objective = math.inf if found is None else self.objective_of(found)
            if all(k.size <= count for k in rows):
                return min(bound, objective), rows
            if objective < bound:
                bound = objective
                rows = self._within(rows, bound)
            else:
                count *= 4
        return bound, rows

    def _within(self, rows: Sequence[np.ndarray], bound: float) -> list[np.ndarray]:
        """Rows whose objective bound does not exceed `bound` (exact: no combination within it uses
        the others), alternating with requirement pruning until no bound removes a row (the quick
        bounds first, the tighter partner bounds when those remove nothing more)."""
        tables = self.tables
        while not math.isinf(bound) and all(k.size for k in rows):
            within = rows
            for bounds in (lower_bounds, partner_bounds):
                within = [k[b <= bound + self._slack(bound)] for k, b in zip(rows, bounds(tables, rows))]
                within = prune(tables, tables.requirements, within)
                if sum(map(len, within)) < sum(map(len, rows)):
                    break
            if sum(map(len, within)) == sum(map(len, rows)):
                break
            rows = within
        return rows

    @staticmethod
    def _slack(bound: float) -> float:
        """Tolerance on objective comparisons against `bound`."""
        return TOLERANCE * max(1.0, abs(bound))

    @property
    def scales(self) -> Scales:
        """The objective's normalisation."""
        return self.tables.scales

    def objective_of(self, rows: Mapping[str, int] | Sequence[int]) -> float:
        """Objective of a combination of rows (block name -> row, or one row per block in order)."""
        return float(self.tables.objective(self.tables.index(self._rows(rows)))[0])

    def feasible(self, rows: Mapping[str, int] | Sequence[int]) -> bool:
        """True when the combination meets every requirement."""
        return bool(self.tables.feasible(self.tables.index(self._rows(rows)))[0])

    def _rows(self, rows: Mapping[str, int] | Sequence[int]) -> list[int]:
        if isinstance(rows, Mapping):
            return [int(rows[b.name]) for b in self.model.blocks]
        return [int(r) for r in rows]

    def exclude(self, rows: Mapping[str, int] | Sequence[int]) -> None:
        """Exclude a combination from later solves (no-good cut)."""
        rows = self._rows(rows)
        self.excluded.append(tuple(rows))
        self.program.cut(rows)

    def solve(self) -> SelectionResult:
        """The best combination not yet excluded; status 'Infeasible' with reasons when there is none."""
        start = time.perf_counter()
        rows = self.program.run()
        beyond = rows is None or self.objective_of(rows) > self.bound + self._slack(self.bound)
        if not math.isinf(self.bound) and beyond:
            # The best left lies beyond the incumbent's bound (earlier designs were excluded): a new
            # incumbent among the combinations left, and the rows within its bound.
            self.bound, kept = self._incumbent()
            self.program = self._build(self._within(kept, self.bound))
            rows = self.program.run()
        elapsed = time.perf_counter() - start
        if rows is not None:
            return _result(self.tables, rows, elapsed, self)
        if self.excluded:
            reasons = [f"no combination of the candidate tables is left after excluding {len(self.excluded)} "
                       "earlier designs"]
        else:
            reasons = self.explain()
        return SelectionResult(status="Infeasible", objective=None, solve_s=elapsed, problem=self, reasons=reasons)

    def best(self, k: int) -> list[SelectionResult]:
        """The k best distinct combinations, best first (fewer when the tables hold fewer feasible ones)."""
        out = []
        while len(out) < k:
            result = self.solve()
            if not result.feasible:
                break
            out.append(result)
            self.exclude(result.rows)
        return out

    def explain(self) -> list[str]:
        """Why no combination meets the requirements, with numbers; empty when one does."""
        return Explainer(self.tables, self.solver).explain()


def exhaustive(model: SelectionModel, band: tuple[float, float], limits, weights, scales: Scales | None = None,
               k: int = 1, max_combinations: int = 10**9, margin: float = 0.0) -> list[SelectionResult]:
    """The k best feasible combinations by brute force over every combination of block rows.

    Same requirements, objective and arithmetic as SelectionProblem; ties are ordered by row
    numbers. Empty when no combination is feasible. For tests and benchmarks.
    """
    start = time.perf_counter()
    tables = Tables(model, band, limits, weights, scales, margin)
    total = math.prod(tables.sizes)
    if total > max_combinations:
        raise ValueError(f"{total} combinations exceed max_combinations={max_combinations}")
    best_obj, best_flat = np.empty(0), np.empty(0, dtype=np.int64)
    for first in range(0, total, _CHUNK):
        flat = np.arange(first, min(total, first + _CHUNK), dtype=np.int64)
        idx = np.unravel_index(flat, tables.sizes)
        ok = tables.feasible(idx)
        obj = np.concatenate([best_obj, tables.objective([i[ok] for i in idx])])
        flat = np.concatenate([best_flat, flat[ok]])
        order = np.lexsort((flat, obj))[:k]
        best_obj, best_flat = obj[order], flat[order]
    elapsed = time.perf_counter() - start
    combos = np.stack(np.unravel_index(best_flat, tables.sizes), axis=-1) if best_flat.size else []
    return [_result(tables, [int(r) for r in rows], elapsed, None) for rows in combos]
