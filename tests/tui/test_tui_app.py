"""The terminal UI driven through the real app and the Pilot at 80x24."""

from __future__ import annotations

import math

from tuihelpers import SIZE, canvas_text, settle, text_of

from trayadvisor.analysis.summary import field_summary
from trayadvisor.layoutfile.reader import read_layout
from trayadvisor.output import fmt_uT
from trayadvisor.tui import make_app
from trayadvisor.tui.logic.settings import TYPED_LIMIT
from trayadvisor.tui.screens.field import FieldScreen
from trayadvisor.tui.screens.help import CAUTIONS, HelpScreen
from trayadvisor.tui.screens.itemforms import CircuitForm, ConductorForm
from trayadvisor.tui.screens.section import SectionScreen
from trayadvisor.tui.widgets.canvas import SectionCanvas


async def test_demo_opens_with_drawing_list_and_readout() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        assert isinstance(app.screen, SectionScreen)
        assert app.document.label == "built-in demo" and not app.document.dirty
        drawing = canvas_text(app)
        assert "┌P1" in drawing and "┘" in drawing          # the demo's power tray
        assert "A1" in drawing                              # circuit A, phase L1
        items = app.screen.query_one("#items")
        assert items.option_count == len(app.document.layout.conductors) + len(
            app.document.layout.circuits) + len(app.document.layout.trays)
        d = app.settings.distance_mm
        want = field_summary(app.document.layout, distance_mm=d).max_resultant_uT
        assert fmt_uT(want) in text_of(app, "#readout")
        assert "layout valid" in text_of(app, "#status") or "Caution" in text_of(app, "#status")


async def test_moving_a_conductor_updates_the_readout_to_the_engine_value() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        layout0 = app.document.layout
        name = app.document.selected
        before = app.summary.max_resultant_uT
        for _ in range(3):
            await pilot.press("right")                      # fine step: 5 mm each
        await settle(app, pilot)
        lay = app.document.layout
        i = lay.conductor_index(name)
        assert math.isclose(lay.conductors[i].x_mm, layout0.conductors[i].x_mm + 15.0)
        d = app.settings.distance_mm
        # The figure on show is what the engine gives for the app's current model.
        assert app.summary.max_resultant_uT == field_summary(lay, distance_mm=d).max_resultant_uT
        assert app.summary.max_at_mm == field_summary(lay, distance_mm=d).max_at_mm
        assert app.summary.max_resultant_uT != before
        want = field_summary(lay, distance_mm=d).max_resultant_uT
        assert fmt_uT(want) in text_of(app, "#readout")
        assert not app.results_pending()
        # shift+arrow moves by one diameter
        await pilot.press("shift+up")
        await settle(app, pilot)
        c = app.document.layout.conductors[i]
        assert math.isclose(c.y_mm, layout0.conductors[i].y_mm + c.diameter_mm)


async def test_field_view_shows_map_contour_and_readouts_in_step() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("2")
        await settle(app, pilot)
        view = app.screen
        assert isinstance(view, FieldScreen) and view.map_current
        assert "·" in canvas_text(app) and "×" in canvas_text(app)
        await pilot.press("left", "left")
        await settle(app, pilot)
        assert view.map_current                             # map redone for the new model
        lay, d = app.document.layout, app.settings.distance_mm
        s = field_summary(lay, distance_mm=d)
        shown = text_of(app, "#readout")
        assert fmt_uT(s.max_resultant_uT) in shown
        assert f"x {s.max_at_mm[0]:.0f}, y {s.max_at_mm[1]:.0f}" in shown
        lim = app.chosen_limit()
        fig = field_summary(lay, distance_mm=d, limits=[lim]).limits[-1]
        assert ("PASS" if fig.passes else "FAIL") in shown
        assert app.figure_for(lim).clearance_mm == fig.clearance_mm
        await pilot.press("m")                              # shade map: glyphs and digits
        await settle(app, pilot)
        assert app.settings.map_style == "shade"
        assert any(g in canvas_text(app) for g in "░▒▓█")
        assert "iso 1=" in text_of(app, "#legend")


async def test_edit_through_the_form_then_undo_and_redo() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        name = app.document.selected
        i = app.document.layout.conductor_index(name)
        old = app.document.layout.conductors[i].diameter_mm
        await pilot.press("e")
        form = app.screen
        assert isinstance(form, ConductorForm)
        dia = form.query_one("#dia")
        dia.value = "-3"
        dia.focus()
        await pilot.press("enter")
        assert app.screen is form                           # refused, with the reason
        assert "diameter" in text_of(app, "#form-error")
        dia.value = "31.5"
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, SectionScreen)
        assert app.document.layout.conductors[i].diameter_mm == 31.5
        assert app.document.dirty
        await pilot.press("u")
        await settle(app, pilot)
        assert app.document.layout.conductors[i].diameter_mm == old
        assert not app.document.dirty
        assert "undone" in text_of(app, "#status")
        await pilot.press("ctrl+r")
        await settle(app, pilot)
        assert app.document.layout.conductors[i].diameter_mm == 31.5


async def test_add_copy_delete_keep_list_and_drawing_in_step() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        n0 = len(app.document.layout.conductors)
        await pilot.press("c")                              # copy the selection
        await settle(app, pilot)
        lay = app.document.layout
        assert len(lay.conductors) == n0 + 1
        assert app.document.selected in {c.name for c in lay.conductors}
        items = app.screen.query_one("#items")
        assert items.get_option_at_index(items.highlighted).id == f"k:{app.document.selected}"
        await pilot.press("x")                              # delete it again
        await settle(app, pilot)
        assert len(app.document.layout.conductors) == n0
        await pilot.press("a")                              # add through the form
        await pilot.press("enter")
        await settle(app, pilot)
        assert len(app.document.layout.conductors) == n0 + 1
        await pilot.press("right_square_bracket")           # selection walks the list
        await settle(app, pilot)
        sel = app.document.selected
        assert items.get_option_at_index(items.highlighted).id == f"k:{sel}"


