"""Settings of the views that are not part of the layout: distance d, the chosen limit, the
current model, the move step and the map style. No textual here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from trayadvisor.coupling import CURRENT_MODELS
from trayadvisor.engine import DEFAULT_DISTANCE_MM
from trayadvisor.limits import all_limits, by_id, resolve_limit
from trayadvisor.model import Layout, Limit

#: Name given to a limit typed in (``edit --limit-ut`` or the settings form).
TYPED_LIMIT = "typed limit"
MAP_STYLES = ("colour", "shade")


@dataclass(frozen=True)
class ViewSettings:
    """What the field views compute and show.

    Attributes
    ----------
    distance_mm : float
        Distance d outside the tray envelope for the stray field (mm, >= 0).
    limit_name : str or None
        The chosen limit; ``None`` picks the default (see :func:`chosen_limit`).
    typed_limit_uT : float or None
        A limit typed in by the user (µT), offered as ``TYPED_LIMIT``.
    fine_step_mm : float
        Arrow-key move step (mm); shift+arrow moves by one conductor diameter.
    map_style : str
        "colour" (half-block heat map) or "shade" (glyph density and iso-level digits).
    currents : str
        "solved" (the sharing of parallel conductors from the impedance system, the
        default) or "equal" (equal shares, ``--equal-shares`` on the command line).
    """

    distance_mm: float = DEFAULT_DISTANCE_MM
    limit_name: str | None = None
    typed_limit_uT: float | None = None
    fine_step_mm: float = 5.0
    map_style: str = "colour"
    currents: str = "solved"

    def __post_init__(self) -> None:
        if not (math.isfinite(self.distance_mm) and self.distance_mm >= 0):
            raise ValueError("distance d must be zero or a positive number of mm")
        if not (math.isfinite(self.fine_step_mm) and self.fine_step_mm > 0):
            raise ValueError("the move step must be a positive number of mm")
        t = self.typed_limit_uT
        if t is not None and not (math.isfinite(t) and t > 0):
            raise ValueError("a limit must be a positive number of µT")
        if self.map_style not in MAP_STYLES:
            raise ValueError(f"map style must be one of {', '.join(MAP_STYLES)}")
        if self.currents not in CURRENT_MODELS:
            raise ValueError(f"currents must be one of {', '.join(CURRENT_MODELS)}")


def available_limits(layout: Layout, typed_uT: float | None = None) -> tuple[Limit, ...]:
    """The limits offered on the curve at d: the library's AC levels (valid at the layout's
    frequency), the layout's own ``[[limit]]`` entries that name no place (those bound to
    places are judged there: the Field view's places panel), and a typed-in one."""
    found = tuple(lim for lim in all_limits(layout) if not lim.places)
    if typed_uT is not None:
        found += (Limit(TYPED_LIMIT, float(typed_uT), "typed in"),)
    return found


def chosen_limit(settings: ViewSettings, limits: tuple[Limit, ...],
                 layout: Layout) -> Limit | None:
    """The limit the readouts test against: the chosen one by name; else the typed one, the
    layout's first own limit, or the first offered."""
    by_name = {lim.name: lim for lim in limits}
    if settings.limit_name in by_name:
        return by_name[settings.limit_name]
    if TYPED_LIMIT in by_name:
        return by_name[TYPED_LIMIT]
    for own in layout.limits:
        if own.name in by_name:
            return by_name[own.name]
    return limits[0] if limits else None


def limit_level_uT(limit: Limit, frequency_hz: float) -> float | None:
    """The level a limit judges against at the layout's frequency (a library entry's own
    value, the static level for the DC band), or None when it cannot be judged."""
    try:
        return resolve_limit(limit, frequency_hz).limit_uT
    except (ValueError, TypeError):
        return None


def limit_kind(limit: Limit) -> str:
    """The kind a limit judges as: its own, else its library entry's, else "target"."""
    if limit.kind is not None:
        return limit.kind
    if limit.library is not None:
        try:
            return by_id(limit.library).kind
        except KeyError:
            return "target"
    return "target"
