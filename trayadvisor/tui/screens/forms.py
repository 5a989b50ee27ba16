"""Property forms: conductor, circuit, tray and the view settings (distance d and limit).

Each form is a modal screen whose result is the new object (or None when cancelled, or
"delete"). Values are checked field by field on OK; the first bad one is named on the
error line and focused, so nothing invalid reaches the model. Checks that involve the
whole layout (overlaps, conductors outside trays) are shown on the status line instead,
since moving conductors passes through such states.
"""

from __future__ import annotations

import contextlib
import math
from collections.abc import Callable, Iterable
from typing import Any, TypeVar

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.css.query import NoMatches
from textual.widget import Widget
from textual.widgets import Button, Input, Label, OptionList, Select, Static
from textual.widgets.option_list import Option

from trayadvisor.analysis import LimitFigure
from trayadvisor.coupling import CURRENT_MODELS
from trayadvisor.model import (
    Layout,
    Limit,
)
from trayadvisor.output import fmt_mm, fmt_uT, plain
from trayadvisor.tui.logic.settings import MAP_STYLES, TYPED_LIMIT, ViewSettings, chosen_limit
from trayadvisor.tui.screens.dialogs import Dialog

T = TypeVar("T")
_NONE = "-"


class FormError(Exception):
    def __init__(self, field: str, message: str) -> None:
        super().__init__(message)
        self.field = field


def _text(v: float | None) -> str:
    return "" if v is None else f"{v:g}"


