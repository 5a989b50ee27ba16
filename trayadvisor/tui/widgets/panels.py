"""Thin panels around the canvas: the view bar, the status line, the circuit and conductor
list, the selection details, the field readouts, the map legend and the coupling figures.

Each one shows what its screen hands it and posts a message for what the user picks;
numbers come from :mod:`trayadvisor.analysis.summary` results computed elsewhere.
"""

from __future__ import annotations

from collections.abc import Sequence

from rich.text import Text
from textual.containers import VerticalScroll
from textual.message import Message
from textual.widgets import OptionList, Static
from textual.widgets.option_list import Option

from trayadvisor.analysis import FieldSummary, LimitFigure
from trayadvisor.model import Conductor, Layout, Limit
from trayadvisor.output import decay_text, fmt_mm, fmt_uT, plain
from trayadvisor.tui.logic.couplingtext import Line
from trayadvisor.tui.logic.mapscale import DECADES, MapScale, fmt_level, palette
from trayadvisor.tui.logic.placetext import KIND_MEANING
from trayadvisor.tui.logic.platetext import (
    MAGNETIC_GLYPH,
    OTHER_GLYPH,
    loss_line,
    material_text,
    plate_glyph,
    sheet_text,
)
from trayadvisor.tui.logic.scene import PHASE_GLYPH, circuit_tags
from trayadvisor.tui.logic.settings import limit_kind, limit_level_uT
from trayadvisor.tui.widgets.canvas import PLATE_COLOURS


def order_text(order: int | None) -> str:
    """Far-field decay in words, as the CLI prints it."""
    return decay_text(order)


class ViewBar(Static):
    """One line: the views with their keys (the current one bracketed) and the file."""

    def show(self, views: Sequence[tuple[str, str, str]], current: str, label: str,
             dirty: bool, note: str = "") -> None:
        """``views``: (key, title, name) each; ``current``: the shown view's name."""
        t = Text(no_wrap=True, overflow="ellipsis")
        for k, (key, title, name) in enumerate(views):  # 80 columns: 4 views, file, d
            if k:
                t.append(" ")
            if name == current:
                t.append(f"[{key} {title}]", style="bold reverse")
            else:
                t.append(f"{key} {title}")
        t.append(" ")
        t.append("│ ")
        t.append(label, style="bold")
        if dirty:
            t.append(" * modified", style="bold")
        if note:
            t.append(f" │ {note}")
        self.update(t, layout=False)


class StatusLine(Static):
    """One line under the views: the last action's message, else the layout's problems;
    ``busy`` (the notice while the plates are solved) goes first."""

    def show(self, message: str, problems: Sequence[str], level: str = "info",
             busy: str = "") -> None:
        t = Text(no_wrap=True, overflow="ellipsis")
        if busy:
            t.append(busy, style="bold")
            t.append(" │ ")
        if message:
            mark = {"error": "✖ ", "warning": "! "}.get(level, "")
            t.append(mark + message, style="bold" if level != "info" else "")
        elif problems:
            n = len(problems)
            t.append(f"! {n} problem{'s' if n > 1 else ''}: ", style="bold")
            first = problems[0].split(": ", 2)[-1]
            t.append(first)
        else:
            t.append("layout valid · figures from an idealised model: ? for the cautions")
        self.update(t, layout=False)


