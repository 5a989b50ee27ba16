"""The Field view's plate figures: the with / without plates panel (key ``w``), the eddy-current
losses in the readouts, and the message line while the plates are being solved.

The layout with plates is a small solid-bottom steel sheet tray built in code, with a point
300 mm under it: its first finite-element solve takes about a second (the process keeps the
solver, so the map and the later figures reuse it). The notice while solving is checked
with a readouts worker that waits until the test releases it, not by racing a real solve.
"""

from __future__ import annotations

import threading
import time
from types import SimpleNamespace

from textual.widgets import Static
from tuihelpers import SIZE, settle, text_of

from trayadvisor.analysis import PlateComparison, PlateFigure, ShieldingRow, plate_comparison
from trayadvisor.model import Circuit, Conductor, Layout, ObservationPoint, Tray
from trayadvisor.tui.app import TrayApp
from trayadvisor.tui.logic.document import Document
from trayadvisor.tui.logic.platetext import (
    DB_MEANING,
    FACTOR_MEANING,
    NOTHING_TO_COMPARE,
    SOLVING,
    comparison_lines,
    comparison_rows,
    loss_line,
    working_text,
)
from trayadvisor.tui.screens.field import FieldScreen

#: A 600 × 60 mm tray with a 1.5 mm steel bottom and sides; one three-phase circuit; a
#: point 300 mm under the tray's bottom.
SHEET_TRAY = Tray("T1", 0.0, 0.0, 600.0, 60.0, sheet="steel", sheet_mm=1.5)
SHEET_LAYOUT = Layout(
    "sheet tray", 50.0, (SHEET_TRAY,), (Circuit("F1", "ac3", 100.0),),
    (Conductor("F1-L1", "F1", "L1", 270.0, 12.0, 20.0),
     Conductor("F1-L2", "F1", "L2", 300.0, 12.0, 20.0),
     Conductor("F1-L3", "F1", "L3", 330.0, 12.0, 20.0)),
    points=(ObservationPoint("under", 300.0, -300.0),),
)
#: The same tray as a ladder tray: no metal in the model.
BARE_LAYOUT = Layout(SHEET_LAYOUT.title, 50.0, (Tray("T1", 0.0, 0.0, 600.0, 60.0),),
                     SHEET_LAYOUT.circuits, SHEET_LAYOUT.conductors,
                     points=SHEET_LAYOUT.points)


def _app(layout: Layout) -> TrayApp:
    return TrayApp(Document(layout, None, label="compare test"))


def _row(text: str, label: str) -> list[str]:
    """The cells of the table row whose label starts with ``label``."""
    line = next(ln for ln in text.splitlines() if ln.startswith(label))
    return line[len(label):].split()


async def _poll(pilot, condition, timeout_s: float = 5.0) -> bool:  # noqa: ANN001
    end = time.monotonic() + timeout_s
    while time.monotonic() < end:
        if condition():
            return True
        await pilot.pause(0.05)
    return condition()


# -- the words, without textual --------------------------------------------------------------
def test_comparison_lines_show_with_without_factor_and_db_in_42_columns():
    c = PlateComparison(500.0, (
        ShieldingRow("curve at 500 mm", "curve", 2.0, 4.0),
        ShieldingRow("desk\x1b[31m", "point", 0.5, 2.0),       # a name with an escape
        ShieldingRow("a very long area name", "area", 3.0, 3.0),
        ShieldingRow("nothing", "line", 0.0, 0.0)))
    lines = comparison_lines(c, has_plates=True)
    texts = [ln.text for ln in lines]
    assert "d 500 mm" in texts[0] and "w: legend" in texts[0]
    table = comparison_rows(c)
    assert table[0].split() == ["µT", "with", "without", "factor", "dB"]
    assert _row("\n".join(table), "· curve at d") == ["2", "4", "0.5", "+6.0"]
    assert _row("\n".join(table), "┄ a very long…") == ["3", "3", "1", "0.0"]
    assert _row("\n".join(table), "╌ nothing") == ["0", "0", "-", "-"]  # no field either way
    assert all(len(r) <= 42 for r in table)                 # the wide side, less its scroll bar
    assert not any("\x1b" in t for t in texts)              # names reach the screen escaped
    assert any(t.startswith("◆ desk\\x1b") for t in texts)
    assert FACTOR_MEANING in texts and DB_MEANING in texts
    assert any("check them" in t for t in texts)            # the material data caution
    pending = comparison_lines(c, has_plates=True, pending=True)[0].text
    assert "…" in pending


def test_comparison_lines_without_plates_or_figures():
    assert "nothing to compare" in " ".join(ln.text for ln in comparison_lines(None, False))
    assert "computing" in comparison_lines(None, True)[-1].text


