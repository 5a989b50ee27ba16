"""The frame every top-level view shares: view bar, body, status line, footer.

A view subclasses :class:`WorkScreen`, yields its widgets from :meth:`compose_body` and
overrides the hooks the app calls on the view being shown:

- :meth:`document_changed` after every edit, undo, redo or file open;
- :meth:`results_changed` when new field figures arrive from the analysis worker;
- :meth:`settings_changed` after distance d, the limit, the step or the map style change.

When a view is shown again (mode switch) :meth:`refresh_view` redraws it from the app's
state, so hidden views never need updating.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, ClassVar, cast

from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.css.query import NoMatches
from textual.screen import Screen
from textual.widgets import Footer
from textual.worker import Worker

from trayadvisor.tui.logic.settings import ViewSettings
from trayadvisor.tui.screens.forms import SettingsForm
from trayadvisor.tui.widgets.panels import StatusLine, ViewBar

if TYPE_CHECKING:
    from trayadvisor.tui.app import TrayApp


class WorkScreen(Screen[None]):
    """Base of the top-level views."""

    #: The view's name in :data:`trayadvisor.tui.views.VIEWS`.
    VIEW_NAME: ClassVar[str] = ""

    @property
    def tapp(self) -> TrayApp:
        return cast("TrayApp", self.app)

    def compose(self) -> ComposeResult:
        yield ViewBar(id="viewbar")
        with Horizontal(id="body"):
            yield from self.compose_body()
        yield StatusLine(id="status")
        yield Footer(compact=True, show_command_palette=False)

    def compose_body(self) -> ComposeResult:
        """The view's own widgets, laid out left to right in ``#body``."""
        yield from ()

    def on_mount(self) -> None:
        self.refresh_view()

    def on_screen_resume(self) -> None:
        if self.is_mounted:
            self.refresh_view()

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        """A view's own worker (the map, the coupling figures) started or ended: the app's
        notice while the plates are solved follows it."""
        self.tapp.refresh_busy()

    # -- hooks the app calls ----------------------------------------------------------------
    def refresh_view(self) -> None:
        """Redraw everything from the app's state (view shown again, file opened)."""
        self.update_bars()
        self.document_changed(moved=False)
        self.results_changed()

    def document_changed(self, moved: bool) -> None:
        """The model or the selection changed; ``moved``: only positions changed."""

    def results_changed(self) -> None:
        """New field figures are in ``self.tapp`` (summary, limit figures)."""

    def settings_changed(self) -> None:
        self.results_changed()

    def action_settings(self) -> None:
        """The settings form (distance d, limit, step, map style); views bind it to d."""
        app = self.tapp

        def done(new: ViewSettings | None) -> None:
            if new is not None:
                app.set_settings(new)

        self.app.push_screen(SettingsForm(app.settings, app.limits, app.current_figures(),
                                          app.document.layout), done)

    def update_bars(self) -> None:
        """View bar and status line from the app's state."""
        app = self.tapp
        doc = app.document
        views = [(v.key, v.title, v.name) for v in app.view_specs]
        s = app.settings
        try:
            self.query_one(ViewBar).show(views, self.VIEW_NAME, doc.label, doc.dirty,
                                         f"d {s.distance_mm:g} mm")
            message, level = app.message
            self.query_one(StatusLine).show(message, app.problems, level, app.busy)
        except NoMatches:  # not composed yet
            return
