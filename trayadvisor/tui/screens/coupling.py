"""The Coupling view: victim EMF and current sharing beside the cross-section, while editing.

The figures are :func:`trayadvisor.coupling.coupling_summary` of the model on show (the
call ``trayadvisor couple`` makes), recomputed in a worker thread after every edit; a
newer result replaces a queued older one, and a result for an older model is dropped. The
canvas and the editing keys are the Section view's, so conductors can be moved while the
figures follow.
"""

from __future__ import annotations

import numpy as np
from textual import on, work
from textual.app import ComposeResult
from textual.containers import VerticalScroll
from textual.message import Message
from textual.worker import get_current_worker

from trayadvisor.coupling import CouplingSummary, SharingError, coupling_summary
from trayadvisor.model import Layout
from trayadvisor.tui.logic.couplingtext import Line, coupling_lines
from trayadvisor.tui.screens.editing import EditingScreen
from trayadvisor.tui.widgets.canvas import SectionCanvas
from trayadvisor.tui.widgets.panels import CouplingPanel

CouplingKey = tuple[int, int, str]  # (document serial, generation, current model)


class CouplingScreen(EditingScreen):
    """Watch the victim EMF and the current sharing while moving conductors."""

    VIEW_NAME = "coupling"

    class Ready(Message):
        """Coupling figures for the model identified by ``key`` (or the error)."""

        def __init__(self, key: CouplingKey, summary: CouplingSummary | None,
                     error: str = "") -> None:
            super().__init__()
            self.key, self.summary, self.error = key, summary, error

        def can_replace(self, message: Message) -> bool:
            return isinstance(message, type(self))  # only the newest figures matter

    def __init__(self) -> None:
        super().__init__()
        self.summary: CouplingSummary | None = None
        self.summary_key: CouplingKey | None = None
        self._wanted: CouplingKey | None = None
        self._error = ""

    def compose_body(self) -> ComposeResult:
        yield SectionCanvas(id="canvas")
        with VerticalScroll(id="side"):
            yield CouplingPanel("computing the coupling figures…", id="coupling")

    def on_mount(self) -> None:
        super().on_mount()
        self.query_one(SectionCanvas).focus()

    def key(self) -> CouplingKey:
        return (self.tapp.document_serial, self.tapp.document.generation,
                self.tapp.settings.currents)

    @property
    def current(self) -> bool:
        """True when the figures on show are for the model on show."""
        return self.summary_key == self.key()

    def document_changed(self, moved: bool) -> None:
        super().document_changed(moved)
        key = self.key()
        if key not in (self._wanted, self.summary_key):
            self._wanted = key
            self._compute(key, self.tapp.document.layout)
        self.show_figures()

    def settings_changed(self) -> None:
        super().settings_changed()
        self.document_changed(moved=False)  # the current model may have changed

    def show_figures(self) -> None:
        panel = self.query_one("#coupling", CouplingPanel)
        if self._error and self.summary_key == self.key():
            panel.show([Line(f"✖ {self._error}", "warning")])
        elif self.summary is None:
            panel.show([Line("computing the coupling figures…", "note")])
        else:
            panel.show(coupling_lines(self.summary), pending=not self.current)

    @work(thread=True, exclusive=True, group="coupling", exit_on_error=False)
    def _compute(self, key: CouplingKey, layout: Layout) -> None:
        worker = get_current_worker()
        try:
            with np.errstate(all="ignore"):  # coinciding conductors: NaN, shown as "–"
                summary = coupling_summary(layout, currents=key[2])
        except SharingError as exc:  # a layout the sharing cannot solve: say why
            if not worker.is_cancelled:
                self.post_message(self.Ready(key, None, str(exc)))
            return
        except Exception as exc:  # a UI must survive an engine error: show it, keep running
            if not worker.is_cancelled:
                self.post_message(self.Ready(key, None, f"coupling figures failed: "
                                             f"{type(exc).__name__}: {exc}"))
            return
        if not worker.is_cancelled:
            self.post_message(self.Ready(key, summary))

    @on(Ready)
    def _ready(self, event: Ready) -> None:
        if event.key != self._wanted:
            return
        self.summary_key = event.key
        if event.summary is None:
            self._error = event.error
        else:
            self.summary, self._error = event.summary, ""
        self.show_figures()
