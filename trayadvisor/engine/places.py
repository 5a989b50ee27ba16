"""The field of one layout at the places a user names: points, lines, areas, grids, the curve.

Millimetres and µT at this boundary; the kernels below work in metres and tesla. Every
function takes the currents as :class:`~trayadvisor.engine.currents.SourceArrays`, so the
caller decides which currents flow (equal shares, or solved ones, AC or DC rows).

The maximum of a measure over a line or an area (:func:`place_maxima`) is found like the
stray field on the curve at d: uniform samples, then :func:`~trayadvisor.engine.contour.
refine_maximum` between them. An area holds no conductor, so every measure's maximum over it
lies on its boundary (:mod:`trayadvisor.engine.measures`): the boundary is the closed path
searched. A line is searched as the closed path that runs along it and back.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.contour import StrayField, clearance, refine_maximum, stray_field
from trayadvisor.engine.currents import SourceArrays, layout_sources
from trayadvisor.engine.field import ellipse_major_rms, resultant_rms
from trayadvisor.engine.measures import Measure, split_bands
from trayadvisor.engine.units import MM, UT
from trayadvisor.model import Layout, ObservationArea, ObservationLine, ObservationPoint

Place = ObservationPoint | ObservationLine | ObservationArea
#: Bounds of the uniform samples on a line or an area's boundary before refinement.
_MIN_SAMPLES, _MAX_SAMPLES = 256, 8192


@dataclass(frozen=True)
class PointFigure:
    """Resultant and ellipse-maximum RMS field at one point (µT)."""

    name: str
    x_mm: float
    y_mm: float
    resultant_uT: float
    max_uT: float
    dc_uT: float = 0.0  # the static field there, when the caller gives it


@dataclass(frozen=True)
class LineFigure:
    """Largest resultant field along a named observation line (refined between samples)."""

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
    b = src.field_at(np.asarray(xy_mm, float) * MM)
    return resultant_rms(b) * UT, ellipse_major_rms(b) * UT


def field_grid_uT(layout: Layout, bounds_mm: tuple[float, float, float, float], nx: int,
                  ny: int, src: SourceArrays | None = None) -> np.ndarray:
    """AC resultant RMS field (µT; fundamental and harmonics, no DC) on an ny × nx grid of
    cell centres covering ``bounds_mm``: the field maps of the report and the UI."""
    src, _ = split_bands(src or layout_sources(layout))
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
    """Largest resultant field along a line (refined between samples, :func:`place_maxima`)
    and the largest ellipse-maximum over its sample points."""
    xy = line_points_mm(line)
    _, mx = field_at_points_uT(src, xy)
    (value_T, at_mm), = place_maxima(src, line, [None])
    return LineFigure(line.name, float(value_T * UT), at_mm, float(mx.max()))


def _path(place: Place) -> tuple[np.ndarray, float]:
    """Corners of the closed path searched for a place's maximum (mm) and its length (mm)."""
    if isinstance(place, ObservationArea):
        c = np.array([[place.x0_mm, place.y0_mm], [place.x1_mm, place.y0_mm],
                      [place.x1_mm, place.y1_mm], [place.x0_mm, place.y1_mm]], dtype=float)
    elif isinstance(place, ObservationLine):
        c = np.array([[place.x0_mm, place.y0_mm], [place.x1_mm, place.y1_mm]], dtype=float)
    else:
        c = np.array([[place.x_mm, place.y_mm]], dtype=float)
    closed = np.vstack([c, c[:1]])
    return c, float(np.hypot(*np.diff(closed, axis=0).T).sum())


