"""What each character cell of the cross-section canvas shows, as (glyph, style key) pairs.

The canvas widget only turns style keys into terminal styles; deciding where trays,
conductors, the contour at d and the field map go happens here, without textual, so it can
be tested directly. Field values arrive already computed (``field_grid_uT`` in a worker);
nothing here computes a field.

Style keys (hashable tuples):
``("px", top, bottom)`` half block with palette colours; ``("shade", band)``;
``("iso", digit)``; ``("tray", bg)``; ``("dot", bg)``; ``("peak", bg)``;
``("place", bg)`` observation points, lines, areas and their names;
``("plate", magnetic)`` a plate's fill and name (``magnetic``: steel, else another metal);
``("cond", circuit_index, emphasis, on_map)`` with emphasis 0 plain, 1 same circuit as the
selection, 2 selected; ``("note",)``; ``None`` blank. ``bg`` is a palette index or None.

Names from the file are drawn with :func:`trayadvisor.output.plain` (no control
characters); the canvas writes plain segments, never markup.
"""

from __future__ import annotations

import math
import string
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from trayadvisor.model import Layout
from trayadvisor.output import plain
from trayadvisor.tui.logic.mapscale import SHADES, MapScale, iso_digits
from trayadvisor.tui.logic.platetext import is_magnetic, plate_glyph
from trayadvisor.tui.logic.viewport import Bounds, Viewport

#: One glyph per phase label (the format's phases), so phases read without colour.
PHASE_GLYPH: dict[str, str] = {"L1": "1", "L2": "2", "L3": "3", "N": "n", "PE": "e",
                               "L": "L", "+": "+", "-": "−", "a": "a", "b": "b"}
#: Glyphs of the places: a point, a line's dashes (horizontal, vertical, diagonals) and an
#: area's outline (top/bottom, sides, corners).
POINT_GLYPH = "◆"
LINE_GLYPHS = {"h": "╌", "v": "╎", "up": "/", "down": "\\"}
AREA_GLYPHS = {"h": "┄", "v": "┆", "tl": "╭", "tr": "╮", "bl": "╰", "br": "╯"}
#: Circuit tags, in circuit order: A, B, C, ...
TAGS = string.ascii_uppercase + string.digits

Key = tuple | None
Cell = tuple[str, Key]


def drawing_bounds(layout: Layout) -> Bounds:
    """What "fit" shows: the trays, conductors and plates (a 1 m square round a lone
    point)."""
    x0, y0, x1, y1 = layout.envelope_mm()
    if not (layout.trays or layout.conductors) and layout.plates:
        x0, y0, x1, y1 = layout.plates[0].bounds
    for c in layout.conductors:
        x0, y0 = min(x0, c.x_mm - c.radius_mm), min(y0, c.y_mm - c.radius_mm)
        x1, y1 = max(x1, c.x_mm + c.radius_mm), max(y1, c.y_mm + c.radius_mm)
    for p in layout.all_plates():
        px0, py0, px1, py1 = p.bounds
        x0, y0, x1, y1 = min(x0, px0), min(y0, py0), max(x1, px1), max(y1, py1)
    if x1 - x0 < 1 and y1 - y0 < 1:
        return (x0 - 500, y0 - 500, x1 + 500, y1 + 500)
    return (x0, y0, x1, y1)


def circuit_tags(layout: Layout) -> dict[str, str]:
    """Circuit name -> one-letter tag (A, B, ... in file order)."""
    return {c.name: TAGS[i % len(TAGS)] for i, c in enumerate(layout.circuits)}


def conductor_label(layout: Layout, name: str) -> str:
    """The two-character label of a conductor: circuit tag + phase glyph, e.g. ``A1``."""
    c = layout.conductors[layout.conductor_index(name)]
    return circuit_tags(layout).get(c.circuit, "?") + PHASE_GLYPH.get(c.phase, "?")


