"""Files and safety in the terminal UI: save, save as, reopen, prompts, bad files."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from tuihelpers import SIZE, settle, text_of, type_into

from trayadvisor.launcher import main
from trayadvisor.layoutfile.reader import LayoutError, read_layout
from trayadvisor.tui import make_app
from trayadvisor.tui.logic.document import Document
from trayadvisor.tui.screens.dialogs import (
    ConfirmDialog,
    MessageDialog,
    PathDialog,
    UnsavedDialog,
)
from trayadvisor.tui.screens.section import SectionScreen

BAD = 'format = "trayadvisor/1"\n\n[[tray]]\nname = "P1"\nx_mm = 0.0\nwidth_mm = 10\n'


async def test_save_then_reopen_gives_the_same_model(demo_copy: Path) -> None:
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("up", "up")                      # stays clear of its neighbours
        await settle(app, pilot)
        edited = app.document.layout
        assert app.document.dirty and "modified" in text_of(app, "#viewbar")
        await pilot.press("ctrl+s")
        await settle(app, pilot)
        assert not app.document.dirty and "modified" not in text_of(app, "#viewbar")
        assert read_layout(demo_copy) == edited
    app2 = make_app(demo_copy)
    async with app2.run_test(size=SIZE) as pilot:
        await settle(app2, pilot)
        assert app2.document.layout == edited


async def test_save_as_from_the_demo_and_open_it_again(tmp_path: Path,
                                                        monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("up")
        await settle(app, pilot)
        await pilot.press("ctrl+s")                         # the demo has no path: save as
        assert isinstance(app.screen, PathDialog)
        await type_into(pilot, app, "#path", "mine.toml")
        await pilot.press("enter")
        await settle(app, pilot)
        saved = tmp_path / "mine.toml"
        assert read_layout(saved) == app.document.layout
        assert app.document.path == Path("mine.toml") and not app.document.dirty
        # Save as over an existing file asks first; "Keep" writes nothing.
        other = tmp_path / "other.toml"
        other.write_text("keep me", encoding="utf-8")
        await pilot.press("S")
        await type_into(pilot, app, "#path", "other.toml")
        await pilot.press("enter")
        assert isinstance(app.screen, ConfirmDialog)
        await pilot.press("n")
        assert other.read_text(encoding="utf-8") == "keep me"
        # Open the saved file through the dialog and compare models.
        await pilot.press("ctrl+o")
        await type_into(pilot, app, "#path", "mine.toml")
        await pilot.press("enter")
        await settle(app, pilot)
        assert app.document.layout == read_layout(saved)


async def test_quit_with_unsaved_edits_asks() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("left")
        await settle(app, pilot)
        await pilot.press("ctrl+q")
        assert isinstance(app.screen, UnsavedDialog)
        await pilot.press("escape")                         # cancel: still editing
        assert isinstance(app.screen, SectionScreen) and app.is_running
        await pilot.press("ctrl+q")
        await pilot.press("d")                              # discard: quits
        await pilot.pause()
        assert not app.is_running


async def test_quit_without_edits_does_not_ask() -> None:
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("ctrl+q")
        await pilot.pause()
        assert not app.is_running


async def test_quit_save_choice_saves_then_quits(demo_copy: Path) -> None:
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("up")
        await settle(app, pilot)
        edited = app.document.layout
        await pilot.press("ctrl+q", "s")
        await pilot.pause()
        assert not app.is_running
    assert read_layout(demo_copy) == edited


async def test_a_bad_file_shows_an_error_and_the_app_stays(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)
    (tmp_path / "bad.toml").write_text(BAD, encoding="utf-8")
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        before = app.document.layout
        await pilot.press("ctrl+o")
        await type_into(pilot, app, "#path", "bad.toml")
        await pilot.press("enter")
        await settle(app, pilot)
        assert isinstance(app.screen, MessageDialog)
        message = str(app.screen.query_one("#message").render())
        assert "bad.toml:" in message and "y_mm" in message  # FILE:LINE: what is missing
        await pilot.press("enter")
        assert isinstance(app.screen, SectionScreen) and app.is_running
        assert app.document.layout == before
        await pilot.press("ctrl+o")                         # a missing file: same
        await type_into(pilot, app, "#path", "nowhere.toml")
        await pilot.press("enter")
        assert isinstance(app.screen, MessageDialog)
        assert "no such file" in str(app.screen.query_one("#message").render())


async def test_opening_another_file_with_unsaved_edits_asks(
        demo_copy: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(demo_copy.parent)
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("right")
        await settle(app, pilot)
        edited = app.document.layout
        await pilot.press("ctrl+o")
        await type_into(pilot, app, "#path", demo_copy.name)
        await pilot.press("enter")
        assert isinstance(app.screen, UnsavedDialog)
        await pilot.press("c")                              # cancel keeps the edits
        assert app.document.layout == edited
        await pilot.press("ctrl+o")
        await type_into(pilot, app, "#path", demo_copy.name)
        await pilot.press("enter", "d")                     # discard opens the file
        await settle(app, pilot)
        assert app.document.path == Path(demo_copy.name) and not app.document.dirty
        assert app.document.layout == read_layout(demo_copy)


async def test_save_is_refused_while_the_layout_has_a_problem(demo_copy: Path) -> None:
    app = make_app(demo_copy)
    original = demo_copy.read_bytes()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        for _ in range(20):                                 # push the conductor out of its tray
            await pilot.press("shift+down")
        await settle(app, pilot)
        assert app.problems and "problem" in text_of(app, "#status")
        await pilot.press("ctrl+s")
        await settle(app, pilot)
        assert isinstance(app.screen, MessageDialog)
        assert demo_copy.read_bytes() == original           # nothing written
        assert app.document.dirty


async def test_a_new_file_starts_valid_and_grows_by_the_forms(tmp_path: Path) -> None:
    path = tmp_path / "new.toml"
    app = make_app(path)
    assert app.document.new and not path.exists()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        assert app.problems == [] and len(app.document.layout.trays) == 1
        await pilot.press("a")                              # no circuit yet: circuit form
        await pilot.press("enter")                          # accept the proposed circuit
        await pilot.pause()
        await pilot.press("enter")                          # then the proposed conductor
        await settle(app, pilot)
        lay = app.document.layout
        assert len(lay.circuits) == 1 and len(lay.conductors) == 1
        for _ in range(2):                                  # two more: L2, L3 proposed
            await pilot.press("a", "enter")
            await settle(app, pilot)
        assert sorted(c.phase for c in app.document.layout.conductors) == ["L1", "L2", "L3"]
        assert app.problems == []
        await pilot.press("ctrl+s")
        await settle(app, pilot)
    assert read_layout(path) == app.document.layout


def test_cli_edit_on_a_bad_file_is_one_clear_line(tmp_path: Path, capsys) -> None:
    bad = tmp_path / "bad.toml"
    bad.write_text(BAD, encoding="utf-8")
    assert main(["edit", str(bad)]) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith(f"{bad}:") and "Traceback" not in err and len(err.splitlines()) == 1
    with pytest.raises(LayoutError):
        make_app(bad)


def test_document_save_is_atomic_and_keeps_the_old_file_on_error(demo_copy: Path,
                                                                 monkeypatch) -> None:
    doc = Document.open(demo_copy)
    doc.apply(doc.layout.with_positions({"F1-L1a": (30.0, 19.0)}), "move")
    original = demo_copy.read_bytes()

    def boom(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", boom)
    with pytest.raises(OSError):
        doc.save()
    assert demo_copy.read_bytes() == original
    assert [p.name for p in demo_copy.parent.iterdir() if p.name.endswith(".tmp")] == []
    assert doc.dirty
