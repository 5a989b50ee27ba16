"""The help screen: the views, every key with its binding id, and the cautions."""

from __future__ import annotations

from collections.abc import Sequence

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.widgets import Static

from trayadvisor.output import CAUTION_LINE, CAUTIONS
from trayadvisor.tui.logic.platetext import DB_MEANING, FACTOR_MEANING, SOLVING
from trayadvisor.tui.screens.dialogs import Dialog

GLYPHS = (
    "Conductors: circuit tag + phase glyph, e.g. A1 = circuit A, phase L1 "
    "(1 2 3 = L1 L2 L3, n = N, e = PE, L = single-phase L, + − = DC, a b = signal). "
    "When conductors are close only the phase glyph shows; zoom in (+) for tags. "
    "The selected conductor is highlighted, its circuit underlined. "
    "· = the curve at distance d outside the tray envelope, × = where the field on it "
    "peaks. The Field map shades the resultant RMS field on a log scale; digits 1-4 mark "
    "the iso-levels named in the legend. Places: ◆ = an observation point, ╌ = a line, a "
    "rounded dashed outline = an area, each with its name. "
    "Plates are filled to scale, at least one cell thick however far you zoom out: "
    "# = steel (magnetic), = = another metal (stainless steel, aluminium, copper); a "
    "sheet tray's bottom, sides and cover are drawn the same way. Conductors are drawn "
    "over them."
)

LIMITS = (
    "Limits judge the AC field (fundamental and harmonics) or, in the DC band, the static "
    "field; index = field / limit, pass when it is 1 or less, margin = -20·log10(index) dB. "
    "A library exposure level uses the multi-frequency sum over the harmonics. Exposure "
    "limits are for people, immunity levels are for equipment (an immunity level is never an "
    "exposure limit), and targets are the project's own. The library values are partly "
    "recalled: check them against your copy of each document. A pass here is not compliance: "
    "follow the local wiring rules, the applicable exposure regulations and licensed practice."
)


class HelpScreen(Dialog[None]):
    """Keys and cautions; Escape, q or ? closes."""

    BINDINGS = [Binding("escape,q,question_mark,f1", "close", "Close", id="help.close")]

    def __init__(self, views: Sequence[tuple[str, str, str]],
                 keys: Sequence[tuple[str, str, str]]) -> None:
        """``views``: (key, title, description); ``keys``: (keys, description, id)."""
        super().__init__()
        self.views, self.keys = views, keys

    def text(self) -> Text:
        t = Text()
        t.append("trayadvisor: cable-tray conductor layout for low stray field\n\n",
                 style="bold")
        t.append("CAUTIONS\n", style="bold")
        t.append(" ".join(CAUTIONS) + "\n\n")
        t.append("Views\n", style="bold")
        for key, title, desc in self.views:
            t.append(f"  {key:<6} {title:<9} {desc}\n")
        t.append("\nKeys (binding id in brackets; override them in the keymap file)\n",
                 style="bold")
        for keys, desc, bid in self.keys:
            t.append(f"  {keys:<12} {desc:<40} [{bid}]\n")
        t.append("\n  The arrows move the selected conductor when the drawing has the focus.\n"
                 "  Tab moves the focus between the drawing and the list; in the list ↑↓ "
                 "select and Enter edits the conductor, circuit, tray or plate.\n"
                 "  In the Field view, m switches the map between colour and shading.\n"
                 "  In the Ranking view: r ranks the open layout, Esc stops a run and keeps "
                 "the best found so far, a or Enter applies the highlighted option as one "
                 "edit (u undoes it), w saves the options (.csv, .json or .md), p sets top K, "
                 "the objective and a time budget.\n"
                 "  The Coupling view takes the Section view's editing keys; its figures "
                 "follow every move. The worst values are marked in words (◀ ...).\n"
                 "  R writes the report of the open layout from any view.\n"
                 "  p (Section, Field, Coupling) opens the places menu: the title and "
                 "frequency, every point, line, area and limit (Enter edits; the forms' "
                 "Delete removes), and rows that add one. A limit is a level in µT or a "
                 "library entry, with its kind, band and the places it applies at (none: "
                 "the curve at d).\n"
                 "  P (Section, Field, Coupling) opens the plates menu: every plate and "
                 "every sheet tray (Enter edits; the forms' Delete removes), and a row that "
                 "adds a plate (a steel sheet below the drawing to start from). A plate is "
                 "a rectangle of metal with a material (steel, stainless, aluminium, "
                 "copper) or its own μr and σ; plates with one body are bonded together. "
                 "A tray becomes a solid sheet tray in its form (t, or Enter on its row): "
                 "sheet material, thickness and cover. Enter on a plate row of the list "
                 "edits it too.\n"
                 "  In the Field view, v shows every place with its AC and DC maxima and "
                 "each bound limit's kind, index, margin and pass/FAIL (↑↓ scroll it, Tab "
                 "back to the drawing).\n"
                 "  In the Field view, w (with / without) shows, on the curve at d and at "
                 "every place, the AC field with the plates and sheet trays and without "
                 "them (every figure recomputed as if no metal were there, same envelope), "
                 f"the shielding factor and its dB: {FACTOR_MEANING}; {DB_MEANING}. Above "
                 "1 the metal makes the field there stronger (steel near the conductors can "
                 "concentrate it). The drawing keeps the focus, so the figures follow every "
                 "move; w again shows the legend. A layout without plates has nothing to "
                 "compare: the message line says so. The readouts add the eddy-current "
                 "loss of each conducting body (W/m; plates bonded together are one body). "
                 "The first figures after the plates change take seconds (a finite-element "
                 f"solve): meanwhile the message line says \"{SOLVING}\" and the keys keep "
                 "working. The metal data are typical and "
                 "linear: check them against the actual sheet; a screen is no substitute for "
                 "the local rules and licensed practice.\n\n")
        t.append("Drawing\n", style="bold")
        t.append(GLYPHS + "\n\n")
        t.append("Limits\n", style="bold")
        t.append(LIMITS + "\n\n")
        t.append(CAUTION_LINE + "\n")
        return t

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog help"):
            yield Static("Help  (Esc closes)", classes="form-title")
            with VerticalScroll(id="help-body"):
                yield Static(self.text(), id="help-text")

    def on_mount(self) -> None:
        self.query_one("#help-body").focus()

    def action_close(self) -> None:
        self.dismiss(None)
