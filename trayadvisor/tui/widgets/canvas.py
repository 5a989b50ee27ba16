"""The cross-section canvas: trays and plates to scale, conductor glyphs, the contour at d,
the map.

A thin widget: it draws what :func:`trayadvisor.tui.logic.scene.build_scene` lays out and posts
messages for the keys it owns (moving the selected conductor). It computes no field; the
screen hands it a finished :class:`~trayadvisor.tui.logic.scene.FieldMap`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from rich.segment import Segment
from rich.style import Style
from textual.binding import Binding
from textual.events import Resize
from textual.message import Message
from textual.strip import Strip
from textual.widget import Widget

from trayadvisor.model import Layout
from trayadvisor.tui.logic.mapscale import palette
from trayadvisor.tui.logic.scene import FieldMap, Key, build_scene
from trayadvisor.tui.logic.viewport import Bounds, Viewport

_PALETTE = [f"rgb({r},{g},{b})" for r, g, b in palette()]
#: Circuit colours (foreground on a dark cell); the glyphs carry the meaning, colour helps.
_CIRCUIT_COLOURS = ("#ffd75f", "#5fd7ff", "#ff87d7", "#87ff87", "#ffaf5f", "#af87ff",
                    "#ff5f5f", "#d7d7d7")
#: Plates (foreground, background): steel blue-grey, other metals warm brown; the fill
#: glyph (``#`` or ``=``) tells them apart without colour.
PLATE_COLOURS: dict[bool, tuple[str, str]] = {True: ("#b8c8d8", "#3a4a5a"),
                                              False: ("#f0c890", "#5a4024")}


@dataclass(frozen=True)
class CanvasContent:
    """Everything the canvas draws, handed over in one piece by its screen."""

    layout: Layout
    selected: str | None = None
    fmap: FieldMap | None = None
    style: str = "colour"
    contour_mm: np.ndarray | None = None
    peak_mm: tuple[float, float] | None = None


def _same(a: CanvasContent | None, b: CanvasContent) -> bool:
    """True when ``b`` draws exactly what ``a`` drew (same objects, no array compares)."""
    return a is not None and a.layout is b.layout and a.selected == b.selected \
        and a.fmap is b.fmap and a.style == b.style and a.contour_mm is b.contour_mm \
        and a.peak_mm == b.peak_mm


class SectionCanvas(Widget, can_focus=True):
    """Draws one window onto the cross-section; arrows move the selected conductor."""

    BINDINGS = [
        Binding("left", "move(-1, 0)", "Move", show=False, id="canvas.left",
                tooltip="move the selection left by the step"),
        Binding("right", "move(1, 0)", "Move", show=False, id="canvas.right",
                tooltip="move the selection right by the step"),
        Binding("up", "move(0, 1)", "Move", show=False, id="canvas.up",
                tooltip="move the selection up by the step"),
        Binding("down", "move(0, -1)", "Move", show=False, id="canvas.down",
                tooltip="move the selection down by the step"),
        Binding("shift+left", "move(-1, 0, True)", "Move far", show=False,
                id="canvas.far_left",
                tooltip="move the selection one diameter left"),
        Binding("shift+right", "move(1, 0, True)", "Move far", show=False,
                id="canvas.far_right",
                tooltip="move the selection one diameter right"),
        Binding("shift+up", "move(0, 1, True)", "Move far", show=False, id="canvas.far_up",
                tooltip="move the selection one diameter up"),
        Binding("shift+down", "move(0, -1, True)", "Move far", show=False,
                id="canvas.far_down",
                tooltip="move the selection one diameter down"),
    ]

    class MoveRequested(Message):
        """Move the selected conductor by (dx, dy) steps; ``coarse``: one diameter each."""

        def __init__(self, dx: int, dy: int, coarse: bool) -> None:
            super().__init__()
            self.dx, self.dy, self.coarse = dx, dy, coarse

    class ViewportChanged(Message):
        """The window moved, zoomed or resized (a map for it may be needed)."""

        def __init__(self, canvas: SectionCanvas, viewport: Viewport) -> None:
            super().__init__()
            self.canvas, self.viewport = canvas, viewport

        @property
        def control(self) -> SectionCanvas:
            return self.canvas

        def can_replace(self, message: Message) -> bool:
            return isinstance(message, type(self)) and message.canvas is self.canvas

    def __init__(self, *, id: str | None = None, classes: str | None = None) -> None:
        super().__init__(id=id, classes=classes)
        self.viewport = Viewport()
        self.content: CanvasContent | None = None
        self.fit_bounds: Bounds | None = None
        self.hidden = 0
        self._fitted = False
        self._strips: list[Strip] | None = None
        self._styles: dict[Key, Style] = {}
        self._base = Style()

    # -- state from the screen ----------------------------------------------------------------
    def show(self, content: CanvasContent, follow: bool = False) -> None:
        """Draw ``content``; with ``follow``, pan so the selected conductor stays in view."""
        if not follow and _same(self.content, content):
            return
        self.content = content
        if follow and self._fitted and content.selected is not None:
            try:
                c = content.layout.conductors[content.layout.conductor_index(content.selected)]
            except KeyError:
                pass
            else:
                vp = self.viewport.following(c.x_mm, c.y_mm)
                if vp != self.viewport:
                    self._set_viewport(vp)
        self._strips = None
        self.refresh()

    def set_fit_bounds(self, bounds: Bounds, refit: bool = False) -> None:
        """What "fit" shows; ``refit`` applies it now."""
        self.fit_bounds = bounds
        if refit or not self._fitted:
            self.fit()

    # -- window -------------------------------------------------------------------------------
    def fit(self) -> None:
        if self.fit_bounds is None or self.size.width <= 0:
            return
        self._fitted = True
        self._set_viewport(self.viewport.resized(self.size.width, self.size.height)
                           .fitted(self.fit_bounds))

    def zoom(self, steps: int) -> None:
        """Zoom about the selected conductor (it stays where it is on screen), else about
        the centre."""
        old = self.viewport
        vp = old.zoomed(steps)
        sel = self._selected_xy()
        if sel is not None:
            k = vp.mm_per_col / old.mm_per_col
            if old.shows(*sel):
                vp = vp.centred_on(sel[0] + (old.cx_mm - sel[0]) * k,
                                   sel[1] + (old.cy_mm - sel[1]) * k)
            else:
                vp = vp.centred_on(*sel)
        self._set_viewport(vp)

    def pan(self, dcols: float, drows: float) -> None:
        self._set_viewport(self.viewport.panned(dcols, drows))

    def _selected_xy(self) -> tuple[float, float] | None:
        if self.content is None or self.content.selected is None:
            return None
        lay = self.content.layout
        try:
            c = lay.conductors[lay.conductor_index(self.content.selected)]
        except KeyError:
            return None
        return (c.x_mm, c.y_mm)

    def _set_viewport(self, vp: Viewport) -> None:
        self.viewport = vp
        self._strips = None
        self.refresh()
        self.post_message(self.ViewportChanged(self, vp))

    def on_resize(self, event: Resize) -> None:
        vp = self.viewport.resized(event.size.width, event.size.height)
        if not self._fitted and self.fit_bounds is not None:
            self.viewport = vp
            self.fit()
        else:
            self._set_viewport(vp)

    def action_move(self, dx: int, dy: int, coarse: bool = False) -> None:
        self.post_message(self.MoveRequested(dx, dy, coarse))

    # -- drawing ------------------------------------------------------------------------------
    @property
    def is_painted(self) -> bool:
        """True once the current content has been drawn (cleared by every change)."""
        return self._strips is not None

    def text_lines(self) -> list[str]:
        """The canvas as plain text (for tests and screen readers)."""
        return ["".join(seg.text for seg in strip) for strip in self._build()]

    def _build(self) -> list[Strip]:
        if self._strips is not None:
            return self._strips
        vp = self.viewport
        c = self.content
        base = self.rich_style
        if base != self._base:  # theme or focus changed: styles are cached with the base
            self._base, self._styles = base, {}
        if c is None:
            self._strips = [Strip.blank(vp.cols, base)] * vp.rows
            return self._strips
        scene = build_scene(c.layout, vp, c.selected, c.fmap, c.style, c.contour_mm,
                            c.peak_mm)
        self.hidden = scene.hidden
        strips = []
        style = self._style
        for row in scene.rows:
            segs: list[Segment] = []
            run: list[str] = []
            key: object = object()
            for ch, k in row:
                if k != key:
                    if run:
                        segs.append(Segment("".join(run), style(key)))
                    run, key = [], k
                run.append(ch)
            if run:
                segs.append(Segment("".join(run), style(key)))
            strips.append(Strip(segs, vp.cols))
        self._strips = strips
        return strips

    def _style(self, key: object) -> Style:
        """The terminal style of a scene key, combined with the widget's own (cached)."""
        style = self._styles.get(key)  # type: ignore[arg-type]
        if style is None:
            style = self._base + self._make_style(key)
            self._styles[key] = style  # type: ignore[index]
        return style

    @staticmethod
    def _make_style(key: object) -> Style:
        if not isinstance(key, tuple):
            return Style()
        kind = key[0]
        if kind == "px":
            return Style(color=_PALETTE[key[1]], bgcolor=_PALETTE[key[2]])
        if kind == "shade":
            return Style(color="grey70")
        if kind == "iso":
            return Style(bold=True)
        if kind == "note":
            return Style(color="grey85", bgcolor="grey11")
        if kind == "plate":  # solid metal: its own colours over the map, glyph by kind
            fg, bg = PLATE_COLOURS[bool(key[1])]
            return Style(color=fg, bgcolor=bg)
        bg = _PALETTE[key[1]] if len(key) == 2 and key[1] is not None else None
        if kind == "tray":
            return Style(color="grey85", bgcolor=bg)
        if kind == "place":
            return Style(color="#87ffff", bgcolor=bg, bold=True)
        if kind == "dot":
            return Style(color="white", bgcolor=bg, bold=True)
        if kind == "peak":
            return Style(color="bright_red", bgcolor=bg, bold=True)
        _, circ, emph, on_map = key
        colour = _CIRCUIT_COLOURS[circ % len(_CIRCUIT_COLOURS)] if circ >= 0 else "white"
        if emph == 2:
            return Style(color="black", bgcolor=colour, bold=True, underline=True)
        return Style(color=colour, bgcolor="grey7" if on_map else None, bold=on_map or emph == 1,
                     underline=emph == 1, reverse=False)

    def render_line(self, y: int) -> Strip:
        strips = self._build()
        if 0 <= y < len(strips):
            return strips[y]
        return Strip.blank(self.size.width, self.rich_style)
