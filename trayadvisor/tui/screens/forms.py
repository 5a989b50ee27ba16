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
import re
from collections.abc import Callable, Iterable
from typing import Any, TypeVar

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
from trayadvisor.model import MATERIALS, PHASES, SYSTEMS, Circuit, Conductor, Layout, Limit, Tray
from trayadvisor.output import fmt_mm, fmt_uT
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
            yield Static(self.TITLE_TEXT, classes="form-title")
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


def _select(wid: str, options: Iterable[str], value: str | None, blank: str = "") -> Select:
    opts = ([(blank, _NONE)] if blank else []) + [(o, o) for o in options]
    opts = opts or [("(none)", _NONE)]
    values = [v for _, v in opts]
    return Select(opts, value=value if value in values else values[0], allow_blank=False,
                  id=wid, compact=True)


class ConductorForm(FormScreen[Conductor | None]):
    """A conductor's properties."""

    def __init__(self, layout: Layout, conductor: Conductor, new: bool = False) -> None:
        super().__init__()
        self.lay, self.conductor, self.new = layout, conductor, new
        self.TITLE_TEXT = "New conductor" if new else f"Conductor {conductor.name}"
        self._systems = {c.name: c.system for c in layout.circuits}

    def _phases(self, circuit: str | None) -> tuple[str, ...]:
        return PHASES.get(self._systems.get(circuit or "", ""), ("L1", "L2", "L3", "N", "PE"))

    def fields(self) -> Iterable[tuple[str, Widget]]:
        c = self.conductor
        yield "Name", Input(c.name, id="name", compact=True)
        yield "Circuit", _select("circuit", self._systems, c.circuit)
        yield "Phase", _select("phase", self._phases(c.circuit), c.phase)
        yield "x mm (centre)", Input(_text(c.x_mm), id="x", compact=True)
        yield "y mm (centre)", Input(_text(c.y_mm), id="y", compact=True)
        yield "Diameter mm", Input(_text(c.diameter_mm), id="dia", compact=True)
        yield "Area mm² (opt.)", Input(_text(c.area_mm2), id="area", compact=True)
        yield "Material", _select("material", MATERIALS, c.material, blank="(none)")
        yield "Current A (opt.)", Input(_text(c.current_a), id="current", compact=True)
        yield "Angle ° (opt.)", Input(_text(c.angle_deg), id="angle", compact=True)
        yield "Tray", _select("tray", [t.name for t in self.lay.trays], c.tray,
                              blank="(any)")
        yield "Fixed (ranking)", _select("fixed", ("no", "yes"), "yes" if c.fixed else "no")

    @on(Select.Changed, "#circuit")
    def _circuit_changed(self, event: Select.Changed) -> None:
        phase = self.query_one("#phase", Select)
        keep = phase.value
        options = self._phases(str(event.value))
        phase.set_options([(p, p) for p in options])
        phase.value = keep if keep in options else options[0]

    def build(self) -> Conductor | None:
        taken = {c.name for c in self.lay.conductors} - ({self.conductor.name}
                                                             if not self.new else set())
        circuit = self.choice("circuit")
        if circuit is None:
            raise FormError("circuit", "circuit: pick one (n adds a circuit)")
        return Conductor(
            name=self.unique_text("name", "name", taken), circuit=circuit,
            phase=self.choice("phase"),
            x_mm=self.number("x", "x", "mm"), y_mm=self.number("y", "y", "mm"),
            diameter_mm=self.number("dia", "diameter", "mm", 0.0, strict=True),
            area_mm2=self.number("area", "area", "mm²", 0.0, strict=True, optional=True),
            material=self.choice("material"),
            current_a=self.number("current", "current", "A", 0.0, optional=True),
            angle_deg=self.number("angle", "angle", "degrees", optional=True),
            fixed=self.choice("fixed") == "yes", tray=self.choice("tray"))


