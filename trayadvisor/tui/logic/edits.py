"""Edits of a layout as pure functions: each takes a Layout and returns a new one.

No textual here: the terminal UI wraps these in :class:`~trayadvisor.tui.logic.document.Document`
so that every edit is undoable, and tests call them directly.
"""

from __future__ import annotations

import re
import string
from dataclasses import replace

import numpy as np

from trayadvisor.model import PHASES, REQUIRED_PHASES, Circuit, Conductor, Layout, Plate, Tray

#: The tray a new, empty layout starts with (mm).
NEW_TRAY = Tray(name="T1", x_mm=0.0, y_mm=0.0, width_mm=600.0, depth_mm=100.0)
#: Diameter of a new conductor when there is nothing to copy it from (mm).
NEW_DIAMETER_MM = 25.0
#: A proposed plate: a steel sheet this far below the drawing, this thick, reaching this far
#: beyond it on each side (mm).
NEW_PLATE_BELOW_MM = 250.0
NEW_PLATE_MM = 2.0
NEW_PLATE_OVERHANG_MM = 100.0


def new_layout(title: str = "") -> Layout:
    """An empty layout with one tray; it passes validation as it is."""
    return Layout(title=title, frequency_hz=50.0, trays=(NEW_TRAY,))


# -- names ----------------------------------------------------------------------------------
def unique_name(base: str, taken: set[str] | frozenset[str]) -> str:
    """``base`` if free, else ``base-2``, ``base-3``, ... (an existing ``-N`` suffix is
    replaced rather than stacked)."""
    if base not in taken:
        return base
    stem = re.sub(r"-\d+$", "", base) or base
    k = 2
    while f"{stem}-{k}" in taken:
        k += 1
    return f"{stem}-{k}"


def conductor_name(layout: Layout, circuit: str, phase: str) -> str:
    """The next free name in the style ``F1-L1a``, ``F1-L1b``, ... for a circuit and phase."""
    taken = {c.name for c in layout.conductors}
    for letter in string.ascii_lowercase:
        name = f"{circuit}-{phase}{letter}"
        if name not in taken:
            return name
    return unique_name(f"{circuit}-{phase}", taken)


def suggest_phase(layout: Layout, circuit: str) -> str:
    """A phase for a new conductor of ``circuit``: the first required phase it still lacks,
    else the phase it has fewest conductors of."""
    try:
        system = layout.circuit(circuit).system
    except KeyError:
        return "L1"
    have = [c.phase for c in layout.conductors if c.circuit == circuit]
    for p in REQUIRED_PHASES.get(system, ()):
        if p not in have:
            return p
    choices = REQUIRED_PHASES.get(system) or PHASES.get(system, ("L1",))
    return min(choices, key=lambda p: (have.count(p), choices.index(p)))


# -- geometry -------------------------------------------------------------------------------
def free_spot(layout: Layout, x_mm: float, y_mm: float, diameter_mm: float,
              ignore: str | None = None) -> tuple[float, float]:
    """The position nearest to (x, y) where a conductor of ``diameter_mm`` fits inside a tray
    without overlapping another conductor (``ignore`` names one to leave out).

    Candidates lie on a grid of a quarter diameter in every tray; when none is free (or the
    layout has no tray) the point itself is returned and validation will say what is wrong.
    """
    r = 0.5 * diameter_mm
    step = max(diameter_mm / 4.0, 1.0)
    others = [c for c in layout.conductors if c.name != ignore]
    ox = np.array([c.x_mm for c in others], dtype=float)
    oy = np.array([c.y_mm for c in others], dtype=float)
    orad = np.array([c.radius_mm for c in others], dtype=float)
    best: tuple[float, float, float] | None = None
    for t in layout.trays:
        x0, y0, x1, y1 = t.bounds
        if x1 - x0 < diameter_mm or y1 - y0 < diameter_mm:
            continue
        xs = np.arange(x0 + r, x1 - r + 1e-9, step)
        ys = np.arange(y0 + r, y1 - r + 1e-9, step)
        gx, gy = np.meshgrid(xs, ys)
        gx, gy = gx.ravel(), gy.ravel()
        if ox.size:
            gap = np.hypot(gx[:, None] - ox[None, :], gy[:, None] - oy[None, :]) \
                - (orad[None, :] + r)
            ok = np.all(gap >= -1e-9, axis=1)
            gx, gy = gx[ok], gy[ok]
        if gx.size == 0:
            continue
        dist = np.hypot(gx - x_mm, gy - y_mm)
        i = int(np.argmin(dist))
        if best is None or dist[i] < best[0]:
            best = (float(dist[i]), float(gx[i]), float(gy[i]))
    if best is None:
        return (float(x_mm), float(y_mm))
    return (round(best[1], 3), round(best[2], 3))


