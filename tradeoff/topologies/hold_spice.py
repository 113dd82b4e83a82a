"""ngspice netlist of a transistor RC hold at one point: the hold capacitor (charged, or the power-on
PNP start with its network), the driver's elements (`RcHoldTopology.driver_spice`), the capacitor
leakage as a behavioural source, the shunt and any board-surface leakage, the coil as R + L with its flyback diode, and a
`.measure` of the time the coil current falls through the release current. A function of the hold
topology `topo` (an RcHoldTopology).
"""
from __future__ import annotations

import math
from typing import TYPE_CHECKING, Mapping

import numpy as np

from tradeoff.devices.junction import thermal_voltage_v, vbe_at_v
from tradeoff.topologies.hold_start import start_voltage

__all__ = ["hold_netlist"]

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.topologies.base import Design, Topology


def hold_netlist(topo: "Topology", design: "Design", point: Mapping[str, float] | None = None) -> str:
    """ngspice netlist of `design` at `point` (default nominal) with `.measure tran delay`.

    Device parameters are the model's at the point's temperature and the simulator runs at that
    temperature with TNOM equal to it, so no SPICE temperature law intervenes. The capacitor
    leakage is a behavioural current source with the model's power laws; the coil is R + L with
    a flyback diode; the delay is the time the coil current falls through the release current.
    """
    s = topo.nominal_state(design, point)
    v0, pulse = start_voltage(topo, design, s)
    t_model = float(topo.delay(design, {k: np.array([float(v)]) for k, v in
                                        {**topo.nominal_point(design), **(point or {})}.items()})[0])
    temp = float(s.temp_c[0])
    diode = topo.diode(design)
    a_typ, a_lim = float(s.a_typ[0]), float(s.a_lim[0])
    lines = [f"* {topo.id}: {topo.brief.title}", f".options temp={temp:.6g} tnom={temp:.6g} reltol=1e-5 "
             "abstol=1e-14 vntol=1e-7", f"Vcc vcc 0 dc {float(s.supply_v[0]):.9g}"]
    if pulse is None:
        lines.append(f"C1 hold 0 {float(s.c_f[0]):.9g} ic={float(v0[0]):.9g}")
    else:
        pnp = topo.pnp(design)
        hfe = float(s.x["start_hfe"][0]) * math.exp(pnp.value("hfe_tempco", "1/K") * (temp - 25.0))
        vt = float(thermal_voltage_v(temp))
        veb = float(vbe_at_v(pnp.value("vbe_on_typ", "V"), pnp.value("vbe_tempco", "V/K"), temp))
        i_s = pnp.value("vbe_test_current", "A") * math.exp(-veb / (pnp.value("ideality", "") * vt))
        lines += [f"C1 hold 0 {float(s.c_f[0]):.9g} ic=0",
                  "QS chg b2 vcc QSTART",
                  f"R3 vcc b2 {topo.fixed_ohm(design, 'r_be'):.9g}",
                  f"R2 b2 st {float(s.x['r_start'][0]):.9g}",
                  f"C2 st 0 {float(s.x['c_start'][0]):.9g} ic=0",
                  f"R4 chg hold {topo.fixed_ohm(design, 'r_charge'):.9g}",
                  f".model QSTART PNP(IS={i_s:.6g} BF={hfe:.6g} NF={pnp.value('ideality', ''):.6g} BR=1)"]
    elements, models = topo.driver_spice(s)
    lines += elements
    leak_terms = [f"{a:.9g}*pwr(v(hold),{n:g})" for a, n in ((a_typ, s.leak.n_typ), (a_lim, s.leak.n_lim)) if a > 0]
    if leak_terms:
        lines.append(f"B1 hold 0 I={'+'.join(leak_terms)}")
    if s.shunt_ohm is not None:
        lines.append(f"RSH hold 0 {s.shunt_ohm:.9g}")
    if np.any(s.surface_s):
        lines.append(f"RSURFACE hold 0 {1.0 / float(np.asarray(s.surface_s).reshape(-1)[0]):.9g}")
    lines += ["Vsense vcc top dc 0", f"RCOIL top mid {float(s.coil_ohm[0]):.9g}",
              f"LCOIL mid col {topo.entry.value('coil_inductance', 'H'):.6g}", "D1 col top DFLY",
              f".model DFLY D(IS={diode.value('is_sat', 'A'):.6g} N={diode.value('ideality', ''):.6g})", *models]
    stop = 1.5 * t_model + 1.0
    lines += [f".tran {stop / 4000:.6g} {stop:.6g} 0 {stop / 4000:.6g} uic",
              f".measure tran delay when i(vsense)={float(s.release_a[0]):.9g} fall=1", ".end", ""]
    return "\n".join(lines)
