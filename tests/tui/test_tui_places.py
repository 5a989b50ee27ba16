"""Editing everything the layout file holds in the terminal UI: title and frequency,
observation points, lines and areas, limits; the places panel of the Field view.

Driven through the real app and the Pilot at 80x24. The expected figures come from
``field_summary`` on the layout read back from the saved file (the call ``trayadvisor
field`` makes), and the expected refusals from ``layout_problems``, not from the UI.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from textual.widgets import Input, OptionList
from tuihelpers import SIZE, settle, text_of, type_into

from trayadvisor.analysis import field_summary
from trayadvisor.layoutfile import layout_problems, read_layout
from trayadvisor.limits import LIBRARY, all_limits, by_id
from trayadvisor.model import Limit, ObservationArea
from trayadvisor.tui import make_app
from trayadvisor.tui.screens.field import FieldScreen
from trayadvisor.tui.screens.placeforms import AreaForm, LayoutForm, LimitForm, PlacePicker
from trayadvisor.tui.screens.placemenu import PlacesMenu

#: An area over the demo's quiet room, clear of every conductor (mm).
LAB = ObservationArea("lab", -300.0, 700.0, 1000.0, 1800.0)


async def _menu_row(app, pilot, option_id: str) -> None:
    """Open the places menu (p) and press Enter on the row ``option_id``."""
    await pilot.press("p")
    await pilot.pause()
    menu = app.screen
    assert isinstance(menu, PlacesMenu)
    rows = menu.query_one("#place-rows", OptionList)
    ids = [rows.get_option_at_index(i).id for i in range(rows.option_count)]
    await pilot.press("home", *["down"] * ids.index(option_id), "enter")
    await pilot.pause()


async def _fill_area(app, pilot, area: ObservationArea) -> None:
    assert isinstance(app.screen, AreaForm)
    await type_into(pilot, app, "#name", area.name)
    for wid, v in (("x0", area.x0_mm), ("y0", area.y0_mm), ("x1", area.x1_mm),
                   ("y1", area.y1_mm)):
        await type_into(pilot, app, f"#{wid}", f"{v:g}")


async def test_add_an_area_through_the_menu_then_save_and_undo(demo_copy: Path) -> None:
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        had = app.document.layout.areas
        assert "lab" not in {a.name for a in had}
        await _menu_row(app, pilot, "add:area")
        await _fill_area(app, pilot, LAB)
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, PlacesMenu)       # back in the menu, on the new row
        await pilot.press("escape")
        assert app.document.layout.areas == (*had, LAB)
        assert app.document.undo_label == "add area lab"
        await pilot.press("ctrl+s")
        await settle(app, pilot)
        assert read_layout(demo_copy).areas == (*had, LAB)  # the numbers typed, saved
        await pilot.press("u")
        await settle(app, pilot)
        assert app.document.layout.areas == had
        assert app.document.layout == replace(read_layout(demo_copy), areas=had)


async def test_an_area_over_a_conductor_is_refused_and_the_typing_kept(
        demo_copy: Path) -> None:
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        before = app.document.layout
        bad = replace(LAB, y0_mm=0.0)                    # reaches down into tray P1
        await _menu_row(app, pilot, "add:area")
        await _fill_area(app, pilot, bad)
        await pilot.press("enter")
        await settle(app, pilot)
        form = app.screen
        assert isinstance(form, AreaForm)                # still open
        want = [e.message for e in layout_problems(replace(before,
                                                           areas=(*before.areas, bad)))]
        assert len(want) == 1 and "inside the area" in want[0]
        assert text_of(app, "#form-error") == f"✖ {want[0]}"
        assert form.query_one("#name", Input).value == "lab"
        assert form.query_one("#y0", Input).value == "0"
        assert app.document.layout is before and not app.document.can_undo
        await type_into(pilot, app, "#y0", "700")        # fixed: accepted
        await pilot.press("enter")
        await settle(app, pilot)
        assert app.document.layout.areas == (*before.areas, LAB)


async def _add_limit(app, pilot, name: str, *, ut: str = "", entry: str | None = None,
                     places: tuple[str, ...] = ()) -> None:
    await _menu_row(app, pilot, "add:limit")
    form = app.screen
    assert isinstance(form, LimitForm)
    await type_into(pilot, app, "#name", name)
    if ut:
        await type_into(pilot, app, "#ut", ut)
    if entry is not None:
        form.query_one("#library", OptionList).focus()
        row = 1 + [e.id for e in LIBRARY].index(entry)
        await pilot.press("home", *["down"] * row)
        assert "immunity" in str(form.query_one("#library", OptionList)
                                 .get_option_at_index(row).prompt) \
            or by_id(entry).kind != "immunity"
    picker = form.query_one("#places", PlacePicker)
    picker.focus()
    for k, (_, place) in enumerate(picker.names):
        if place in places:
            await pilot.press("home", *["down"] * k, "space")
    form.query_one("#name", Input).focus()
    await pilot.press("enter")
    await settle(app, pilot)
    assert isinstance(app.screen, PlacesMenu), text_of(app, "#form-error")
    await pilot.press("escape")


async def test_limits_bound_to_an_area_show_the_engine_verdicts(demo_copy: Path) -> None:
    demo_copy.write_text(demo_copy.read_text(encoding="utf-8") + (
        '\n[[area]]\nname = "lab"\nx0_mm = -300.0\ny0_mm = 700.0\nx1_mm = 1000.0\n'
        'y1_mm = 1800.0\n'), encoding="utf-8")
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await _add_limit(app, pilot, "lab monitor", entry="iec-61000-4-8-level-1",
                         places=("lab",))
        await _add_limit(app, pilot, "lab ceiling", ut="1000", places=("lab", "QR-desk"))
        await pilot.press("ctrl+s")
        await settle(app, pilot)
        saved = read_layout(demo_copy)
        assert [(lim.name, lim.library, lim.value_uT, lim.places) for lim in saved.limits[-2:]] \
            == [("lab monitor", "iec-61000-4-8-level-1", None, ("lab",)),
                ("lab ceiling", None, 1000.0, ("QR-desk", "lab"))]  # layout order
        await pilot.press("2", "v")
        await settle(app, pilot)
        assert isinstance(app.screen, FieldScreen)
        shown = text_of(app, "#places").splitlines()
        cli = field_summary(saved, distance_mm=app.settings.distance_mm)
        lab = next(p for p in cli.places if p.name == "lab")
        verdicts = {q.name: q for q in lab.limits}
        assert not verdicts["lab monitor"].passes and verdicts["lab ceiling"].passes
        start = shown.index("area lab")
        block = shown[start:start + 8]
        assert f" AC max {lab.max_resultant_uT:.3g}"[:9] in block[1]
        for name, q in verdicts.items():
            k = block.index(f" {'pass' if q.passes else 'FAIL'} {name}")
            detail = block[k + 1]
            assert detail.startswith(f"   {q.kind} ·") and f"index {q.index:.3g}" in detail
            assert f"{q.margin_db:+.1f} dB" in detail
        monitor = block[block.index(" FAIL lab monitor") + 1]
        assert "immunity" in monitor and "exposure" not in monitor
        desk = shown[shown.index("point QR-desk"):]
        assert any(line.startswith(" pass lab ceiling") for line in desk)


async def test_a_library_immunity_level_is_never_called_exposure() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        level = by_id("iec-61000-4-8-level-2")
        app.set_settings(replace(app.settings, limit_name=level.name))
        await pilot.press("2")
        await settle(app, pilot)
        readout = text_of(app, "#readout")
        assert "immunity level (equipment)" in readout and "exposure" not in readout
        assert app.figure_for(app.chosen_limit()).kind == "immunity"
        public = by_id("icnirp-2010-public")
        app.set_settings(replace(app.settings, limit_name=public.name))
        await settle(app, pilot)
        assert "exposure limit (people)" in text_of(app, "#readout")


async def test_library_exposure_levels_use_their_own_multi_frequency_rule() -> None:
    # The demo's F2 carries 3rd, 5th and 7th harmonics: the multi-frequency sum of a library
    # exposure level is larger than the plain resultant over the same level.
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        lay = app.document.layout
        lib = next(lim for lim in all_limits(lay) if lim.library == "icnirp-2010-public")
        app.set_settings(replace(app.settings, limit_name=lib.name))
        await settle(app, pilot)
        shown = app.figure_for(app.chosen_limit())
        d = app.settings.distance_mm
        want = field_summary(lay, distance_mm=d, limits=[lib]).limits[-1]
        plain = field_summary(lay, distance_mm=d, limits=[Limit("plain", lib.value_uT)]
                              ).limits[-1]
        assert shown.index == want.index and shown.clearance_mm == want.clearance_mm
        assert shown.index > plain.index * 1.01


async def test_title_and_frequency_are_one_undoable_edit(demo_copy: Path) -> None:
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        before = app.document.layout
        await _menu_row(app, pilot, "layout:")
        assert isinstance(app.screen, LayoutForm)
        await type_into(pilot, app, "#frequency", "0")
        await pilot.press("enter")
        assert isinstance(app.screen, LayoutForm)
        assert "frequency" in text_of(app, "#form-error")
        await type_into(pilot, app, "#title", "Riser B (invented)")
        await type_into(pilot, app, "#frequency", "60")
        await type_into(pilot, app, "#earth", "-150")
        await pilot.press("enter")
        await settle(app, pilot)
        await pilot.press("escape")
        lay = app.document.layout
        assert (lay.title, lay.frequency_hz, lay.earth_y_mm) == ("Riser B (invented)", 60.0,
                                                                 -150.0)
        offered = {lim.name: lim.value_uT for lim in app.limits}
        for entry in LIBRARY:                            # library levels now at 60 Hz
            if entry.band == "ac" and entry.valid_at(60.0):
                assert offered[entry.name] == entry.value_uT(60.0)
        await pilot.press("ctrl+s")
        await settle(app, pilot)
        saved = read_layout(demo_copy)
        assert (saved.title, saved.frequency_hz, saved.earth_y_mm) == (
            "Riser B (invented)", 60.0, -150.0)
        await pilot.press("u")
        await settle(app, pilot)
        assert app.document.layout == before             # both undone in one step


async def test_a_place_named_by_a_limit_cannot_be_deleted(demo_copy: Path) -> None:
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await _add_limit(app, pilot, "desk ceiling", ut="5", places=("QR-desk",))
        await _menu_row(app, pilot, "point:QR-desk")
        await pilot.click("#delete")
        await settle(app, pilot)
        assert "named by limit 'desk ceiling'" in text_of(app, "#form-error")
        assert [p.name for p in app.document.layout.points] == ["QR-desk"]
