"""Edits of what a layout holds besides its conductors: title, frequency, observation
points, lines and areas (the *places*), and the limits, as pure functions.

Each takes a Layout and returns a new one; :func:`new_problem` says what an edit would break
(the first validation problem the layout did not have before), so a form can refuse it with
one line and keep the user's typing. No textual here.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from trayadvisor.layoutfile import layout_problems
from trayadvisor.model import Layout, Limit, ObservationArea, ObservationLine, ObservationPoint
from trayadvisor.tui.logic.edits import unique_name

#: The kinds of item edited here and the Layout field holding each.
GROUPS: dict[str, str] = {"point": "points", "line": "lines", "area": "areas",
                          "limit": "limits"}
#: The kinds that are places (a limit's ``places`` names them).
PLACE_KINDS: tuple[str, ...] = ("point", "line", "area")
#: How far above the tray envelope a new place is proposed (mm).
NEW_PLACE_ABOVE_MM = 500.0


def set_title_frequency(layout: Layout, title: str, frequency_hz: float,
                        earth_y_mm: float | None = None) -> Layout:
    """The layout's top-level keys: title, frequency and the earth plane's height (None:
    no earth plane)."""
    return replace(layout, title=title, frequency_hz=float(frequency_hz),
                   earth_y_mm=None if earth_y_mm is None else float(earth_y_mm))


def items(layout: Layout, kind: str) -> tuple[Any, ...]:
    """The layout's points, lines, areas or limits."""
    return getattr(layout, GROUPS[kind])


def item(layout: Layout, kind: str, name: str) -> Any:
    """The point, line, area or limit called ``name`` (KeyError if none)."""
    for it in items(layout, kind):
        if it.name == name:
            return it
    raise KeyError(name)


def place_names(layout: Layout) -> list[tuple[str, str]]:
    """(kind, name) of every point, line and area, in that order."""
    return [(kind, p.name) for kind in PLACE_KINDS for p in items(layout, kind)]


def taken_names(layout: Layout, kind: str) -> set[str]:
    """Names a new item of ``kind`` may not take: places share one name space."""
    if kind == "limit":
        return {lim.name for lim in layout.limits}
    return {name for _, name in place_names(layout)}


def place_users(layout: Layout, name: str) -> list[str]:
    """Names of the limits whose ``places`` name ``name``."""
    return [lim.name for lim in layout.limits if name in lim.places]


def add_item(layout: Layout, kind: str, new: Any) -> Layout:
    return replace(layout, **{GROUPS[kind]: (*items(layout, kind), new)})


def replace_item(layout: Layout, kind: str, name: str, new: Any) -> Layout:
    """Put ``new`` where the item called ``name`` was; a place's new name is carried to the
    limits that name it."""
    group = tuple(new if it.name == name else it for it in items(layout, kind))
    lay = replace(layout, **{GROUPS[kind]: group})
    if kind in PLACE_KINDS and new.name != name:
        lay = replace(lay, limits=tuple(
            replace(lim, places=tuple(new.name if p == name else p for p in lim.places))
            for lim in lay.limits))
    return lay


def delete_item(layout: Layout, kind: str, name: str) -> Layout:
    return replace(layout, **{GROUPS[kind]: tuple(it for it in items(layout, kind)
                                                   if it.name != name)})


def delete_refusal(layout: Layout, kind: str, name: str) -> str | None:
    """Why a place cannot be deleted (limits name it), or None."""
    users = place_users(layout, name) if kind in PLACE_KINDS else []
    if not users:
        return None
    which = ", ".join(f"'{u}'" for u in users[:3]) + (" …" if len(users) > 3 else "")
    return (f"{kind} '{name}' is named by limit {which}: take it out of that limit's "
            "places first")


def _above(layout: Layout) -> tuple[float, float, float]:
    """(x0, x1, y) of the envelope's width, NEW_PLACE_ABOVE_MM above its top."""
    x0, _, x1, y1 = layout.envelope_mm()
    return x0, x1, y1 + NEW_PLACE_ABOVE_MM


def new_point(layout: Layout) -> ObservationPoint:
    x0, x1, y = _above(layout)
    return ObservationPoint(unique_name("point", taken_names(layout, "point")),
                            round(0.5 * (x0 + x1), 3), y)


def new_line(layout: Layout) -> ObservationLine:
    x0, x1, y = _above(layout)
    return ObservationLine(unique_name("line", taken_names(layout, "line")),
                           x0 - 200.0, y, x1 + 200.0, y)


def new_area(layout: Layout) -> ObservationArea:
    x0, x1, y = _above(layout)
    return ObservationArea(unique_name("area", taken_names(layout, "area")),
                           x0 - 200.0, y, x1 + 200.0, y + 1000.0)


def new_limit(layout: Layout) -> Limit:
    """A proposed limit: no level yet (the form asks for ut or a library entry)."""
    return Limit(unique_name("limit", taken_names(layout, "limit")))


def new_problem(before: Layout, after: Layout) -> str | None:
    """The first validation problem of ``after`` that ``before`` did not have (its message
    alone, one line), or None when the edit breaks nothing."""
    old = {e.message for e in layout_problems(before)}
    for e in layout_problems(after):
        if e.message not in old:
            return e.message
    return None


def apply_form(layout: Layout, kind: str, old_name: str | None, value: Any
               ) -> tuple[Layout, str]:
    """The layout after a form's result, and the undo label.

    ``kind`` "layout" takes (title, frequency_hz, earth_y_mm); the others take the new item
    (added when
    ``old_name`` is None, else replacing it) or "delete".
    """
    if kind == "layout":
        return set_title_frequency(layout, *value), "edit title and frequency"
    if value == "delete":
        return delete_item(layout, kind, str(old_name)), f"delete {kind} {old_name}"
    if old_name is None:
        return add_item(layout, kind, value), f"add {kind} {value.name}"
    return replace_item(layout, kind, old_name, value), f"edit {kind} {value.name}"


def form_problem(layout: Layout, kind: str, old_name: str | None, value: Any) -> str | None:
    """Why a form's result is refused (one line), or None: a place still named by a limit
    cannot be deleted; no edit may add a validation problem."""
    if value == "delete" and old_name is not None:
        refusal = delete_refusal(layout, kind, old_name)
        if refusal:
            return refusal
    after, _ = apply_form(layout, kind, old_name, value)
    return new_problem(layout, after)
