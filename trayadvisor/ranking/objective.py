"""What the ranking minimises: the stray field on the contour, or on a named line or point.

Each objective has a fixed set of *search points* (metres) on which arrangements are scored
during the search, and an exact score (µT) computed by the same functions ``field`` uses:

- contour: :func:`trayadvisor.engine.stray_field` (samples plus refinement); the search
  points are every m-th of its samples, so a sampled score never exceeds the exact one;
- ``line:NAME``: :func:`trayadvisor.engine.line_figure`, the maximum over the line's samples
  (search points: all samples, or every m-th of very long lines);
- ``point:NAME``: the resultant at the named point.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from trayadvisor.engine import (
    SourceArrays,
    contour_length,
    default_samples,
    envelope_m,
    field_at_points_uT,
    line_figure,
    line_points_mm,
    offset_points,
    stray_field,
)
from trayadvisor.engine.units import MM, UT
from trayadvisor.model import Layout
from trayadvisor.ranking.errors import RankError

MAX_SEARCH_POINTS = 512  #: the contour's samples are thinned to at most this many
MAX_LINE_POINTS = 2048  #: a line's samples are thinned to at most this many


@dataclass(frozen=True)
class Objective:
    """One objective: its label, search points and exact score."""

    kind: str  # "contour" | "line" | "point"
    name: str | None
    label: str
    search_m: np.ndarray  # (P, 2) search points, m
    all_m: np.ndarray  # (Q, 2) every point of the exact objective's sample set, m
    distance_m: float

    def score_uT(self, src: SourceArrays, layout: Layout,
                 positions: dict[str, tuple[float, float]]) -> float:
        """Exact objective (µT) with the conductors at ``positions`` (mm, by name)."""
        xy = np.array([positions[c.name] for c in layout.conductors],
                      dtype=float).reshape(-1, 2) * MM
        s = replace(src, xy_m=xy)
        if self.kind == "contour":
            sf = stray_field(s.xy_m, s.radius_m, s.currents, envelope_m(layout), self.distance_m)
            return float(sf.max_T * UT)
        if self.kind == "line":
            return float(line_figure(s, layout.line(str(self.name))).max_resultant_uT)
        res, _ = field_at_points_uT(s, self.all_m / MM)
        return float(res[0])

    def mirror_axis_mm(self, layout: Layout) -> float | None:
        """The vertical axis (x, mm) the objective is symmetric about, if any.

        The only candidate is the envelope's centre line: the contour is always symmetric
        about it; a line or a point must map onto itself.
        """
        x0, _, x1, _ = layout.envelope_mm()
        axis = 0.5 * (x0 + x1)
        if self.kind == "contour":
            return axis
        pts = self.all_m / MM
        key = {(round(x, 5), round(y, 5)) for x, y in pts}
        mirrored = {(round(2 * axis - x, 5), round(y, 5)) for x, y in pts}
        return axis if key == mirrored else None


def _thin(n: int, cap: int) -> np.ndarray:
    return np.arange(0, n, max(1, math.ceil(n / cap)))


def make_objective(layout: Layout, distance_mm: float, objective: str | None,
                   src: SourceArrays) -> Objective:
    """Parse ``objective`` (None, "contour", "line:NAME", "point:NAME") for ``layout``."""
    text = "contour" if objective is None else str(objective)
    kind, _, name = text.partition(":")
    d = distance_mm * MM
    if kind == "contour" and not name:
        env = envelope_m(layout)
        radius = src.radius_m
        k = default_samples(env, d, float(np.min(2 * radius)) if np.size(radius) else 1e-3)
        s = np.arange(k) * (contour_length(env, d) / k)
        xy = offset_points(env, d, s)
        return Objective("contour", None, f"contour at {distance_mm:g} mm",
                         xy[_thin(k, MAX_SEARCH_POINTS)], xy, d)
    if kind == "line" and name:
        names = [ln.name for ln in layout.lines]
        if name not in names:
            raise RankError(f"the layout has no observation line '{name}'; "
                            + (f"its lines are {', '.join(names)}" if names
                               else "add a [[line]] or use the contour"), "objective", text)
        pts = line_points_mm(layout.line(name)) * MM
        return Objective("line", name, f"line {name}", pts[_thin(len(pts), MAX_LINE_POINTS)],
                         pts, d)
    if kind == "point" and name:
        names = [p.name for p in layout.points]
        if name not in names:
            raise RankError(f"the layout has no observation point '{name}'; "
                            + (f"its points are {', '.join(names)}" if names
                               else "add a [[point]] or use the contour"), "objective", text)
        p = layout.point(name)
        pts = np.array([[p.x_mm, p.y_mm]]) * MM
        return Objective("point", name, f"point {name}", pts, pts, d)
    raise RankError("use line:NAME or point:NAME, or none for the curve at distance d",
                    "objective", text)
