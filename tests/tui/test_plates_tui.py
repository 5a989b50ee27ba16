"""Plates in the terminal UI: drawn on the canvas (filled, at least one cell thick, under the
conductors, inside "fit"), added, edited and deleted through the plates menu (``P``), the
list and the tray form's sheet keys, every change one undoable edit.

The layouts are built in code from the model's dataclasses. The field of a layout with
plates takes seconds (a finite-element solve), and these tests are about drawing and
editing, so the app's field worker is replaced by one that computes nothing. The drawing
is checked on the scene (glyphs and style keys per cell), not on pixels.
"""

from __future__ import annotations

from dataclasses import replace

import pytest
from textual.widgets import OptionList, Select, Static
from tuihelpers import SIZE, settle, type_into

from trayadvisor.model import Circuit, Conductor, Layout, Plate, Tray
from trayadvisor.tui.app import TrayApp, known_binding_ids
from trayadvisor.tui.logic import edits
from trayadvisor.tui.logic.document import Document
from trayadvisor.tui.logic.platetext import MAGNETIC_GLYPH, OTHER_GLYPH, menu_rows
from trayadvisor.tui.logic.scene import build_scene, drawing_bounds, plate_cells
from trayadvisor.tui.logic.viewport import Viewport
from trayadvisor.tui.screens.itemforms import PlateForm, TrayForm
from trayadvisor.tui.screens.platemenu import PlatesMenu
from trayadvisor.tui.screens.section import SectionScreen
from trayadvisor.tui.widgets.canvas import SectionCanvas
from trayadvisor.tui.widgets.panels import ConductorList

TRAY = Tray("T1", 0.0, 0.0, 400.0, 100.0)
#: A 2 mm aluminium shield 250 mm below the tray's underside.
SHIELD = Plate("shield", -100.0, -252.0, 600.0, 2.0, material="aluminium")
LAYOUT = Layout(
    "plates", 50.0, (TRAY,), (Circuit("F1", "ac3", 100.0),),
    (Conductor("F1-L1", "F1", "L1", 50.0, 20.0, 30.0),
     Conductor("F1-L2", "F1", "L2", 150.0, 20.0, 30.0),
     Conductor("F1-L3", "F1", "L3", 250.0, 20.0, 30.0)),
)


@pytest.fixture(autouse=True)
def _no_field_worker(monkeypatch: pytest.MonkeyPatch) -> None:
    """The readouts' worker computes nothing (the edits and the drawing are under test)."""
    monkeypatch.setattr("trayadvisor.tui.app.run_analysis", lambda *a, **k: None)


def _app(layout: Layout) -> TrayApp:
    return TrayApp(Document(layout, None, label="plates test"))


def _text(scene) -> list[str]:
    return ["".join(ch for ch, _ in row) for row in scene.rows]


def _plate_cells(scene) -> dict[tuple[int, int], tuple]:
    """(col, row) -> style key of every cell drawn as a plate."""
    return {(c, r): key for r, row in enumerate(scene.rows) for c, (_, key) in enumerate(row)
            if isinstance(key, tuple) and key[0] == "plate"}


def _canvas_scene(app: TrayApp):
    canvas = app.screen.query_one(SectionCanvas)
    return build_scene(app.document.layout, canvas.viewport), canvas.viewport


# -- the drawing, without textual -------------------------------------------------------------
def test_fit_includes_a_shield_below_the_tray_and_draws_it_filled():
    lay = replace(LAYOUT, plates=(SHIELD,))
    x0, y0, x1, y1 = drawing_bounds(lay)
    assert y0 <= SHIELD.y_mm and x0 <= SHIELD.x_mm and x1 >= SHIELD.x_mm + SHIELD.width_mm
    vp = Viewport(cols=60, rows=16).fitted(drawing_bounds(lay))
    assert vp.shows(SHIELD.x_mm + 1.0, SHIELD.y_mm + 1.0)
    assert vp.shows(SHIELD.x_mm + SHIELD.width_mm - 1.0, SHIELD.y_mm + 1.0)
    scene = build_scene(lay, vp)
    cells = _plate_cells(scene)
    c0, r0, c1, r1 = plate_cells(vp, SHIELD.bounds)
    assert r0 == r1                                          # 2 mm: one row at this scale
    assert set(cells) == {(c, r0) for c in range(c0, c1 + 1)}
    assert set(cells.values()) == {("plate", False)}        # aluminium: not magnetic
    row = _text(scene)[r0]
    assert row[c0:c1 + 1].replace("shield", "") == OTHER_GLYPH * (c1 - c0 + 1 - 6)
    assert "shield" in row                                   # its name inside it


