"""The semantic checks of a layout, with the file line of each problem.

``layout_problems`` runs every check on a :class:`~trayadvisor.model.Layout` (read from a
file or edited in the UI) and ``validate_layout`` raises the most useful one as a
:class:`~trayadvisor.layoutfile.errors.LayoutError`; a
:class:`~trayadvisor.layoutfile.linemap.LineMap` points each one back at the text.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from trayadvisor.layoutfile.errors import LayoutError, did_you_mean
from trayadvisor.layoutfile.linemap import KeyPath, LineMap
from trayadvisor.layoutfile.placechecks import (
    area_geometry,
    place_names,
    place_references,
    place_values,
)
from trayadvisor.layoutfile.platechecks import plate_geometry, plate_names, plate_values
from trayadvisor.layoutfile.schema import TABLES
from trayadvisor.layoutfile.screenchecks import screen_references, screen_values
from trayadvisor.model import MATERIALS, PHASES, REQUIRED_PHASES, SYSTEMS, Layout

#: Largest accepted ``samples`` of an observation line (keeps the engines' arrays sane).
MAX_SAMPLES = 100_000
#: Geometric tolerance of the overlap and inside-tray checks, mm.
TOL_MM = 1e-6
#: Harmonic orders accepted in ``harmonics``.
HARMONIC_ORDERS = range(2, 51)


# -- semantic checks ----------------------------------------------------------------------
def _finite(v: object) -> bool:
    return isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)


def _g(v: float) -> str:
    return f"{v:g}"


#: Numeric keys per table: unit, then ">0" / ">=0" for a lower bound, "?" when optional.
_NUMBERS: dict[str, dict[str, str]] = {
    "tray": {"x_mm": "mm", "y_mm": "mm", "width_mm": "mm >0", "depth_mm": "mm >0",
             "sheet_mm": "mm >0"},
    "plate": {"x_mm": "mm", "y_mm": "mm", "width_mm": "mm", "height_mm": "mm",
              "sigma_s_per_m": "S/m >=0 ?"},  # sizes > 0 and mu_r: platechecks
    "circuit": {"current_a": "A >=0", "angle_deg": "degrees", "length_m": "m >0 ?"},
    "conductor": {"x_mm": "mm", "y_mm": "mm", "diameter_mm": "mm >0", "area_mm2": "mm² >0 ?",
                  "current_a": "A >=0 ?", "angle_deg": "degrees ?",
                  "screen_area_mm2": "mm² >0 ?", "screen_diameter_mm": "mm >0 ?"},
    "point": {"x_mm": "mm", "y_mm": "mm"},
    "line": {"x0_mm": "mm", "y0_mm": "mm", "x1_mm": "mm", "y1_mm": "mm"},
    "area": {"x0_mm": "mm", "y0_mm": "mm", "x1_mm": "mm", "y1_mm": "mm"},
    "limit": {"ut": "µT >0 ?"},
}


class _Checks:
    """Collects problems as (stage, line, seq, LayoutError); earlier stage = root cause."""

    def __init__(self, layout: Layout, path: str, lines: LineMap | None) -> None:
        self.layout, self.path, self.lines = layout, path, lines
        self.found: list[tuple[int, int, int, LayoutError]] = []
        self.stage = 0

    def add(self, where: KeyPath, message: str) -> None:
        line = self.lines.line(*where) if self.lines is not None else 0
        self.found.append((self.stage, line, len(self.found),
                           LayoutError(self.path, line, message)))

    @staticmethod
    def label(kind: str, i: int, name: object) -> str:
        return f"{kind} '{name}'" if isinstance(name, str) and name else f"[[{kind}]] #{i + 1}"

    def number(self, where: KeyPath, what: str, v: object, rule: str, key: object = None) -> None:
        """Check one number against a rule of :data:`_NUMBERS` (e.g. ``"mm >0 ?"``)."""
        unit, *bounds = rule.split()
        key = where[-1] if key is None else key
        if v is None and "?" in bounds:
            return
        if not _finite(v):
            example = "" if " " in str(key) else f" such as {key} = 1.0"
            self.add(where, f"{what}: {key} must be a finite number in {unit}, got {v!r}; "
                     f"write a plain number{example}")
        elif (">0" in bounds and v <= 0) or (">=0" in bounds and v < 0):
            rel, word = (">", "positive") if ">0" in bounds else (">=", "non-negative")
            hint = " (angle_deg = 180 reverses a current)" if key == "current_a" else ""
            self.add(where, f"{what}: {key} must be {rel} 0 {unit}, got {_g(v)}; give a "
                     f"{word} value{hint}")


def _stage_values(ck: _Checks) -> None:
    lay = ck.layout
    ck.number(("frequency_hz",), "layout", lay.frequency_hz, "Hz >0")
    if lay.earth_y_mm is not None:
        ck.number(("earth_y_mm",), "layout", lay.earth_y_mm, "mm")
    for kind, table in TABLES.items():
        for i, item in enumerate(getattr(lay, table.attr)):
            if not isinstance(item.name, str) or not item.name.strip():
                ck.add((kind, i, "name"), f"[[{kind}]] #{i + 1}: name must be a non-empty "
                       f'string; give it a unique name such as name = "{kind[0].upper()}1"')
            what = ck.label(kind, i, item.name)
            for key, rule in _NUMBERS[kind].items():
                ck.number((kind, i, key), what, getattr(item, table.field_of(key)), rule)
    for i, c in enumerate(lay.circuits):
        what = ck.label("circuit", i, c.name)
        if c.system not in SYSTEMS:
            ck.add(("circuit", i, "system"), f"{what}: unknown system {c.system!r}; use one of "
                   f"{', '.join(SYSTEMS)}{did_you_mean(c.system, SYSTEMS)}")
        seen: set[int] = set()
        for order, frac in c.harmonics:
            where = ("circuit", i, "harmonics", str(order))
            if isinstance(order, bool) or not isinstance(order, int) \
                    or order not in HARMONIC_ORDERS:
                ck.add(where, f"{what}: harmonic order {order!r} is out of range; use whole "
                       f"orders {HARMONIC_ORDERS[0]} to {HARMONIC_ORDERS[-1]}")
            elif order in seen:
                ck.add(where, f"{what}: harmonic order {order} is given twice; keep one")
            else:
                seen.add(order)
                ck.number(where, what, frac, "(fraction) >=0", key=f"harmonic {order}")
    for i, c in enumerate(lay.conductors):
        if c.material is not None and c.material not in MATERIALS:
            ck.add(("conductor", i, "material"), f"{ck.label('conductor', i, c.name)}: unknown "
                   f"material {c.material!r}; use {' or '.join(MATERIALS)}"
                   f"{did_you_mean(c.material, MATERIALS)}")
    for i, ln in enumerate(lay.lines):
        what = ck.label("line", i, ln.name)
        ends = (ln.x0_mm, ln.y0_mm, ln.x1_mm, ln.y1_mm)
        if all(_finite(v) for v in ends) and ends[:2] == ends[2:]:
            ck.add(("line", i), f"{what}: the line has zero length; give different end "
                   "points (x0_mm, y0_mm) and (x1_mm, y1_mm)")
        s = ln.samples
        if isinstance(s, bool) or not isinstance(s, int) or not 2 <= s <= MAX_SAMPLES:
            ck.add(("line", i, "samples"), f"{what}: samples must be a whole number from 2 "
                   f"to {MAX_SAMPLES}, got {s!r}; for example samples = 101")


def _stage_duplicates(ck: _Checks) -> None:
    lay = ck.layout
    for kind, table in TABLES.items():
        first: dict[object, int] = {}
        for i, item in enumerate(getattr(lay, table.attr)):
            if item.name in first:
                j = first[item.name]
                at = f" (first at line {ck.lines.line(kind, j, 'name')})" if ck.lines else ""
                ck.add((kind, i, "name"), f"duplicate {kind} name '{item.name}'{at}; give "
                       f"each {kind} a unique name")
            else:
                first[item.name] = i


def _known(word: object, names: Sequence[object], what: str) -> str:
    """A close match, else the list of names (at most 10)."""
    texts = [str(n) for n in names]
    hint = did_you_mean(word, texts)
    if hint or not texts:
        return hint or f"; the layout has no [[{what}]], add one"
    return f"; the {what}s are {', '.join(texts[:10])}{', ...' if len(texts) > 10 else ''}"


def _stage_references(ck: _Checks) -> None:
    lay = ck.layout
    systems = {c.name: c.system for c in lay.circuits}
    trays = [t.name for t in lay.trays]
    for i, c in enumerate(lay.conductors):
        what = ck.label("conductor", i, c.name)
        if c.circuit not in systems:
            ck.add(("conductor", i, "circuit"), f"{what}: circuit '{c.circuit}' is not defined"
                   f"{_known(c.circuit, list(systems), 'circuit')}; add that [[circuit]] or "
                   "name an existing one")
        elif systems[c.circuit] in PHASES and c.phase not in PHASES[systems[c.circuit]]:
            ok = PHASES[systems[c.circuit]]
            ck.add(("conductor", i, "phase"), f"{what}: phase {c.phase!r} is not valid for "
                   f"circuit '{c.circuit}' ({systems[c.circuit]}); use one of {' '.join(ok)}"
                   f"{did_you_mean(c.phase, ok)}")
        if c.tray is not None and c.tray not in trays:
            ck.add(("conductor", i, "tray"), f"{what}: tray '{c.tray}' is not defined"
                   f"{_known(c.tray, trays, 'tray')}; name an existing tray or remove the key")
    for i, c in enumerate(lay.circuits):
        if c.system == "dc" and c.harmonics:
            ck.add(("circuit", i, "harmonics"), f"{ck.label('circuit', i, c.name)}: a dc "
                   "circuit has no harmonics; remove the harmonics key or change the system")


def overlapping_pairs(x: np.ndarray, y: np.ndarray, r: np.ndarray,
                      tol: float = TOL_MM) -> np.ndarray:
    """Index pairs ``(i, j)``, ``i < j``, of circles that overlap by more than ``tol``.

    Parameters
    ----------
    x, y, r : ndarray, shape (n,)
        Centres and radii (mm).
    tol : float
        Circles overlap when the centre distance is below ``r_i + r_j - tol``; touching
        circles do not overlap.

    Returns
    -------
    ndarray of int, shape (m, 2)

    Notes
    -----
    Sweep along x: after sorting by x, the k-th neighbour offset is tested for all circles
    at once and the sweep stops when every k-th neighbour is farther than ``2 r_max`` in x
    (x gaps only grow with k), so the cost is O(n log n + n w) for w circles per x-window.
    """
    n = len(x)
    if n < 2:
        return np.zeros((0, 2), dtype=int)
    order = np.argsort(x, kind="stable")
    xs, ys, rs = x[order], y[order], r[order]
    reach = 2.0 * float(rs.max()) - tol
    found = []
    for k in range(1, n):
        idx = np.nonzero(xs[k:] - xs[:-k] < reach)[0]
        if idx.size == 0:
            break
        d = np.hypot(xs[idx + k] - xs[idx], ys[idx + k] - ys[idx])
        hit = idx[d < rs[idx] + rs[idx + k] - tol]
        if hit.size:
            found.append(np.stack([order[hit], order[hit + k]], axis=1))
    if not found:
        return np.zeros((0, 2), dtype=int)
    pairs = np.concatenate(found)
    return np.sort(pairs, axis=1)


def _stage_geometry(ck: _Checks) -> None:
    cs = ck.layout.conductors
    ok = np.array([_finite(c.x_mm) and _finite(c.y_mm) and _finite(c.diameter_mm)
                   and c.diameter_mm > 0 for c in cs], dtype=bool)
    idx = np.nonzero(ok)[0]
    x = np.array([float(cs[i].x_mm) for i in idx])
    y = np.array([float(cs[i].y_mm) for i in idx])
    r = np.array([0.5 * float(cs[i].diameter_mm) for i in idx])
    trays = [t for t in ck.layout.trays if all(_finite(v) for v in t.bounds)
             and t.width_mm > 0 and t.depth_mm > 0]
    if trays and idx.size:
        b = np.array([t.bounds for t in trays])                     # (m, 4)
        inside = ((x - r)[:, None] >= b[:, 0] - TOL_MM) & ((x + r)[:, None] <= b[:, 2] + TOL_MM) \
            & ((y - r)[:, None] >= b[:, 1] - TOL_MM) & ((y + r)[:, None] <= b[:, 3] + TOL_MM)
        col = {t.name: k for k, t in enumerate(trays)}
        for row, i in enumerate(idx):
            c = cs[i]
            where = f"centre ({_g(c.x_mm)}, {_g(c.y_mm)}) mm, diameter {_g(c.diameter_mm)} mm"
            if c.tray is None and not inside[row].any():
                ck.add(("conductor", int(i)), f"{ck.label('conductor', i, c.name)} ({where}) "
                       "lies outside every tray; move it into a tray or enlarge the tray")
            elif c.tray in col and not inside[row, col[c.tray]]:
                t = trays[col[c.tray]]
                xa, ya, xb, yb = t.bounds
                ck.add(("conductor", int(i)), f"{ck.label('conductor', i, c.name)} ({where}) "
                       f"is not inside its tray '{t.name}' (x {_g(xa)} to {_g(xb)}, y {_g(ya)} "
                       f"to {_g(yb)} mm); move it or change its tray")
    pairs = idx[overlapping_pairs(x, y, r)] if idx.size else np.zeros((0, 2), dtype=int)
    reported: set[int] = set()
    for a, b2 in sorted(map(tuple, pairs.tolist()), key=lambda p: (p[1], p[0])):
        if b2 in reported:
            continue
        reported.add(b2)
        ca, cb = cs[a], cs[b2]
        dist = math.hypot(cb.x_mm - ca.x_mm, cb.y_mm - ca.y_mm)
        ck.add(("conductor", b2), f"conductor '{cb.name}' overlaps conductor '{ca.name}' "
               f"(centres {_g(dist)} mm apart, radii add to "
               f"{_g(ca.radius_mm + cb.radius_mm)} mm); move one of them (touching is allowed)")


def _stage_carrying(ck: _Checks) -> None:
    have: dict[object, set[str]] = {}
    for c in ck.layout.conductors:
        have.setdefault(c.circuit, set()).add(c.phase)
    for i, c in enumerate(ck.layout.circuits):
        what = ck.label("circuit", i, c.name)
        if c.name not in have:
            ck.add(("circuit", i), f"{what} has no conductors; add [[conductor]] tables with "
                   f"circuit = \"{c.name}\" or remove the circuit")
            continue
        missing = [p for p in REQUIRED_PHASES.get(c.system, ()) if p not in have[c.name]]
        if missing:
            ck.add(("circuit", i), f"{what} ({c.system}) has no conductor with phase "
                   f"{', '.join(repr(p) for p in missing)}, so it cannot carry its current; "
                   f"add one (system {c.system} needs {' '.join(REQUIRED_PHASES[c.system])})")


def layout_problems(layout: Layout, path: str = "<layout>",
                    lines: LineMap | None = None) -> list[LayoutError]:
    """Every problem of a layout, root causes first, then in file order.

    Parameters
    ----------
    layout : Layout
        The model to check (read from a file, or edited).
    path : str
        Name used in the errors.
    lines : LineMap, optional
        Where each key was written; without it every error has line 0.

    Returns
    -------
    list of LayoutError
        Empty when the layout is valid. Stages, in order: values (finite, in range, known
        words), duplicate names, references (circuit, tray, phase, harmonics of dc),
        geometry (inside trays, no overlap, no conductor in an area, nothing reaching into a
        plate), circuits able to carry their current. The checks of places and place-bound
        limits are in :mod:`trayadvisor.layoutfile.placechecks`, those of plates and sheet
        trays in :mod:`trayadvisor.layoutfile.platechecks`.
    """
    ck = _Checks(layout, path, lines)
    stages = ((_stage_values, place_values, screen_values, plate_values),
              (_stage_duplicates, place_names, plate_names),
              (_stage_references, place_references, screen_references),
              (_stage_geometry, area_geometry, plate_geometry), (_stage_carrying,))
    for stage, runs in enumerate(stages):
        ck.stage = stage
        for run in runs:
            run(ck)
    return [err for *_, err in sorted(ck.found, key=lambda f: f[:3])]


def validate_layout(layout: Layout, path: str = "<layout>",
                    lines: LineMap | None = None) -> None:
    """Raise the first of :func:`layout_problems` as a :class:`LayoutError`, if any."""
    problems = layout_problems(layout, path, lines)
    if problems:
        raise problems[0]