# -- conductors -----------------------------------------------------------------------------
def move_conductor(layout: Layout, name: str, dx_mm: float, dy_mm: float) -> Layout:
    """Move one conductor by (dx, dy) mm."""
    i = layout.conductor_index(name)
    c = layout.conductors[i]
    return layout.with_conductor(i, c.moved(round(c.x_mm + dx_mm, 6), round(c.y_mm + dy_mm, 6)))


def replace_conductor(layout: Layout, name: str, new: Conductor) -> Layout:
    """Put ``new`` where the conductor called ``name`` was (its name may change)."""
    return layout.with_conductor(layout.conductor_index(name), new)


def add_conductor(layout: Layout, conductor: Conductor) -> Layout:
    return layout.with_conductors((*layout.conductors, conductor))


def delete_conductor(layout: Layout, name: str) -> Layout:
    return layout.with_conductors(tuple(c for c in layout.conductors if c.name != name))


def duplicate_conductor(layout: Layout, name: str) -> tuple[Layout, str]:
    """A copy of a conductor at the nearest free place beside it; returns (layout, new name)."""
    c = layout.conductors[layout.conductor_index(name)]
    new_name = conductor_name(layout, c.circuit, c.phase)
    if not new_name.startswith(f"{c.circuit}-"):
        new_name = unique_name(c.name, {k.name for k in layout.conductors})
    x, y = free_spot(layout, c.x_mm + c.diameter_mm, c.y_mm, c.diameter_mm)
    copy = replace(c, name=new_name, x_mm=x, y_mm=y, fixed=False)
    index = layout.conductor_index(name)
    cs = list(layout.conductors)
    cs.insert(index + 1, copy)
    return layout.with_conductors(cs), new_name


def new_conductor(layout: Layout, near: Conductor | None, circuit: str) -> Conductor:
    """A proposed new conductor of ``circuit`` next to ``near`` (not yet in the layout)."""
    phase = suggest_phase(layout, circuit)
    dia = near.diameter_mm if near is not None else NEW_DIAMETER_MM
    if near is not None:
        x, y = near.x_mm + dia, near.y_mm
    elif layout.trays:
        t = layout.trays[0]
        x, y = t.x_mm + dia / 2, t.y_mm + dia / 2
    else:
        x, y = 0.0, 0.0
    x, y = free_spot(layout, x, y, dia)
    return Conductor(name=conductor_name(layout, circuit, phase), circuit=circuit, phase=phase,
                     x_mm=x, y_mm=y, diameter_mm=dia,
                     area_mm2=near.area_mm2 if near is not None else None,
                     material=near.material if near is not None else None)


# -- circuits and trays ---------------------------------------------------------------------
def add_circuit(layout: Layout, circuit: Circuit) -> Layout:
    return replace(layout, circuits=(*layout.circuits, circuit))


def replace_circuit(layout: Layout, name: str, new: Circuit) -> Layout:
    """Replace a circuit; a new name is carried to its conductors."""
    circuits = tuple(new if c.name == name else c for c in layout.circuits)
    cons = layout.conductors
    if new.name != name:
        cons = tuple(replace(c, circuit=new.name) if c.circuit == name else c for c in cons)
    return replace(layout, circuits=circuits, conductors=cons)


def delete_circuit(layout: Layout, name: str) -> Layout:
    """Remove a circuit and all its conductors."""
    return replace(layout, circuits=tuple(c for c in layout.circuits if c.name != name),
                   conductors=tuple(c for c in layout.conductors if c.circuit != name))


def add_tray(layout: Layout, tray: Tray) -> Layout:
    return replace(layout, trays=(*layout.trays, tray))


def replace_tray(layout: Layout, name: str, new: Tray) -> Layout:
    """Replace a tray; a new name is carried to the conductors that name it and to the
    plates bonded to it (``body`` = the tray's name)."""
    trays = tuple(new if t.name == name else t for t in layout.trays)
    cons, plates = layout.conductors, layout.plates
    if new.name != name:
        cons = tuple(replace(c, tray=new.name) if c.tray == name else c for c in cons)
        plates = tuple(replace(p, body=new.name) if p.body == name else p for p in plates)
    return replace(layout, trays=trays, conductors=cons, plates=plates)


def delete_tray(layout: Layout, name: str) -> Layout:
    """Remove a tray; conductors that named it no longer name a tray."""
    cons = tuple(replace(c, tray=None) if c.tray == name else c for c in layout.conductors)
    return replace(layout, trays=tuple(t for t in layout.trays if t.name != name),
                   conductors=cons)


def new_tray(layout: Layout) -> Tray:
    """A proposed tray to the right of the others, the size and kind of the last one."""
    names = {t.name for t in layout.trays}
    k = len(layout.trays) + 1
    while f"T{k}" in names:
        k += 1
    if not layout.trays:
        return replace(NEW_TRAY, name=f"T{k}")
    last = layout.trays[-1]
    x1 = max(t.outer_bounds[2] for t in layout.trays)
    # a tray like the last one (its size, sheet and cover), clear of the others' metal
    gap = 100.0 + (last.sheet_mm if last.sheet else 0.0)
    return replace(last, name=f"T{k}", x_mm=x1 + gap)


