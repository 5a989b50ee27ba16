"""The places menu (key ``p``): the layout's title and frequency, its observation points,
lines and areas and its limits, each opened in a form with Enter, and the rows that add one.

Every change is one undoable edit through ``TrayApp.apply_edit``; the form is checked
against the whole layout first (:func:`trayadvisor.tui.logic.placeedits.form_problem`), so
a refused edit leaves the form open with what was typed. After a form closes the menu comes
back, on the row edited, so several places can be set up in a row; Escape leaves it.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any, cast

from textual.binding import Binding

from trayadvisor.model import Layout
from trayadvisor.tui.logic import placeedits
from trayadvisor.tui.logic.placetext import menu_rows
from trayadvisor.tui.screens.dialogs import RowMenu
from trayadvisor.tui.screens.forms import FormScreen
from trayadvisor.tui.screens.placeforms import AreaForm, LayoutForm, LimitForm, LineForm, PointForm

if TYPE_CHECKING:
    from trayadvisor.tui.app import TrayApp

#: The form of each kind of item.
FORMS: dict[str, Callable[..., FormScreen]] = {"point": PointForm, "line": LineForm,
                                               "area": AreaForm, "limit": LimitForm}
_PROPOSALS: dict[str, Callable[[Layout], Any]] = {
    "point": placeedits.new_point, "line": placeedits.new_line,
    "area": placeedits.new_area, "limit": placeedits.new_limit}


class PlacesMenu(RowMenu):
    """Pick a row: the result is its option id (``kind:name``, ``add:kind``, ``layout:``)."""

    BINDINGS = [Binding("escape", "close", "Close", id="places.close")]

    HEADING = "Title, frequency, places and limits"
    LIST_ID = "place-rows"
    rows = staticmethod(menu_rows)


class PlaceEditing:
    """The ``p`` key of the editing views (a mixin of EditingScreen)."""

    tapp: TrayApp  # provided by WorkScreen

    def action_places(self, highlight: str | None = None) -> None:
        """Open the places menu."""
        app = self.tapp
        app.push_screen(PlacesMenu(app.document.layout, highlight), self._menu_picked)

    def _menu_picked(self, picked: str | None) -> None:
        if not picked:
            return
        what, _, name = picked.partition(":")
        lay = self.tapp.document.layout
        form: FormScreen
        if what == "layout":
            kind, old = "layout", None
            form = LayoutForm(lay)
        elif what == "add":
            kind, old = name, None
            form = FORMS[kind](lay, _PROPOSALS[kind](lay), new=True)
        else:
            kind, old = what, name
            form = FORMS[kind](lay, placeedits.item(lay, kind, name))
        form.checker = lambda value: placeedits.form_problem(lay, kind, old, value)
        self.tapp.push_screen(form, lambda value: self._form_done(lay, kind, old, value))

    def _form_done(self, before: Layout, kind: str, old: str | None, value: object) -> None:
        app = self.tapp
        back = "layout:" if kind == "layout" else (f"{kind}:{old}" if old else f"add:{kind}")
        if value is not None and app.document.layout is before:
            after, label = placeedits.apply_form(before, kind, old, value)
            app.apply_edit(after, label)
            if value != "delete" and kind != "layout":
                back = f"{kind}:{cast(Any, value).name}"
        self.action_places(highlight=back)
