"""The Ranking view driven through the real app at 80x24: rank, preview, apply, undo, stop,
save. Reference values come from the engines the CLI calls (named at each check)."""

from __future__ import annotations

import asyncio
import json
import time
from collections.abc import Callable
from dataclasses import replace
from pathlib import Path

import pytest
from textual import events
from textual.widgets import DataTable, Input
from tuihelpers import SIZE, settle, text_of

from trayadvisor.analysis import field_summary
from trayadvisor.layoutfile import write_layout
from trayadvisor.model import Circuit, Conductor, Layout, Tray
from trayadvisor.output import fmt_uT
from trayadvisor.ranking import apply_option
from trayadvisor.ranking.rank import rank_layout
from trayadvisor.tui import make_app
from trayadvisor.tui.screens.dialogs import ConfirmDialog, MessageDialog, PathDialog
from trayadvisor.tui.screens.help import HelpScreen
from trayadvisor.tui.screens.ranking import RankingScreen
from trayadvisor.tui.screens.section import SectionScreen
from trayadvisor.tui.widgets.canvas import SectionCanvas


async def _rank(app, pilot) -> RankingScreen:  # noqa: ANN001
    await pilot.press("3")
    screen = app.screen
    assert isinstance(screen, RankingScreen)
    await pilot.press("r")
    await settle(app, pilot)
    assert not screen.running and screen.result is not None
    return screen


async def test_rank_the_demo_apply_option_1_then_undo() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        app.set_settings(replace(app.settings, distance_mm=400.0))   # d from the settings
        await settle(app, pilot)
        original = app.document.layout
        before = app.summary.max_resultant_uT
        screen = await _rank(app, pilot)
        r = screen.result
        assert r.distance_mm == 400.0 and len(r.options) == 5
        # Reference: the ranking engine itself, called as `trayadvisor rank` calls it.
        cli = rank_layout(original, distance_mm=400.0, top_k=5)
        assert r.method == cli.method and r.evaluated == cli.evaluated
        assert [o.positions for o in r.options] == [o.positions for o in cli.options]
        info = text_of(app, "#rank-info")
        assert r.method in info and f"{r.evaluated:,}" in info
        table = screen.query_one("#options", DataTable)
        assert table.row_count == 5
        # the demo binds limits to places: the options are ranked on the worst index
        assert r.unit == "index"
        assert str(table.get_row_at(0)[1]) == f"{r.options[0].max_resultant_uT:.3g}"

        # The highlighted option is previewed; the document is untouched until applied.
        await pilot.press("down")
        await pilot.pause()
        preview = screen.query_one("#preview", SectionCanvas)
        assert preview.content.layout == apply_option(original, r.options[1])
        assert app.document.layout == original and not app.document.dirty
        await pilot.press("up", "a")                         # apply option 1
        await settle(app, pilot)
        opt = r.options[0]
        assert app.document.layout == apply_option(original, opt)
        assert app.document.undo_label == "apply ranked option 1"
        # Reference: what `trayadvisor field` reports for the applied layout: the worst
        # index of the place-bound limits, as the UI's own summary computes it.
        want = field_summary(app.document.layout, distance_mm=400.0)
        worst = max(q.index for p in want.places for q in p.limits)
        assert worst == pytest.approx(opt.max_resultant_uT, rel=1e-6)
        shown = max(q.index for p in app.summary.places for q in p.limits)
        assert shown == pytest.approx(worst, rel=1e-6)
        assert app.summary.max_resultant_uT == pytest.approx(want.max_resultant_uT, rel=1e-9)

        await pilot.press("u")                              # one undo restores it all
        await settle(app, pilot)
        assert app.document.layout == original and not app.document.dirty
        assert app.summary.max_resultant_uT == before
        assert f"{fmt_uT(before)} µT" in text_of(app, "#readout")


