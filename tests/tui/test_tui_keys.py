"""Random keys never break the app; the keymap file overrides keys by binding id."""

from __future__ import annotations

import random
from pathlib import Path

import pytest
from textual import events
from tuihelpers import SIZE, settle

from trayadvisor.analysis import field_summary
from trayadvisor.tui import make_app
from trayadvisor.tui.screens.base import WorkScreen

# Every key the app binds, plus typing and navigation keys; ctrl+q is left out so the run
# is not ended by a quit with nothing to save, and R (a report: seconds of work per Enter).
# Escape comes three times so that the walk does not spend most of its keys typing into
# forms. P opens the plates menu; w is the Field view's with / without plates panel (and
# the Ranking view's save); v the places panel.
KEYS = (
    "left right up down shift+left shift+right shift+up shift+down tab shift+tab enter "
    "escape escape escape space backspace delete home end pageup pagedown "
    "a c x e i n t T d m u S h j k l 0 plus minus question_mark "
    "left_square_bracket right_square_bracket 1 2 3 4 ctrl+s ctrl+o ctrl+r ctrl+z ctrl+y "
    "y s f1 5 full_stop minus q r w p P v"
).split()


_CHARS = {"space": " ", "full_stop": ".", "minus": "-", "plus": "+", "question_mark": "?",
          "left_square_bracket": "[", "right_square_bracket": "]"}


def _key_event(key: str) -> events.Key:
    """The event a terminal sends for ``key``."""
    return events.Key(key, key if len(key) == 1 else _CHARS.get(key))


async def test_500_random_keys_never_raise(tmp_path: Path,
                                           monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(tmp_path)                             # any file it saves lands here
    rng = random.Random(20240607)
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        # Keys arrive in bursts of ten without waiting for the app to catch up (harder than
        # one at a time, and fast enough for the suite), then the app settles.
        seen: set[str] = set()
        for burst in range(50):
            for _ in range(10):
                app.post_message(_key_event(rng.choice(KEYS)))
            await pilot.pause()
            assert app.is_running, f"the app stopped during burst {burst}"
            seen.add(type(app.screen).__name__)
        await settle(app, pilot)
        # The keys reached the app: it edited the model and opened dialogs on the way.
        assert app.document.generation > 5
        assert len(seen) >= 4, seen
        assert app.is_running
        # Whatever happened, the model on show is still a consistent Layout.
        doc = app.document
        assert doc.selected is None or doc.selected in {c.name for c in doc.layout.conductors}
        # Escape leads back to a view from wherever the keys left the app, in a few presses.
        for _ in range(8):
            if isinstance(app.screen, WorkScreen):
                break
            await pilot.press("escape")
            await settle(app, pilot)
        assert isinstance(app.screen, WorkScreen), type(app.screen).__name__
        # A model with problems shows them; undo walks back to a valid model (the demo was
        # one), whose readout is the figure of the model on show, not of an earlier edit.
        assert app.problems == [e.message for e in doc.problems()]
        for _ in range(doc.generation + 1):
            if not app.problems:
                break
            await pilot.press("ctrl+z")
            await settle(app, pilot)
        assert app.problems == []
        want = field_summary(doc.layout, distance_mm=app.settings.distance_mm)
        assert app.summary is not None
        assert app.summary.max_resultant_uT == pytest.approx(want.max_resultant_uT, rel=1e-12)


async def test_keymap_file_overrides_a_key(tmp_path: Path, demo_copy: Path,
                                           monkeypatch: pytest.MonkeyPatch) -> None:
    keymap = tmp_path / "keys.toml"
    keymap.write_text('[keys]\n"file.save" = "f2"\n"edit.undo" = "backspace"\n',
                      encoding="utf-8")
    monkeypatch.setenv("TRAYADVISOR_KEYMAP", str(keymap))
    app = make_app(demo_copy)
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        await pilot.press("up")
        await settle(app, pilot)
        await pilot.press("backspace")                      # undo, moved to backspace
        await settle(app, pilot)
        assert not app.document.dirty
        await pilot.press("up", "f2")                       # save, moved to f2
        await settle(app, pilot)
        assert not app.document.dirty


async def test_a_bad_keymap_file_is_reported_not_fatal(tmp_path: Path,
                                                       monkeypatch: pytest.MonkeyPatch) -> None:
    keymap = tmp_path / "keys.toml"
    keymap.write_text("[keys\n", encoding="utf-8")
    monkeypatch.setenv("TRAYADVISOR_KEYMAP", str(keymap))
    app = make_app()
    async with app.run_test(size=SIZE) as pilot:
        await settle(app, pilot)
        assert "keymap ignored" in app.message[0]
