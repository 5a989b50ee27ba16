"""What the ranking minimises: the worst limit index at the places limits are bound to, or the
AC stray field on the contour, or on a named line or point.

Each objective has a fixed set of *search points* (metres) on which arrangements are scored
during the search, a weight per search point and frequency component (the tables scale each
component's field by it, :class:`trayadvisor.ranking.tables.Tables`), and an exact score
computed by the same functions ``field`` uses:

- ``limits`` (the default when the layout binds limits to places): the largest index of any
  such limit over its places (:mod:`trayadvisor.analysis.judging`). The search scores the
  root-sum-square of B_h / level_h, which equals the index for targets, immunity and DC
  limits and is at most the multi-frequency index of exposure levels (Σ_h B_h / RL(f_h)),
  so a sampled score never exceeds the exact one;
- ``contour``: the AC stray field, :func:`trayadvisor.engine.stray_field` (samples plus
  refinement); the search points are every m-th of its samples;
- ``line:NAME``: the largest AC resultant along the line, refined between its samples;
- ``point:NAME``: the AC resultant at the named point.

AC means the fundamental and its harmonics; a layout that carries no AC current is ranked
on its static (DC) field instead, and says so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from trayadvisor.analysis import rule_measure
from trayadvisor.engine import (
    Measure,
    Place,
    SourceArrays,
    contour_length,
    default_samples,
    envelope_m,
    line_points_mm,
    offset_points,
    path_points_mm,
    place_maxima,
    source_stray_field,
)
from trayadvisor.engine.units import MM, UT
from trayadvisor.limits import Rule, resolve_limit
from trayadvisor.model import Layout, ObservationArea
from trayadvisor.ranking.errors import RankError

MAX_SEARCH_POINTS = 512  #: the contour's samples are thinned to at most this many
MAX_LINE_POINTS = 2048  #: a line's samples are thinned to at most this many
AREA_SEARCH_POINTS = 256  #: search points on an area's boundary
_OBJECTIVE_WORDS = "line:NAME, point:NAME, contour or limits"


@dataclass(frozen=True)
class Objective:
    """One objective: its label, search points, their weights and the exact score."""

    kind: str  # "limits" | "contour" | "line" | "point"
    name: str | None
    label: str
    search_m: np.ndarray  # (P, 2) search points, m
    all_m: np.ndarray  # (Q, 2) every point of the exact objective's sample set, m
    distance_m: float
    search_w: np.ndarray = field(default_factory=lambda: np.ones((0, 1)))  # (P, H)
    all_w: np.ndarray = field(default_factory=lambda: np.ones((0, 1)))  # (Q, H)
    unit: str = "µT"  # "µT", or "index" for the limits objective
    measure: Measure | None = None  # contour, line, point: the band's resultant, T
    judged: tuple[tuple[Rule, Place], ...] = ()  # limits: every (rule, place) pair
    note: str = ""

    def score_uT(self, src: SourceArrays, layout: Layout,
                 positions: dict[str, tuple[float, float]]) -> float:
        """Exact objective (µT, or the index) with the conductors at ``positions`` (mm)."""
        xy = np.array([positions[c.name] for c in layout.conductors],
                      dtype=float).reshape(-1, 2) * MM
        s = replace(src, xy_m=xy)
        if self.kind == "limits":
            f = float(layout.frequency_hz)
            worst = 0.0
            for rule, place in self.judged:
                measure, _ = rule_measure(rule, s, f)
                (value, _), = place_maxima(s, place, [measure])
                worst = max(worst, value)
            return float(worst)
        if self.kind == "contour":
            sf = source_stray_field(s, envelope_m(layout), self.distance_m,
                                    measure=self.measure)
            return float(sf.max_T * UT)
        place = (layout.line(str(self.name)) if self.kind == "line"
                 else layout.point(str(self.name)))
        (value, _), = place_maxima(s, place, [self.measure])
        return float(value * UT)

    def mirror_axis_mm(self, layout: Layout) -> float | None:
        """The vertical axis (x, mm) the objective is symmetric about, if any.

        The only candidate is the envelope's centre line: the contour is always symmetric
        about it; the points of a line, a point or the limits' places must map onto
        themselves with the same weights.
        """
        x0, _, x1, _ = layout.envelope_mm()
        axis = 0.5 * (x0 + x1)
        if not _plates_mirror(layout, axis):
            return None
        if self.kind == "contour":
            return axis
        pts = self.all_m / MM
        w = self.all_w if self.all_w.shape[0] == pts.shape[0] else np.ones((pts.shape[0], 1))
        key = {(round(x, 5), round(y, 5), *np.round(wr, 12)) for (x, y), wr in zip(pts, w,
                                                                                   strict=True)}
        mirrored = {(round(2 * axis - x, 5), round(y, 5), *np.round(wr, 12))
                    for (x, y), wr in zip(pts, w, strict=True)}
        if self.kind == "limits":  # the exact score also refines along each place
            places = [p for _, p in self.judged]
            for p in places:
                image = _mirror_place(p, axis)
                if not any(_same_place(image, q) for q in places):
                    return None
        return axis if key == mirrored else None


def _mirror_place(p: Place, axis: float) -> tuple[float, ...]:
    if isinstance(p, ObservationArea):
        return (2 * axis - p.x1_mm, p.y0_mm, 2 * axis - p.x0_mm, p.y1_mm)
    corners = path_points_mm(p, np.array([0.0]))
    return (2 * axis - float(corners[0, 0]), float(corners[0, 1]))


def _same_place(image: tuple[float, ...], q: Place) -> bool:
    if isinstance(q, ObservationArea):
        own: tuple[float, ...] = (q.x0_mm, q.y0_mm, q.x1_mm, q.y1_mm)
    else:
        c = path_points_mm(q, np.array([0.0]))
        own = (float(c[0, 0]), float(c[0, 1]))
    return len(own) == len(image) and all(abs(a - b) <= 1e-6 for a, b in zip(own, image,
                                                                             strict=True))


def _thin(n: int, cap: int) -> np.ndarray:
    return np.arange(0, n, max(1, math.ceil(n / cap)))


def _band(src: SourceArrays) -> tuple[np.ndarray, str, str]:
    """Weights (H,) of the band ranked (AC, or DC when no AC flows), a label suffix, a note."""
    orders = np.asarray(src.orders).reshape(-1)
    ac = orders > 0
    if np.any(np.abs(src.currents[ac]) > 0) or not np.any(orders == 0):
        return ac.astype(float), "", ""
    return (orders == 0).astype(float), " (static field)", \
        "no AC current flows: ranked on the static (DC) field"


def place_bound(layout: Layout) -> list[tuple[Rule, Place]]:
    """Every (rule, place) pair of the layout's place-bound limits, in file order."""
    f = float(layout.frequency_hz)
    out = []
    for lim in layout.limits:
        if lim.places:
            rule = resolve_limit(lim, f)
            out += [(rule, layout.place(name)) for name in lim.places]
    return out


