"""The state of a batch of RC-hold evaluations and the hold's option readers: the external shunt across
the hold capacitor (design option `shunt` [ohm], e.g. a 10 MΩ meter), a design option with its default,
the `HoldState` of samples or candidates × corners (capacitor leakage plus shunt and board-surface
current), and the hold waveform with the output current and the release point.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, Mapping

import numpy as np

from tradeoff.devices.capacitor import CapacitorLeakage
from tradeoff.errors import DesignKeyError, UnitParseError
from tradeoff.topologies.base import Waveform

__all__ = ["shunt_ohm", "shunt_current_a", "HoldState", "HoldWaveform"]

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.catalog import Part
    from tradeoff.topologies.base import Design


def shunt_ohm(design: "Design") -> float | None:
    """External shunt across the hold capacitor from design option `shunt` [ohm]; None when absent."""
    raw = design.options.get("shunt")
    if raw in (None, 0, "", "none"):
        return None
    if isinstance(raw, str):
        from tradeoff.units import parse_quantity
        try:
            value = parse_quantity(raw, "ohm")
        except UnitParseError as exc:
            raise DesignKeyError(("options", "shunt"), f"{exc.reason}; accepted: a resistance "
                                 "('10 Mohm') or none") from None
    else:
        value = float(raw)
    if not (math.isfinite(value) and value > 0):
        raise DesignKeyError(("options", "shunt"), f"{raw!r} is not a positive resistance; "
                             "accepted: a resistance ('10 Mohm') or none")
    return value


def shunt_current_a(v, shunt: float | None):
    """Current through the optional shunt [A] at capacitor voltage v [V] (0 without one)."""
    return 0.0 if shunt is None else np.asarray(v, dtype=float) / shunt


@dataclass
class HoldState:
    """One batch of hold evaluations (arrays broadcast over samples or candidates x corners).

    r_ohm, c_f: hold resistor [ohm] and capacitor [F]; temp_c [degC]; supply_v [V]; release_a:
    the unit's relay release current [A] (release_frac·Vc/R_coil at 25 degC); coil_ohm: coil resistance at temp_c [ohm]; leak with (a_typ, a_lim):
    capacitor leakage law; shunt_ohm: external shunt or None; x: every sample quantity by name
    (driver-specific ones included); driver: the driver part class; memo: per-sample arrays a driver
    derives once per state (junction or gate parameters at the samples' temperature); surface_s: the
    board-surface conductance across the capacitor [S] (0, or an array like r_ohm).
    """

    r_ohm: np.ndarray
    c_f: np.ndarray
    temp_c: np.ndarray
    supply_v: np.ndarray
    release_a: np.ndarray
    coil_ohm: np.ndarray
    leak: CapacitorLeakage
    a_typ: np.ndarray
    a_lim: np.ndarray
    shunt_ohm: float | None
    x: Mapping[str, np.ndarray]
    driver: "Part"
    memo: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)
    surface_s: Any = 0.0

    def leakage_a(self, v, scratch: bool = False) -> np.ndarray:
        """Capacitor leakage plus shunt and board-surface current at capacitor voltage v [V] [A].

        v may carry one trailing axis more than the state's arrays (quadrature nodes). scratch: v is
        the caller's temporary array, which may be clipped at 0 V in place (saves one array).
        """
        v = np.asarray(v, dtype=float)
        a_typ, a_lim = np.asarray(self.a_typ), np.asarray(self.a_lim)
        if v.ndim > a_typ.ndim:
            a_typ, a_lim = a_typ[..., None], a_lim[..., None]
        shunt = None if self.shunt_ohm is None else shunt_current_a(v, self.shunt_ohm)
        out = self.leak.current_a(v, a_typ, a_lim, scratch)
        if shunt is not None:
            out += shunt
        if np.any(self.surface_s):
            surface = np.asarray(self.surface_s, dtype=float)
            out += v * (surface[..., None] if v.ndim > surface.ndim else surface)
        return out

    def trail(self, name: str) -> np.ndarray:
        """Sample quantity `name` with a trailing axis of length 1 (to broadcast against nodes)."""
        return np.asarray(self.x[name], dtype=float)[..., None]


@dataclass(frozen=True)
class HoldWaveform(Waveform):
    """A hold waveform: capacitor voltage (the signal) plus the output current and the release point.

    output_a: coil (collector or drain) current [A] at each time; release_s: the delay [s];
    release_a: the release current [A].
    """

    output_a: np.ndarray = None
    release_s: float = 0.0
    release_a: float = 0.0

