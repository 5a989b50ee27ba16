"""What the Section and Field views share: the canvas, and the keys that edit the layout,
move the selection, zoom and pan. Every edit goes through ``TrayApp.apply_edit`` and so is
undoable.
"""

from __future__ import annotations

from textual import on
from textual.binding import Binding

from trayadvisor.model import Circuit, Conductor, Tray
from trayadvisor.tui.logic import edits
from trayadvisor.tui.logic.scene import drawing_bounds
from trayadvisor.tui.screens.base import WorkScreen
from trayadvisor.tui.screens.itemforms import CircuitForm, ConductorForm, TrayForm
from trayadvisor.tui.screens.placemenu import PlaceEditing
from trayadvisor.tui.screens.platemenu import PlateEditing
from trayadvisor.tui.widgets.canvas import CanvasContent, SectionCanvas

#: A new circuit's defaults when the user adds one.
_NEW_CIRCUIT = Circuit(name="C1", system="ac3", current_a=100.0)


class EditingScreen(PlaceEditing, PlateEditing, WorkScreen):
    """A view with the cross-section canvas and the editing keys (``p``: the places menu,
    :mod:`trayadvisor.tui.screens.placemenu`; ``P``: the plates menu,
    :mod:`trayadvisor.tui.screens.platemenu`)."""

    BINDINGS = [
        Binding("a", "add", "Add", id="edit.add",
                tooltip="add a conductor (form)"),
        Binding("c", "duplicate", "Copy", show=False, id="edit.duplicate",
                tooltip="copy the selected conductor beside it"),
        Binding("x,delete", "delete", "Delete", show=False, id="edit.delete",
                tooltip="delete the selected conductor"),
        Binding("e,enter", "properties", "Edit", id="edit.properties",
                tooltip="edit the selected conductor (form)"),
        Binding("i", "circuit", "Circuit", show=False, id="edit.circuit",
                tooltip="edit the selected conductor's circuit"),
        Binding("n", "new_circuit", "New circuit", show=False, id="edit.new_circuit",
                tooltip="add a circuit (form)"),
        Binding("t", "tray", "Tray", show=False, id="edit.tray",
                tooltip="edit the selected conductor's tray"),
        Binding("T", "new_tray", "New tray", show=False, id="edit.new_tray",
                tooltip="add a tray (form)"),
        Binding("right_square_bracket", "select(1)", "Next", show=False, id="select.next",
                tooltip="select the next conductor"),
        Binding("left_square_bracket", "select(-1)", "Previous", show=False,
                id="select.previous",
                tooltip="select the previous conductor"),
        Binding("plus,equals_sign", "zoom(1)", "Zoom in", show=False, id="zoom.in",
                tooltip="zoom in about the selection"),
        Binding("minus", "zoom(-1)", "Zoom out", show=False, id="zoom.out",
                tooltip="zoom out"),
        Binding("0", "fit", "Fit", show=False, id="zoom.fit",
                tooltip="fit the drawing to the window"),
        Binding("h", "pan(-1, 0)", "Pan left", show=False, id="pan.left",
                tooltip="pan left"),
        Binding("l", "pan(1, 0)", "Pan right", show=False, id="pan.right",
                tooltip="pan right"),
        Binding("k", "pan(0, 1)", "Pan up", show=False, id="pan.up",
                tooltip="pan up"),
        Binding("j", "pan(0, -1)", "Pan down", show=False, id="pan.down",
                tooltip="pan down"),
        Binding("p", "places", "Places", id="edit.places",
                tooltip="title, frequency, points, lines, areas and limits (menu)"),
        Binding("P", "plates", "Plates", show=False, id="edit.plates",
                tooltip="plates and sheet trays: add, edit, delete (menu)"),
        Binding("d", "settings", "Distance", id="settings.open",
                tooltip="distance d, limit, move step, map style"),
    ]

    # -- drawing ----------------------------------------------------------------------------
    def canvas_content(self) -> CanvasContent:
        """What the canvas draws; the Field view adds its map."""
        app = self.tapp
        s = app.summary
        return CanvasContent(app.document.layout, app.document.selected,
                             contour_mm=s.profile_xy_mm if s is not None else None,
                             peak_mm=s.max_at_mm if s is not None else None)

    def fit_bounds(self) -> tuple[float, float, float, float]:
        """What "fit" (key 0) shows: the trays, conductors and plates."""
        return drawing_bounds(self.tapp.document.layout)

    _serial = -1  #: the app's document serial this view last drew

    def redraw_canvas(self, follow: bool = False) -> None:
        canvas = self.query_one(SectionCanvas)
        serial = self.tapp.document_serial
        canvas.set_fit_bounds(self.fit_bounds(), refit=serial != self._serial)
        self._serial = serial
        canvas.show(self.canvas_content(), follow=follow)

    def document_changed(self, moved: bool) -> None:
        self.update_bars()
        self.redraw_canvas(follow=True)

    def results_changed(self) -> None:
        self.redraw_canvas()

    # -- selection, zoom, pan ---------------------------------------------------------------
    def action_select(self, step: int) -> None:
        self.tapp.document.select_step(step)
        self.tapp.selection_changed()

    def action_zoom(self, steps: int) -> None:
        self.query_one(SectionCanvas).zoom(steps)

    def action_fit(self) -> None:
        canvas = self.query_one(SectionCanvas)
        canvas.set_fit_bounds(self.fit_bounds(), refit=True)

    def action_pan(self, dx: int, dy: int) -> None:
        canvas = self.query_one(SectionCanvas)
        canvas.pan(dx * max(canvas.viewport.cols // 4, 1), dy * max(canvas.viewport.rows // 4, 1))

    @on(SectionCanvas.MoveRequested)
    def _move(self, event: SectionCanvas.MoveRequested) -> None:
        doc = self.tapp.document
        i = doc.selected_index()
        if i is None:
            self.tapp.set_status("nothing selected: a adds a conductor", "warning")
            return
        c = doc.layout.conductors[i]
        step = c.diameter_mm if event.coarse else self.tapp.settings.fine_step_mm
        lay = edits.move_conductor(doc.layout, c.name, event.dx * step, event.dy * step)
        self.tapp.apply_edit(lay, f"move {c.name}", moved=True)

    # -- editing ----------------------------------------------------------------------------
    def _selected(self) -> Conductor | None:
        doc = self.tapp.document
        i = doc.selected_index()
        return doc.layout.conductors[i] if i is not None else None

    def action_add(self) -> None:
        lay = self.tapp.document.layout
        if not lay.circuits:
            self.tapp.set_status("a conductor needs a circuit: add one first", "warning")
            self.action_new_circuit(then_add=True)
            return
        near = self._selected()
        circuit = near.circuit if near is not None else lay.circuits[0].name
        proposal = edits.new_conductor(lay, near, circuit)
        self.app.push_screen(ConductorForm(lay, proposal, new=True), self._added)

    def _added(self, c: Conductor | None) -> None:
        if c is not None:
            lay = self.tapp.document.layout
            self.tapp.apply_edit(edits.add_conductor(lay, c), f"add {c.name}", selected=c.name)

    def action_duplicate(self) -> None:
        c = self._selected()
        if c is None:
            return
        lay, name = edits.duplicate_conductor(self.tapp.document.layout, c.name)
        self.tapp.apply_edit(lay, f"copy {c.name} as {name}", selected=name)

    def action_delete(self) -> None:
        c = self._selected()
        if c is None:
            return
        lay = edits.delete_conductor(self.tapp.document.layout, c.name)
        i = self.tapp.document.selected_index() or 0
        rest = lay.conductors
        nxt = rest[min(i, len(rest) - 1)].name if rest else None
        self.tapp.apply_edit(lay, f"delete {c.name}", selected=nxt)

    def action_properties(self) -> None:
        c = self._selected()
        if c is None:
            self.action_add()
            return
        self.edit_item("conductor", c.name)

    def edit_item(self, kind: str, name: str) -> None:
        """Open the form for a conductor, circuit, tray or plate by name."""
        lay = self.tapp.document.layout
        if kind == "conductor":
            c = lay.conductors[lay.conductor_index(name)]
            self.app.push_screen(ConductorForm(lay, c),
                                 lambda new: self._conductor_edited(name, new))
        elif kind == "circuit":
            self.app.push_screen(CircuitForm(lay, lay.circuit(name)),
                                 lambda new: self._circuit_edited(name, new))
        elif kind == "tray":
            tray = next(t for t in lay.trays if t.name == name)
            self.app.push_screen(TrayForm(lay, tray), lambda new: self._tray_edited(name, new))
        elif kind == "plate":
            self.edit_plate(name)

    def _conductor_edited(self, old: str, new: Conductor | None) -> None:
        if new is not None:
            lay = edits.replace_conductor(self.tapp.document.layout, old, new)
            self.tapp.apply_edit(lay, f"edit {new.name}", selected=new.name)

    def action_circuit(self) -> None:
        c = self._selected()
        lay = self.tapp.document.layout
        if c is not None and c.circuit in {k.name for k in lay.circuits}:
            self.edit_item("circuit", c.circuit)
        elif lay.circuits:
            self.edit_item("circuit", lay.circuits[0].name)
        else:
            self.action_new_circuit()

    def action_new_circuit(self, then_add: bool = False) -> None:
        lay = self.tapp.document.layout
        name = edits.unique_name(_NEW_CIRCUIT.name, {c.name for c in lay.circuits})
        proposal = Circuit(name=name, system=_NEW_CIRCUIT.system,
                           current_a=_NEW_CIRCUIT.current_a)

        def done(new: Circuit | str | None) -> None:
            if isinstance(new, Circuit):
                self.tapp.apply_edit(edits.add_circuit(self.tapp.document.layout, new),
                                     f"add circuit {new.name}")
                if then_add:
                    self.action_add()

        self.app.push_screen(CircuitForm(lay, proposal, new=True), done)

    def _circuit_edited(self, old: str, new: Circuit | str | None) -> None:
        lay = self.tapp.document.layout
        if new == "delete":
            self.tapp.apply_edit(edits.delete_circuit(lay, old), f"delete circuit {old}")
        elif isinstance(new, Circuit):
            self.tapp.apply_edit(edits.replace_circuit(lay, old, new),
                                 f"edit circuit {new.name}")

    def action_tray(self) -> None:
        tray = edits.tray_of(self.tapp.document.layout, self._selected())
        if tray is None:
            self.action_new_tray()
        else:
            self.edit_item("tray", tray.name)

    def action_new_tray(self) -> None:
        lay = self.tapp.document.layout

        def done(new: Tray | str | None) -> None:
            if isinstance(new, Tray):
                self.tapp.apply_edit(edits.add_tray(self.tapp.document.layout, new),
                                     f"add tray {new.name}")

        self.app.push_screen(TrayForm(lay, edits.new_tray(lay), new=True), done)

    def _tray_edited(self, old: str, new: Tray | str | None) -> None:
        if new is not None:
            self.tapp.apply_edit(*edits.tray_edit(self.tapp.document.layout, old, new))