class ConductorList(OptionList):
    """Circuits with their conductors, then trays and plates; the highlight follows the
    selection. Rows are plain text (names are never read as markup)."""

    class Picked(Message):
        """The highlight moved to a conductor (``kind`` "conductor") or another row."""

        def __init__(self, kind: str, name: str) -> None:
            super().__init__()
            self.kind, self.name = kind, name

    class EditRequested(Message):
        """Enter on a row: edit that conductor, circuit, tray or plate."""

        def __init__(self, kind: str, name: str) -> None:
            super().__init__()
            self.kind, self.name = kind, name

    _KINDS = {"k": "conductor", "c": "circuit", "t": "tray", "pl": "plate"}

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id, markup=False)
        self._ids: list[str] = []
        self._prompts: list[str] = []
        self._quiet = False

    @staticmethod
    def rows(layout: Layout, selected: str | None = None) -> list[tuple[str, str]]:
        """(option id, text) of every row; ``▸`` marks the selected conductor."""
        tags = circuit_tags(layout)
        out: list[tuple[str, str]] = []

        def row(c: Conductor, glyph: str) -> tuple[str, str]:
            mark = "▸" if c.name == selected else " "
            return (f"k:{c.name}", f"{mark}{glyph} {plain(c.name):<10.10} {c.x_mm:>5.0f}"
                    f"{c.y_mm:>5.0f}")

        for circ in layout.circuits:
            amps = "" if circ.system == "signal" else f" {circ.current_a:g} A"
            out.append((f"c:{circ.name}", f"{tags[circ.name]} {plain(circ.name)} "
                        f"{circ.system}{amps}"))
            out += [row(c, PHASE_GLYPH.get(c.phase, "?")) for c in layout.conductors_of(circ.name)]
        known = {c.name for c in layout.circuits}
        out += [row(c, "?") for c in layout.conductors if c.circuit not in known]
        for t in layout.trays:
            sheet = f" {sheet_text(t)}" if t.sheet else ""
            out.append((f"t:{t.name}", f"tray {plain(t.name)} {t.width_mm:g}×{t.depth_mm:g}"
                        f"{sheet}"))
        for p in layout.plates:
            out.append((f"pl:{p.name}", f"{plate_glyph(p)} plate {plain(p.name)} "
                        f"{material_text(p)} {p.width_mm:g}×{p.height_mm:g}"))
        return out

    def show(self, layout: Layout, selected: str | None) -> None:
        rows = self.rows(layout, selected)
        ids = [i for i, _ in rows]
        prompts = [p for _, p in rows]
        self._quiet = True
        try:
            if ids != self._ids:
                self.set_options([Option(p, id=i) for i, p in rows])
            else:
                for i, (old, new) in enumerate(zip(self._prompts, prompts, strict=True)):
                    if old != new:
                        self.replace_option_prompt_at_index(i, new)
            self._ids, self._prompts = ids, prompts
            want = f"k:{selected}" if selected else None
            if want in ids and self.highlighted != ids.index(want):
                self.highlighted = ids.index(want)
        finally:
            self.call_after_refresh(self._unquiet)

    def _unquiet(self) -> None:
        self._quiet = False

    def _split(self, option_id: str | None) -> tuple[str, str] | None:
        if not option_id or ":" not in option_id:
            return None
        kind, name = option_id.split(":", 1)
        return self._KINDS.get(kind, kind), name

    def on_option_list_option_highlighted(self, event: OptionList.OptionHighlighted) -> None:
        event.stop()
        picked = self._split(event.option.id)
        if picked and not self._quiet:
            self.post_message(self.Picked(*picked))

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        picked = self._split(event.option.id)
        if picked:
            self.post_message(self.EditRequested(*picked))


class SelectionInfo(Static):
    """The selected conductor's circuit, phase, size and position."""

    def show(self, layout: Layout, selected: str | None, step_mm: float) -> None:
        if selected is None:
            self.update("No conductor. a adds one.", layout=False)
            return
        c = layout.conductors[layout.conductor_index(selected)]
        tag = circuit_tags(layout).get(c.circuit, "?")
        glyph = PHASE_GLYPH.get(c.phase, "?")
        extra = []
        if c.current_a is not None:
            extra.append(f"{c.current_a:g} A set")
        if c.fixed:
            extra.append("fixed")
        extra_text = ("  " + ", ".join(extra)) if extra else ""
        self.update(Text.assemble(
            (f"{c.name}", "bold"), f"  [{tag}{glyph}]\n",
            f"{c.circuit} {c.phase}  ⌀{c.diameter_mm:g} mm{extra_text}\n",
            f"x {c.x_mm:g}  y {c.y_mm:g} mm  step {step_mm:g}",
            no_wrap=True, overflow="ellipsis"), layout=False)


