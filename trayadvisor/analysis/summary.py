"""The field figures of one layout, in one call shared by the CLI, the TUI, batches and reports.

:func:`field_summary` takes the user's options as keyword arguments (distance d, extra
points, limits, which currents flow) and returns every figure ``field`` prints, so the front
ends cannot disagree. Millimetres and µT at this boundary. The currents are the solved
sharing of parallel conductors by default (:func:`trayadvisor.coupling.carried_sources`),
or equal shares.

Every AC figure (the stray field, points, lines, places, far field, profile, clearances) is
the fundamental and its harmonics only; the static (DC) field is reported beside it
(``dc_max_uT``, ``dc_uT``) and judged only by DC-band limits (:mod:`.judging`).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace

import numpy as np

from trayadvisor.analysis.judging import (
    PlaceFigure,
    curve_verdict,
    margin_db,
    outside_notes,
    place_figures,
)
from trayadvisor.analysis.plates import (
    PlateComparison,
    PlateFigure,
    compare_summaries,
    plate_figures,
)
from trayadvisor.coupling import (
    DEFAULT_TEMPERATURE_C,
    PassiveFigure,
    ScreenFigure,
    carried_sources,
    check_current_model,
    check_temperature,
    solve_sharing,
)
from trayadvisor.engine import (
    DEFAULT_DISTANCE_MM,
    LineFigure,
    PointFigure,
    envelope_m,
    far_field,
    line_figure,
    point_figures,
    source_stray_field,
    split_bands,
)
from trayadvisor.engine.units import MM, UT
from trayadvisor.limits import resolve_limit
from trayadvisor.model import Layout, Limit


@dataclass(frozen=True)
class LimitFigure:
    """One limit's verdict on the curve at distance d and its clearance distance."""

    name: str
    limit_uT: float
    source: str
    clearance_mm: float  # inf when still above the limit at 100 m
    passes: bool  # the index on the curve at the chosen distance is at most 1
    kind: str = "target"  # "exposure" | "immunity" | "target"
    band: str = "ac"  # "ac" | "dc"
    index: float = 0.0  # see trayadvisor.limits.Rule

    @property
    def margin_db(self) -> float:
        return margin_db(self.index)


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
    dc_max_uT: float = 0.0  # the static field's maximum on the curve at d
    places: tuple[PlaceFigure, ...] = ()  # every point, line and area with its limits
    screens: tuple[ScreenFigure, ...] = ()  # induced currents in the figures (solved only)
    passive: tuple[PassiveFigure, ...] = ()
    plates: tuple[PlateFigure, ...] = ()  # every plate with its eddy-current loss

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
            "dc_max_uT": self.dc_max_uT,
            "points": [
                {"name": p.name, "x_mm": p.x_mm, "y_mm": p.y_mm,
                 "resultant_uT": p.resultant_uT, "max_uT": p.max_uT, "dc_uT": p.dc_uT}
                for p in self.points
            ],
            "named_points": [
                {"name": p.name, "x_mm": p.x_mm, "y_mm": p.y_mm,
                 "resultant_uT": p.resultant_uT, "max_uT": p.max_uT, "dc_uT": p.dc_uT}
                for p in self.named_points
            ],
            "lines": [
                {"name": ln.name, "max_resultant_uT": ln.max_resultant_uT,
                 "max_at_mm": list(ln.max_at_mm), "max_uT": ln.max_uT}
                for ln in self.lines
            ],
            "limits": [
                {"name": lim.name, "kind": lim.kind, "band": lim.band,
                 "limit_uT": lim.limit_uT, "source": lim.source, "index": lim.index,
                 "margin_db": _finite_or_none(lim.margin_db),
                 "clearance_mm": None if math.isinf(lim.clearance_mm) else lim.clearance_mm,
                 "pass": lim.passes, "passes": lim.passes}
                for lim in self.limits
            ],
            "places": [
                {"name": p.name, "type": p.type, "max_resultant_uT": p.max_resultant_uT,
                 "at_mm": list(p.at_mm), "dc_max_uT": p.dc_max_uT,
                 "dc_at_mm": list(p.dc_at_mm),
                 "limits": [
                     {"name": q.name, "kind": q.kind, "band": q.band, "limit_uT": q.limit_uT,
                      "index": q.index, "passes": q.passes,
                      "margin_db": _finite_or_none(q.margin_db), "at_mm": list(q.at_mm),
                      "rule": q.rule, "source": q.source}
                     for q in p.limits]}
                for p in self.places
            ],
            "conductor_currents": [
                {"name": c.name, "order": c.order, "current_a": c.current_a,
                 "angle_deg": c.angle_deg}
                for c in self.conductor_currents
            ],
            "screens": [f.to_json() for f in self.screens],
            "passive": [f.to_json() for f in self.passive],
            "plates": [f.to_json() for f in self.plates],
            "notes": list(self.notes),
        }


