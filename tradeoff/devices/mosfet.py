"""MOSFET square law (SPICE level 1, Shichman and Hodges): threshold point, transconductance factor
against temperature, drain current and its inverse, and the on-state drop in the linear region.

Arrays in, arrays out (SI units). Id = K/2·(Vgs − Vto)² in saturation and
Id = K·((Vgs − Vto)·Vds − Vds²/2) in the linear region (Sedra and Smith, Microelectronic Circuits);
the datasheet's VGS(th) at its test current fixes Vto; K scales as (T/T0)^exponent (carrier
mobility, the exponent from the catalog class). R_DS(on) rises linearly with junction temperature from its
25 degC rating (power MOSFET datasheets' normalised on-resistance curve, read as a straight line).
"""
from __future__ import annotations

import numpy as np

__all__ = ["k_at", "vto_v", "drain_current_a", "gate_voltage_for_a", "on_state_drop_v", "rds_on_at_ohm"]


def k_at(k_25c, temp_c, exponent):
    """Square-law factor K [A/V²] at `temp_c` [degC] from its 25 degC value: K·(T/298.15 K)^exponent."""
    return k_25c * ((np.asarray(temp_c, dtype=float) + 273.15) / 298.15) ** exponent


def vto_v(vth_v, test_a, k):
    """Square-law threshold Vto [V] that passes through the datasheet point Id(VGS(th)) = test current [A]:
    Vto = VGS(th) − sqrt(2·I_test/K)."""
    return vth_v - np.sqrt(2 * test_a / k)


def drain_current_a(vgs_v, vto, k, sat_a):
    """Drain current min(K/2·(Vgs − Vto)², I_sat) [A]; sat_a: the load's own limit (supply / coil) [A]."""
    over = np.maximum(np.asarray(vgs_v, dtype=float) - vto, 0.0)
    return np.minimum(k / 2 * over * over, sat_a)


def gate_voltage_for_a(i_a, vto, k, sat_a):
    """Gate voltage [V] at which the square law passes i_a [A] (capped at the load's limit sat_a): Vto + sqrt(2·I/K)."""
    return vto + np.sqrt(2 * np.minimum(i_a, sat_a) / k)


def on_state_drop_v(overdrive_v, k_a_per_v2, current_a):
    """Drain-source voltage of a square-law MOSFET in its linear region carrying `current_a` [V]:
    Id = K ((Vgs - Vt) Vds - Vds^2 / 2) solved for Vds (SPICE level 1); inf when the current exceeds
    the saturation current K (Vgs - Vt)^2 / 2."""
    disc = overdrive_v * overdrive_v - 2.0 * current_a / k_a_per_v2
    return overdrive_v - disc ** 0.5 if overdrive_v > 0 and disc >= 0 else float("inf")


def rds_on_at_ohm(rds_on_25c_ohm, tempco_per_k, temp_c):
    """On-resistance at junction temperature `temp_c` [degC] from its 25 degC rating [ohm]:
    R_DS(on)·(1 + tempco·(T − 25)) (datasheets' normalised on-resistance against temperature)."""
    return rds_on_25c_ohm * (1.0 + tempco_per_k * (np.asarray(temp_c, dtype=float) - 25.0))