def parse_harmonics(text: str) -> tuple[tuple[int, float], ...]:
    """``"5=0.2, 7=0.1"`` -> ((5, 0.2), (7, 0.1)); orders 2 to 50, fractions >= 0."""
    out: dict[int, float] = {}
    for part in filter(None, (p.strip() for p in re.split(r"[,;]", text))):
        m = re.fullmatch(r"(\d+)\s*[=:]\s*(\S+)", part)
        if not m:
            raise ValueError(f"'{part}' is not order=fraction, e.g. 5=0.2")
        order, frac = int(m.group(1)), float(m.group(2))
        if not 2 <= order <= 50 or order in out:
            raise ValueError(f"order {order}: use each whole order 2 to 50 once")
        if not (math.isfinite(frac) and frac >= 0):
            raise ValueError(f"order {order}: the fraction must be 0 or more")
        out[order] = frac
    return tuple(sorted(out.items()))


class CircuitForm(FormScreen[Circuit | str | None]):
    """A circuit's system, current and harmonics; Delete removes it with its conductors."""

    def __init__(self, layout: Layout, circuit: Circuit, new: bool = False) -> None:
        super().__init__(deletable=not new)
        self.lay, self.circuit, self.new = layout, circuit, new
        self.TITLE_TEXT = "New circuit" if new else f"Circuit {circuit.name}"

    def fields(self) -> Iterable[tuple[str, Widget]]:
        c = self.circuit
        harm = ", ".join(f"{h}={f:g}" for h, f in c.harmonics)
        yield "Name", Input(c.name, id="name", compact=True)
        yield "System", _select("system", SYSTEMS, c.system)
        yield "Current A (RMS)", Input(_text(c.current_a), id="current", compact=True)
        yield "Angle °", Input(_text(c.angle_deg), id="angle", compact=True)
        yield "Harmonics h=frac", Input(harm, id="harmonics", compact=True,
                                        placeholder="e.g. 5=0.2, 7=0.1")
        yield "Run length m (opt.)", Input(_text(c.length_m), id="length", compact=True)

    def build(self) -> Circuit | str | None:
        taken = {c.name for c in self.lay.circuits} - ({self.circuit.name}
                                                          if not self.new else set())
        try:
            harmonics = parse_harmonics(self.text_of("harmonics"))
        except ValueError as exc:
            raise FormError("harmonics", f"harmonics: {exc}") from None
        system = self.choice("system")
        if system == "dc" and harmonics:
            raise FormError("harmonics", "harmonics: a dc circuit has none; clear the field")
        return Circuit(name=self.unique_text("name", "name", taken), system=system,
                       current_a=self.number("current", "current", "A", 0.0) or 0.0,
                       angle_deg=self.number("angle", "angle", "degrees") or 0.0,
                       harmonics=harmonics,
                       length_m=self.number("length", "run length", "m", 0.0, strict=True,
                                            optional=True))


class TrayForm(FormScreen[Tray | str | None]):
    """A tray's inner cross-section: lower-left corner, width and depth."""

    def __init__(self, layout: Layout, tray: Tray, new: bool = False) -> None:
        super().__init__(deletable=not new)
        self.lay, self.tray, self.new = layout, tray, new
        self.TITLE_TEXT = "New tray" if new else f"Tray {tray.name}"

    def fields(self) -> Iterable[tuple[str, Widget]]:
        t = self.tray
        yield "Name", Input(t.name, id="name", compact=True)
        yield "x mm (left)", Input(_text(t.x_mm), id="x", compact=True)
        yield "y mm (floor)", Input(_text(t.y_mm), id="y", compact=True)
        yield "Width mm", Input(_text(t.width_mm), id="width", compact=True)
        yield "Depth mm", Input(_text(t.depth_mm), id="depth", compact=True)

    def build(self) -> Tray | str | None:
        taken = {t.name for t in self.lay.trays} - ({self.tray.name} if not self.new
                                                       else set())
        return Tray(name=self.unique_text("name", "name", taken), x_mm=self.number("x", "x", "mm"),
                    y_mm=self.number("y", "y", "mm"),
                    width_mm=self.number("width", "width", "mm", 0.0, strict=True),
                    depth_mm=self.number("depth", "depth", "mm", 0.0, strict=True))


def limit_row(lim: Limit, figure: LimitFigure | None) -> str:
    """One line of the limit list: verdict at d, value, name, kind, clearance distance."""
    name = lim.name if len(lim.name) <= 20 else lim.name[:19] + "…"
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
               OptionList(*options, id="limits", classes="wide"))

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