def field_summary(
    layout: Layout,
    *,
    distance_mm: float = DEFAULT_DISTANCE_MM,
    at: Sequence[tuple[float, float]] = (),
    limits: Iterable[tuple[str, float, str] | Limit] = (),
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
    limits : iterable of (name, µT, source) or Limit
        Limits to test on the curve at d (their ``places`` are ignored), in addition to the
        layout's own ``[[limit]]`` entries (judged at their places, or on the curve).
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
        Also for a limit that :func:`trayadvisor.limits.resolve_limit` refuses.
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
        induced = (shares.screens, shares.passive)
    else:
        src, notes = carried_sources(layout, "equal"), ()
        induced = ((), ())
        if layout.has_induced_paths():
            notes = ("equal shares: no current is induced in screens or passive loops",)
    ac, dc = split_bands(src)
    env = envelope_m(layout)
    d_m = distance_mm * MM
    sf = source_stray_field(ac, env, d_m)
    dc_max = source_stray_field(dc, env, d_m).max_T * UT
    ff = far_field(ac.xy_m, ac.currents)
    at_xy = [(f"at{i + 1}", float(x), float(y)) for i, (x, y) in enumerate(at)]
    named_xy = [(p.name, p.x_mm, p.y_mm) for p in layout.points]
    points = _with_dc(point_figures(ac, at_xy), point_figures(dc, at_xy))
    named = _with_dc(point_figures(ac, named_xy), point_figures(dc, named_xy))
    lines = tuple(line_figure(ac, ln) for ln in layout.lines)
    stray = sf.max_T * UT
    f = float(layout.frequency_hz)
    rules = [resolve_limit(lim, f) for lim in layout.limits]
    extra = [lim if isinstance(lim, Limit) else Limit(lim[0], float(lim[1]), lim[2])
             for lim in limits]
    curve_rules = [r for r in rules if not r.places] + [
        replace(resolve_limit(lim, f), places=()) for lim in extra]
    notes = list(notes)
    figures = []
    for rule in curve_rules:
        band_src, band_stray = (ac, stray) if rule.band == "ac" else (dc, dc_max)
        v = curve_verdict(layout, rule, band_src, distance_mm, band_stray)
        notes += outside_notes(rule.name, v.outside_hz, rule)
        figures.append(LimitFigure(rule.name, float(rule.limit_uT), rule.source,
                                   v.clearance_mm, v.index <= 1.0, rule.kind, rule.band,
                                   v.index))
    places = place_figures(layout, ac, dc, [r for r in rules if r.places])
    for p in places:
        for q in p.limits:
            rule = next(r for r in rules if r.name == q.name)
            notes += [n for n in outside_notes(q.name, q.outside_hz, rule) if n not in notes]
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
        dc_max_uT=float(dc_max),
        places=places,
        screens=induced[0],
        passive=induced[1],
        plates=plate_figures(layout, src),
        currents=currents,
        conductor_currents=tuple(
            ConductorCurrent(name, int(h), float(abs(v)), _angle_deg(v))
            for k, h in enumerate(src.orders)
            for name, v in zip(src.names, src.currents[k], strict=True)),
        notes=tuple(notes),
        temperature_c=temperature_c if currents == "solved" else None,
    )


def plate_comparison(layout: Layout, **options) -> PlateComparison:  # noqa: ANN003
    """:func:`field_summary` with and without the plates (``Layout.without_metal``), paired
    by :func:`~trayadvisor.analysis.compare_summaries`. ``options`` are those of
    ``field_summary``; ValueError when the layout has no plate (nothing to compare)."""
    if not layout.all_plates():
        raise ValueError("the layout has no plate or sheet tray: nothing to compare")
    return compare_summaries(field_summary(layout, **options),
                             field_summary(replace(layout, without_metal=True), **options))


def _with_dc(ac: tuple[PointFigure, ...], dc: tuple[PointFigure, ...]
             ) -> tuple[PointFigure, ...]:
    """AC point figures with the static field of the same points beside them."""
    return tuple(replace(a, dc_uT=d.resultant_uT) for a, d in zip(ac, dc, strict=True))


def _finite_or_none(v: float) -> float | None:
    return v if math.isfinite(v) else None


def _angle_deg(v: complex) -> float:
    """The angle of a phasor in degrees; 0 for a zero (or rounding-noise) current."""
    return float(np.angle(v, deg=True)) if abs(v) > 1e-12 else 0.0