async def test_help_lists_keys_and_cautions() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("question_mark")
        assert isinstance(app.screen, HelpScreen)
        text = app.screen.text().plain
        # the full cautions, every paragraph (the help wraps lines, so compare words)
        assert " ".join(" ".join(CAUTIONS).split()) in " ".join(text.split())
        for bid in ("file.save", "edit.undo", "edit.add", "view.field", "app.quit"):
            assert f"[{bid}]" in text
        await pilot.press("escape")
        assert isinstance(app.screen, SectionScreen)


async def test_settings_change_distance_and_typed_limit() -> None:
    app = make_app(limit_uT=0.5)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        assert app.chosen_limit().name == TYPED_LIMIT and app.chosen_limit().value_uT == 0.5
        await pilot.press("d")
        field = app.screen.query_one("#distance")
        field.value = "800"
        field.focus()
        await pilot.press("enter")
        await settle(app, pilot)
        assert app.settings.distance_mm == 800.0
        want = field_summary(app.document.layout, distance_mm=800.0)
        assert app.summary.max_resultant_uT == want.max_resultant_uT
        assert "d 800 mm" in text_of(app, "#readout")


async def test_canvas_zoom_pan_fit() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        canvas = app.screen.query_one(SectionCanvas)
        s0 = canvas.viewport.mm_per_col
        await pilot.press("plus", "plus")
        assert math.isclose(canvas.viewport.mm_per_col, s0 / 2)
        cx = canvas.viewport.cx_mm
        await pilot.press("l")
        assert canvas.viewport.cx_mm > cx
        await pilot.press("0")
        assert math.isclose(canvas.viewport.mm_per_col, s0)


def test_read_back_is_the_same_file_the_cli_reads(demo_copy) -> None:
    """The app opens files with the same reader as `trayadvisor check`."""
    app = make_app(demo_copy)
    assert app.document.layout == read_layout(demo_copy)


async def test_list_picks_conductors_and_edits_a_circuit() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("tab")                            # focus the list
        assert app.focused is app.screen.query_one("#items")
        await pilot.press("down")                           # next row: the next conductor
        await settle(app, pilot)
        assert app.document.selected == app.document.layout.conductors[1].name
        assert f"▸2 {app.document.selected}" in str(
            app.screen.query_one("#items").get_option(f"k:{app.document.selected}").prompt)
        await pilot.press("up", "up")                       # the circuit row
        await pilot.press("enter")
        form = app.screen
        assert isinstance(form, CircuitForm)
        form.query_one("#current").value = "700"
        form.query_one("#current").focus()
        await pilot.press("enter")
        await settle(app, pilot)
        assert app.document.layout.circuit("F1").current_a == 700.0
        await pilot.press("u")
        await settle(app, pilot)
        assert app.document.layout.circuit("F1").current_a == 630.0


async def test_conductors_moved_onto_each_other_name_them_instead_of_figures() -> None:
    # The sharing of two parallel conductors at one place has no solution: the status line
    # names them (one line) and no figure of that model is shown as if it were valid.
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        for _ in range(6):
            await pilot.press("right")                      # F1-L1a onto F1-L2a, 30 mm on
        await settle(app, pilot)
        text, level = app.message
        assert level == "error" and "'F1-L1a'" in text and "'F1-L2a'" in text
        await pilot.press("left")                           # apart again: figures return
        await settle(app, pilot)
        want = field_summary(app.document.layout, distance_mm=app.settings.distance_mm)
        assert app.summary.max_resultant_uT == want.max_resultant_uT


async def test_screens_are_edited_through_the_circuit_and_conductor_forms() -> None:
    # The bonding first (a circuit may say how screens would be bonded before it has any),
    # then a screen on a conductor; a screen larger than the cable is flagged as a problem
    # of the layout (as an overlap is: the file cannot be saved until it is fixed).
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("tab", "up")                      # the circuit row of F1
        await pilot.press("enter")
        form = app.screen
        assert isinstance(form, CircuitForm)
        form.query_one("#bonding").value = "both-ends"
        form.query_one("#current").focus()
        await pilot.press("enter")
        await settle(app, pilot)
        assert app.document.layout.circuit("F1").screen_bonding == "both-ends"
        name = app.document.selected                        # the selected conductor
        await pilot.press("e")
        form = app.screen
        assert isinstance(form, ConductorForm)
        form.query_one("#screen-area").value = "25"
        form.query_one("#screen-dia").value = "40"          # wider than the 28 mm cable
        form.query_one("#screen-area").focus()
        await pilot.press("enter")
        await settle(app, pilot)
        assert any("not inside the cable" in m for m in app.problems)
        assert "problem" in text_of(app, "#status")
        await pilot.press("e")                              # the same conductor again
        form = app.screen
        assert isinstance(form, ConductorForm)
        form.query_one("#screen-dia").value = "24"
        form.query_one("#screen-area").focus()
        await pilot.press("enter")
        await settle(app, pilot)
        c = app.document.layout.conductors[app.document.layout.conductor_index(name)]
        assert (c.screen_area_mm2, c.screen_diameter_mm) == (25.0, 24.0)
        assert app.problems == []
        # Reference: the coupling figures of the edited layout, as `couple` computes them
        from trayadvisor.coupling import solve_sharing
        res = solve_sharing(app.document.layout)
        (screen,) = res.screens
        # one screen alone has nothing to return through (no earth return is modelled)
        assert screen.conductor == c.name and screen.current_a == 0.0
        assert any("one screened cable only in F1" in n for n in res.notes())