def currents_text(summary: FieldSummary) -> str:
    """Which currents the figures use: the solved sharing (flagged when some parallel group
    has no conductor area, so no resistance) or equal shares."""
    if summary.currents != "solved":
        return "Currents equal shares"
    if any(n.startswith("reactance-only") for n in summary.notes):
        return "Currents solved, no area"
    return f"Currents solved, R at {summary.temperature_c:g} °C"


def readout_lines(summary: FieldSummary | None, limit: Limit | None,
                  figure: LimitFigure | None, pending: bool,
                  frequency_hz: float = 50.0) -> list[tuple[str, str]]:
    """(text, style) lines of the field readouts; ``pending``: the figure is older than the
    model (a newer one is being computed). A layout with plates gets a line of eddy-current
    losses per conducting body."""
    if summary is None:
        return [("computing the field…", "")]
    s = summary
    lines = [(f"Stray field at d = {s.distance_mm:g} mm", "bold"),
             (f" {fmt_uT(s.max_resultant_uT)} µT AC resultant RMS", "bold")]
    if s.dc_max_uT > 0:
        lines.append((f" DC {fmt_uT(s.dc_max_uT)} µT (static field)", ""))
    lines += [(f" peak at x {s.max_at_mm[0]:.0f}, y {s.max_at_mm[1]:.0f} mm", ""),
              (f"Far field {order_text(s.far_field_order)}", ""),
              (f" {fmt_uT(s.far_field_uT_at_1m)} µT at 1 m (lead term)", ""),
              (currents_text(s), "")]
    losses = loss_line(s, pending)
    if losses is not None:
        lines.append((losses, ""))
    if limit is None:
        lines.append(("No limit chosen (d sets one)", ""))
        return lines
    lines.append((f"Limit {limit.name}", "bold"))
    kind = figure.kind if figure is not None else limit_kind(limit)
    band = figure.band if figure is not None else (limit.band or "ac")
    lines.append((f" {KIND_MEANING.get(kind, kind)}{', DC' if band == 'dc' else ''}", ""))
    wait = " …" if pending or figure is None else ""
    if figure is None:
        lines.append((f" {level_text(limit, frequency_hz)} µT  checking…", ""))
        return lines
    verdict = "PASS" if figure.passes else "FAIL"
    lines.append((f" {fmt_uT(figure.limit_uT)} µT  {verdict} at d{wait}", "bold"))
    lines.append((f" clearance {fmt_mm(figure.clearance_mm)}", ""))
    return lines


def level_text(limit: Limit, frequency_hz: float) -> str:
    """A limit's level in µT as text ("?" when it cannot be judged)."""
    level = limit_level_uT(limit, frequency_hz)
    return "?" if level is None else fmt_uT(level)


class FieldReadout(Static):
    """Stray field at d, where it peaks, far-field order, the chosen limit's verdict."""

    def show(self, summary: FieldSummary | None, limit: Limit | None,
             figure: LimitFigure | None, pending: bool = False,
             frequency_hz: float = 50.0) -> None:
        t = Text(no_wrap=True, overflow="ellipsis")
        for k, (line, style) in enumerate(readout_lines(summary, limit, figure, pending,
                                                        frequency_hz)):
            if k:
                t.append("\n")
            t.append(line, style=style)
        self.update(t, layout=False)

    def show_brief(self, summary: FieldSummary | None, limit: Limit | None,
                   figure: LimitFigure | None, pending: bool = False,
                   frequency_hz: float = 50.0) -> None:
        """Three lines for the Section view: stray field at d, verdict, far-field order."""
        t = Text(no_wrap=True, overflow="ellipsis")
        if summary is None:
            self.update("computing the field…", layout=False)
            return
        t.append(f"d {summary.distance_mm:g} mm: {fmt_uT(summary.max_resultant_uT)} µT",
                 style="bold")
        t.append(" (equal shares)\n" if summary.currents != "solved" else "\n")
        if limit is None:
            t.append("no limit chosen (d)")
        elif figure is None:
            t.append(f"{level_text(limit, frequency_hz)} µT {limit.name}: checking…")
        else:
            wait = " …" if pending else ""
            t.append(f"{'PASS' if figure.passes else 'FAIL'}{wait}", style="bold")
            t.append(f" {fmt_uT(figure.limit_uT)} µT {limit.name}")
        t.append(f"\nfar field {order_text(summary.far_field_order)}")
        self.update(t, layout=False)