def _busy_layout() -> Layout:
    """Eight three-phase circuits in two parallel sets, three rows of 16: far too many
    arrangements to list, so the engine's heuristic search runs for seconds (an invented
    test layout)."""
    circuits, conductors = [], []
    for k in range(8):
        circuits.append(Circuit(f"G{k}", "ac3", 400.0))
        for s in "ab":
            for ph in ("L1", "L2", "L3"):
                i = len(conductors)
                conductors.append(Conductor(f"G{k}-{ph}{s}", f"G{k}", ph,
                                            20.0 + 35.0 * (i % 16), 20.0 + 35.0 * (i // 16),
                                            30.0))
    return Layout(title="busy test tray", trays=(Tray("T1", 0.0, 0.0, 580.0, 145.0),),
                  circuits=tuple(circuits), conductors=tuple(conductors))


async def _key_soon(app, key: str, done: Callable[[], bool], within_s: float = 1.0) -> None:  # noqa: ANN001
    """Send one key as a terminal does and wait until ``done()``, at most ``within_s``.

    (``pilot.press`` waits for the CPU to go idle, which it does not while the ranking
    worker runs; a frozen UI would not answer within the limit.)"""
    t0 = time.perf_counter()
    app.post_message(events.Key(key, key if len(key) == 1 else None))
    while not done():
        await asyncio.sleep(0.02)
        assert time.perf_counter() - t0 < within_s, f"no answer to {key!r} in {within_s} s"


async def test_stopping_a_run_keeps_the_best_so_far_and_the_app_responds(
        tmp_path: Path) -> None:
    path = tmp_path / "busy.toml"
    write_layout(_busy_layout(), path)
    app = make_app(path)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("3")
        screen = app.screen
        assert isinstance(screen, RankingScreen)
        await _key_soon(app, "r", lambda: screen._progress[0] > 0, within_s=3.0)
        assert screen.running                               # the run takes seconds
        # While it runs, the app answers keys: another view, a move, back again.
        await _key_soon(app, "1", lambda: isinstance(app.screen, SectionScreen))
        await _key_soon(app, "right", lambda: app.document.dirty)
        await _key_soon(app, "3", lambda: app.screen is screen)
        assert screen.running
        await _key_soon(app, "escape", lambda: not screen.running)   # stop, keep the best
        await settle(app, pilot)
        r = screen.result
        assert r is not None and r.method == "heuristic"
        assert r.stopped_early and any("cancelled" in n for n in r.notes)
        assert len(r.options) == 5
        assert screen.query_one("#options", DataTable).row_count == 5
        assert "stopped early" in text_of(app, "#rank-info")
        # The layout moved during the run; the options still apply (positions only).
        assert "still apply" in text_of(app, "#rank-info")
        await pilot.press("a")
        await settle(app, pilot)
        assert app.document.layout == apply_option(screen.ranked, r.options[0])


async def _save_as(app, pilot, target: Path) -> None:  # noqa: ANN001
    await pilot.press("w")
    assert isinstance(app.screen, PathDialog)
    field = app.screen.query_one("#path", Input)
    field.value = str(target)
    field.focus()
    await pilot.press("enter")
    await pilot.pause()


async def test_saving_the_options_as_json_csv_and_refusing_an_unknown_extension(
        tmp_path: Path) -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        screen = await _rank(app, pilot)
        r = screen.result
        out = tmp_path / "options.json"
        await _save_as(app, pilot, out)
        data = json.loads(out.read_text(encoding="utf-8"))
        assert [o["rank"] for o in data["options"]] == [1, 2, 3, 4, 5]
        assert data["unit"] == "index" and data["options"][0]["max_resultant_uT"] is None
        assert data["options"][0]["value"] == r.options[0].max_resultant_uT
        assert data["method"] == r.method and data["evaluated"] == r.evaluated
        csv_path = tmp_path / "options.csv"
        await _save_as(app, pilot, csv_path)
        lines = csv_path.read_text(encoding="utf-8").splitlines()
        assert lines[0].startswith("rank,max_resultant_uT,reduction_pct,reduction_db")
        assert len(lines) == 1 + 5 * len(app.document.layout.conductors)
        await _save_as(app, pilot, out)                     # exists: asks first
        assert isinstance(app.screen, ConfirmDialog)
        await pilot.press("n")
        await _save_as(app, pilot, tmp_path / "options.txt")
        assert isinstance(app.screen, MessageDialog)
        assert "unknown extension" in str(app.screen.query_one("#message").render())
        assert not (tmp_path / "options.txt").exists()


async def test_help_in_the_ranking_view_lists_its_keys() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("3", "question_mark")
        assert isinstance(app.screen, HelpScreen)
        text = app.screen.text().plain
        for bid in ("ranking.run", "ranking.stop", "ranking.apply", "ranking.save",
                    "ranking.setup", "file.report", "view.coupling"):
            assert f"[{bid}]" in text
        # The app's own keys come before the list widget's cursor keys.
        assert text.index("[ranking.run]") < text.index("[cursor_down]")


async def test_keys_typed_in_one_burst_after_tab_land_in_the_next_field() -> None:
    # A script (or a paste) delivers "3<Tab><Tab><Tab>12<Enter>" at once: every key after a
    # Tab must reach the field the Tab moved to, so the form asks for top 3 with a 12 %
    # imbalance limit — not top 312.
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("3", "p")
        await pilot.pause()
        keys = [("3", "3"), ("tab", "\t"), ("tab", "\t"), ("tab", "\t"), ("1", "1"),
                ("2", "2"), ("enter", "\r")]
        for key, char in keys:
            app.post_message(events.Key(key, char))
        await settle(app, pilot)
        screen = app.screen
        assert isinstance(screen, RankingScreen)
        assert screen.params.top_k == 3 and screen.params.max_imbalance_pct == 12.0
