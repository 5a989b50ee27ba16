"""The window onto the cross-section: which millimetres each character cell shows.

A character cell is about twice as tall as it is wide, so each cell holds two square pixels
stacked (drawn with half blocks): one column and one half-row both span ``mm_per_col``.
No textual here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

#: Zoom factor of one zoom step.
ZOOM_STEP = math.sqrt(2.0)
#: Smallest and largest scale, mm per column.
MIN_SCALE, MAX_SCALE = 0.05, 50_000.0

Bounds = tuple[float, float, float, float]


@dataclass(frozen=True)
class Viewport:
    """Centre (mm), scale (mm per column = mm per half row) and size in cells."""

    cx_mm: float = 0.0
    cy_mm: float = 0.0
    mm_per_col: float = 20.0
    cols: int = 1
    rows: int = 1

    @property
    def px_rows(self) -> int:
        """Pixel rows: two per character row."""
        return 2 * self.rows

    @property
    def bounds_mm(self) -> Bounds:
        """(xmin, ymin, xmax, ymax) shown, mm."""
        hw = 0.5 * self.cols * self.mm_per_col
        hh = 0.5 * self.px_rows * self.mm_per_col
        return (self.cx_mm - hw, self.cy_mm - hh, self.cx_mm + hw, self.cy_mm + hh)

    def col_of(self, x_mm: float) -> int:
        return math.floor((x_mm - self.bounds_mm[0]) / self.mm_per_col)

    def px_row_of(self, y_mm: float) -> int:
        """Pixel row (0 at the top) holding height y."""
        return math.floor((self.bounds_mm[3] - y_mm) / self.mm_per_col)

    def row_of(self, y_mm: float) -> int:
        return self.px_row_of(y_mm) // 2

    def cell_of(self, x_mm: float, y_mm: float) -> tuple[int, int]:
        """(col, row) of a point; may lie outside the window."""
        return self.col_of(x_mm), self.row_of(y_mm)

    def shows(self, x_mm: float, y_mm: float) -> bool:
        c, r = self.cell_of(x_mm, y_mm)
        return 0 <= c < self.cols and 0 <= r < self.rows

    # -- changes (each returns a new Viewport) --------------------------------------------
    def resized(self, cols: int, rows: int) -> Viewport:
        return replace(self, cols=max(1, cols), rows=max(1, rows))

    def zoomed(self, steps: int) -> Viewport:
        """Zoom in (steps > 0) or out about the centre."""
        s = self.mm_per_col / ZOOM_STEP ** steps
        return replace(self, mm_per_col=min(max(s, MIN_SCALE), MAX_SCALE))

    def panned(self, dcols: float, drows: float) -> Viewport:
        """Move the window by cells (right and up positive)."""
        s = self.mm_per_col
        return replace(self, cx_mm=self.cx_mm + dcols * s, cy_mm=self.cy_mm + 2 * drows * s)

    def centred_on(self, x_mm: float, y_mm: float) -> Viewport:
        return replace(self, cx_mm=float(x_mm), cy_mm=float(y_mm))

    def fitted(self, bounds: Bounds, margin: float = 0.08) -> Viewport:
        """Centre on ``bounds`` and pick the scale that shows it whole, with a margin."""
        x0, y0, x1, y1 = bounds
        w = max(x1 - x0, 1e-6) * (1 + 2 * margin)
        h = max(y1 - y0, 1e-6) * (1 + 2 * margin)
        s = max(w / self.cols, h / self.px_rows, MIN_SCALE)
        return replace(self, cx_mm=0.5 * (x0 + x1), cy_mm=0.5 * (y0 + y1),
                       mm_per_col=min(s, MAX_SCALE))

    def following(self, x_mm: float, y_mm: float, pad_cols: int = 2) -> Viewport:
        """The same window panned just enough that (x, y) is inside, ``pad_cols`` from an
        edge where the window is big enough."""
        c, r = self.cell_of(x_mm, y_mm)
        pc = min(pad_cols, max(0, (self.cols - 1) // 2))
        pr = min(max(pad_cols // 2, 1), max(0, (self.rows - 1) // 2))
        dc = min(0, c - pc) + max(0, c - (self.cols - 1 - pc))
        dr = min(0, r - pr) + max(0, r - (self.rows - 1 - pr))
        if dc == 0 and dr == 0:
            return self
        return self.panned(dc, -dr)