def test_a_thin_plate_keeps_one_cell_when_zoomed_far_out():
    lay = replace(LAYOUT, plates=(SHIELD, Plate("wall", 600.0, -300.0, 2.0, 500.0,
                                                   material="steel")))
    vp = Viewport(cols=40, rows=10, cx_mm=200.0, cy_mm=0.0, mm_per_col=400.0)
    cells = _plate_cells(build_scene(lay, vp))
    assert cells[vp.cell_of(600.0, 0.0)] == ("plate", True)   # steel: magnetic
    assert cells[vp.cell_of(0.0, -251.0)] in {("plate", False), ("plate", True)}


def test_a_sheet_tray_draws_its_walls_as_plates_under_the_conductors():
    tray = replace(TRAY, sheet="steel", cover=True)
    lay = replace(LAYOUT, trays=(tray,))
    vp = Viewport(cols=60, rows=14).fitted(drawing_bounds(lay), margin=0.1)
    scene = build_scene(lay, vp)
    text = _text(scene)
    cells = _plate_cells(scene)
    for part in tray.sheet_plates():
        c0, r0, c1, r1 = plate_cells(vp, part.bounds)
        assert (c0, r0) in cells and (c1, r1) in cells, part.name
    bottom = vp.row_of(-1.0)
    left, right = vp.col_of(-1.0), vp.col_of(401.0)
    assert text[bottom][left:right + 1] == MAGNETIC_GLYPH * (right - left + 1)
    top = vp.row_of(101.0)
    assert "T1" in text[top]                                # the name stays on the cover
    for c in lay.conductors:                                # conductors over everything
        col, row = vp.cell_of(c.x_mm, c.y_mm)
        assert scene.rows[row][col][1][0] == "cond"


def test_conductors_are_drawn_over_a_plate_they_share_a_cell_with():
    lay = replace(LAYOUT, plates=(Plate("under", -50.0, -20.0, 500.0, 4.0, material="steel"),))
    vp = Viewport(cols=30, rows=6).fitted(drawing_bounds(lay))  # coarse: they meet
    scene = build_scene(lay, vp)
    for c in lay.conductors:
        col, row = vp.cell_of(c.x_mm, c.y_mm)
        assert scene.rows[row][col][1][0] == "cond"


def test_the_plates_menu_rows_and_the_list_rows():
    lay = replace(LAYOUT, trays=(replace(TRAY, sheet="steel"),), plates=(SHIELD,))
    ids = [oid for oid, _ in menu_rows(lay)]
    assert ids == ["plate:shield", "tray:T1", "add:plate"]
    rows = dict(ConductorList.rows(lay))
    assert rows["pl:shield"].startswith(f"{OTHER_GLYPH} plate shield aluminium")
    assert "steel sheet 2 mm" in rows["t:T1"]


def test_the_proposed_plate_is_valid_and_below_everything():
    from trayadvisor.tui.logic.placeedits import new_problem

    p = edits.new_plate(LAYOUT)
    assert p.material == "steel" and p.y_mm + p.height_mm <= -250.0
    assert new_problem(LAYOUT, edits.add_plate(LAYOUT, p)) is None


# -- editing through the app ------------------------------------------------------------------
async def _open_row(app: TrayApp, pilot, option_id: str) -> None:
    """Open the plates menu (P) and press Enter on the row ``option_id``."""
    await pilot.press("P")
    await pilot.pause()
    menu = app.screen
    assert isinstance(menu, PlatesMenu)
    rows = menu.query_one("#plate-rows", OptionList)
    ids = [rows.get_option_at_index(i).id for i in range(rows.option_count)]
    await pilot.press("home", *["down"] * ids.index(option_id), "enter")
    await pilot.pause()