def _place_points(place: Place) -> np.ndarray:
    """Search points (mm) of one place: the point, a line's samples (thinned), or points
    spread evenly along an area's boundary."""
    if isinstance(place, ObservationArea):
        total = 2.0 * ((place.x1_mm - place.x0_mm) + (place.y1_mm - place.y0_mm))
        return path_points_mm(place, np.arange(AREA_SEARCH_POINTS)
                              * (total / AREA_SEARCH_POINTS))
    if hasattr(place, "samples"):
        pts = line_points_mm(place)
        return pts[_thin(len(pts), MAX_LINE_POINTS // 4)]
    return np.array([[place.x_mm, place.y_mm]], dtype=float)


def _limits_objective(layout: Layout, src: SourceArrays, d: float) -> Objective:
    judged = place_bound(layout)
    f = float(layout.frequency_hz)
    pts, ws = [], []
    for rule, place in judged:
        w, _, _ = rule.weights(src.orders, f)  # per µT: sqrt(Σ (w B_T)²)·UT = index
        p = _place_points(place)
        pts.append(p)
        ws.append(np.repeat(np.asarray(w, dtype=float)[None, :], p.shape[0], axis=0))
    all_m = np.concatenate(pts) * MM
    all_w = np.concatenate(ws)
    names = sorted({r.name for r, _ in judged})
    label = ("worst index of " + ", ".join(names[:3]) + (", ..." if len(names) > 3 else "")
             + " at their places")
    return Objective("limits", None, label, all_m, all_m, d, all_w, all_w, "index",
                     None, tuple(judged))


def without_points(obj: Objective, mask: np.ndarray) -> Objective:
    """The objective with the search points under ``mask`` weighted 0 (e.g. points of the
    curve inside a plate, where no figure is computed; the exact score skips them too)."""
    mask = np.asarray(mask, dtype=bool).reshape(-1)
    if not mask.any():
        return obj
    w = np.array(obj.search_w, dtype=float)  # (P, H): every objective sets it
    w[mask] = 0.0
    return replace(obj, search_w=w)


def _plates_mirror(layout: Layout, axis: float) -> bool:
    """Whether the plates map onto plates of the same data in the mirror about x = axis."""
    def key(p, mirror: bool) -> tuple:  # noqa: ANN001
        x0, y0, x1, y1 = p.bounds
        if mirror:
            x0, x1 = 2 * axis - x1, 2 * axis - x0
        return (round(x0, 6), round(y0, 6), round(x1, 6), round(y1, 6), p.material,
                p.mu_r, p.sigma_s_per_m)
    plates = layout.all_plates()
    return sorted(key(p, False) for p in plates) == sorted(key(p, True) for p in plates)


def make_objective(layout: Layout, distance_mm: float, objective: str | None,
                   src: SourceArrays) -> Objective:
    """Parse ``objective`` for ``layout``: None (the limits' places when the layout binds
    limits to places, else the contour), "limits", "contour", "line:NAME", "point:NAME"."""
    if objective is None:
        text = "limits" if any(lim.places for lim in layout.limits) else "contour"
    else:
        text = str(objective)
    kind, _, name = text.partition(":")
    d = distance_mm * MM
    weights, band, note = _band(src)
    measure = Measure(weights, "rss")

    def weighted(obj: Objective) -> Objective:
        return replace(obj, search_w=np.repeat(weights[None], obj.search_m.shape[0], axis=0),
                       all_w=np.repeat(weights[None], obj.all_m.shape[0], axis=0),
                       measure=measure, note=note)

    if kind == "limits" and not name:
        if not any(lim.places for lim in layout.limits):
            raise RankError("the layout binds no limit to a place; add places = [...] to a "
                            "[[limit]] or rank on the contour", "objective", text)
        return _limits_objective(layout, src, d)
    if kind == "contour" and not name:
        env = envelope_m(layout)
        radius = src.radius_m
        k = default_samples(env, d, float(np.min(2 * radius)) if np.size(radius) else 1e-3)
        s = np.arange(k) * (contour_length(env, d) / k)
        xy = offset_points(env, d, s)
        return weighted(Objective("contour", None, f"contour at {distance_mm:g} mm{band}",
                                  xy[_thin(k, MAX_SEARCH_POINTS)], xy, d))
    if kind == "line" and name:
        names = [ln.name for ln in layout.lines]
        if name not in names:
            raise RankError(f"the layout has no observation line '{name}'; "
                            + (f"its lines are {', '.join(names)}" if names
                               else "add a [[line]] or use the contour"), "objective", text)
        pts = line_points_mm(layout.line(name)) * MM
        return weighted(Objective("line", name, f"line {name}{band}",
                                  pts[_thin(len(pts), MAX_LINE_POINTS)], pts, d))
    if kind == "point" and name:
        names = [p.name for p in layout.points]
        if name not in names:
            raise RankError(f"the layout has no observation point '{name}'; "
                            + (f"its points are {', '.join(names)}" if names
                               else "add a [[point]] or use the contour"), "objective", text)
        p = layout.point(name)
        pts = np.array([[p.x_mm, p.y_mm]]) * MM
        return weighted(Objective("point", name, f"point {name}{band}", pts, pts, d))
    raise RankError(f"use {_OBJECTIVE_WORDS}, or none (the limits' places when limits are "
                    "bound to places, else the curve at distance d)", "objective", text)