@dataclass(frozen=True)
class FieldMap:
    """A computed grid of resultant field (µT), row 0 at the lowest y (as field_grid_uT)."""

    bounds_mm: Bounds
    values_uT: np.ndarray  # (ny, nx)
    scale: MapScale


@dataclass
class Scene:
    rows: list[list[Cell]]
    hidden: int  # conductors inside the window that share a cell with another


def _resample(fmap: FieldMap, vp: Viewport) -> np.ndarray:
    """The map's values at the window's pixel centres, top row first (NaN where not known)."""
    x0, y0, x1, y1 = vp.bounds_mm
    s = vp.mm_per_col
    xs = x0 + (np.arange(vp.cols) + 0.5) * s
    ys = y1 - (np.arange(vp.px_rows) + 0.5) * s
    gx0, gy0, gx1, gy1 = fmap.bounds_mm
    ny, nx = fmap.values_uT.shape
    ix = np.floor((xs - gx0) / (gx1 - gx0) * nx).astype(int)
    iy = np.floor((ys - gy0) / (gy1 - gy0) * ny).astype(int)
    okx, oky = (ix >= 0) & (ix < nx), (iy >= 0) & (iy < ny)
    out = fmap.values_uT[np.clip(iy, 0, ny - 1)][:, np.clip(ix, 0, nx - 1)]
    return np.where(oky[:, None] & okx[None, :], out, np.nan)