async def _fill_plate(app: TrayApp, pilot, plate: Plate) -> None:
    form = app.screen
    assert isinstance(form, PlateForm)
    form.query_one("#material", Select).value = plate.material or "-"
    await type_into(pilot, app, "#mu", "" if plate.mu_r is None else f"{plate.mu_r:g}")
    await type_into(pilot, app, "#sigma", "" if plate.sigma_s_per_m is None
                    else f"{plate.sigma_s_per_m:g}")
    await type_into(pilot, app, "#name", plate.name)
    for wid, v in (("x", plate.x_mm), ("y", plate.y_mm), ("width", plate.width_mm),
                   ("height", plate.height_mm)):
        await type_into(pilot, app, f"#{wid}", f"{v:g}")


async def test_adding_a_plate_through_the_menu_draws_it_and_undo_removes_it() -> None:
    app = _app(LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await _open_row(app, pilot, "add:plate")
        await _fill_plate(app, pilot, SHIELD)
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, PlatesMenu)          # back in the menu, on the new row
        rows = app.screen.query_one("#plate-rows", OptionList)
        assert rows.get_option_at_index(rows.highlighted).id == "plate:shield"
        await pilot.press("escape")
        await settle(app, pilot)
        assert app.document.layout.plates == (SHIELD,)
        assert app.document.undo_label == "add plate shield"
        assert isinstance(app.screen, SectionScreen)
        await pilot.press("0")                               # fit: the shield on screen
        await settle(app, pilot)
        scene, vp = _canvas_scene(app)
        assert vp.shows(SHIELD.x_mm + 1.0, SHIELD.y_mm + 1.0)
        assert ("plate", False) in set(_plate_cells(scene).values())
        items = app.screen.query_one(ConductorList)
        assert "pl:shield" in [items.get_option_at_index(i).id
                               for i in range(items.option_count)]
        await pilot.press("u")
        await settle(app, pilot)
        assert app.document.layout.plates == ()
        assert app.document.layout == LAYOUT
        scene, _ = _canvas_scene(app)
        assert _plate_cells(scene) == {}


