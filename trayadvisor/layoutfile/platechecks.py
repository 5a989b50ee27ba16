"""The checks of plates and sheet trays (stages of
:func:`trayadvisor.layoutfile.checks.layout_problems`; ``ck`` is its collector).

A plate is written as a ``[[plate]]`` table or generated from a tray with ``sheet``
(:meth:`trayadvisor.model.Tray.sheet_plates`); a generated plate is reported at its tray's
line. The field inside metal is not computed, so no conductor, plate, point, line or area
may reach into a plate; touching is allowed (tolerance 1e-6 mm).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from trayadvisor.fem import PLATE_MATERIALS
from trayadvisor.layoutfile.errors import did_you_mean
from trayadvisor.layoutfile.schema import TABLES
from trayadvisor.model import DEFAULT_SHEET_MM, Layout, Plate

#: Geometric tolerance of the overlap checks, mm.
_TOL_MM = 1e-6
_KNOWN = ", ".join(PLATE_MATERIALS)
_OTHERS = ", ".join(m for m in PLATE_MATERIALS if m != "steel")
_ORDER = {kind: k for k, kind in enumerate(TABLES)}


def _finite(v: object) -> bool:
    return isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)


def _show(v: object) -> str:
    return f"{v:g}" if _finite(v) else repr(v)


def _sized(*values: object) -> bool:
    """All finite, and the last two (the sizes) positive."""
    return all(_finite(v) for v in values) and values[-2] > 0 and values[-1] > 0


def _sheet_plates(tray: Any) -> tuple[Plate, ...]:
    """A sheet tray's generated plates; none while its sizes are not valid numbers."""
    ok = _finite(tray.sheet_mm) and tray.sheet_mm > 0 and _sized(
        tray.x_mm, tray.y_mm, tray.width_mm, tray.depth_mm)
    return tray.sheet_plates() if ok and tray.sheet else ()


def _all_plates(lay: Layout) -> list[tuple[tuple[str, int], Plate]]:
    """Every plate with a size and where it is written: ``("plate", i)`` or its tray's
    ``("tray", j)``."""
    out = [(("plate", i), p) for i, p in enumerate(lay.plates)
           if _sized(p.x_mm, p.y_mm, p.width_mm, p.height_mm)]
    for j, t in enumerate(lay.trays):
        out += [(("tray", j), p) for p in _sheet_plates(t)]
    return out


def _order(ck: Any, where: tuple[str, int]) -> tuple[int, int, int]:
    """File order of a table: its line, then the writer's order of tables."""
    line = ck.lines.line(*where) if ck.lines is not None else 0
    return (line, _ORDER[where[0]], where[1])


def _name(ck: Any, where: tuple[str, int], p: Plate) -> str:
    if p.tray is not None:
        return f"plate '{p.name}' of sheet tray '{p.tray}'"
    return ck.label("plate", where[1], p.name)


def _box(b: tuple[float, float, float, float]) -> str:
    return f"x {b[0]:g} to {b[2]:g}, y {b[1]:g} to {b[3]:g} mm"