def test_loss_line_gives_each_body_largest_first():
    def fig(name: str, body: str, w: float) -> PlateFigure:
        return PlateFigure(name, "steel", 200.0, 5e6, body, None, w)

    s = SimpleNamespace(plates=(fig("shield", "shield", 0.0072), fig("T1 bottom", "T1", 1.8),
                                fig("T1 left side", "T1", 0.4)))
    assert loss_line(s) == "Eddy W/m T1 2.2 · shield 0.0072"
    assert loss_line(s, pending=True).startswith("Eddy W/m …")
    assert loss_line(SimpleNamespace(plates=())) is None
    assert loss_line(None) is None


def test_the_solving_notice_is_for_layouts_with_plates_while_work_runs():
    assert working_text(has_plates=True, busy=True) == SOLVING
    assert SOLVING == "solving the plates (finite elements)…"
    assert working_text(has_plates=True, busy=False) == ""
    assert working_text(has_plates=False, busy=True) == ""


# -- the app ---------------------------------------------------------------------------------
async def test_w_shows_the_shielding_factor_below_one_under_a_sheet_tray() -> None:
    app = _app(SHEET_LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)                            # the plates solved once, here
        await pilot.press("2")
        await settle(app, pilot)
        view = app.screen
        assert isinstance(view, FieldScreen)
        assert "Eddy W/m T1" in text_of(app, "#readout")   # the sheet tray's loss
        shown_keys = {k for k, ab in view.active_bindings.items() if ab.binding.show}
        assert "w" in shown_keys                            # the footer shows the key
        await pilot.press("w")
        await settle(app, pilot)
        assert app.compare_plates and view.has_class("show-compare")
        d = app.settings.distance_mm
        want = plate_comparison(SHEET_LAYOUT, distance_mm=d)
        assert app.comparison == want                       # the core's figures, unchanged
        shown = text_of(app, "#compare")
        with_, without, factor, _db = _row(shown, "◆ under")
        assert float(factor) < 1.0                          # the steel screens under the tray
        assert float(with_) < float(without)
        assert FACTOR_MEANING.split(" (")[0] in shown
        # The drawing keeps the focus: a move changes the figures, the panel follows.
        await pilot.press("right")
        await settle(app, pilot)
        assert app.document.generation == 1
        assert app.comparison_key == app.analysis_key()
        assert app.comparison == plate_comparison(app.document.layout, distance_mm=d)
        # v (places) and w share the side: one replaces the other.
        await pilot.press("v")
        await pilot.pause()
        assert view.has_class("show-places") and not view.has_class("show-compare")
        assert not app.compare_plates
        await pilot.press("w")
        await settle(app, pilot)
        assert view.has_class("show-compare") and not view.has_class("show-places")
        await pilot.press("w")                              # w again: the legend
        await pilot.pause()
        assert not view.has_class("show-compare") and not app.compare_plates
        assert view.query_one("#legend", Static).display


async def test_w_without_plates_says_there_is_nothing_to_compare() -> None:
    app = _app(BARE_LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("2")
        await settle(app, pilot)
        await pilot.press("w")
        await pilot.pause()
        assert NOTHING_TO_COMPARE.startswith("no plates or sheet trays: nothing to compare")
        assert NOTHING_TO_COMPARE in text_of(app, "#status")
        assert not app.compare_plates and not app.screen.has_class("show-compare")


async def test_the_message_line_says_so_while_the_plates_are_solved(monkeypatch) -> None:
    """A readouts worker that runs until released: the notice shows after a moment, keys
    keep working, an edit restarts the worker, and the notice goes when the work is done."""
    release = threading.Event()
    calls: list[Layout] = []
    cancelled_calls: list[Layout] = []

    def slow(layout, distance_mm, limits, emit, cancelled=lambda: False,  # noqa: ANN001
             **kw) -> None:  # noqa: ANN003
        calls.append(layout)
        while not release.is_set():
            if cancelled():
                cancelled_calls.append(layout)
                return
            time.sleep(0.01)

    monkeypatch.setattr("trayadvisor.tui.app.run_analysis", slow)
    app = _app(SHEET_LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        assert await _poll(pilot, lambda: SOLVING in text_of(app, "#status"))
        assert text_of(app, "#status").startswith(SOLVING)
        # A key typed meanwhile is an edit at once, and the worker starts again for it.
        await pilot.press("right")
        assert app.document.generation == 1
        assert await _poll(pilot, lambda: len(calls) == 2 and cancelled_calls == [calls[0]])
        assert calls[1] is app.document.layout
        assert SOLVING in text_of(app, "#status")
        release.set()
        await settle(app, pilot)
        assert await _poll(pilot, lambda: SOLVING not in text_of(app, "#status"))
        assert app.busy == ""


async def test_no_notice_for_a_layout_without_plates(monkeypatch) -> None:
    release = threading.Event()

    def slow(*a, **kw) -> None:  # noqa: ANN002, ANN003
        release.wait(2.0)

    monkeypatch.setattr("trayadvisor.tui.app.run_analysis", slow)
    app = _app(BARE_LAYOUT)
    async with app.run_test(size=SIZE) as pilot:
        await pilot.pause(0.6)                              # twice the notice's delay
        assert app.field_work_running()
        assert SOLVING not in text_of(app, "#status")
        release.set()
        await settle(app, pilot)