class MapLegend(Static):
    """The map key in µT: shading glyphs (or colours) and iso-level digits."""

    def show(self, scale: MapScale | None, style: str, plates: bool = False) -> None:
        """``plates``: the layout has plates (their glyphs get a line)."""
        t = Text(no_wrap=True, overflow="ellipsis")
        if scale is None:
            self.update("", layout=False)
            return
        t.append("Map µT", style="bold")
        t.append(" log scale (m: colour/shade)\n")
        if style == "colour":
            pal = palette()
            for k in range(DECADES, -1, -1):
                rgb = pal[min(k * len(pal) // DECADES, len(pal) - 1)]
                t.append("██", style=f"rgb({rgb[0]},{rgb[1]},{rgb[2]})")
                t.append(f" {fmt_level(10.0 ** (scale.top_exp - DECADES + k))}\n")
        else:
            for glyph, text in scale.legend():
                t.append(f"{glyph}{glyph} {text}\n")
            e = scale.edges_uT
            t.append("iso " + " ".join(f"{k + 1}={fmt_level(v)}" for k, v in enumerate(e)))
            t.append("\n")
        t.append("· contour at d  × peak\n")
        if plates:
            for magnetic, glyph, words in ((True, MAGNETIC_GLYPH, " steel plate "),
                                           (False, OTHER_GLYPH, " other metal")):
                fg, bg = PLATE_COLOURS[magnetic]
                t.append(glyph, style=f"{fg} on {bg}")
                t.append(words)
            t.append("\n")
        t.append("◆ point ╌ line ┄ area\n")
        t.append("v: places · w: with/without" if plates else "v: places and their limits")
        self.update(t, layout=False)


#: Styles of the coupling panel's line kinds; its words and markers carry the meaning alone.
_STYLES = {"head": "bold", "worst": "bold yellow", "warning": "bold red", "note": "dim",
           "row": "", "pass": "bold green", "fail": "bold red"}


class CouplingPanel(Static):
    """Victim EMF and current sharing: the lines it is handed (see
    :mod:`trayadvisor.tui.logic.couplingtext`), styled by kind."""

    def show(self, lines: list[Line], pending: bool = False) -> None:
        t = Text()
        for k, line in enumerate(lines):
            if k:
                t.append("\n")
            t.append(line.text, style=_STYLES.get(line.kind, ""))
        if pending:
            t.append("\n…", style="dim")
        self.update(t)


class PlacesPanel(Static):
    """Every place with its AC and DC maxima and each bound limit's verdict: the lines of
    :func:`trayadvisor.tui.logic.placetext.place_lines`, styled by kind (the words carry
    the verdict; colour only helps)."""

    def show(self, lines: list[Line]) -> None:
        t = Text()
        for k, line in enumerate(lines):
            if k:
                t.append("\n")
            t.append(line.text, style=_STYLES.get(line.kind, ""))
        self.update(t)


class ComparePanel(PlacesPanel):
    """The field with and without the plates and the shielding factor at d and at every
    place: the lines of :func:`trayadvisor.tui.logic.platetext.comparison_lines`."""


class PanelScroll(VerticalScroll):
    """A scrolling panel whose ↑↓ keys move at once: keys typed in a burst each count (the
    default, deferred until the next refresh, loses some)."""

    def _step(self, dy: int) -> None:
        # Set the offset itself: scroll_to does nothing before the first layout at the
        # panel's shown size, which keys typed with the key that shows it arrive before.
        y = max(0, min(self.scroll_target_y + dy, self.max_scroll_y))
        self.scroll_target_y = self.scroll_y = y

    def action_scroll_down(self) -> None:
        self._step(1)

    def action_scroll_up(self) -> None:
        self._step(-1)
