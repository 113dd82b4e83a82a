"""Tables of the two-inverter RC oscillator's period factors for a counter class, interpolated so the
worst case and the Monte Carlo pay microseconds a sample instead of the law's milliseconds.

N: `clamped_period_factor` at v = 1/2 without output resistance (the clamp drop clamp_v behind Rs, the pin
capacitance Cp) over its value at Rs = RS_RATIO·Rt without Cp at the reference supply. S:
`inverter_factor` (output resistance and square-law excess) over its value at the reference supply for
the same transistor threshold. Linear interpolation over log Rs/Rt, Cp/Ct, VDD (denser at low supply)
and log Rt, VDD, threshold; inputs outside a grid are clipped to it. Within 0.6 % of the law over the
range the counter uses (tests/test_rc_counter_oscillator.py).
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy.interpolate import RegularGridInterpolator

from tradeoff.devices.capacitor import TEMPCO_REFERENCE_C
from tradeoff.devices.oscillator import clamped_period_factor, inverter_factor

__all__ = ["RS_RATIO", "OscillatorTables", "oscillator_tables", "rc_extremes"]

RS_RATIO = 2.0
"""Rs/Rt the datasheets' constant k holds for (4060-type datasheets: Rs about 2·Rt); the counter takes
the smallest standard value at or above RS_RATIO·Rt (common practice: a larger Rs weakens the clamp's
pull on the period)."""

_RS_NODES = np.union1d(np.geomspace(1.0, 20.0, 10), [RS_RATIO])
"""Rs/Rt grid of the input-network table (the reference ratio is a node: N = N_ref exactly there)."""
_CP_NODES = np.array([0.0, 1e-4, 3e-4, 1e-3, 3e-3, 0.01, 0.02, 0.05, 0.1, 0.2, 0.5])
"""Cp/Ct grid of the input-network table (Ct ≥ 100 pF, Cp ≤ tens of pF)."""
_RT_NODES = np.geomspace(10e3, 30e6, 14)
"""Rt grid of the inverter table [ohm], from the datasheets' smallest Rt (4060-type datasheets: 10 kohm)."""
_VDD_NODES = 16
"""Supply grid points of both tables over the class's rated supply."""


class OscillatorTables:
    """Interpolated period factors of one counter class: `network` N/N_ref over (Rs/Rt, Cp/Ct, VDD) and
    `inverters` S/S_ref over (Rt, VDD, transistor threshold) (module docstring)."""

    def __init__(self, clamp_v: float, kp: float, vdd_range: tuple[float, float], vref: float,
                 vt_range: tuple[float, float]):
        # supply nodes denser at low supply, where the inverters' terms change fastest; the reference is a node
        vdd = np.union1d(np.geomspace(*vdd_range, _VDD_NODES), [vref])
        rs, cp, v = np.meshgrid(_RS_NODES, _CP_NODES, vdd, indexing="ij")
        reference = clamped_period_factor(0.5, RS_RATIO, clamp_v / vref, 0.0, 0.0, 0.0)
        network = clamped_period_factor(0.5, rs, clamp_v / v, cp, 0.0, 0.0) / reference
        self._network = RegularGridInterpolator((np.log(_RS_NODES), _CP_NODES, vdd), network)
        self.network_rises_with_cp = bool(np.all(np.diff(network, axis=1) >= 0))
        """True when N/N_ref does not fall along Cp/Ct at any node: then (multilinear, clipped) nowhere."""
        vts = np.linspace(*vt_range, 5) if vt_range[1] > vt_range[0] else np.array([vt_range[0] - 1e-3, vt_range[0]])
        rt, v, vt = np.meshgrid(_RT_NODES, vdd, vts, indexing="ij")
        inverters = inverter_factor(v, vt, kp, rt) / inverter_factor(vref, vt[:, :1], kp, rt[:, :1])  # reference: no supply axis
        self._inverters = RegularGridInterpolator((np.log(_RT_NODES), vdd, vts), inverters)
        self._bounds = [(np.log(_RS_NODES[0]), np.log(_RS_NODES[-1])), (0.0, _CP_NODES[-1]), (vdd[0], vdd[-1]),
                        (np.log(_RT_NODES[0]), np.log(_RT_NODES[-1])), (vts[0], vts[-1])]

    def _clip(self, index: int, values) -> np.ndarray:
        return np.clip(np.asarray(values, dtype=float), *self._bounds[index])

    def network(self, rs_ratio, cp_ratio, vdd_v) -> np.ndarray:
        """N/N_ref: the clamp behind Rs and the pin capacitance at supply vdd_v [V]."""
        shape = np.broadcast_shapes(np.shape(rs_ratio), np.shape(cp_ratio), np.shape(vdd_v))
        points = [np.broadcast_to(self._clip(i, v), shape) for i, v in
                  enumerate((np.log(rs_ratio), cp_ratio, vdd_v))]
        return self._network(np.stack(points, axis=-1))

    def inverters(self, rt_ohm, vdd_v, mos_vt_v) -> np.ndarray:
        """S/S_ref: the inverters' output resistance and square-law excess at supply vdd_v over the reference."""
        shape = np.broadcast_shapes(np.shape(rt_ohm), np.shape(vdd_v), np.shape(mos_vt_v))
        points = [np.broadcast_to(self._clip(i, v), shape) for i, v in
                  zip((3, 2, 4), (np.log(rt_ohm), vdd_v, mos_vt_v))]
        return self._inverters(np.stack(points, axis=-1))


@lru_cache(maxsize=16)
def oscillator_tables(clamp_v: float, kp: float, vdd_range: tuple[float, float], vref: float,
              vt_range: tuple[float, float]) -> OscillatorTables:
    """The tables for one set of class figures, built once per process (about a second)."""
    return OscillatorTables(clamp_v, kp, vdd_range, vref, vt_range)


def rc_extremes(r, c, ri, ci, temps_c) -> tuple[np.ndarray, np.ndarray]:
    """Smallest and largest Rt·Ct [s] of the pairs (r.iloc[ri], c.iloc[ci]) of two candidate tables over their
    tolerances and tempcos at the ambient corners `temps_c` [°C]."""
    rt, ct = r["value"].to_numpy()[ri], c["value"].to_numpy()[ci]
    r_tol, r_tc = r["tolerance"].to_numpy()[ri], r["tempco"].to_numpy()[ri]
    c_tol, c_tc = c["tolerance"].to_numpy()[ci], c["tempco"].to_numpy()[ci]
    lo, hi = np.full(len(rt), np.inf), np.zeros(len(rt))
    for t in temps_c:
        dt = abs(t - TEMPCO_REFERENCE_C)
        lo = np.minimum(lo, rt * ct * (1 - r_tol) * (1 - r_tc * dt) * (1 - c_tol) * (1 - c_tc * dt))
        hi = np.maximum(hi, rt * ct * (1 + r_tol) * (1 + r_tc * dt) * (1 + c_tol) * (1 + c_tc * dt))
    return lo, hi