def path_points_mm(place: Place, s_mm: np.ndarray) -> np.ndarray:
    """Points (k, 2) in mm at arc lengths ``s_mm`` along a place's closed path (module notes);
    any real ``s`` is taken modulo the path's length."""
    corners, total = _path(place)
    s = np.asarray(s_mm, dtype=float).reshape(-1)
    if total <= 0.0:
        return np.repeat(corners[:1], s.size, axis=0)
    closed = np.vstack([corners, corners[:1]])
    seg = np.hypot(*np.diff(closed, axis=0).T)
    bounds = np.concatenate([[0.0], np.cumsum(seg)])
    s = np.mod(s, total)
    i = np.clip(np.searchsorted(bounds, s, side="right") - 1, 0, seg.size - 1)
    t = (s - bounds[i]) / np.where(seg[i] > 0, seg[i], 1.0)
    return closed[i] + t[:, None] * (closed[i + 1] - closed[i])


def _samples(src: SourceArrays, place: Place, total_mm: float) -> int:
    """Samples spaced a quarter of the nearest conductor's distance from the path (as on the
    curve at d: every peak then carries about a dozen samples), 256 to 8192."""
    corners, _ = _path(place)
    if src.n == 0:
        return _MIN_SAMPLES
    pts = path_points_mm(place, np.linspace(0.0, total_mm, 512, endpoint=False))
    xy = src.xy_m / MM
    d2 = ((pts[:, None, :] - xy[None, :, :]) ** 2).sum(axis=2)
    rho = max(float(np.sqrt(d2.min())), 1.0)
    return int(np.clip(np.ceil(4.0 * total_mm / rho), _MIN_SAMPLES, _MAX_SAMPLES))


def place_maxima(src: SourceArrays, place: Place, measures: list[Measure | None]
                 ) -> list[tuple[float, tuple[float, float]]]:
    """The maximum of each measure over a point, a line or an area, and where it is.

    Parameters
    ----------
    src : SourceArrays
    place : ObservationPoint, ObservationLine or ObservationArea
    measures : list of Measure or None
        None is the resultant of every row of ``src`` (T).

    Returns
    -------
    list of (value, (x_mm, y_mm))
        One per measure, in its unit; a line's or area's maximum is refined between the
        samples to the nanometre (:func:`~trayadvisor.engine.contour.refine_maximum`).
    """
    folds = [resultant_rms if m is None else m for m in measures]
    corners, total = _path(place)
    if isinstance(place, ObservationPoint) or total <= 0.0:
        b = src.field_at(corners[:1] * MM)
        at = (float(corners[0, 0]), float(corners[0, 1]))
        return [(float(f(b)[0]), at) for f in folds]
    k = _samples(src, place, total)
    s = np.arange(k) * (total / k)
    b = src.field_at(path_points_mm(place, s) * MM)
    out = []
    for fold in folds:
        def f(u: np.ndarray, fold=fold) -> np.ndarray:
            pts = path_points_mm(place, u) * MM
            return fold(src.field_at(pts))

        s_max, v_max = refine_maximum(f, s, fold(b), total, candidates=8, xtol=1e-6)
        p = path_points_mm(place, np.array([s_max]))[0]
        out.append((float(v_max), (float(p[0]), float(p[1]))))
    return out


def stray_uT(layout: Layout, distance_mm: float, src: SourceArrays | None = None) -> float:
    """The stray field at distance d (µT): maximum AC resultant (fundamental and harmonics, no
    DC) on the curve around the envelope."""
    src, _ = split_bands(src or layout_sources(layout))
    return source_stray_field(src, envelope_m(layout), distance_mm * MM).max_T * UT


def source_stray_field(src: SourceArrays, env: tuple[float, float, float, float], d_m: float,
                       **options) -> StrayField:  # noqa: ANN003
    """:func:`~trayadvisor.engine.stray_field` of these sources, plates included."""
    return stray_field(src.xy_m, src.radius_m, src.currents, env, d_m,
                       reaction=src.reaction, frequency_hz=src.frequency_hz, **options)


def source_clearance(src: SourceArrays, env: tuple[float, float, float, float],
                     limit_T: float, **options) -> float:  # noqa: ANN003
    """:func:`~trayadvisor.engine.clearance` of these sources, plates included."""
    return clearance(src.xy_m, src.radius_m, src.currents, env, limit_T,
                     reaction=src.reaction, frequency_hz=src.frequency_hz, **options)
