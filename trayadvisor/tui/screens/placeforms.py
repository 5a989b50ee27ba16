"""Forms for what the layout holds besides conductors: title and frequency, observation
points, lines and areas, and limits (a level in µT or an entry of the limits library).

Values are checked field by field (as the other forms do); the whole layout with the new
value is then checked by the form's ``checker`` (the editing view sets it), so an edit that
would make the layout invalid is refused with one line and the form keeps what was typed.
"""

from __future__ import annotations

from collections.abc import Iterable

from rich.text import Text
from textual import on
from textual.binding import Binding
from textual.widget import Widget
from textual.widgets import Input, OptionList, Static
from textual.widgets.option_list import Option

from trayadvisor.limits import BANDS, KINDS
from trayadvisor.model import Layout, Limit, ObservationArea, ObservationLine, ObservationPoint
from trayadvisor.tui.logic.placeedits import place_names, taken_names
from trayadvisor.tui.logic.placetext import KINDS_SHORT, library_rows
from trayadvisor.tui.screens.forms import FormError, FormScreen, _select, _text

#: The library picker's first row: no entry, the level typed in the form.
NO_ENTRY = "-"


class LayoutForm(FormScreen[tuple[str, float, float | None] | None]):
    """The layout's top-level keys: title, power frequency and the height of an earth
    reference plane (blank: none); the result is (title, frequency_hz, earth_y_mm)."""

    TITLE_TEXT = "Layout: title, frequency, earth plane"

    def __init__(self, layout: Layout) -> None:
        super().__init__()
        self.lay = layout

    def fields(self) -> Iterable[tuple[str, Widget]]:
        yield "Title", Input(self.lay.title, id="title", compact=True)
        yield "Frequency Hz", Input(_text(self.lay.frequency_hz), id="frequency",
                                    compact=True)
        earth = self.lay.earth_y_mm
        yield "Earth plane y mm", Input("" if earth is None else _text(earth), id="earth",
                                        compact=True,
                                        placeholder="optional (victims' earth loops)")

    def build(self) -> tuple[str, float, float | None] | None:
        f = self.number("frequency", "frequency", "Hz", 0.0, strict=True)
        earth = self.number("earth", "earth plane height", "mm", optional=True)
        return self.text_of("title"), float(f or 0.0), earth


class _PlaceForm(FormScreen):
    """The shared part of the point, line and area forms: a unique name among places."""

    KIND = ""

    def __init__(self, layout: Layout, place: object, new: bool = False) -> None:
        super().__init__(deletable=not new)
        self.lay, self.place, self.new = layout, place, new
        name = getattr(place, "name", "")
        self.TITLE_TEXT = f"New {self.KIND}" if new else f"{self.KIND.capitalize()} {name}"

    def place_name(self) -> str:
        taken = taken_names(self.lay, self.KIND)
        if not self.new:
            taken.discard(getattr(self.place, "name", ""))
        return self.unique_text("name", "name", taken)


class PointForm(_PlaceForm):
    """A named point where the field is reported and limits can be judged."""

    KIND = "point"

    def fields(self) -> Iterable[tuple[str, Widget]]:
        p = self.place
        assert isinstance(p, ObservationPoint)
        yield "Name", Input(p.name, id="name", compact=True)
        yield "x mm", Input(_text(p.x_mm), id="x", compact=True)
        yield "y mm", Input(_text(p.y_mm), id="y", compact=True)

    def build(self) -> ObservationPoint:
        return ObservationPoint(self.place_name(), self.number("x", "x", "mm") or 0.0,
                                self.number("y", "y", "mm") or 0.0)


def _corners(words: tuple[str, ...], values: tuple[float, ...]
             ) -> Iterable[tuple[str, Widget]]:
    """The x0, y0, x1, y1 fields of a line or an area, each labelled with its word."""
    for key, word, v in zip(("x0", "y0", "x1", "y1"), words, values, strict=True):
        yield f"{key} mm ({word})", Input(_text(v), id=key, compact=True)


class LineForm(_PlaceForm):
    """A straight line from (x0, y0) to (x1, y1), sampled at ``samples`` points."""

    KIND = "line"

    def fields(self) -> Iterable[tuple[str, Widget]]:
        ln = self.place
        assert isinstance(ln, ObservationLine)
        yield "Name", Input(ln.name, id="name", compact=True)
        yield from _corners(("start", "start", "end", "end"),
                            (ln.x0_mm, ln.y0_mm, ln.x1_mm, ln.y1_mm))
        yield "Samples", Input(str(ln.samples), id="samples", compact=True)

    def build(self) -> ObservationLine:
        name = self.place_name()
        coords = [self.number(k, k, "mm") or 0.0 for k in ("x0", "y0", "x1", "y1")]
        samples = self.number("samples", "samples", "points", 2.0)
        if samples is None or samples != int(samples):
            raise FormError("samples", "samples: give a whole number of points, at least 2")
        return ObservationLine(name, *coords, samples=int(samples))


class AreaForm(_PlaceForm):
    """A rectangle (a room, a cabinet): lower-left and upper-right corners."""

    KIND = "area"

    def fields(self) -> Iterable[tuple[str, Widget]]:
        a = self.place
        assert isinstance(a, ObservationArea)
        yield "Name", Input(a.name, id="name", compact=True)
        yield from _corners(("left", "bottom", "right", "top"),
                            (a.x0_mm, a.y0_mm, a.x1_mm, a.y1_mm))

    def build(self) -> ObservationArea:
        name = self.place_name()
        x0, y0, x1, y1 = (self.number(k, k, "mm") or 0.0 for k in ("x0", "y0", "x1", "y1"))
        if x1 <= x0:
            raise FormError("x1", "x1 (right) must be greater than x0 (left)")
        if y1 <= y0:
            raise FormError("y1", "y1 (top) must be greater than y0 (bottom)")
        return ObservationArea(name, x0, y0, x1, y1)