class FormScreen(Dialog[T]):
    """A titled column of labelled fields with OK / Cancel (and optionally Delete)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="form.cancel")]
    TITLE_TEXT = "Properties"

    def __init__(self, deletable: bool = False) -> None:
        super().__init__()
        self.deletable = deletable

    def fields(self) -> Iterable[tuple[str, Widget]]:
        yield from ()

    def compose(self) -> ComposeResult:
        with Vertical(classes="form"):
            yield Static(self.TITLE_TEXT, classes="form-title", markup=False)
            for label, widget in self.fields():
                if widget.has_class("wide"):  # a list under its own heading, full width
                    if label:
                        yield Label(label, markup=False, classes="form-heading")
                    yield widget
                    continue
                with Horizontal(classes="form-row"):
                    yield Label(label, markup=False, classes="form-label")
                    yield widget
            yield Static("", id="form-error", markup=False)
            with Horizontal(classes="form-buttons"):
                yield Button("OK", id="ok", variant="primary", compact=True)
                if self.deletable:
                    yield Button("Delete", id="delete", variant="error", compact=True)
                yield Button("Cancel", id="cancel", compact=True)

    #: An optional check of the whole layout with the form's result in it (or "delete"):
    #: returns the one-line problem that refuses it, or None. The form stays open, with
    #: everything typed, when it refuses.
    checker: Callable[[Any], str | None] | None = None

    def build(self) -> T:
        raise NotImplementedError

    def accept(self) -> None:
        try:
            value = self.build()
            self.check(value)
        except FormError as err:
            self.show_error(err)
            return
        self.dismiss(value)

    def check(self, value: Any) -> None:
        """Raise FormError when :attr:`checker` refuses ``value``."""
        problem = self.checker(value) if self.checker is not None else None
        if problem:
            raise FormError("", problem)

    def show_error(self, err: FormError) -> None:
        """Name the problem on the error line and focus the field it is about."""
        self.query_one("#form-error", Static).update(f"✖ {err}")
        if err.field:
            with contextlib.suppress(NoMatches):
                self.query_one(f"#{err.field}").focus()

    def action_cancel(self) -> None:
        self.dismiss(None)

    @on(Input.Submitted)
    def _submitted(self) -> None:
        self.accept()

    @on(Button.Pressed)
    def _pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "ok":
            self.accept()
        elif event.button.id == "delete":
            try:
                self.check("delete")
            except FormError as err:
                self.show_error(err)
                return
            self.dismiss("delete")  # type: ignore[arg-type]
        else:
            self.dismiss(None)

    # -- reading fields ---------------------------------------------------------------------
    def text_of(self, wid: str) -> str:
        return self.query_one(f"#{wid}", Input).value.strip()

    def number(self, wid: str, what: str, unit: str, minimum: float | None = None,
               strict: bool = False, optional: bool = False) -> float | None:
        text = self.text_of(wid)
        if not text and optional:
            return None
        try:
            v = float(text)
        except ValueError:
            raise FormError(wid, f"{what}: '{text}' is not a number ({unit})") from None
        if not math.isfinite(v):
            raise FormError(wid, f"{what}: give a finite number ({unit})")
        if minimum is not None and (v <= minimum if strict else v < minimum):
            word = "greater than" if strict else "at least"
            raise FormError(wid, f"{what}: must be {word} {minimum:g} {unit}")
        return v

    def unique_text(self, wid: str, what: str, taken: set[str]) -> str:
        text = self.text_of(wid)
        if not text:
            raise FormError(wid, f"{what}: give a name")
        if text in taken:
            raise FormError(wid, f"{what}: '{text}' is already used; names must be unique")
        return text

    def choice(self, wid: str) -> Any:
        v = self.query_one(f"#{wid}", Select).value
        return None if v is Select.NULL or v == _NONE else v


def _select(wid: str, options: Iterable[str], value: str | None, blank: str = "",
            keep: bool = False) -> Select:
    """A choice among ``options`` (names shown as plain text, never markup); ``blank`` is
    the label of a first "none" row; with ``keep`` a ``value`` that is not an option
    (a name the file holds) is offered too, so opening and accepting the form keeps it."""
    names = list(options)
    if keep and value is not None and value != _NONE and value not in names:
        names.append(value)
    opts = ([(blank, _NONE)] if blank else []) + [(o, o) for o in names]
    opts = opts or [("(none)", _NONE)]
    values = [v for _, v in opts]
    shown = [(Text(plain(label)), v) for label, v in opts]
    return Select(shown, value=value if value in values else values[0], allow_blank=False,
                  id=wid, compact=True)


def limit_row(lim: Limit, figure: LimitFigure | None) -> str:
    """One line of the limit list: verdict at d, value, name, kind, clearance distance."""
    name = plain(lim.name)
    name = name if len(name) <= 20 else name[:19] + "…"
    level = lim.value_uT if figure is None else figure.limit_uT
    value = "?" if level is None else fmt_uT(level)
    if figure is None:
        return f" …  {value:>6} µT  {name:<20}  (computing)"
    verdict = "pass" if figure.passes else "FAIL"
    return (f"{verdict} {value:>6} µT  {name:<20} {figure.kind[:8]:<8} "
            f"{fmt_mm(figure.clearance_mm)}")


class SettingsForm(FormScreen[ViewSettings | None]):
    """Distance d, the limit to test against (library, layout, typed), step, map style."""

    TITLE_TEXT = "Distance d, limit and view"

    def __init__(self, settings: ViewSettings, limits: tuple[Limit, ...],
                 figures: dict[str, LimitFigure], layout: Layout) -> None:
        super().__init__()
        self.settings, self.limits, self.figures = settings, limits, figures
        chosen = chosen_limit(settings, limits, layout)
        self.chosen = chosen.name if chosen is not None else None
        self.chosen_at_open = self.chosen

    def fields(self) -> Iterable[tuple[str, Widget]]:
        s = self.settings
        yield "Distance d mm", Input(_text(s.distance_mm), id="distance", compact=True)
        yield "Typed limit µT", Input(_text(s.typed_limit_uT), id="typed", compact=True,
                                      placeholder="optional")
        yield "Move step mm", Input(_text(s.fine_step_mm), id="step", compact=True)
        yield "Map style", _select("style", MAP_STYLES, s.map_style)
        yield "Currents", _select("currents", CURRENT_MODELS, s.currents)
        options = [Option(("▸" if lim.name == self.chosen_at_open else " ")
                          + limit_row(lim, self.figures.get(lim.name)), id=lim.name)
                   for lim in self.limits]
        yield ("Limit (↑↓ picks, Enter closes): verdict at d, clearance",
               OptionList(*options, id="limits", classes="wide", markup=False))

    def on_mount(self) -> None:
        names = [lim.name for lim in self.limits]
        if self.chosen in names:
            self.query_one("#limits", OptionList).highlighted = names.index(self.chosen)
        request = getattr(self.app, "request_all_limits", None)
        if request is not None:
            request()

    def figures_changed(self, figures: dict[str, LimitFigure]) -> None:
        """New limit figures arrived (the app computes them while this form is open)."""
        self.figures = figures
        rows = self.query_one("#limits", OptionList)
        for i, lim in enumerate(self.limits):
            mark = "▸" if lim.name == self.chosen_at_open else " "
            rows.replace_option_prompt_at_index(i, mark + limit_row(lim, figures.get(lim.name)))

    @on(OptionList.OptionHighlighted, "#limits")
    def _highlighted(self, event: OptionList.OptionHighlighted) -> None:
        self.chosen = event.option.id

    @on(OptionList.OptionSelected, "#limits")
    def _selected(self, event: OptionList.OptionSelected) -> None:
        self.chosen = event.option.id
        self.accept()

    def build(self) -> ViewSettings | None:
        typed = self.number("typed", "typed limit", "µT", 0.0, strict=True, optional=True)
        chosen = self.chosen
        if typed is not None and typed != self.settings.typed_limit_uT:
            chosen = TYPED_LIMIT
        elif typed is None and chosen == TYPED_LIMIT:
            chosen = None
        return ViewSettings(
            distance_mm=self.number("distance", "distance d", "mm", 0.0) or 0.0,
            limit_name=chosen, typed_limit_uT=typed,
            fine_step_mm=self.number("step", "move step", "mm", 0.0, strict=True) or 1.0,
            map_style=self.choice("style") or "colour",
            currents=self.choice("currents") or "solved")