def _map_cells(fmap: FieldMap, vp: Viewport, style: str) -> tuple[list[list[Cell]], np.ndarray]:
    """Map cells and the per-cell background palette index (-1: none)."""
    px = _resample(fmap, vp)
    known = ~np.isnan(px)
    vals = np.where(known, px, 0.0)
    if style == "colour":
        idx = fmap.scale.colour_index(vals)
        top, bot = idx[0::2], idx[1::2]
        ok = known[0::2] & known[1::2]
        bg = np.where(ok, (top + bot) // 2, -1)
        rows = [[("▀", ("px", int(t), int(b))) if k else (" ", None)
                 for t, b, k in zip(tr, br, kr, strict=True)]
                for tr, br, kr in zip(top.tolist(), bot.tolist(), ok.tolist(), strict=True)]
        return rows, bg
    cell = np.maximum(vals[0::2], vals[1::2])
    ok = known[0::2] | known[1::2]
    bands = np.where(ok, fmap.scale.band(cell), 0)
    digits = iso_digits(bands)
    rows = []
    for br, dr, kr in zip(bands.tolist(), digits.tolist(), ok.tolist(), strict=True):
        rows.append([(str(d), ("iso", d)) if d and k else (SHADES[b], ("shade", b))
                     for b, d, k in zip(br, dr, kr, strict=True)])
    return rows, np.full(bands.shape, -1)


def _scale_bar(vp: Viewport) -> str:
    """A bar about a sixth of the window wide with a 1-2-5 length, e.g. ``├──┤ 200 mm``."""
    target = max(vp.cols / 6.0, 3.0) * vp.mm_per_col
    k = math.floor(math.log10(target))
    length = max(m * 10.0 ** k for m in (1, 2, 5) if m * 10.0 ** k <= target)
    n = max(2, round(length / vp.mm_per_col))
    text = f"{length / 1000:g} m" if length >= 1000 else f"{length:g} mm"
    return "├" + "─" * (n - 2) + "┤ " + text


def build_scene(layout: Layout, vp: Viewport, selected: str | None = None,
                fmap: FieldMap | None = None, style: str = "colour",
                contour_mm: np.ndarray | None = None,
                peak_mm: tuple[float, float] | None = None, places: bool = True) -> Scene:
    """The canvas contents for one window.

    Parameters
    ----------
    layout, vp, selected
        The model, the window and the selected conductor's name.
    fmap : FieldMap, optional
        Draw this field map underneath (``style`` "colour": half blocks; "shade": glyphs
        and iso-level digits).
    contour_mm : (k, 2) array, optional
        Points of the curve at distance d, drawn as dots.
    peak_mm : (x, y), optional
        Where the field on that curve peaks, drawn as ``×``.
    places : bool
        Draw the layout's observation points (``◆`` and the name), lines (dashes) and areas
        (rounded dashed outlines, the name on the top edge), under trays and conductors.

    Plates (:meth:`trayadvisor.model.Layout.all_plates`) are filled rectangles over the
    trays' outlines (a sheet tray's walls are plates) and under the tray names, the peak
    and the conductors: ``#`` steel, ``=`` another metal, at least one cell thick.
    """
    cols, nrows = vp.cols, vp.rows
    if fmap is not None:
        rows, bg = _map_cells(fmap, vp, style)
    else:
        rows = [[(" ", None)] * cols for _ in range(nrows)]
        bg = np.full((nrows, cols), -1)

    def put(c: int, r: int, ch: str, kind: str) -> None:
        if 0 <= c < cols and 0 <= r < nrows:
            b = int(bg[r, c])
            rows[r][c] = (ch, (kind, b if b >= 0 else None))

    if contour_mm is not None and len(contour_mm):
        pts = np.asarray(contour_mm, float)
        x0, _, _, y1 = vp.bounds_mm
        cc = np.floor((pts[:, 0] - x0) / vp.mm_per_col).astype(int)
        rr = (np.floor((y1 - pts[:, 1]) / vp.mm_per_col).astype(int)) // 2
        inside = (cc >= 0) & (cc < cols) & (rr >= 0) & (rr < nrows)
        for c, r in set(zip(cc[inside].tolist(), rr[inside].tolist(), strict=True)):
            put(c, r, "·", "dot")
    if places:
        _draw_places(layout, vp, put)
    for t in layout.trays:
        x0, y0, x1, y1 = t.bounds
        c0, c1 = vp.col_of(x0), vp.col_of(x1)
        r0, r1 = vp.row_of(y1), vp.row_of(y0)
        for c in range(max(c0, 0), min(c1, cols - 1) + 1):
            put(c, r0, "─", "tray")
            put(c, r1, "─", "tray")
        for r in range(max(r0, 0), min(r1, nrows - 1) + 1):
            put(c0, r, "│", "tray")
            put(c1, r, "│", "tray")
        for c, r, ch in ((c0, r0, "┌"), (c1, r0, "┐"), (c0, r1, "└"), (c1, r1, "┘")):
            put(c, r, ch, "tray")
    _draw_plates(layout, vp, rows)
    for t in layout.trays:  # names last: a sheet tray's cover does not hide its name
        name = plain(t.name)
        c0, c1 = vp.col_of(t.x_mm), vp.col_of(t.x_mm + t.width_mm)
        if c1 - c0 >= len(name) + 3:
            r0 = vp.row_of(t.y_mm + t.depth_mm)
            for k, ch in enumerate(name):
                put(c0 + 1 + k, r0, ch, "tray")
    if peak_mm is not None:
        put(*vp.cell_of(*peak_mm), "×", "peak")
    hidden = _place_conductors(layout, vp, selected, rows, fmap is not None)
    bar = _scale_bar(vp)
    if len(bar) < cols - 1 and nrows > 2:
        for k, ch in enumerate(bar):
            rows[nrows - 1][1 + k] = (ch, ("note",))
    if hidden:
        note = f"+{hidden} hidden: zoom in"
        if len(note) < cols:
            for k, ch in enumerate(note):
                rows[0][cols - len(note) + k] = (ch, ("note",))
    return Scene(rows, hidden)


def plate_cells(vp: Viewport, bounds: Bounds) -> tuple[int, int, int, int]:
    """(c0, r0, c1, r1): the cells a rectangle overlaps, inclusive, unclipped; a plate
    thinner than a cell (or a pixel) still gets one."""
    x0, y0, x1, y1 = bounds
    wx0, _, _, wy1 = vp.bounds_mm
    s = vp.mm_per_col
    c0 = math.floor((x0 - wx0) / s)
    c1 = max(c0, math.ceil((x1 - wx0) / s) - 1)
    p0 = math.floor((wy1 - y1) / s)
    p1 = max(p0, math.ceil((wy1 - y0) / s) - 1)
    return c0, p0 // 2, c1, p1 // 2


def _draw_plates(layout: Layout, vp: Viewport, rows: list[list[Cell]]) -> None:
    """Every plate (the ``[[plate]]`` entries and the sheet trays' metal) filled with its
    glyph, clipped to the window; a ``[[plate]]`` wide enough shows its name inside."""
    cols, nrows = vp.cols, vp.rows
    for p in layout.all_plates():
        c0, r0, c1, r1 = plate_cells(vp, p.bounds)
        if c1 < 0 or c0 >= cols or r1 < 0 or r0 >= nrows:
            continue
        key = ("plate", is_magnetic(p))
        cell = (plate_glyph(p), key)
        for r in range(max(r0, 0), min(r1, nrows - 1) + 1):
            row = rows[r]
            for c in range(max(c0, 0), min(c1, cols - 1) + 1):
                row[c] = cell
        if p.tray is not None:
            continue
        name = plain(p.name)
        a, b = max(c0, 0), min(c1, cols - 1)
        r = min(max((r0 + r1) // 2, 0), nrows - 1)
        if b - a + 1 >= len(name) + 2:
            start = a + (b - a + 1 - len(name)) // 2
            for k, ch in enumerate(name):
                rows[r][start + k] = (ch, key)


def _place_conductors(layout: Layout, vp: Viewport, selected: str | None,
                      rows: list[list[Cell]], on_map: bool) -> int:
    """Write conductor labels into ``rows``; returns how many could not be shown.

    Pass 1 gives every conductor its centre cell (the selected one first); pass 2 widens
    labels into free cells to the left: ``A1`` (circuit tag + phase), ``(A1)`` when the
    conductor is at least five cells wide; the phase glyph always sits on the centre cell.
    """
    cols, nrows = vp.cols, vp.rows
    tags = circuit_tags(layout)
    index = {c.name: i for i, c in enumerate(layout.circuits)}
    sel_circuit = None
    order = list(layout.conductors)
    for k, c in enumerate(order):
        if c.name == selected:
            sel_circuit = c.circuit
            order.insert(0, order.pop(k))
            break
    taken: dict[tuple[int, int], str] = {}
    placed = []
    hidden = 0
    for c in order:
        col, row = vp.cell_of(c.x_mm, c.y_mm)
        if not (0 <= col < cols and 0 <= row < nrows):
            continue
        if (col, row) in taken:
            hidden += 1
            continue
        taken[(col, row)] = c.name
        placed.append((c, col, row))
    for c, col, row in placed:
        emph = 2 if c.name == selected else (1 if c.circuit == sel_circuit else 0)
        key = ("cond", index.get(c.circuit, -1), emph, on_map)
        glyph = PHASE_GLYPH.get(c.phase, "?")
        tag = tags.get(c.circuit, "?")
        options = []
        if c.diameter_mm / vp.mm_per_col >= 5.0:
            options.append((col - 2, f"({tag}{glyph})"))
        options += [(col - 1, f"{tag}{glyph}"), (col, glyph)]
        for start, text in options:
            cells = [(start + k, row) for k, ch in enumerate(text)]
            if all(0 <= x < cols and taken.get((x, row), c.name) == c.name for x, _ in cells):
                for (x, _), ch in zip(cells, text, strict=True):
                    taken[(x, row)] = c.name
                    rows[row][x] = (ch, key)
                break
    return hidden


def _label(put: Callable[[int, int, str, str], None], col: int, row: int, text: str,
           cols: int) -> None:
    """Write ``text`` from ``col`` on ``row`` when all of it fits inside the window."""
    if 0 <= col and col + len(text) <= cols:
        for k, ch in enumerate(text):
            put(col + k, row, ch, "place")


def _clip(p0: tuple[float, float], p1: tuple[float, float], bounds: Bounds
          ) -> tuple[float, float] | None:
    """The parameter range [t0, t1] of the segment p0→p1 inside ``bounds`` (Liang-Barsky),
    or None when it misses the window."""
    x0, y0, x1, y1 = bounds
    dx, dy = p1[0] - p0[0], p1[1] - p0[1]
    t0, t1 = 0.0, 1.0
    for p, q in ((-dx, p0[0] - x0), (dx, x1 - p0[0]), (-dy, p0[1] - y0), (dy, y1 - p0[1])):
        if p == 0:
            if q < 0:
                return None
            continue
        t = q / p
        if p < 0:
            t0 = max(t0, t)
        else:
            t1 = min(t1, t)
    return (t0, t1) if t0 <= t1 else None


def _draw_places(layout: Layout, vp: Viewport, put: Callable[[int, int, str, str], None]
                 ) -> None:
    """Areas (outline, name on the top edge or the first row shown), lines (dashes, name at
    the first end shown) and points (``◆`` and the name), clipped to the window."""
    cols, nrows = vp.cols, vp.rows
    for a in layout.areas:
        c0, c1 = vp.col_of(a.x0_mm), vp.col_of(a.x1_mm)
        r0, r1 = vp.row_of(a.y1_mm), vp.row_of(a.y0_mm)
        if c1 < 0 or c0 >= cols or r1 < 0 or r0 >= nrows:
            continue
        for c in range(max(c0, 0), min(c1, cols - 1) + 1):
            put(c, r0, AREA_GLYPHS["h"], "place")
            put(c, r1, AREA_GLYPHS["h"], "place")
        for r in range(max(r0, 0), min(r1, nrows - 1) + 1):
            put(c0, r, AREA_GLYPHS["v"], "place")
            put(c1, r, AREA_GLYPHS["v"], "place")
        for c, r, k in ((c0, r0, "tl"), (c1, r0, "tr"), (c0, r1, "bl"), (c1, r1, "br")):
            put(c, r, AREA_GLYPHS[k], "place")
        start = max(c0, 0) + 1
        if min(c1, cols) - start >= len(plain(a.name)) + 1:
            _label(put, start, max(r0, 0), plain(a.name), cols)
    for ln in layout.lines:
        p0, p1 = (ln.x0_mm, ln.y0_mm), (ln.x1_mm, ln.y1_mm)
        span = _clip(p0, p1, vp.bounds_mm)
        if span is None:
            continue
        (ca, ra), (cb, rb) = vp.cell_of(*p0), vp.cell_of(*p1)
        dc, dr = cb - ca, rb - ra
        if abs(dr) * 4 <= abs(dc):
            glyph = LINE_GLYPHS["h"]
        elif abs(dc) * 4 <= abs(dr):
            glyph = LINE_GLYPHS["v"]
        else:
            glyph = LINE_GLYPHS["up"] if (dc > 0) != (dr > 0) else LINE_GLYPHS["down"]
        xa = p0[0] + span[0] * (p1[0] - p0[0])
        ya = p0[1] + span[0] * (p1[1] - p0[1])
        xb = p0[0] + span[1] * (p1[0] - p0[0])
        yb = p0[1] + span[1] * (p1[1] - p0[1])
        n = 2 * max(abs(vp.col_of(xb) - vp.col_of(xa)), abs(vp.row_of(yb) - vp.row_of(ya))) + 2
        first = None
        for t in np.linspace(0.0, 1.0, n):
            c, r = vp.cell_of(xa + t * (xb - xa), ya + t * (yb - ya))
            if 0 <= c < cols and 0 <= r < nrows:
                put(c, r, glyph, "place")
                first = first or (c, r)
        if first is not None:
            _label(put, first[0] + 1, first[1], plain(ln.name), cols)
    for p in layout.points:
        c, r = vp.cell_of(p.x_mm, p.y_mm)
        if 0 <= c < cols and 0 <= r < nrows:
            put(c, r, POINT_GLYPH, "place")
            _label(put, c + 1, r, plain(p.name), cols)