class PlacePicker(OptionList):
    """The places a limit applies at: ``[x]`` marks a chosen one (a glyph, so it reads
    without colour); Space or Enter toggles the highlighted row."""

    BINDINGS = [Binding("space", "toggle", "Toggle", show=False, id="places.toggle")]

    def __init__(self, names: list[tuple[str, str]], chosen: Iterable[str], *,
                 id: str | None = None, classes: str | None = None) -> None:
        self.names = names
        self.chosen = {n for n in chosen if any(n == m for _, m in names)}
        super().__init__(*[Option(self._prompt(k, n), id=n) for k, n in names], id=id,
                         classes=classes)

    def _prompt(self, kind: str, name: str) -> Text:
        mark = "[x]" if name in self.chosen else "[ ]"
        return Text(f"{mark} {kind} {name}", no_wrap=True, overflow="ellipsis")

    def action_toggle(self) -> None:
        i = self.highlighted
        if i is None or not 0 <= i < len(self.names):
            return
        kind, name = self.names[i]
        self.chosen ^= {name}
        self.replace_option_prompt_at_index(i, self._prompt(kind, name))

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()  # Enter toggles here; it does not accept the form
        self.action_toggle()

    @property
    def selected(self) -> tuple[str, ...]:
        """The chosen names in layout order."""
        return tuple(n for _, n in self.names if n in self.chosen)


class LimitForm(FormScreen[Limit | str | None]):
    """A limit: a level typed in µT or an entry of the limits library, its kind and band,
    the places it applies at (none: the curve at distance d) and its source."""

    def __init__(self, layout: Layout, limit: Limit, new: bool = False) -> None:
        super().__init__(deletable=not new)
        self.lay, self.limit, self.new = layout, limit, new
        self.TITLE_TEXT = "New limit" if new else f"Limit {limit.name}"
        self.rows = library_rows(float(layout.frequency_hz))
        self.details = {i: d for i, _, d in self.rows}
        self.library = limit.library

    def fields(self) -> Iterable[tuple[str, Widget]]:
        lim = self.limit
        yield "Name", Input(lim.name, id="name", compact=True)
        yield "Level µT (ut)", Input(_text(lim.value_uT), id="ut", compact=True,
                                     placeholder="or pick a library entry below")
        yield "Kind", _select("kind", KINDS, lim.kind, blank="(default)")
        yield "Band", _select("band", BANDS, lim.band, blank="(default)")
        yield "Source", Input(lim.source, id="source", compact=True)
        f = float(self.lay.frequency_hz)
        options = [Option("(none: the level typed above)", id=NO_ENTRY)]
        options += [Option(row, id=i) for i, row, _ in self.rows]
        yield (f"Library entry: id, kind, band, level at {f:g} Hz",
               OptionList(*options, id="library", classes="wide"))
        yield "", Static("", id="library-detail", markup=False, classes="wide hint")
        names = place_names(self.lay)
        places = PlacePicker(names, lim.places, id="places", classes="wide")
        heading = ("Places ([x] = applies there; Space toggles; none: the curve at d)"
                   if names else
                   "Places: none yet (p adds a point, line or area); judged at d")
        yield heading, places

    def on_mount(self) -> None:
        ids = [NO_ENTRY] + [i for i, _, _ in self.rows]
        want = self.library if self.library in ids else NO_ENTRY
        self.query_one("#library", OptionList).highlighted = ids.index(want)
        self._show_detail(want)

    def _show_detail(self, entry: str | None) -> None:
        # the chosen entry in words, so the choice reads without colour (NO_COLOR)
        text = ("chosen: " + self.details[entry] if entry in self.details
                else "chosen: none, the level typed above · " + KINDS_SHORT)
        self.query_one("#library-detail", Static).update(Text(text, no_wrap=True,
                                                              overflow="ellipsis"))

    @on(OptionList.OptionHighlighted, "#library")
    def _highlighted(self, event: OptionList.OptionHighlighted) -> None:
        self.library = None if event.option.id == NO_ENTRY else event.option.id
        self._show_detail(event.option.id)

    @on(OptionList.OptionSelected, "#library")
    def _selected(self, event: OptionList.OptionSelected) -> None:
        self.library = None if event.option.id == NO_ENTRY else event.option.id
        self.accept()

    def build(self) -> Limit:
        taken = taken_names(self.lay, "limit")
        if not self.new:
            taken.discard(self.limit.name)
        name = self.unique_text("name", "name", taken)
        ut = self.number("ut", "level", "µT", 0.0, strict=True, optional=True)
        if ut is not None and self.library is not None:
            raise FormError("ut", "give a level or a library entry, not both: clear the "
                            "level or pick (none) in the list")
        if ut is None and self.library is None:
            raise FormError("ut", "type a level in µT, or pick a library entry in the list")
        places = self.query_one("#places", PlacePicker).selected
        return Limit(name, value_uT=ut, source=self.text_of("source") or "layout file",
                     places=places, kind=self.choice("kind"), band=self.choice("band"),
                     library=self.library)
