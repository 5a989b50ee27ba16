"""The Field view: a heat map of the resultant field around the tray, the contour at d, the
readouts and the legend. The map grid is computed in a worker thread for exactly the
canvas window; while a new one is on its way the last one is shown, resampled.

Beside the readouts the side shows the map legend, or (``v``) every place with its limits,
or (``w``) the field with and without the plates and the shielding factor, computed by the
app's readouts worker."""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.message import Message
from textual.worker import get_current_worker

from trayadvisor.model import Layout
from trayadvisor.tui.logic.compute import map_grid
from trayadvisor.tui.logic.mapscale import MapScale
from trayadvisor.tui.logic.placetext import place_lines
from trayadvisor.tui.logic.platetext import NOTHING_TO_COMPARE, comparison_lines
from trayadvisor.tui.logic.scene import FieldMap
from trayadvisor.tui.logic.viewport import Viewport
from trayadvisor.tui.screens.editing import EditingScreen
from trayadvisor.tui.widgets.canvas import CanvasContent, SectionCanvas
from trayadvisor.tui.widgets.panels import (
    ComparePanel,
    FieldReadout,
    MapLegend,
    PanelScroll,
    PlacesPanel,
)


@dataclass(frozen=True)
class _GridKey:
    document: int
    generation: int
    viewport: Viewport
    currents: str


