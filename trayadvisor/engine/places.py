"""The field of one layout at the places a user names: points, lines, grids, the curve at d.

Millimetres and µT at this boundary; the kernels below work in metres and tesla. Every
function takes the currents as :class:`~trayadvisor.engine.currents.SourceArrays`, so the
caller decides which currents flow (equal shares, or solved ones).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.contour import stray_field
from trayadvisor.engine.currents import SourceArrays, layout_sources
from trayadvisor.engine.field import ellipse_major_rms, phasor_field, resultant_rms
from trayadvisor.engine.units import MM, UT
from trayadvisor.model import Layout, ObservationLine


@dataclass(frozen=True)
class PointFigure:
    """Resultant and ellipse-maximum RMS field at one point (µT)."""

    name: str
    x_mm: float
    y_mm: float
    resultant_uT: float
    max_uT: float


@dataclass(frozen=True)
class LineFigure:
    """Largest resultant field along a named observation line (sampled)."""

    name: str
    max_resultant_uT: float
    max_at_mm: tuple[float, float]
    max_uT: float  # largest ellipse-maximum along the line


def envelope_m(layout: Layout) -> tuple[float, float, float, float]:
    """The tray envelope (xmin, ymin, xmax, ymax) in metres (see ``Layout.envelope_mm``)."""
    x0, y0, x1, y1 = layout.envelope_mm()
    return (x0 * MM, y0 * MM, x1 * MM, y1 * MM)


def field_at_points_uT(src: SourceArrays, xy_mm: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(resultant, ellipse maximum) in µT at points given in mm, shape (k, 2)."""
    b = phasor_field(src.xy_m, src.radius_m, src.currents, np.asarray(xy_mm, float) * MM)
    return resultant_rms(b) * UT, ellipse_major_rms(b) * UT


def field_grid_uT(layout: Layout, bounds_mm: tuple[float, float, float, float], nx: int,
                  ny: int, src: SourceArrays | None = None) -> np.ndarray:
    """Resultant RMS field (µT) on an ny × nx grid of cell centres covering ``bounds_mm``."""
    src = src or layout_sources(layout)
    x0, y0, x1, y1 = bounds_mm
    xs = x0 + (np.arange(nx) + 0.5) * (x1 - x0) / nx
    ys = y0 + (np.arange(ny) + 0.5) * (y1 - y0) / ny
    gx, gy = np.meshgrid(xs, ys)
    pts = np.column_stack([gx.ravel(), gy.ravel()])
    res, _ = field_at_points_uT(src, pts)
    return res.reshape(ny, nx)


def point_figures(src: SourceArrays, places: list[tuple[str, float, float]]
                  ) -> tuple[PointFigure, ...]:
    """The field at named points ``(name, x_mm, y_mm)``, in order."""
    if not places:
        return ()
    xy = np.array([[x, y] for _, x, y in places], dtype=float)
    res, mx = field_at_points_uT(src, xy)
    return tuple(PointFigure(nm, x, y, float(r), float(m))
                 for (nm, x, y), r, m in zip(places, res, mx, strict=True))


def line_points_mm(line: ObservationLine) -> np.ndarray:
    """The sample points of an observation line, (samples, 2) in mm."""
    t = np.linspace(0.0, 1.0, max(2, int(line.samples)))
    return np.column_stack([line.x0_mm + t * (line.x1_mm - line.x0_mm),
                            line.y0_mm + t * (line.y1_mm - line.y0_mm)])


def line_figure(src: SourceArrays, line: ObservationLine) -> LineFigure:
    """Largest resultant and ellipse-maximum field over a line's sample points."""
    xy = line_points_mm(line)
    res, mx = field_at_points_uT(src, xy)
    i = int(np.argmax(res))
    return LineFigure(line.name, float(res[i]), (float(xy[i, 0]), float(xy[i, 1])),
                      float(mx.max()))


def stray_uT(layout: Layout, distance_mm: float, src: SourceArrays | None = None) -> float:
    """The stray field at distance d (µT): maximum resultant on the curve around the envelope."""
    src = src or layout_sources(layout)
    sf = stray_field(src.xy_m, src.radius_m, src.currents, envelope_m(layout), distance_mm * MM)
    return sf.max_T * UT
