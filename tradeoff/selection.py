"""What a topology hands the optimiser: candidate tables and the links between them.

A topology's choices are grouped into blocks of coupled choices (for example the hold
resistor and capacitor together, whose delay is a nonlinear function of both). Each block
is a table with one row per buildable candidate, already evaluated by the topology's own
model: its delay contribution at the worst corners, cost, placements and standby current.
The optimiser picks exactly one row per block. Choices in different blocks interact only
through linear `Link` constraints on row attributes (log-space where the physics is a
product of powers) and through the delay, which combines block contributions by
`combine`: 'sum' (seconds add) or 'product' (factors multiply: logarithms add).

Because every candidate is evaluated exactly and the cross-block algebra is linear, the
integer program's optimum equals exhaustive search over the same tables.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

import pandas as pd

__all__ = ["Block", "Link", "SelectionModel", "ATTRIBUTES"]

ATTRIBUTES = ("delay_lo", "delay_nom", "delay_hi", "cost", "placements", "lines", "during_a", "after_a")
"""Columns every block table carries: delay contribution at the worst low corner, nominal and
worst high corner [s, or a dimensionless factor when combine='product'], indicative cost [EUR],
placements and BOM lines added, supply current during timing and after the timeout [A].
Optional columns `effort` (engineering effort score, 0 to 1) and `rails` (supply rails) add
to the model's fixed values when present."""


@dataclass
class Block:
    """A group of coupled choices; the optimiser picks exactly one row of `table`.

    roles: table columns holding component values the design takes (SI: ohm, F);
    options: table columns holding discrete choices (part class id, counter stage, ...);
    pairs: for a role `r`, optional columns `r_first`, `r_second` and `r_pairing` hold the two standard
    values of a pair and how they combine (candidates.py's `first`/`second`/`pairing`); a row with
    `r_second` > 0 becomes `Design.pairs[r] = Pair(first, second, pairing)` (pairing 'series' when the
    column is absent), a row with `r_second` = 0 is a single part;
    dropped: candidates the topology's own rules removed before the optimiser saw them,
    counted by reason in the designer's terms (used to explain infeasibility).
    """

    name: str
    table: pd.DataFrame
    roles: tuple[str, ...] = ()
    options: tuple[str, ...] = ()
    dropped: dict[str, int] = field(default_factory=dict)

    def __post_init__(self):
        missing = [c for c in (*ATTRIBUTES, *self.roles, *self.options) if c not in self.table.columns]
        if missing:
            raise ValueError(f"block {self.name!r} lacks columns {missing}")
        self.table = self.table.reset_index(drop=True)


@dataclass(frozen=True)
class Link:
    """A linear constraint across blocks: sum of coefficient·table[column] of the chosen rows (sense) rhs.

    reason says in the designer's terms what the constraint protects
    (for example 'start pulse outlasts 3 time constants of the hold capacitor charge').
    """

    terms: tuple[tuple[str, str, float], ...]
    sense: Literal["<=", ">="]
    rhs: float
    reason: str


@dataclass
class SelectionModel:
    """Everything the optimiser needs for one topology."""

    topology: str
    combine: Literal["sum", "product"]
    blocks: list[Block]
    links: list[Link] = field(default_factory=list)
    fixed_cost: float = 0.0
    fixed_placements: int = 0
    fixed_lines: int = 0
    fixed_during_a: float = 0.0
    fixed_after_a: float = 0.0
    rails: int = 1
    effort: float = 0.0
    notes: list[str] = field(default_factory=list)

    def block(self, name: str) -> Block:
        """The block called `name`."""
        for b in self.blocks:
            if b.name == name:
                return b
        raise KeyError(name)
