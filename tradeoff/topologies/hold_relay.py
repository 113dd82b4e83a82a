"""The load of the transistor RC holds: the relay coil (or a dc load), its resistance tolerance and
copper tempco, its release band between must-release and must-operate with the relay class's typical
release band inside it, and its release time. Laws in `devices.relay`; the frame (`hold.RcHoldTopology`)
mixes this in and reads the brief's load and the catalog's relay classes through it.
"""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from tradeoff.analysis import Uncertain
from tradeoff.devices.relay import DEFAULT_RELEASE_TYPICAL, coil_ohm_at, release_current_a, typical_release_band

__all__ = ["RelayLoad", "DEFAULT_RELEASE_TIME_S"]

if TYPE_CHECKING:  # pragma: no cover
    from tradeoff.brief import Brief
    from tradeoff.catalog import Catalog, Part


DEFAULT_RELEASE_TIME_S = 5e-3
"""Relay release time when no relay class matches the brief's coil [s] (from memory: small PCB relays)."""


class RelayLoad:
    """Relay coil (or dc load) of a hold topology: the brief's load with the matching relay class."""

    brief: "Brief"
    catalog: "Catalog"

    def relay_part(self) -> "Part | None":
        """Relay class whose coil voltage matches the brief's coil (for its tolerance and release time)."""
        load = self.brief.load
        if load.kind != "relay":
            return None
        for part in self.catalog.parts("relay"):
            if abs(part.value("coil_voltage", "V") - load.coil_voltage_v) < 1e-9:
                return part
        return None

    def coil_nominal_ohm(self) -> float:
        """Load resistance at 25 degC [ohm]: the relay coil, or supply / current for a dc load."""
        load = self.brief.load
        if load.kind == "relay":
            return load.coil_resistance_ohm
        return self.brief.supply.nominal_v / load.current_a

    def coil_tolerance(self) -> tuple[float, float]:
        """Coil resistance tolerance (fraction) and temperature coefficient [1/K]."""
        relay = self.relay_part()
        if relay is None:
            return (0.10, 0.00393) if self.brief.load.kind == "relay" else (0.0, 0.0)
        return relay.value("coil_resistance_tol", ""), relay.value("coil_tempco", "1/K")

    def release_band_frac(self) -> tuple[float, float, float]:
        """(must-release, must-operate) fractions of the coil's rated current and that rated voltage [V].

        The datasheet's must-release / must-operate voltages hold for every unit at 20-25 degC with
        its own coil resistance, and a relay releases at a current (ampere-turns), so a unit releases at
        release_frac·Vc/R_unit with release_frac anywhere between must-release and must-operate (release
        never exceeds that unit's pick-up). A dc load ends at half its current (stated assumption).
        """
        load = self.brief.load
        if load.kind != "relay":
            return 0.5, 0.5, self.brief.supply.nominal_v
        return load.must_release_frac, load.must_operate_frac, load.coil_voltage_v

    def release_typical_frac(self) -> tuple[tuple[float, float] | None, str]:
        """Band in which units of the relay really release [fractions of the rated coil voltage] and where
        it comes from: the relay class's typical band, else DEFAULT_RELEASE_TYPICAL (from memory), clipped
        to the brief's must-release .. must-operate (`devices.relay.typical_release_band`); None for a dc load."""
        if self.brief.load.kind != "relay":
            return None, ""
        relay = self.relay_part()
        if relay is not None and "release_typ_min" in relay.params and "release_typ_max" in relay.params:
            band, basis = (relay.value("release_typ_min", ""), relay.value("release_typ_max", "")), relay.id
        else:
            band, basis = DEFAULT_RELEASE_TYPICAL, "small PCB relays, from memory"
        lo, hi, _ = self.release_band_frac()
        return typical_release_band(*band, lo, hi), basis

    def release_current_a(self, release_frac, coil_ohm) -> np.ndarray:
        """Release current [A] of a unit at `release_frac` with coil resistance coil_ohm at 25 degC [ohm]."""
        return release_current_a(release_frac, self.release_band_frac()[2], coil_ohm)

    def coil_ohm_at(self, coil_ohm, temp_c) -> np.ndarray:
        """Coil resistance at `temp_c` [degC] from its 25 degC value [ohm] (copper tempco)."""
        return coil_ohm_at(coil_ohm, self.coil_tolerance()[1], temp_c)

    def release_time_s(self) -> float:
        """Relay release time [s] (relay class, else DEFAULT_RELEASE_TIME_S)."""
        relay = self.relay_part()
        return relay.value("release_time", "s") if relay is not None else DEFAULT_RELEASE_TIME_S

    def release_uncertain(self) -> Uncertain:
        """Release point of a unit as a fraction of its coil's rated current Vc/R_coil: the worst case spans
        must-release to must-operate (every unit's guarantee), the nominal is the middle of the typical
        release band and the Monte Carlo draws uniformly over that band."""
        lo, hi, _ = self.release_band_frac()
        typical, basis = self.release_typical_frac()
        note = "release point of a unit as a fraction of its coil's rated current Vc/R_coil: worst case " \
               "must-release to must-operate"
        if typical is None:
            return Uncertain((lo + hi) / 2, lo, hi, unit="", note=f"{note} (uniform)")
        return Uncertain(sum(typical) / 2, lo, hi, unit="", typical=typical,
                         note=f"{note}; nominal and Monte Carlo: typical release {typical[0] * 100:g} to "
                              f"{typical[1] * 100:g} % ({basis}, uniform)")