def plate_values(ck: Any) -> None:
    """Plate sizes, a known material or both μr and σ, μr >= 1; a tray's sheet material
    known, and ``sheet_mm`` / ``cover`` only on a sheet tray."""
    lay = ck.layout
    for i, p in enumerate(lay.plates):
        what = ck.label("plate", i, p.name)
        for key in ("width_mm", "height_mm"):
            v = getattr(p, key)
            if _finite(v) and v <= 0:
                ck.add(("plate", i, key), f"{what}: {key} = {v:g} gives the plate no "
                       "thickness; give a positive size (a horizontal sheet has a small "
                       "height_mm, a vertical one a small width_mm)")
        if p.material is not None and p.material not in PLATE_MATERIALS:
            ck.add(("plate", i, "material"), f"{what}: unknown material {p.material!r}; use "
                   f"one of {_KNOWN}, or give mu_r and sigma_s_per_m instead"
                   f"{did_you_mean(p.material, PLATE_MATERIALS)}")
        elif p.material is None:
            missing = [k for k in ("mu_r", "sigma_s_per_m") if getattr(p, k) is None]
            if missing:
                also = f" (add {missing[0]})" if len(missing) == 1 else ""
                ck.add(("plate", i), f"{what}: no material; add material = \"steel\" (or "
                       f"{_OTHERS}), or give both mu_r and sigma_s_per_m{also}")
        if p.mu_r is not None and not (_finite(p.mu_r) and p.mu_r >= 1):
            ck.add(("plate", i, "mu_r"), f"{what}: mu_r must be a finite relative "
                   f"permeability >= 1, got {_show(p.mu_r)}; give 1 for a non-magnetic "
                   "metal, or the steel's μr")
    for j, t in enumerate(lay.trays):
        what = ck.label("tray", j, t.name)
        if t.sheet is not None and t.sheet not in PLATE_MATERIALS:
            ck.add(("tray", j, "sheet"), f"{what}: unknown sheet material {t.sheet!r}; use "
                   f"one of {_KNOWN}{did_you_mean(t.sheet, PLATE_MATERIALS)} (a ladder or "
                   "mesh tray has no sheet key)")
        if t.sheet is not None:
            continue
        fix = f'add sheet = "steel" (a solid sheet tray; or {_OTHERS})'
        if t.cover is True:
            ck.add(("tray", j, "cover"), f"{what}: cover = true needs a sheet tray; {fix}, "
                   "or model the cover as a [[plate]]")
        if _finite(t.sheet_mm) and t.sheet_mm != DEFAULT_SHEET_MM:
            ck.add(("tray", j, "sheet_mm"), f"{what}: sheet_mm is given but the tray has no "
                   f"sheet; {fix}, or remove sheet_mm")


def plate_names(ck: Any) -> None:
    """A ``[[plate]]`` takes neither the name of a sheet tray's plate (``"<tray> bottom"``
    ...) nor, without a ``body`` key, the name of a sheet tray's body (it would join it)."""
    lay = ck.layout
    taken: dict[str, Plate] = {}
    bodies: dict[str, Plate] = {}
    for t in lay.trays:
        for p in _sheet_plates(t):
            taken.setdefault(p.name, p)
            bodies.setdefault(p.body_name, p)
    for i, p in enumerate(lay.plates):
        if p.name in taken:
            ck.add(("plate", i, "name"), f"plate name '{p.name}' is taken by a plate of "
                   f"sheet tray '{taken[p.name].tray}' (its plates are named '<tray> bottom', "
                   "'<tray> left side', '<tray> right side', '<tray> cover'); rename the plate")
        elif p.body is None and p.name in bodies:
            ck.add(("plate", i, "name"), f"plate name '{p.name}' is the body name of sheet "
                   f"tray '{bodies[p.name].tray}', so the plate would be joined to it; rename "
                   f"the plate, or write body = \"{p.name}\" if it is bolted to the tray")


def _segment_enters(seg: tuple[float, float, float, float],
                    b: tuple[float, float, float, float]) -> bool:
    """True when the segment runs through the rectangle's interior for a positive length
    (Liang–Barsky clipping against the rectangle shrunk by the tolerance)."""
    x0, y0, x1, y1 = seg
    dx, dy = x1 - x0, y1 - y0
    t0, t1 = 0.0, 1.0
    for p, q in ((-dx, x0 - b[0] - _TOL_MM), (dx, b[2] - _TOL_MM - x0),
                 (-dy, y0 - b[1] - _TOL_MM), (dy, b[3] - _TOL_MM - y0)):
        if p == 0:
            if q <= 0:
                return False
        elif p < 0:
            t0 = max(t0, q / p)
        else:
            t1 = min(t1, q / p)
    return t0 < t1


def _overlap(a: tuple[float, ...], b: tuple[float, ...]) -> bool:
    """Two rectangles share interior (positive area); touching edges do not count."""
    return (min(a[2], b[2]) - max(a[0], b[0]) > _TOL_MM
            and min(a[3], b[3]) - max(a[1], b[1]) > _TOL_MM)


