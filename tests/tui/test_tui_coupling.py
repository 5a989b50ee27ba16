"""The Coupling view and the report key, driven through the real app at 80x24.

Reference values: :func:`trayadvisor.coupling.victims.coupling_summary` (what ``trayadvisor couple
--json`` prints) and :func:`trayadvisor.output.report.write_report` (``trayadvisor report``)."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from textual.widgets import Input
from tuihelpers import SIZE, settle, text_of

from trayadvisor.coupling import coupling_summary
from trayadvisor.tui import make_app
from trayadvisor.tui.logic.couplingtext import WORST_IMBALANCE, WORST_SHARE, f1, g3
from trayadvisor.tui.screens.coupling import CouplingScreen
from trayadvisor.tui.screens.dialogs import PathDialog


def _line_of(text: str, start: str) -> str:
    """The table row whose text starts with ``start`` (after the indent and a group's
    reactance-only flag "⚠")."""
    found = [ln for ln in text.splitlines()
             if ln.lstrip(" ").removeprefix("⚠").startswith(start)]
    assert len(found) == 1, (start, text)
    return found[0]


def _check_figures(app, text: str) -> dict:  # noqa: ANN001
    """Every figure on the panel equals the engine's for the app's model."""
    want = coupling_summary(app.document.layout).to_json()  # reference: `couple --json`
    assert app.screen.summary.to_json() == want
    for v in want["victims"]:
        row = _line_of(text, v["circuit"]).split()
        assert row[1:4] == [g3(v["induced_mV_per_m"]), g3(v["length_m"]), g3(v["induced_V"])]
    for c in want["sharing"]:
        row = _line_of(text, c["conductor"]).split()
        assert row[1:4] == [f1(c["current_a"]), f1(c["angle_deg"]), f1(c["share_pct"]) + "%"]
    groups = want["groups"]
    for g in groups:
        row = _line_of(text, f"{g['circuit']}     {g['phase']}").split()
        assert row[2] == f1(g["imbalance_pct"])
    worst = max(groups, key=lambda g: g["imbalance_pct"])
    assert WORST_IMBALANCE in _line_of(text, f"{worst['circuit']}     {worst['phase']}")
    assert text.count(WORST_IMBALANCE) == 1 and text.count(WORST_SHARE) == 1
    return want


async def test_coupling_panel_shows_the_engine_figures_and_follows_a_move() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("4")
        assert isinstance(app.screen, CouplingScreen)
        await settle(app, pilot)
        assert app.screen.current
        before = _check_figures(app, text_of(app, "#coupling"))
        # The demo's worst group is F1 L1 (36 %: the engine's figure, not a hand value).
        assert "F1     L1" in [ln for ln in text_of(app, "#coupling").splitlines()
                               if WORST_IMBALANCE in ln][0]
        assert "Reactance-only" not in text_of(app, "#coupling")
        await pilot.press("left", "left")                   # move F1-L1a 10 mm
        await settle(app, pilot)
        assert app.screen.current
        after = _check_figures(app, text_of(app, "#coupling"))
        assert after["sharing"] != before["sharing"]
        assert after["victims"][0]["induced_mV_per_m"] != before["victims"][0][
            "induced_mV_per_m"]
        # Without conductor areas the sharing is reactance-only, and the panel says so.
        lay = app.document.layout
        bare = replace(lay, conductors=tuple(replace(c, area_mm2=None)
                                             for c in lay.conductors))
        app.apply_edit(bare, "drop the areas")
        await settle(app, pilot)
        text = text_of(app, "#coupling")
        assert "Reactance-only sharing for F1 L1, F1 L2, F1 L3" in text and "R' = 0" in text
        assert text.index("Reactance-only") < text.index("Current sharing")  # seen first
        assert "(reactance only)" in text
        _check_figures(app, text)


async def test_report_key_writes_the_report_next_to_the_layout(demo_copy: Path) -> None:
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("R")
        assert isinstance(app.screen, PathDialog)
        field = app.screen.query_one("#path", Input)
        target = demo_copy.with_name("demo-report.html")
        assert field.value == str(target)                   # default: beside the file
        field.value = str(demo_copy.with_name("demo-report.txt"))
        field.focus()
        await pilot.press("enter")                          # a bad extension: refused
        await settle(app, pilot)
        assert app.message[1] == "error" and ".html or .md" in app.message[0]
        assert not app.report_running
        await pilot.press("R")
        app.screen.query_one("#path", Input).focus()
        await pilot.press("enter")                          # the default path
        await settle(app, pilot)
        assert not app.report_running
        assert app.message == (f"wrote the report {target}", "info")
        html = target.read_text(encoding="utf-8")
        assert "<svg" in html
        # The appendix is the file's own text (its comments too), as `report FILE` writes.
        assert "an invented scenario for trying trayadvisor" in html
