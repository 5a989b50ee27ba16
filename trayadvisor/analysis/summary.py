"""The field figures of one layout, in one call shared by the CLI, the TUI, batches and reports.

:func:`field_summary` takes the user's options as keyword arguments (distance d, extra
points, limits, which currents flow) and returns every figure ``field`` prints, so the front
ends cannot disagree. Millimetres and µT at this boundary. The currents are the solved
sharing of parallel conductors by default (:func:`trayadvisor.coupling.carried_sources`),
or equal shares.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np

from trayadvisor.coupling import (
    DEFAULT_TEMPERATURE_C,
    carried_sources,
    check_current_model,
    check_temperature,
    solve_sharing,
)
from trayadvisor.engine import (
    DEFAULT_DISTANCE_MM,
    LineFigure,
    PointFigure,
    clearance,
    envelope_m,
    far_field,
    line_figure,
    point_figures,
    stray_field,
)
from trayadvisor.engine.units import MM, UT
from trayadvisor.model import Layout


@dataclass(frozen=True)
class LimitFigure:
    """One limit's verdict at distance d and its clearance distance."""

    name: str
    limit_uT: float
    source: str
    clearance_mm: float  # inf when still above the limit at 100 m
    passes: bool  # stray field at the chosen distance is at or below the limit


@dataclass(frozen=True)
class ConductorCurrent:
    """The current of one conductor at one frequency component (RMS phasor)."""

    name: str
    order: int  # 0 = DC, 1 = fundamental, h = harmonic
    current_a: float
    angle_deg: float


@dataclass(frozen=True)
class FieldSummary:
    """Stray field at a distance, where it peaks, far-field decay, points and limits."""

    distance_mm: float
    max_resultant_uT: float
    max_at_mm: tuple[float, float]
    far_field_order: int | None
    far_field_uT_at_1m: float
    points: tuple[PointFigure, ...]  # one per requested point (``at``), in order
    named_points: tuple[PointFigure, ...]  # the layout's [[point]] entries
    lines: tuple[LineFigure, ...]  # the layout's [[line]] entries
    limits: tuple[LimitFigure, ...]
    profile_s_mm: np.ndarray
    profile_uT: np.ndarray
    profile_xy_mm: np.ndarray
    currents: str = "solved"  # the current model: "solved" sharing or "equal" shares
    conductor_currents: tuple[ConductorCurrent, ...] = ()
    notes: tuple[str, ...] = ()
    temperature_c: float | None = None  # conductor temperature of R' (solved sharing only)

    def to_json(self) -> dict:
        """The ``field --json`` object (docs/json.md; keys may be added, never renamed)."""
        return {
            "currents": self.currents,
            "temperature_c": self.temperature_c,
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
                {"name": lim.name, "limit_uT": lim.limit_uT, "source": lim.source,
                 "clearance_mm": None if math.isinf(lim.clearance_mm) else lim.clearance_mm,
                 "pass": lim.passes}
                for lim in self.limits
            ],
            "conductor_currents": [
                {"name": c.name, "order": c.order, "current_a": c.current_a,
                 "angle_deg": c.angle_deg}
                for c in self.conductor_currents
            ],
            "notes": list(self.notes),
        }


def field_summary(
    layout: Layout,
    *,
    distance_mm: float = DEFAULT_DISTANCE_MM,
    at: Sequence[tuple[float, float]] = (),
    limits: Iterable[tuple[str, float, str]] = (),
    currents: str = "solved",
    temperature_c: float = DEFAULT_TEMPERATURE_C,
) -> FieldSummary:
    """Every field figure of one layout.

    Parameters
    ----------
    layout : Layout
    distance_mm : float
        Distance d outside the tray envelope for the stray field, mm (>= 0).
    at : sequence of (x_mm, y_mm)
        Extra points to report; the layout's named points are always reported.
    limits : iterable of (name, µT, source)
        Limits to test, in addition to the layout's own ``[[limit]]`` entries.
    currents : {"solved", "equal"}
        The solved current sharing between parallel conductors (the default), or equal
        shares.
    temperature_c : float
        Conductor temperature for the resistance in the sharing solve, °C.

    Returns
    -------
    FieldSummary

    Raises
    ------
    ValueError
        For a ``distance_mm`` that is negative or not finite, an unknown ``currents`` or a
        ``temperature_c`` outside :data:`trayadvisor.coupling.TEMPERATURE_RANGE_C` (the
        message names the parameter).
    trayadvisor.coupling.SharingError
        When the sharing of some parallel conductors has no solution (naming them).
    """
    if not (math.isfinite(distance_mm) and distance_mm >= 0):
        raise ValueError(f"distance_mm = {distance_mm!r}: must be zero or a positive number")
    if check_current_model(currents) == "solved":
        try:
            temperature_c = check_temperature(temperature_c)
        except ValueError as exc:
            raise ValueError(f"temperature_c = {temperature_c!r}: {exc}") from None
        shares = solve_sharing(layout, temperature_c)
        src, notes = shares.sources, tuple(shares.notes())
    else:
        src, notes = carried_sources(layout, "equal"), ()
    env = envelope_m(layout)
    sf = stray_field(src.xy_m, src.radius_m, src.currents, env, distance_mm * MM)
    ff = far_field(src.xy_m, src.currents)
    points = point_figures(src, [(f"at{i + 1}", float(x), float(y))
                                 for i, (x, y) in enumerate(at)])
    named = point_figures(src, [(p.name, p.x_mm, p.y_mm) for p in layout.points])
    lines = tuple(line_figure(src, ln) for ln in layout.lines)
    stray = sf.max_T * UT
    lims = [(lim.name, lim.value_uT, lim.source) for lim in layout.limits] + list(limits)
    figures = []
    for name, value_uT, source in lims:
        clr = clearance(src.xy_m, src.radius_m, src.currents, env, value_uT / UT) / MM
        figures.append(LimitFigure(name, float(value_uT), source, float(clr),
                                   stray <= value_uT))
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
        currents=currents,
        conductor_currents=tuple(
            ConductorCurrent(name, int(h), float(abs(v)), _angle_deg(v))
            for k, h in enumerate(src.orders)
            for name, v in zip(src.names, src.currents[k], strict=True)),
        notes=notes,
        temperature_c=temperature_c if currents == "solved" else None,
    )


def _angle_deg(v: complex) -> float:
    """The angle of a phasor in degrees; 0 for a zero (or rounding-noise) current."""
    return float(np.angle(v, deg=True)) if abs(v) > 1e-12 else 0.0
