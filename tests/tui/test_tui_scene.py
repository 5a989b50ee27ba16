"""What the canvas draws, checked without textual: window arithmetic, trays, glyphs, map."""

from __future__ import annotations

import math

import numpy as np

from trayadvisor.engine import field_grid_uT
from trayadvisor.model import Circuit, Conductor, Layout, Tray
from trayadvisor.tui.logic.mapscale import SHADES, STEPS, MapScale, iso_digits, palette
from trayadvisor.tui.logic.scene import FieldMap, build_scene, circuit_tags
from trayadvisor.tui.logic.viewport import Viewport

TRAY = Tray("P1", 0.0, 0.0, 400.0, 100.0)
LAYOUT = Layout(
    "t", 50.0, (TRAY,),
    (Circuit("F1", "ac3", 100.0), Circuit("S1", "ac1", 10.0)),
    (Conductor("F1-L1a", "F1", "L1", 50.0, 20.0, 30.0),
     Conductor("F1-L2a", "F1", "L2", 150.0, 20.0, 30.0),
     Conductor("F1-L3a", "F1", "L3", 250.0, 20.0, 30.0),
     Conductor("S1-L", "S1", "L", 330.0, 20.0, 20.0),
     Conductor("S1-N", "S1", "N", 370.0, 20.0, 20.0)),
)


def test_viewport_cells_and_fit() -> None:
    vp = Viewport(cols=40, rows=10).fitted(TRAY.bounds)
    x0, y0, x1, y1 = vp.bounds_mm
    assert x0 <= 0 and x1 >= 400 and y0 <= 0 and y1 >= 100      # the tray fits
    assert math.isclose((x1 - x0) / vp.cols, (y1 - y0) / vp.px_rows)  # square pixels
    assert vp.cell_of(x0 + 1e-9, y1 - 1e-9) == (0, 0)
    assert vp.cell_of(x1 - 1e-9, y0 + 1e-9) == (39, 9)
    assert math.isclose(vp.zoomed(2).mm_per_col, vp.mm_per_col / 2)
    far = vp.following(5000.0, 50.0)
    assert far.shows(5000.0, 50.0)


def test_tray_outline_and_conductor_glyphs_at_their_cells() -> None:
    vp = Viewport(cols=60, rows=12).fitted(TRAY.bounds, margin=0.1)
    scene = build_scene(LAYOUT, vp, selected="F1-L2a")
    text = ["".join(ch for ch, _ in row) for row in scene.rows]
    c0, c1 = vp.col_of(0.0), vp.col_of(400.0)
    r0, r1 = vp.row_of(100.0), vp.row_of(0.0)
    assert text[r0][c0] == "┌" and text[r0][c1] == "┐"
    assert text[r1][c0] == "└" and text[r1][c1] == "┘"
    assert text[r0][c0 + 1:c0 + 3] == "P1"                    # tray name on its top edge
    tags = circuit_tags(LAYOUT)
    for c in LAYOUT.conductors:
        col, row = vp.cell_of(c.x_mm, c.y_mm)
        glyph = {"L1": "1", "L2": "2", "L3": "3", "L": "L", "N": "n"}[c.phase]
        assert text[row][col] == glyph
        assert text[row][col - 1] == tags[c.circuit]          # room for the circuit tag
    col, row = vp.cell_of(150.0, 20.0)
    assert scene.rows[row][col][1][2] == 2                    # the selection is emphasised
    col, row = vp.cell_of(50.0, 20.0)
    assert scene.rows[row][col][1][2] == 1                    # its circuit underlined
    assert scene.hidden == 0


def test_conductors_sharing_a_cell_are_counted_as_hidden() -> None:
    vp = Viewport(cols=8, rows=4).fitted(TRAY.bounds)
    scene = build_scene(LAYOUT, vp)
    assert scene.hidden > 0


def test_map_cells_follow_the_field_grid() -> None:
    vp = Viewport(cols=30, rows=10).fitted((-300.0, -300.0, 700.0, 400.0))
    grid = field_grid_uT(LAYOUT, vp.bounds_mm, vp.cols, vp.px_rows)
    scale = MapScale.around(float(np.median(grid)))
    colour = build_scene(LAYOUT, vp, fmap=FieldMap(vp.bounds_mm, grid, scale), style="colour")
    # Half blocks: the top pixel of row r is grid row (2*rows - 1 - 2r) (grid row 0 = low y).
    _, key = colour.rows[0][0]
    assert key[0] == "px"
    assert key[1] == int(scale.colour_index(grid[-1, 0]))
    assert key[2] == int(scale.colour_index(grid[-2, 0]))
    shade = build_scene(LAYOUT, vp, fmap=FieldMap(vp.bounds_mm, grid, scale), style="shade")
    glyphs = "".join(ch for row in shade.rows for ch, _ in row)
    assert set(glyphs) & set(SHADES[1:])                       # shading shows
    assert any(ch in "1234" for ch in glyphs)                  # and iso-level digits


def test_map_resampled_for_a_moved_window_is_blank_outside_the_grid() -> None:
    vp = Viewport(cols=20, rows=6).fitted((-100.0, -100.0, 500.0, 200.0))
    grid = field_grid_uT(LAYOUT, vp.bounds_mm, vp.cols, vp.px_rows)
    fmap = FieldMap(vp.bounds_mm, grid, MapScale(2))
    panned = vp.panned(30, 0)                                  # wholly right of the grid
    scene = build_scene(LAYOUT, panned, fmap=fmap, style="colour")
    assert all(key is None or key[0] != "px" for row in scene.rows for _, key in row)


def test_contour_dots_and_peak_marker() -> None:
    vp = Viewport(cols=40, rows=12).fitted((-200.0, -200.0, 600.0, 300.0))
    ring = np.array([[-150.0, y] for y in np.linspace(-150, 250, 50)])
    scene = build_scene(LAYOUT, vp, contour_mm=ring, peak_mm=(-150.0, 50.0))
    col = vp.col_of(-150.0)
    column = [scene.rows[r][col][0] for r in range(vp.rows)]
    assert column.count("·") >= 5 and "×" in column


def test_map_scale_bands_colours_and_legend() -> None:
    s = MapScale.around(2.3)                                   # 2.3 µT in the middle band
    assert s.band(np.array([2.3]))[0] == 2
    e = s.edges_uT
    assert list(s.band(np.array([e[0] * 0.99, e[0], e[3], e[3] * 10]))) == [0, 1, 4, 4]
    idx = s.colour_index(np.geomspace(s.low_uT / 10, s.high_uT * 10, 200))
    assert idx[0] == 0 and idx[-1] == STEPS - 1 and np.all(np.diff(idx) >= 0)
    assert len(palette()) == STEPS
    assert [g for g, _ in s.legend()] == list(reversed(SHADES))
    bands = np.array([[0, 0, 1, 1], [0, 0, 1, 1]])
    assert iso_digits(bands).tolist() == [[0, 1, 0, 0], [0, 1, 0, 0]]
    assert MapScale.around(0.0) == MapScale(2)                 # no field: a fixed scale
