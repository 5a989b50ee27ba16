"""The checks of places (points, lines, areas) and of the limits bound to them.

Called as stages of :func:`trayadvisor.layoutfile.checks.layout_problems`; each takes its
collector ``ck`` (``ck.layout``, ``ck.add(where, message)``, ``ck.label(kind, i, name)``).
"""

from __future__ import annotations

import math
from typing import Any

from trayadvisor.layoutfile.errors import did_you_mean
from trayadvisor.limits import BANDS, KINDS, resolve_limit

#: Geometric tolerance of the area checks, mm.
_TOL_MM = 1e-6


def _finite(v: object) -> bool:
    return isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)


def place_values(ck: Any) -> None:
    """Areas with a size; limits with a known kind and band and one of ut or library."""
    lay = ck.layout
    for i, a in enumerate(lay.areas):
        what = ck.label("area", i, a.name)
        corners = (a.x0_mm, a.y0_mm, a.x1_mm, a.y1_mm)
        if not all(_finite(v) for v in corners):
            continue  # reported by the number checks
        if not (a.x1_mm > a.x0_mm and a.y1_mm > a.y0_mm):
            ck.add(("area", i), f"{what}: the area has no size; give the lower-left corner as "
                   "(x0_mm, y0_mm) and the upper-right one as (x1_mm, y1_mm), with x1_mm > "
                   "x0_mm and y1_mm > y0_mm")
    for i, lim in enumerate(lay.limits):
        what = ck.label("limit", i, lim.name)
        if lim.kind is not None and lim.kind not in KINDS:
            ck.add(("limit", i, "kind"), f"{what}: unknown kind {lim.kind!r}; use one of "
                   f"{', '.join(KINDS)}{did_you_mean(lim.kind, KINDS)}")
        if lim.band is not None and lim.band not in BANDS:
            ck.add(("limit", i, "band"), f"{what}: unknown band {lim.band!r}; use \"ac\" "
                   f"(power frequency and harmonics) or \"dc\" (static field)"
                   f"{did_you_mean(lim.band, BANDS)}")
        if lim.value_uT is None and lim.library is None:
            ck.add(("limit", i), f"{what}: give the level as ut = <µT> or name a library "
                   "entry as library = \"<id>\" (`trayadvisor limits` lists the ids)")
        elif lim.value_uT is not None and lim.library is not None:
            ck.add(("limit", i, "library"), f"{what}: give either ut or library, not both; "
                   "remove one")


def place_names(ck: Any) -> None:
    """Points, lines and areas share one name space (a limit names them by name)."""
    lay = ck.layout
    first: dict[object, str] = {}
    for kind, group in (("point", lay.points), ("line", lay.lines), ("area", lay.areas)):
        for i, p in enumerate(group):
            other = first.get(p.name)
            if other is not None and other != kind:
                ck.add((kind, i, "name"), f"{kind} name '{p.name}' is also the name of a "
                       f"{other}; points, lines and areas need different names, because "
                       "a limit's places name them")
            first.setdefault(p.name, kind)


def place_references(ck: Any) -> None:
    """Every place a limit names exists; library ids, kinds and bands agree."""
    lay = ck.layout
    names = [p.name for group in (lay.points, lay.lines, lay.areas) for p in group]
    for i, lim in enumerate(lay.limits):
        what = ck.label("limit", i, lim.name)
        seen: set[str] = set()
        for place in lim.places:
            if place in seen:
                ck.add(("limit", i, "places"), f"{what}: place '{place}' is named twice; "
                       "keep one")
            seen.add(place)
            if place not in names:
                known = (did_you_mean(place, names) or
                         (f"; the places are {', '.join(names[:10])}" if names else
                          "; the layout has no [[point]], [[line]] or [[area]]; add one"))
                ck.add(("limit", i, "places"), f"{what}: place '{place}' is not defined"
                       f"{known}; name an existing point, line or area")
        if (lim.value_uT is None) == (lim.library is None):
            continue  # reported in place_values
        if (lim.kind is not None and lim.kind not in KINDS) or \
                (lim.band is not None and lim.band not in BANDS):
            continue
        try:
            resolve_limit(lim, float(lay.frequency_hz))
        except (ValueError, TypeError) as exc:
            key = "library" if lim.library is not None else "ut"
            ck.add(("limit", i, key), f"{what}: {exc}")


def area_geometry(ck: Any) -> None:
    """No conductor lies in (or touches) an area: the field's maximum over an area is then
    on its boundary."""
    lay = ck.layout
    for i, a in enumerate(lay.areas):
        corners = (a.x0_mm, a.y0_mm, a.x1_mm, a.y1_mm)
        if not all(_finite(v) for v in corners) or not (a.x1_mm > a.x0_mm
                                                          and a.y1_mm > a.y0_mm):
            continue
        for c in lay.conductors:
            if not all(_finite(v) for v in (c.x_mm, c.y_mm, c.diameter_mm)):
                continue
            dx = c.x_mm - min(max(c.x_mm, a.x0_mm), a.x1_mm)
            dy = c.y_mm - min(max(c.y_mm, a.y0_mm), a.y1_mm)
            if math.hypot(dx, dy) < 0.5 * c.diameter_mm - _TOL_MM:
                ck.add(("area", i), f"{ck.label('area', i, a.name)}: conductor '{c.name}' "
                       "lies inside the area; an area is a place where people or equipment "
                       "are, outside every conductor: shrink the area or move the conductor")
                break
