"""Places and limits without textual: the drawing of points, lines and areas, the place
edits, the refusals, the panel's words and the library picker's rows."""

from __future__ import annotations

from dataclasses import replace

from trayadvisor.analysis import field_summary
from trayadvisor.layoutfile import demo_path, layout_problems
from trayadvisor.layoutfile.reader import read_layout
from trayadvisor.limits import LIBRARY
from trayadvisor.model import (
    Circuit,
    Conductor,
    Layout,
    Limit,
    ObservationArea,
    ObservationLine,
    ObservationPoint,
    Tray,
)
from trayadvisor.tui.logic import placeedits
from trayadvisor.tui.logic.placetext import library_rows, place_lines
from trayadvisor.tui.logic.scene import AREA_GLYPHS, LINE_GLYPHS, POINT_GLYPH, build_scene
from trayadvisor.tui.logic.viewport import Viewport

TRAY = Tray("P1", 0.0, 0.0, 400.0, 100.0)
BASE = Layout(
    "t", 50.0, (TRAY,), (Circuit("F1", "ac3", 100.0),),
    (Conductor("F1-L1", "F1", "L1", 100.0, 20.0, 30.0),
     Conductor("F1-L2", "F1", "L2", 200.0, 20.0, 30.0),
     Conductor("F1-L3", "F1", "L3", 300.0, 20.0, 30.0)),
)


def _text(scene) -> list[str]:
    return ["".join(ch for ch, _ in row) for row in scene.rows]


def test_points_lines_and_areas_are_drawn_at_their_cells() -> None:
    lay = replace(BASE, points=(ObservationPoint("desk", 350.0, 300.0),),
                  lines=(ObservationLine("wall", -100.0, 200.0, 500.0, 200.0),),
                  areas=(ObservationArea("room", -50.0, 250.0, 450.0, 380.0),))
    vp = Viewport(cols=70, rows=20).fitted((-120.0, -20.0, 520.0, 400.0))
    text = _text(build_scene(lay, vp))
    c, r = vp.cell_of(350.0, 300.0)
    assert text[r][c] == POINT_GLYPH and text[r][c + 1:c + 5] == "desk"
    r = vp.row_of(200.0)
    assert text[r].count(LINE_GLYPHS["h"]) > 40 and "wall" in text[r]
    c0, c1, top, bottom = vp.col_of(-50.0), vp.col_of(450.0), vp.row_of(380.0), vp.row_of(250.0)
    assert (text[top][c0], text[top][c1]) == (AREA_GLYPHS["tl"], AREA_GLYPHS["tr"])
    assert (text[bottom][c0], text[bottom][c1]) == (AREA_GLYPHS["bl"], AREA_GLYPHS["br"])
    assert text[top][c0 + 1:c0 + 5] == "room"                 # its name on the top edge
    assert text[(top + bottom) // 2][c0] == AREA_GLYPHS["v"]
    plain = _text(build_scene(lay, vp, places=False))
    assert POINT_GLYPH not in "".join(plain) and "room" not in "".join(plain)


def test_an_area_larger_than_the_window_is_clipped_and_still_named() -> None:
    lay = replace(BASE, areas=(ObservationArea("hall", -5000.0, 150.0, 5000.0, 9000.0),))
    vp = Viewport(cols=40, rows=12).fitted((-50.0, -20.0, 450.0, 200.0))
    text = _text(build_scene(lay, vp))
    r = vp.row_of(150.0)
    assert set(text[r]) == {AREA_GLYPHS["h"]}                 # the bottom edge, clipped
    assert text[0][1:5] == "hall"                             # named on the first row shown
    assert AREA_GLYPHS["bl"] not in "".join(text)             # corners are off the window


def test_renaming_a_place_follows_into_the_limits_and_delete_is_refused() -> None:
    lay = replace(BASE, points=(ObservationPoint("desk", 350.0, 300.0),),
                  limits=(Limit("ceiling", 5.0, places=("desk",)),))
    moved = placeedits.replace_item(lay, "point", "desk", ObservationPoint("bench", 1, 500))
    assert moved.limits[0].places == ("bench",) and layout_problems(moved) == []
    refusal = placeedits.form_problem(lay, "point", "desk", "delete")
    assert refusal is not None and "'ceiling'" in refusal
    freed = placeedits.replace_item(lay, "limit", "ceiling", replace(lay.limits[0], places=()))
    assert placeedits.form_problem(freed, "point", "desk", "delete") is None
    after, label = placeedits.apply_form(freed, "point", "desk", "delete")
    assert after.points == () and label == "delete point desk"


def test_form_problem_reports_only_what_the_edit_breaks() -> None:
    over = ObservationArea("room", 0.0, 0.0, 150.0, 150.0)    # over conductor F1-L1
    problem = placeedits.form_problem(BASE, "area", None, over)
    assert problem == layout_problems(replace(BASE, areas=(over,)))[0].message
    clear = replace(over, y0_mm=200.0, y1_mm=400.0)
    assert placeedits.form_problem(BASE, "area", None, clear) is None
    wrong = Limit("mon", places=("room",), library="iec-61000-4-8-level-1", kind="exposure")
    with_room = placeedits.add_item(BASE, "area", clear)
    problem = placeedits.form_problem(with_room, "limit", None, wrong)
    assert problem is not None and "immunity" in problem      # never an exposure limit
    assert placeedits.form_problem(with_room, "limit", None, replace(wrong, kind=None)) is None
    # a new place is proposed clear of the conductors, under a free name
    for new in (placeedits.new_point, placeedits.new_line, placeedits.new_area):
        item = new(BASE)
        kind = type(item).__name__.replace("Observation", "").lower()
        assert placeedits.form_problem(BASE, kind, None, item) is None


def test_the_panel_words_follow_the_engine_figures() -> None:
    demo = read_layout(demo_path())
    s = field_summary(demo, distance_mm=500.0)
    lines = [ln.text for ln in place_lines(s, demo)]
    judged = [(p, q) for p in s.places for q in p.limits]
    assert judged                                             # the demo binds limits
    for p, q in judged:
        k = lines.index(f" {'pass' if q.passes else 'FAIL'} {q.name}", lines.index(
            f"{p.type} {p.name}"))
        assert lines[k + 1].startswith(f"   {q.kind}")
        assert ("DC" in lines[k + 1]) == (q.band == "dc")
    kinds = {ln.kind for ln in place_lines(s, demo)}
    assert {"pass", "fail"} & kinds
    empty = replace(demo, points=(), lines=(), areas=(), limits=())
    assert "p adds one" in place_lines(field_summary(empty), empty)[-1].text


def test_library_rows_show_every_entry_with_its_kind_band_and_level() -> None:
    rows = library_rows(50.0)
    assert [r[0] for r in rows] == [e.id for e in LIBRARY]
    for (_eid, row, detail), e in zip(rows, LIBRARY, strict=True):
        assert row.split()[:3] == [e.id, e.kind, e.band.upper()]
        if e.band == "ac" and e.valid_at(50.0):
            assert row.endswith(" µT") and e.name in detail
        assert ("equipment" in detail) == (e.kind == "immunity")
    high = next(r for r in library_rows(400.0) if r[0] == "eu-2013-35-high")
    assert "not at 400 Hz" in high[1]                         # stops at 300 Hz
