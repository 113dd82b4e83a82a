"""Value selection: an integer program over a topology's `SelectionModel`, and its exhaustive twin.

The program picks exactly one row of every block table (binary x[b, i], sum_i x[b, i] = 1).
Every quantity it constrains or weighs is a sum over the chosen rows of a per-row amount plus
the model's fixed amount, so the formulation is linear and exact:

- delay band at the worst corners: combine='sum': sum x·delay_lo >= band_min and
  sum x·delay_hi <= band_max [s]; combine='product': the same on ln(delay_lo), ln(delay_hi)
  against ln(band_min), ln(band_max);
- hard limits when the brief gives them: standby after the timeout (fixed_after_a plus the
  rows' after_a) [A], parts (placements), cost [EUR], rails (the model's rails plus an optional
  `rails` column);
- every `Link` of the model.

Objective: sum over terms of weight · (total − origin) / span, with the brief's weights.
Each linear term is scaled by its range over the candidate tables (origin: the smallest
total the tables allow, span: largest minus smallest; span 1 when all totals are equal), so
every term runs from 0 (best the tables allow) to 1 (worst) and the weights compare like
with like:

| term | total |
| --- | --- |
| `parts` | placements |
| `cost` | indicative cost [EUR] |
| `standby` | 3/4 of the current after the timeout plus 1/4 of the current while timing, each scaled by its own range (the split the ranking uses) [A] |
| `effort` | the model's effort plus an optional `effort` column |
| `rails` | the model's rails plus an optional `rails` column |
| `accuracy` | distance of the nominal delay from the band's geometric centre t_c = sqrt(band_min·band_max) |

Accuracy, combine='product': |ln t_nom − ln t_c| (exact: ln t_nom is the sum of the rows'
ln(delay_nom)), divided by the band's half-width in log space, ln(band_max/band_min)/2.
combine='sum': the relative deviation |t_nom − t_c|/t_c stands in for the log distance (it is
linear in the rows; the two agree to first order and order designs alike on either side of
the centre), divided by sqrt(band_max/band_min) − 1, its value at the band's maximum. Either
way a nominal delay on the band's edge scores 1. The absolute value is exact with one
auxiliary variable a >= ±(deviation)/span.

`SelectionProblem` evaluates objective and requirements for chosen rows with the same array
arithmetic `exhaustive` uses, so both report identical numbers for the same rows. A solution
the solver accepts only within its tolerances is cut off and the program re-solved, so the
program's optimum is exactly the exhaustive one (ties aside).

Before the program is built, rows that cannot meet a requirement whatever the other blocks
choose are removed (bound tightening, exact); the tables themselves are not changed. Then an
incumbent is found by small programs over the rows with the smallest objective bounds, and every
row whose bound exceeds the incumbent's objective is removed too (exact: no better combination
uses it): first a quick bound (the other blocks at their extremes), then a tighter one (each row
against the best row of another block, accuracy included).

Modules, one seam each: `formulation` (the problem over the candidate tables as arrays:
requirements, objective, the shared arithmetic), `bounds` (row pruning and objective bounds),
`program` (the PuLP model and its solve loop), `explain` (infeasibility in the designer's terms),
`problem` (the selection problem, its result, exhaustive search).
"""
from __future__ import annotations

from tradeoff.optimise.problem import SelectionProblem, SelectionResult, exhaustive
from tradeoff.optimise.program import SOLVERS
from tradeoff.optimise.formulation import Scales

__all__ = ["SOLVERS", "Scales", "SelectionProblem", "SelectionResult", "exhaustive"]
