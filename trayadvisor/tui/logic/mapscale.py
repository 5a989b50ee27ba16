"""How field values (µT) become colours, shading glyphs and iso-level digits on the map.

A log scale of four decades. Its top is set from the stray field at distance d so that the
contour at d falls in the middle band and the bands near the tray stay readable. Colour mode
uses a 64-step palette; shade mode (and NO_COLOR) uses five glyphs of growing density with
iso-level digits where a band edge is crossed, so the map reads without colour.
No textual here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: Shading glyphs from the lowest band to the highest.
SHADES = " ░▒▓█"
#: Colours in the palette.
STEPS = 64
#: Decades the scale spans.
DECADES = 4

# Anchor colours of the palette, low to high (a dark-blue to yellow ramp of our own choice).
_ANCHORS = np.array([
    (16, 16, 48), (40, 40, 120), (30, 100, 150), (30, 150, 130),
    (110, 190, 80), (220, 210, 60), (250, 140, 40), (240, 60, 50),
], dtype=float)


def palette() -> list[tuple[int, int, int]]:
    """``STEPS`` RGB colours interpolated between the anchors."""
    t = np.linspace(0.0, len(_ANCHORS) - 1, STEPS)
    i = np.minimum(t.astype(int), len(_ANCHORS) - 2)
    f = (t - i)[:, None]
    rgb = _ANCHORS[i] * (1 - f) + _ANCHORS[i + 1] * f
    return [tuple(int(round(v)) for v in row) for row in rgb]


def fmt_level(ut: float) -> str:
    """A band edge in µT, short: 0.01, 0.1, 1, 10, 100, 1k, 10k."""
    if ut >= 1000:
        return f"{ut / 1000:g}k"
    return f"{ut:g}"


@dataclass(frozen=True)
class MapScale:
    """Log scale from 10**(top_exp - DECADES) to 10**top_exp µT."""

    top_exp: int

    @classmethod
    def around(cls, stray_uT: float) -> MapScale:
        """A scale with the value ``stray_uT`` in the middle band (band 2 of 0..4)."""
        if not (math.isfinite(stray_uT) and stray_uT > 0):
            return cls(2)
        return cls(math.floor(math.log10(stray_uT)) + 2)

    @property
    def low_uT(self) -> float:
        return 10.0 ** (self.top_exp - DECADES)

    @property
    def high_uT(self) -> float:
        return 10.0 ** self.top_exp

    @property
    def edges_uT(self) -> tuple[float, ...]:
        """Band edges e1 < e2 < e3 < e4 (µT): band k holds values in [e_k, e_k+1)."""
        return tuple(10.0 ** (self.top_exp - DECADES + k) for k in range(1, DECADES + 1))

    def colour_index(self, values_uT: np.ndarray) -> np.ndarray:
        """Palette index 0..STEPS-1 of each value (log scale, clipped at both ends)."""
        v = np.maximum(np.asarray(values_uT, dtype=float), 1e-30)
        t = (np.log10(v) - (self.top_exp - DECADES)) / DECADES
        return np.clip((t * STEPS).astype(int), 0, STEPS - 1)

    def band(self, values_uT: np.ndarray) -> np.ndarray:
        """Band 0..4 of each value: 0 below e1, 4 at or above e4."""
        return np.searchsorted(np.array(self.edges_uT), np.asarray(values_uT, float),
                               side="right")

    def legend(self) -> list[tuple[str, str]]:
        """(glyph, range text) from the highest band down, for shade mode and the key."""
        e = [fmt_level(v) for v in self.edges_uT]
        rows = [(SHADES[4], f"≥ {e[3]}")]
        for k in (3, 2, 1):
            rows.append((SHADES[k], f"{e[k - 1]}–{e[k]}"))
        rows.append((SHADES[0], f"< {e[0]} (blank)"))
        return rows


def iso_digits(bands: np.ndarray) -> np.ndarray:
    """Iso-level digit per cell: k where the cell lies just below band edge k (a neighbour
    left, right, above or below is in a higher band), else 0.

    ``bands`` is (rows, cols) of band numbers; the digit names the edge ``edges_uT[k-1]``.
    """
    b = np.asarray(bands)
    higher = np.zeros(b.shape, dtype=bool)
    higher[:, :-1] |= b[:, 1:] > b[:, :-1]
    higher[:, 1:] |= b[:, :-1] > b[:, 1:]
    higher[:-1, :] |= b[1:, :] > b[:-1, :]
    higher[1:, :] |= b[:-1, :] > b[1:, :]
    return np.where(higher, b + 1, 0)
