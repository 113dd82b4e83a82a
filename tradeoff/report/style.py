"""One visual style for every plot: the topology palette and markers, band and line colours.

The palette is the project's own: eight colours of different hues (navy, amber, green, vermillion,
sky blue, wine, lavender, pale yellow) with CIE 1976 lightness L* at least `MIN_LIGHTNESS_STEP`
apart between any two, so up to eight designs stay distinguishable under any colour-vision
deficiency and in greyscale print; the two palest come last. Plots distinguish topologies by colour AND marker.
Pure data: importing this module does not import matplotlib.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

__all__ = [
    "PALETTE", "MARKERS", "MIN_LIGHTNESS_STEP", "TopologyStyle", "topology_styles", "lightness",
    "BAND_COLOUR", "LINE_COLOUR", "NOMINAL_COLOUR", "RC_PARAMS",
]

PALETTE = ("#16245a", "#efac24", "#15664a", "#d03a20", "#3a98dc", "#7a1838", "#dccff6", "#fdf6a8")
"""Topology colours in assignment order (L* 16, 75, 38, 48, 60, 27, 85, 96)."""

MARKERS = ("o", "s", "^", "D", "v", "P", "X", "*")
"""Topology markers in assignment order (matplotlib marker codes)."""

MIN_LIGHTNESS_STEP = 9.0
"""Smallest L* difference between two palette colours (CIE 1976 L*, 0 to 100)."""

BAND_COLOUR = "#d9d9d9"
"""Fill of the brief's delay band."""

LINE_COLOUR = "#222222"
"""Thresholds, release points and percentile lines."""

NOMINAL_COLOUR = "#c0581a"
"""The nominal delay marker."""

RC_PARAMS = {
    "figure.dpi": 100,
    "savefig.dpi": 120,
    "font.size": 9,
    "axes.titlesize": 10,
    "axes.grid": True,
    "axes.axisbelow": True,
    "grid.color": "#e6e6e6",
    "axes.spines.top": False,
    "axes.spines.right": False,
    "legend.frameon": False,
    "svg.hashsalt": "tradeoff",
    "svg.fonttype": "none",
}
"""matplotlib settings applied around every figure (rc_context), so SVG ids are stable run to run."""


@dataclass(frozen=True)
class TopologyStyle:
    """How one topology is drawn: colour (hex) and marker code."""

    colour: str
    marker: str


def topology_styles(topology_ids: Sequence[str]) -> dict[str, TopologyStyle]:
    """A style for each topology id, assigned in the given order (pass the registry's order,
    `tradeoff.topologies.registry.topology_ids()`, so a topology looks the same in every plot).

    Beyond eight topologies colours repeat with a shifted marker, so every pair stays distinct.
    """
    n, m = len(PALETTE), len(MARKERS)
    return {tid: TopologyStyle(PALETTE[i % n], MARKERS[(i + i // n) % m]) for i, tid in enumerate(topology_ids)}


def lightness(colour: str) -> float:
    """CIE 1976 L* of an sRGB hex colour '#rrggbb' (sRGB transfer of IEC 61966-2-1, D65 white)."""
    channels = [int(colour[i:i + 2], 16) / 255 for i in (1, 3, 5)]
    linear = [c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4 for c in channels]
    y = 0.2126 * linear[0] + 0.7152 * linear[1] + 0.0722 * linear[2]
    f = y ** (1 / 3) if y > 216 / 24389 else (24389 / 27 * y + 16) / 116
    return 116 * f - 16
