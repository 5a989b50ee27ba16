"""The plates menu (key ``P``): every ``[[plate]]`` and every sheet tray, each opened in its
form with Enter, and the row that adds a plate.

A plate is an axis-aligned rectangle of steel, stainless steel, aluminium or copper (a
shield, a cover, a wall); a sheet tray's bottom, sides and cover are plates too, set in the
tray form. Every change is one undoable edit through ``TrayApp.apply_edit``; a plate form
is first checked against the whole layout (as the places forms are,
:func:`trayadvisor.tui.logic.placeedits.new_problem`), so a refused edit leaves the form
open with what was typed. After a form closes the menu comes back on the row edited.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from textual.binding import Binding

from trayadvisor.model import Layout, Plate, Tray
from trayadvisor.tui.logic import edits
from trayadvisor.tui.logic.placeedits import new_problem
from trayadvisor.tui.logic.platetext import menu_rows
from trayadvisor.tui.screens.dialogs import RowMenu
from trayadvisor.tui.screens.itemforms import PlateForm, TrayForm

if TYPE_CHECKING:
    from trayadvisor.tui.app import TrayApp


class PlatesMenu(RowMenu):
    """Pick a row: the result is its option id (``plate:name``, ``tray:name``,
    ``add:plate``)."""

    BINDINGS = [Binding("escape", "close", "Close", id="plates.close")]

    HEADING = "Plates and sheet trays (# steel, = other metal)"
    LIST_ID = "plate-rows"
    rows = staticmethod(menu_rows)


def plate_form(layout: Layout, name: str | None) -> PlateForm:
    """The form of the plate called ``name`` (None: a new one, proposed below the drawing),
    checked against the whole layout before it closes."""
    if name is None:
        form = PlateForm(layout, edits.new_plate(layout), new=True)
    else:
        form = PlateForm(layout, next(p for p in layout.plates if p.name == name))
    form.checker = lambda value: new_problem(layout, edits.plate_edit(layout, name, value)[0])
    return form


class PlateEditing:
    """The ``P`` key of the editing views (a mixin of EditingScreen)."""

    tapp: TrayApp  # provided by WorkScreen

    def action_plates(self, highlight: str | None = None) -> None:
        """Open the plates menu."""
        app = self.tapp
        app.push_screen(PlatesMenu(app.document.layout, highlight), self._plate_menu_picked)

    def _plate_menu_picked(self, picked: str | None) -> None:
        if not picked:
            return
        what, _, name = picked.partition(":")
        lay = self.tapp.document.layout
        if what == "tray":
            tray = next((t for t in lay.trays if t.name == name), None)
            if tray is not None:
                self.tapp.push_screen(TrayForm(lay, tray),
                                      lambda value: self._plate_tray_done(lay, name, value))
            return
        old = None if what == "add" else name
        self.tapp.push_screen(plate_form(lay, old),
                              lambda value: self._plate_done(lay, old, value, menu=True))

    def edit_plate(self, name: str) -> None:
        """The form of one plate (Enter on its row of the list); no menu after it."""
        lay = self.tapp.document.layout
        self.tapp.push_screen(plate_form(lay, name),
                              lambda value: self._plate_done(lay, name, value, menu=False))

    def _plate_done(self, before: Layout, old: str | None, value: Plate | str | None,
                    menu: bool) -> None:
        app = self.tapp
        back = f"plate:{old}" if old else "add:plate"
        if value is not None and app.document.layout is before:
            after, label = edits.plate_edit(before, old, value)
            app.apply_edit(after, label)
            if isinstance(value, Plate):
                back = f"plate:{value.name}"
        if menu:
            self.action_plates(highlight=back)

    def _plate_tray_done(self, before: Layout, old: str, value: Tray | str | None) -> None:
        app = self.tapp
        back = f"tray:{old}"
        if value is not None and app.document.layout is before:
            after, label = edits.tray_edit(before, old, value)
            app.apply_edit(after, label)
            if isinstance(value, Tray):
                back = f"tray:{value.name}"
        self.action_plates(highlight=back)
