"""Slot grids generated from a tray and a laying rule, as candidate positions for the ranking.

Rules (single-core cables of one overall diameter D, resting on the tray floor, the row
centred across the tray's inner width):

- ``touching``: one flat layer, cables touching (pitch D);
- ``spaced``: one flat layer, a clear gap of one diameter between cables (pitch 2D);
- ``trefoil``: groups of three touching in a triangle, two on the floor and one on top
  (height D(1 + √3/2)), a clear gap of 2D between groups (pitch 4D).

Slots that would overlap a fixed conductor are left out (a trefoil group as a whole).
"""

from __future__ import annotations

import math

import numpy as np

from trayadvisor.model import Layout, Tray
from trayadvisor.ranking.errors import RankError

SLOT_RULES: tuple[str, ...] = ("touching", "spaced", "trefoil")
_TOL = 1e-6  # mm


def tray_of(layout: Layout, i: int) -> Tray | None:
    """The tray conductor ``i`` lies in (its ``tray`` key, else the one containing it)."""
    c = layout.conductors[i]
    if c.tray is not None:
        for t in layout.trays:
            if t.name == c.tray:
                return t
    for t in layout.trays:
        x0, y0, x1, y1 = t.bounds
        if x0 - _TOL <= c.x_mm <= x1 + _TOL and y0 - _TOL <= c.y_mm <= y1 + _TOL:
            return t
    return None


def _row(tray: Tray, d: float, pitch: float, width: float) -> np.ndarray:
    """Centres x of as many items (each ``width`` wide) as fit at ``pitch``, row centred."""
    n = int(math.floor((tray.width_mm - width) / pitch + 1.0 + 1e-9))
    if n <= 0:
        return np.zeros(0)
    span = (n - 1) * pitch + width
    x0 = tray.x_mm + 0.5 * (tray.width_mm - span) + 0.5 * width
    return x0 + pitch * np.arange(n)


def slot_grid(layout: Layout, rule: str, movable: list[int], group_size: int | None
              ) -> tuple[np.ndarray, list[list[int]]]:
    """Slot centres (mm) and slot groups for the trays that hold movable conductors.

    Parameters
    ----------
    layout : Layout
    rule : {"touching", "spaced", "trefoil"}
    movable : list of int
        Indices of the conductors to place (one diameter).
    group_size : int or None
        For bundles in a flat rule: consecutive slots are grouped by this size (the parallel
        set's size); leftover slots at the end of a row stay unused. Trefoil groups are the
        triangles. None: no groups.

    Returns
    -------
    grid : (n, 2) float, mm
    groups : list of lists of slot indices
    """
    cons = layout.conductors
    if not movable:
        raise RankError("the layout has no movable conductor (all are fixed = true)",
                        "slots", rule)
    diam = {round(cons[i].diameter_mm, 6) for i in movable}
    if len(diam) > 1:
        raise RankError(f"the movable conductors have {len(diam)} different diameters "
                        f"({', '.join(f'{v:g}' for v in sorted(diam))} mm); a slot grid needs "
                        "one diameter: mark the others fixed = true or rank without a slot "
                        "grid", "slots", rule)
    d = float(cons[movable[0]].diameter_mm)
    trays: list[Tray] = []
    for i in movable:
        t = tray_of(layout, i)
        if t is None:
            raise RankError(f"conductor '{cons[i].name}' is in no tray; a slot grid is "
                            "generated inside trays", "slots", rule)
        if t not in trays:
            trays.append(t)
    fixed = [c for c in cons if c.fixed]
    fx = np.array([[c.x_mm, c.y_mm, c.radius_mm] for c in fixed], float).reshape(-1, 3)
    grid: list[tuple[float, float]] = []
    groups: list[list[int]] = []
    for tray in trays:
        y = tray.y_mm + 0.5 * d
        if rule == "trefoil":
            if tray.depth_mm + _TOL < d * (1.0 + 0.5 * math.sqrt(3.0)):
                raise RankError(f"tray '{tray.name}' is {tray.depth_mm:g} mm deep, a trefoil "
                                f"of {d:g} mm cables needs "
                                f"{d * (1 + 0.5 * math.sqrt(3)):.1f} mm", "slots", rule)
            items = [[(cx - 0.5 * d, y), (cx + 0.5 * d, y),
                      (cx, y + 0.5 * math.sqrt(3.0) * d)] for cx in _row(tray, d, 4 * d, 2 * d)]
        else:
            if tray.depth_mm + _TOL < d:
                raise RankError(f"tray '{tray.name}' is {tray.depth_mm:g} mm deep, less than "
                                f"the cable diameter {d:g} mm", "slots", rule)
            pitch = d if rule == "touching" else 2 * d
            items = [[(float(x), y)] for x in _row(tray, d, pitch, d)]
        kept = [it for it in items if not _hits_fixed(it, 0.5 * d, fx)]
        if group_size is not None and rule != "trefoil":
            flat = [p for it in kept for p in it]
            n = len(flat) // group_size
            kept = [flat[k * group_size:(k + 1) * group_size] for k in range(n)]
        for it in kept:
            start = len(grid)
            grid.extend(it)
            groups.append(list(range(start, len(grid))))
    if group_size is None:
        groups = []
    return np.array(grid, dtype=float).reshape(-1, 2), groups


def _hits_fixed(item: list[tuple[float, float]], r: float, fx: np.ndarray) -> bool:
    if fx.size == 0:
        return False
    p = np.array(item)
    dist = np.hypot(p[:, None, 0] - fx[None, :, 0], p[:, None, 1] - fx[None, :, 1])
    return bool(np.any(dist < r + fx[None, :, 2] - _TOL))
