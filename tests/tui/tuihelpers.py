"""Helpers for driving the terminal UI in tests (imported by the tests in this folder)."""

from __future__ import annotations

from textual.pilot import Pilot
from textual.widgets import Input, Static

from trayadvisor.tui.app import TrayApp
from trayadvisor.tui.widgets.canvas import SectionCanvas

SIZE = (80, 24)


async def settle(app: TrayApp, pilot: Pilot, rounds: int = 3) -> None:
    """Let every worker finish and every message it posted be handled."""
    for _ in range(rounds):
        await app.workers.wait_for_complete()
        await pilot.pause()


def text_of(app: TrayApp, selector: str) -> str:
    """The plain text a Static on the current screen shows."""
    return str(app.screen.query_one(selector, Static).render())


def canvas_text(app: TrayApp) -> str:
    return "\n".join(app.screen.query_one(SectionCanvas).text_lines())


async def type_into(pilot: Pilot, app: TrayApp, selector: str, text: str) -> None:
    """Focus an Input on the current screen, clear it and type ``text`` key by key."""
    field = app.screen.query_one(selector, Input)
    field.focus()
    field.value = ""
    await pilot.pause()
    await pilot.press(*[{" ": "space"}.get(ch, ch) for ch in text])
