"""The Section view: the cross-section to scale beside the list of circuits and conductors."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.containers import Vertical

from trayadvisor.tui.screens.editing import EditingScreen
from trayadvisor.tui.widgets.canvas import SectionCanvas
from trayadvisor.tui.widgets.panels import ConductorList, FieldReadout, SelectionInfo


class SectionScreen(EditingScreen):
    """Edit the layout: the canvas shows trays, conductors and the contour at d."""

    VIEW_NAME = "section"

    def compose_body(self) -> ComposeResult:
        yield SectionCanvas(id="canvas")
        with Vertical(id="side"):
            yield ConductorList(id="items")
            yield SelectionInfo(id="selection")
            yield FieldReadout(id="readout", classes="brief")

    def on_mount(self) -> None:
        super().on_mount()
        self.query_one(SectionCanvas).focus()

    def document_changed(self, moved: bool) -> None:
        super().document_changed(moved)
        doc = self.tapp.document
        self.query_one(ConductorList).show(doc.layout, doc.selected)
        self.query_one(SelectionInfo).show(doc.layout, doc.selected,
                                           self.tapp.settings.fine_step_mm)

    def results_changed(self) -> None:
        super().results_changed()
        app = self.tapp
        lim = app.chosen_limit()
        self.query_one(FieldReadout).show_brief(app.summary, lim, app.figure_for(lim),
                                                app.results_pending(),
                                                app.document.layout.frequency_hz)

    def settings_changed(self) -> None:
        super().settings_changed()
        self.update_bars()
        doc = self.tapp.document
        self.query_one(SelectionInfo).show(doc.layout, doc.selected,
                                           self.tapp.settings.fine_step_mm)

    @on(ConductorList.Picked)
    def _picked(self, event: ConductorList.Picked) -> None:
        doc = self.tapp.document
        if event.kind == "conductor" and event.name != doc.selected:
            doc.select(event.name)
            self.tapp.selection_changed()

    @on(ConductorList.EditRequested)
    def _edit(self, event: ConductorList.EditRequested) -> None:
        self.edit_item(event.kind, event.name)