def tray_of(layout: Layout, conductor: Conductor | None) -> Tray | None:
    """The tray a conductor names, or the one containing its centre, or the first tray."""
    if conductor is not None:
        for t in layout.trays:
            if t.name == conductor.tray:
                return t
        for t in layout.trays:
            x0, y0, x1, y1 = t.bounds
            if x0 <= conductor.x_mm <= x1 and y0 <= conductor.y_mm <= y1:
                return t
    return layout.trays[0] if layout.trays else None


def tray_edit(layout: Layout, name: str, value: Tray | str) -> tuple[Layout, str]:
    """The layout after a tray form's result (a Tray, or "delete"), and the undo label."""
    if value == "delete":
        return delete_tray(layout, name), f"delete tray {name}"
    assert isinstance(value, Tray)
    return replace_tray(layout, name, value), f"edit tray {value.name}"


# -- plates ---------------------------------------------------------------------------------
def plate_names(layout: Layout) -> set[str]:
    """Every plate name in use: the ``[[plate]]`` entries and the sheet trays' parts."""
    return {p.name for p in layout.all_plates()}


def add_plate(layout: Layout, plate: Plate) -> Layout:
    return replace(layout, plates=(*layout.plates, plate))


def replace_plate(layout: Layout, name: str, new: Plate) -> Layout:
    """Put ``new`` where the plate called ``name`` was. When a plate that is its own body
    is renamed, the plates bonded to it (``body`` = its name) follow the new name."""
    old = next(p for p in layout.plates if p.name == name)
    plates = tuple(new if p.name == name else p for p in layout.plates)
    if new.name != name and old.body is None:
        plates = tuple(replace(p, body=new.name) if p.body == name and p is not new else p
                       for p in plates)
    return replace(layout, plates=plates)


def delete_plate(layout: Layout, name: str) -> Layout:
    return replace(layout, plates=tuple(p for p in layout.plates if p.name != name))


def _clear_of_places(layout: Layout, box: tuple[float, float, float, float]) -> bool:
    """True when no area, point or line (its bounding box) reaches into ``box``."""
    x0, y0, x1, y1 = box
    boxes = [(a.x0_mm, a.y0_mm, a.x1_mm, a.y1_mm) for a in layout.areas]
    boxes += [(p.x_mm, p.y_mm, p.x_mm, p.y_mm) for p in layout.points]
    boxes += [(min(ln.x0_mm, ln.x1_mm), min(ln.y0_mm, ln.y1_mm), max(ln.x0_mm, ln.x1_mm),
               max(ln.y0_mm, ln.y1_mm)) for ln in layout.lines]
    return all(b[2] <= x0 or b[0] >= x1 or b[3] <= y0 or b[1] >= y1 for b in boxes)


def new_plate(layout: Layout) -> Plate:
    """A proposed plate: a 2 mm steel sheet 250 mm below everything drawn (above it when an
    observation place is in the way), 100 mm wider on each side."""
    if layout.trays or layout.conductors or layout.plates:
        boxes = [p.bounds for p in layout.all_plates()]
        if layout.trays or layout.conductors:
            boxes.append(layout.envelope_mm())
        x0, y0 = min(b[0] for b in boxes), min(b[1] for b in boxes)
        x1, y1 = max(b[2] for b in boxes), max(b[3] for b in boxes)
    else:
        x0, y0, x1, y1 = NEW_TRAY.bounds
    px0 = round(x0 - NEW_PLATE_OVERHANG_MM, 3)
    width = round(x1 - x0 + 2 * NEW_PLATE_OVERHANG_MM, 3)
    below = round(y0 - NEW_PLATE_BELOW_MM - NEW_PLATE_MM, 3)
    above = round(y1 + NEW_PLATE_BELOW_MM, 3)
    y = next((v for v in (below, above)
              if _clear_of_places(layout, (px0, v, px0 + width, v + NEW_PLATE_MM))), below)
    return Plate(unique_name("plate", plate_names(layout)), px0, y, width, NEW_PLATE_MM,
                 material="steel")


def plate_edit(layout: Layout, name: str | None, value: Plate | str) -> tuple[Layout, str]:
    """The layout after a plate form's result, and the undo label: a new plate (``name``
    None), a changed one, or "delete"."""
    if value == "delete":
        return delete_plate(layout, str(name)), f"delete plate {name}"
    assert isinstance(value, Plate)
    if name is None:
        return add_plate(layout, value), f"add plate {value.name}"
    return replace_plate(layout, name, value), f"edit plate {value.name}"