def plate_geometry(ck: Any) -> None:
    """No two plates overlap (reported at the later one); no conductor's outer circle
    reaches into a plate (at the later of the two); no point, line or area reaches into a
    plate (at the place)."""
    lay = ck.layout
    plates = sorted(_all_plates(lay), key=lambda wp: _order(ck, wp[0]))
    if not plates:
        return
    bounds = np.array([p.bounds for _, p in plates])                      # (m, 4)
    for k in range(1, len(plates)):
        where, p = plates[k]
        hit = np.nonzero((np.minimum(bounds[:k, 2], bounds[k, 2])
                          - np.maximum(bounds[:k, 0], bounds[k, 0]) > _TOL_MM)
                         & (np.minimum(bounds[:k, 3], bounds[k, 3])
                            - np.maximum(bounds[:k, 1], bounds[k, 1]) > _TOL_MM))[0]
        if hit.size:
            w2, q = plates[int(hit[0])]
            ck.add(where, f"{_name(ck, where, p)} ({_box(p.bounds)}) overlaps "
                   f"{_name(ck, w2, q)} ({_box(q.bounds)}); move or resize one of them "
                   "(touching is allowed)")
    _conductors(ck, plates, bounds)
    _places(ck, plates)


def _conductors(ck: Any, plates: list[tuple[tuple[str, int], Plate]],
                bounds: np.ndarray) -> None:
    """No conductor's outer circle reaches into a plate: the distance from its centre to the
    rectangle is below its radius (reported at the later of the two, once per conductor)."""
    cs = [(i, c) for i, c in enumerate(ck.layout.conductors)
          if _sized(c.x_mm, c.y_mm, c.diameter_mm, c.diameter_mm)]
    if not cs:
        return
    x, y, r = (np.array([[float(getattr(c, k))] for _, c in cs])
               for k in ("x_mm", "y_mm", "radius_mm"))                  # (n, 1) each
    gap = np.hypot(x - np.clip(x, bounds[:, 0], bounds[:, 2]),
                   y - np.clip(y, bounds[:, 1], bounds[:, 3]))          # (n, m)
    inside = gap < r - _TOL_MM
    for row in np.nonzero(inside.any(axis=1))[0]:
        (i, c), (where, p) = cs[row], plates[int(np.argmax(inside[row]))]
        at = max(("conductor", i), where, key=lambda w: _order(ck, w))
        ck.add(at, f"{ck.label('conductor', i, c.name)} (centre ({c.x_mm:g}, {c.y_mm:g}) "
               f"mm, diameter {c.diameter_mm:g} mm) reaches into {_name(ck, where, p)} "
               f"({_box(p.bounds)}); move the conductor or the plate (touching is allowed)")


def _reaches(kind: str, coords: tuple[float, ...], b: tuple[float, ...]) -> bool:
    """A point strictly inside, a line through, an area overlapping the rectangle ``b``."""
    if kind == "point":
        x, y = coords
        return b[0] + _TOL_MM < x < b[2] - _TOL_MM and b[1] + _TOL_MM < y < b[3] - _TOL_MM
    return _segment_enters(coords, b) if kind == "line" else _overlap(coords, b)


def _places(ck: Any, plates: list[tuple[tuple[str, int], Plate]]) -> None:
    """Points inside, lines through and areas overlapping a plate are refused (at the
    place): the field inside metal is not computed."""
    lay = ck.layout
    for kind, group in (("point", lay.points), ("line", lay.lines), ("area", lay.areas)):
        verb = {"point": "lies inside", "line": "runs through", "area": "overlaps"}[kind]
        for i, place in enumerate(group):
            keys = ("x_mm", "y_mm") if kind == "point" else ("x0_mm", "y0_mm", "x1_mm",
                                                               "y1_mm")
            coords = tuple(getattr(place, k) for k in keys)
            if not all(_finite(v) for v in coords):
                continue
            at = f" ({coords[0]:g}, {coords[1]:g}) mm" if kind == "point" else ""
            for where, p in plates:
                if _reaches(kind, coords, p.bounds):
                    ck.add((kind, i), f"{ck.label(kind, i, place.name)}{at} {verb} "
                           f"{_name(ck, where, p)} ({_box(p.bounds)}); the field inside "
                           f"metal is not computed: move the {kind} out of the plate")
                    break