class FieldScreen(EditingScreen):
    """Watch the field while editing: same canvas and keys as Section, with the map."""

    VIEW_NAME = "field"
    BINDINGS = [Binding("m", "map_style", "Map style", show=False, id="map.style",
                tooltip="map: colour, or shading + iso digits"),
                Binding("v", "toggle_places", "Places panel", show=False, id="field.places",
                        tooltip="side: the map legend, or every place with its limits"),
                Binding("w", "compare_plates", "Shield", id="field.compare",
                        tooltip="with / without plates: shielding factor")]

    class GridReady(Message):
        def __init__(self, key: _GridKey, values: np.ndarray) -> None:
            super().__init__()
            self.key, self.values = key, values

        def can_replace(self, message: Message) -> bool:
            return isinstance(message, type(self))  # only the newest map matters

    def __init__(self) -> None:
        super().__init__()
        self.grid_key: _GridKey | None = None  #: key of the map on show
        self._grid: tuple[_GridKey, np.ndarray] | None = None
        self._wanted: _GridKey | None = None
        self._fmap: FieldMap | None = None

    def compose_body(self) -> ComposeResult:
        yield SectionCanvas(id="canvas", classes="map")
        with Vertical(id="side"):
            yield FieldReadout(id="readout")
            yield MapLegend(id="legend")
            with PanelScroll(id="places-scroll", can_focus=False):
                yield PlacesPanel(id="places")
            with PanelScroll(id="compare-scroll", can_focus=False):
                yield ComparePanel(id="compare")

    def on_mount(self) -> None:
        super().on_mount()
        self.query_one(SectionCanvas).focus()

    def fit_bounds(self) -> tuple[float, float, float, float]:
        """Fit shows the curve at distance d all round, with room outside it."""
        x0, y0, x1, y1 = super().fit_bounds()
        d = max(self.tapp.settings.distance_mm, 0.05 * max(x1 - x0, y1 - y0, 1.0))
        m = 1.15 * d
        return (x0 - m, y0 - m, x1 + m, y1 + m)

    def scale(self) -> MapScale:
        s = self.tapp.summary
        return MapScale.around(s.max_resultant_uT if s is not None else float("nan"))

    def canvas_content(self) -> CanvasContent:
        base = super().canvas_content()
        fmap = None
        if self._grid is not None:
            key, values = self._grid
            scale = self.scale()
            fmap = self._fmap
            if fmap is None or fmap.values_uT is not values or fmap.scale != scale:
                fmap = self._fmap = FieldMap(key.viewport.bounds_mm, values, scale)
        return CanvasContent(base.layout, base.selected, fmap, self.tapp.settings.map_style,
                             base.contour_mm, base.peak_mm)

    def document_changed(self, moved: bool) -> None:
        super().document_changed(moved)
        self.request_grid()

    def results_changed(self) -> None:
        super().results_changed()
        app = self.tapp
        lim = app.chosen_limit()
        self.query_one(FieldReadout).show(app.summary, lim, app.figure_for(lim),
                                          app.results_pending(),
                                          app.document.layout.frequency_hz)
        self.query_one(MapLegend).show(self.scale(), app.settings.map_style,
                                       plates=bool(app.document.layout.all_plates()))
        self.query_one(PlacesPanel).show(place_lines(app.summary, app.document.layout,
                                                     app.summary_key != app.analysis_key()))
        self._show_comparison()

    def _show_comparison(self) -> None:
        """The with / without plates panel, shown while the comparison is asked for (w)."""
        app = self.tapp
        show = app.compare_plates
        self.set_class(show, "show-compare")
        scroll = self.query_one("#compare-scroll", PanelScroll)
        scroll.can_focus = show
        if not show:
            if self.focused is scroll:
                self.set_focus(self.query_one(SectionCanvas))
            return
        c, key = app.comparison, app.comparison_key
        if key is None or key[0] != app.document_serial:  # none yet, or another file's
            c = None
        self.query_one(ComparePanel).show(comparison_lines(
            c, bool(app.document.layout.all_plates()), app.comparison_pending()))

    def action_compare_plates(self) -> None:
        """Show the field with and without the plates and the shielding factor beside the
        map (in place of the legend or the places panel; the drawing keeps the focus, so
        the figures follow every move), or the legend again. A layout without plates has
        nothing to compare: the message line says so."""
        app = self.tapp
        if app.compare_plates:
            app.set_compare_plates(False)
            return
        if not app.document.layout.all_plates():
            app.set_status(NOTHING_TO_COMPARE, "warning")
            return
        if self.has_class("show-places"):
            self.action_toggle_places()
        app.set_compare_plates(True)

    def action_toggle_places(self) -> None:
        """Show every place with its limits beside the map (wider side, focused: ↑↓ scroll,
        Tab back to the drawing), or the legend (the drawing focused)."""
        show = not self.has_class("show-places")
        if show and self.tapp.compare_plates:
            self.tapp.set_compare_plates(False)
        self.set_class(show, "show-places")
        # The panel is always laid out (height 0 when hidden), so ↑↓ typed right after v
        # scroll it; it takes the focus at once, so they reach it.
        scroll = self.query_one("#places-scroll", PanelScroll)
        scroll.can_focus = show
        self.set_focus(scroll if show else self.query_one(SectionCanvas))

    def settings_changed(self) -> None:
        super().settings_changed()
        self.update_bars()
        self.query_one(SectionCanvas).set_fit_bounds(self.fit_bounds())
        self.request_grid()

    def action_map_style(self) -> None:
        app = self.tapp
        style = "shade" if app.settings.map_style == "colour" else "colour"
        app.set_settings(replace(app.settings, map_style=style))

    # -- the map worker ---------------------------------------------------------------------
    @on(SectionCanvas.ViewportChanged)
    def _viewport(self, event: SectionCanvas.ViewportChanged) -> None:
        self.request_grid()

    def request_grid(self) -> None:
        canvas = self.query_one(SectionCanvas)
        vp = canvas.viewport
        if vp.cols < 2 or vp.rows < 2 or canvas.size.width == 0:
            return
        doc = self.tapp.document
        key = _GridKey(self.tapp.document_serial, doc.generation, vp,
                       self.tapp.settings.currents)
        if key in (self._wanted, self.grid_key):
            return
        self._wanted = key
        self._compute_grid(key, doc.layout)

    @work(thread=True, exclusive=True, group="map", exit_on_error=False)
    def _compute_grid(self, key: _GridKey, layout: Layout) -> None:
        worker = get_current_worker()
        values = map_grid(layout, key.viewport, key.currents)
        if not worker.is_cancelled:
            self.post_message(self.GridReady(key, values))

    @on(GridReady)
    def _grid_ready(self, event: GridReady) -> None:
        if event.key != self._wanted:
            return
        self._grid = (event.key, event.values)
        self.grid_key = event.key
        self.redraw_canvas()

    @property
    def map_current(self) -> bool:
        """True when the map on show is for the current model and window."""
        doc = self.tapp.document
        vp = self.query_one(SectionCanvas).viewport
        return self.grid_key == _GridKey(self.tapp.document_serial, doc.generation, vp,
                                         self.tapp.settings.currents)
