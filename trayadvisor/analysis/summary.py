"""The figures a user sees for one layout, in one call shared by the CLI, the TUI and reports.

Millimetres and µT at this boundary; the engines below work in metres and tesla.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.contour import clearance, stray_field
from trayadvisor.engine.field import ellipse_major_rms, far_field, phasor_field, resultant_rms
from trayadvisor.model import Layout, ObservationLine
from trayadvisor.engine.currents import MM, Sources, sources

UT = 1e6  #: µT per tesla
DEFAULT_DISTANCE_MM = 500.0


@dataclass(frozen=True)
class PointFigure:
    name: str
    x_mm: float
    y_mm: float
    resultant_uT: float
    max_uT: float


@dataclass(frozen=True)
class LimitFigure:
    name: str
    ut: float
    source: str
    clearance_mm: float  # inf when still above the limit at 100 m
    passes: bool  # stray field at the chosen distance is at or below the limit


@dataclass(frozen=True)
class LineFigure:
    """Largest resultant field along a named observation line (sampled)."""

    name: str
    max_resultant_uT: float
    max_at_mm: tuple[float, float]
    max_uT: float  # largest ellipse-maximum along the line


@dataclass(frozen=True)
class FieldSummary:
    """Stray field at a distance, where it peaks, far-field decay, points and limits."""

    distance_mm: float
    max_resultant_uT: float
    max_at_mm: tuple[float, float]
    far_field_order: int | None
    far_field_uT_at_1m: float
    points: tuple[PointFigure, ...]  # one per requested point (``--at``), in order
    named_points: tuple[PointFigure, ...]  # the layout's [[point]] entries
    lines: tuple[LineFigure, ...]  # the layout's [[line]] entries
    limits: tuple[LimitFigure, ...]
    profile_s_mm: np.ndarray
    profile_uT: np.ndarray
    profile_xy_mm: np.ndarray

    def to_json(self) -> dict:
        """The SPEC's ``field --json`` object (keys may be added, never renamed)."""
        return {
            "distance_mm": self.distance_mm,
            "max_resultant_uT": self.max_resultant_uT,
            "max_at_mm": [self.max_at_mm[0], self.max_at_mm[1]],
            "far_field_order": self.far_field_order,
            "far_field_uT_at_1m": self.far_field_uT_at_1m,
            "points": [
                {"name": p.name, "x_mm": p.x_mm, "y_mm": p.y_mm,
                 "resultant_uT": p.resultant_uT, "max_uT": p.max_uT}
                for p in self.points
            ],
            "named_points": [
                {"name": p.name, "x_mm": p.x_mm, "y_mm": p.y_mm,
                 "resultant_uT": p.resultant_uT, "max_uT": p.max_uT}
                for p in self.named_points
            ],
            "lines": [
                {"name": ln.name, "max_resultant_uT": ln.max_resultant_uT,
                 "max_at_mm": list(ln.max_at_mm), "max_uT": ln.max_uT}
                for ln in self.lines
            ],
            "limits": [
                {"name": lim.name, "limit_uT": lim.ut, "source": lim.source,
                 "clearance_mm": None if math.isinf(lim.clearance_mm) else lim.clearance_mm,
                 "pass": lim.passes}
                for lim in self.limits
            ],
        }


def envelope_m(layout: Layout) -> tuple[float, float, float, float]:
    x0, y0, x1, y1 = layout.envelope_mm()
    return (x0 * MM, y0 * MM, x1 * MM, y1 * MM)


