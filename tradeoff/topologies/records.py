"""The small value objects of the topology interface that name no design: a value role, a pair of standard
parts, a bill-of-materials line, standby currents, a design-rule finding and a waveform for plots
(`tradeoff.topologies.base` holds the design, the evaluation and the Topology class, and re-exports these).
"""
from __future__ import annotations

import math
from dataclasses import KW_ONLY, dataclass
from typing import Literal, NamedTuple

import numpy as np

__all__ = ["Role", "Pair", "BomLine", "Standby", "Finding", "Waveform", "finite_or_none"]


@dataclass(frozen=True)
class Role:
    """A component value the optimiser picks.

    kind: 'resistor' or 'capacitor'; dielectrics: for capacitors, which dielectrics ('electrolytic',
    'film', 'ceramic') may fill it; description in the designer's words. The values searched are those
    the allowed part classes make (their min_value to max_value at the brief's series,
    `candidates.role_candidates`); lo, hi [ohm] or [F] narrow that only where the circuit itself sets a limit
    (a datasheet's recommended range), and `limit` says which, for the designer (empty: no such limit).
    """

    name: str
    kind: Literal["resistor", "capacitor"]
    description: str
    dielectrics: tuple[str, ...] = ()
    _: KW_ONLY
    lo: float = 0.0
    hi: float = math.inf
    limit: str = ""


class Pair(NamedTuple):
    """Two standard parts of one class making a role's value: first >= second [ohm or F], pairing 'series' or
    'parallel'."""

    first: float
    second: float
    pairing: Literal["series", "parallel"] = "series"


@dataclass(frozen=True)
class BomLine:
    """One bill-of-materials line: reference designators, part class id, value text, quantity, unit cost [EUR],
    note, and the value role it fills."""

    refs: str
    part: str
    value: str
    quantity: int
    unit_cost: float
    note: str = ""
    role: str = ""
    """The value role this line fills (a `Role` name, e.g. 'c_hold'); empty for a fixed part. The optimiser's
    fixed cost is the BOM less the lines of its roles, found by this field, never by reference designator."""

    @property
    def cost(self) -> float:
        """Line cost [EUR, indicative]."""
        return self.quantity * self.unit_cost


@dataclass(frozen=True)
class Standby:
    """Supply current while timing and after the timeout, at nominal supply [A]."""

    during_a: float
    after_a: float


@dataclass(frozen=True)
class Finding:
    """A design-rule result. severity 'violation' makes the design infeasible; 'warning' is reported."""

    severity: Literal["info", "warning", "violation"]
    code: str
    message: str


@dataclass(frozen=True)
class Waveform:
    """Control signal against time for plots: time [s], signal [unit], the level where the delay ends."""

    time_s: np.ndarray
    signal: np.ndarray
    signal_label: str
    unit: str
    threshold: float
    threshold_label: str


def finite_or_none(value: float) -> float | None:
    """`value` as a float, or None where it is infinite (JSON has no infinity: a delay that never ends)."""
    return float(value) if math.isfinite(value) else None