async def test_setting_a_trays_sheet_draws_its_plates_and_undo_takes_them_away() -> None:
    app = _app(LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        scene, _ = _canvas_scene(app)
        assert _plate_cells(scene) == {}
        await pilot.press("t")                               # the selection's tray
        await pilot.pause()
        form = app.screen
        assert isinstance(form, TrayForm)
        form.query_one("#sheet", Select).value = "steel"
        form.query_one("#cover", Select).value = "yes"
        await type_into(pilot, app, "#sheet-mm", "1.5")
        await pilot.press("enter")
        await settle(app, pilot)
        tray = app.document.layout.trays[0]
        assert (tray.sheet, tray.sheet_mm, tray.cover) == ("steel", 1.5, True)
        assert app.document.undo_label == "edit tray T1"
        scene, vp = _canvas_scene(app)
        cells = _plate_cells(scene)
        assert set(cells.values()) == {("plate", True)}
        for part in tray.sheet_plates():                     # bottom, sides, cover
            c0, r0, c1, r1 = plate_cells(vp, part.bounds)
            assert (c0, max(r0, 0)) in cells, part.name
        await pilot.press("u")
        await settle(app, pilot)
        assert app.document.layout.trays == (TRAY,)
        scene, _ = _canvas_scene(app)
        assert _plate_cells(scene) == {}


async def test_a_cover_without_a_sheet_is_refused_in_the_tray_form() -> None:
    app = _app(LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("t")
        await pilot.pause()
        form = app.screen
        form.query_one("#cover", Select).value = "yes"
        await type_into(pilot, app, "#width", "450")
        await pilot.press("enter")
        await pilot.pause()
        assert app.screen is form                            # still open, typing kept
        assert "cover" in str(form.query_one("#form-error", Static).render())
        assert form.query_one("#width").value == "450"
        assert app.document.layout == LAYOUT


async def test_a_plate_needs_a_material_or_both_mu_r_and_sigma() -> None:
    app = _app(LAYOUT)
    explicit = Plate("wall", 500.0, -300.0, 3.0, 500.0, mu_r=300.0, sigma_s_per_m=4e6)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await _open_row(app, pilot, "add:plate")
        await _fill_plate(app, pilot, replace(explicit, sigma_s_per_m=None))
        await pilot.press("enter")
        await pilot.pause()
        form = app.screen
        assert isinstance(form, PlateForm)
        assert "both μr and σ" in str(form.query_one("#form-error", Static).render())
        await type_into(pilot, app, "#sigma", "4e6")
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, PlatesMenu)
        await pilot.press("escape")
        assert app.document.layout.plates == (explicit,)
        await pilot.press("0")                               # fit: the wall is beside the tray
        await settle(app, pilot)
        scene, _ = _canvas_scene(app)
        assert ("plate", True) in set(_plate_cells(scene).values())  # μr 300: magnetic


async def test_a_plate_through_a_conductor_is_refused_and_the_typing_kept() -> None:
    app = _app(LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await _open_row(app, pilot, "add:plate")
        await _fill_plate(app, pilot, replace(SHIELD, y_mm=10.0, height_mm=5.0))
        await pilot.press("enter")
        await pilot.pause()
        form = app.screen
        assert isinstance(form, PlateForm)                   # refused: still open
        assert str(form.query_one("#form-error", Static).render()).startswith("✖")
        assert form.query_one("#y").value == "10"
        assert app.document.layout == LAYOUT


async def test_editing_a_plate_from_the_list_and_deleting_it_from_the_menu() -> None:
    app = _app(replace(LAYOUT, plates=(SHIELD,)))
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("tab")                             # focus the list
        items = app.screen.query_one(ConductorList)
        assert app.focused is items
        ids = [items.get_option_at_index(i).id for i in range(items.option_count)]
        await pilot.press("home", *["down"] * ids.index("pl:shield"), "enter")
        await pilot.pause()
        form = app.screen
        assert isinstance(form, PlateForm)
        form.query_one("#material", Select).value = "steel"
        await type_into(pilot, app, "#height", "3")
        await pilot.press("enter")
        await settle(app, pilot)
        steel = replace(SHIELD, material="steel", height_mm=3.0)
        assert app.document.layout.plates == (steel,)
        assert app.document.undo_label == "edit plate shield"
        await _open_row(app, pilot, "plate:shield")
        assert isinstance(app.screen, PlateForm)
        await pilot.click("#delete")
        await settle(app, pilot)
        assert isinstance(app.screen, PlatesMenu)
        await pilot.press("escape")
        assert app.document.layout.plates == ()
        assert app.document.undo_label == "delete plate shield"
        await pilot.press("u")
        await settle(app, pilot)
        assert app.document.layout.plates == (steel,)


async def test_names_with_markup_or_dollars_are_shown_as_typed() -> None:
    odd = replace(SHIELD, name="[b]x$y")
    app = _app(replace(LAYOUT, plates=(odd,)))
    async with app.run_test(size=(120, 30)) as pilot:
        await settle(app, pilot)
        await pilot.press("0")
        await settle(app, pilot)
        screen = app.export_screenshot()
        assert "[b]x$y" in screen.replace("&#160;", " ")     # the list row, as typed
        await pilot.press("P")
        await pilot.pause()
        assert isinstance(app.screen, PlatesMenu)
        assert "plate [b]x$y" in app.export_screenshot().replace("&#160;", " ")


async def test_the_help_names_the_plates_key() -> None:
    assert "edit.plates" in known_binding_ids()
    assert "plates.close" in known_binding_ids()
    app = _app(LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("question_mark")
        await pilot.pause()
        text = str(app.screen.query_one("#help-text", Static).render())
        assert "edit.plates" in text and "plates menu" in text
        assert "# = steel" in text