def field_at_points_uT(src: Sources, xy_mm: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(resultant, ellipse maximum) in µT at points given in mm, shape (k, 2)."""
    b = phasor_field(src.xy_m, src.radius_m, src.currents, np.asarray(xy_mm, float) * MM)
    return resultant_rms(b) * UT, ellipse_major_rms(b) * UT


def field_grid_uT(layout: Layout, bounds_mm: tuple[float, float, float, float], nx: int,
                  ny: int, src: Sources | None = None) -> np.ndarray:
    """Resultant RMS field (µT) on an ny × nx grid of cell centres covering ``bounds_mm``."""
    src = src or sources(layout)
    x0, y0, x1, y1 = bounds_mm
    xs = x0 + (np.arange(nx) + 0.5) * (x1 - x0) / nx
    ys = y0 + (np.arange(ny) + 0.5) * (y1 - y0) / ny
    gx, gy = np.meshgrid(xs, ys)
    pts = np.column_stack([gx.ravel(), gy.ravel()])
    res, _ = field_at_points_uT(src, pts)
    return res.reshape(ny, nx)


def _point_figures(src: Sources, place: list[tuple[str, float, float]]
                   ) -> tuple[PointFigure, ...]:
    if not place:
        return ()
    xy = np.array([[x, y] for _, x, y in place], dtype=float)
    res, mx = field_at_points_uT(src, xy)
    return tuple(PointFigure(nm, x, y, float(r), float(m))
                 for (nm, x, y), r, m in zip(place, res, mx, strict=True))


def line_points_mm(line: ObservationLine) -> np.ndarray:
    """The sample points of an observation line, (samples, 2) in mm."""
    t = np.linspace(0.0, 1.0, max(2, int(line.samples)))
    return np.column_stack([line.x0_mm + t * (line.x1_mm - line.x0_mm),
                            line.y0_mm + t * (line.y1_mm - line.y0_mm)])


def line_figure(src: Sources, line: ObservationLine) -> LineFigure:
    """Largest resultant and ellipse-maximum field over a line's sample points."""
    xy = line_points_mm(line)
    res, mx = field_at_points_uT(src, xy)
    i = int(np.argmax(res))
    return LineFigure(line.name, float(res[i]), (float(xy[i, 0]), float(xy[i, 1])),
                      float(mx.max()))


def stray_uT(layout: Layout, distance_mm: float, src: Sources | None = None) -> float:
    """The stray field at distance d (µT): maximum resultant on the curve around the envelope."""
    src = src or sources(layout)
    sf = stray_field(src.xy_m, src.radius_m, src.currents, envelope_m(layout), distance_mm * MM)
    return sf.max_T * UT


def field_summary(
    layout: Layout,
    distance_mm: float = DEFAULT_DISTANCE_MM,
    at: Sequence[tuple[float, float]] = (),
    limits: Iterable[tuple[str, float, str]] = (),
    overrides: Mapping[int, Mapping[str, complex]] | None = None,
) -> FieldSummary:
    """Every field figure of one layout.

    Parameters
    ----------
    layout : Layout
    distance_mm : float
        Distance outside the tray envelope for the stray field.
    at : sequence of (x_mm, y_mm)
        Extra points to report (``--at``); the layout's named points are always reported.
    limits : iterable of (name, µT, source)
        Limits to test, in addition to the layout's own ``[[limit]]`` entries.
    overrides : optional solved currents (see :func:`trayadvisor.engine.currents.sources`).
    """
    src = sources(layout, overrides)
    env = envelope_m(layout)
    d = distance_mm * MM
    sf = stray_field(src.xy_m, src.radius_m, src.currents, env, d)
    ff = far_field(src.xy_m, src.currents)
    points = _point_figures(src, [(f"at{i + 1}", float(x), float(y))
                                  for i, (x, y) in enumerate(at)])
    named = _point_figures(src, [(p.name, p.x_mm, p.y_mm) for p in layout.points])
    lines = tuple(line_figure(src, ln) for ln in layout.lines)
    stray = sf.max_T * UT
    lims = [(lim.name, lim.ut, lim.source) for lim in layout.limits] + list(limits)
    figures = []
    for name, ut, source in lims:
        clr = clearance(src.xy_m, src.radius_m, src.currents, env, ut / UT) / MM
        figures.append(LimitFigure(name, float(ut), source, float(clr), stray <= ut))
    return FieldSummary(
        distance_mm=float(distance_mm),
        max_resultant_uT=float(stray),
        max_at_mm=(float(sf.max_xy_m[0] / MM), float(sf.max_xy_m[1] / MM)),
        far_field_order=ff.order,
        far_field_uT_at_1m=float(ff.coefficient_T_m * UT),
        points=points,
        named_points=named,
        lines=lines,
        limits=tuple(figures),
        profile_s_mm=sf.s_m / MM,
        profile_uT=sf.resultant_T * UT,
        profile_xy_mm=sf.xy_m / MM,
    )
