"""Plot colours for up to eight designs: eight distinct colours and markers, hues spread (not
mostly blues), lightness steps as the palette promises (CIE 1976 L*, sRGB of IEC 61966-2-1)."""
from __future__ import annotations

import colorsys
import itertools

from tradeoff.report import style


def test_eight_designs_get_eight_colours_and_markers():
    styles = style.topology_styles([f"t{i}" for i in range(8)])
    assert len({s.colour for s in styles.values()}) == 8 and len({s.marker for s in styles.values()}) == 8


def test_hues_spread_over_the_first_five():
    def hue(colour: str) -> float:
        r, g, b = (int(colour[i:i + 2], 16) / 255 for i in (1, 3, 5))
        return 360 * colorsys.rgb_to_hsv(r, g, b)[0]

    blues = [c for c in style.PALETTE[:5] if 180 <= hue(c) <= 260]
    assert len(blues) <= 2, blues
    gaps = [abs(style.lightness(a) - style.lightness(b)) for a, b in itertools.combinations(style.PALETTE, 2)]
    assert len(style.PALETTE) >= 8 and min(gaps) >= style.MIN_LIGHTNESS_STEP
