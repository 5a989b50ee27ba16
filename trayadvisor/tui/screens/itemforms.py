"""The forms of the things a cross-section is made of: conductors, circuits and trays.

Each form checks its fields (:class:`~trayadvisor.tui.screens.forms.FormScreen`); the edit
then goes through the document's validation like every other edit.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable

from textual import on
from textual.widget import Widget
from textual.widgets import Input, Select

from trayadvisor.model import (
    MATERIALS,
    PHASES,
    SCREEN_BONDINGS,
    SYSTEMS,
    Circuit,
    Conductor,
    Layout,
    Tray,
)
from trayadvisor.tui.screens.forms import FormError, FormScreen, _select, _text


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
        yield "Screen mm² (opt.)", Input(_text(c.screen_area_mm2), id="screen-area",
                                         compact=True, placeholder="metal cross-section")
        yield "Screen ⌀ mm (mean)", Input(_text(c.screen_diameter_mm), id="screen-dia",
                                          compact=True, placeholder="with a screen area")
        yield "Screen material", _select("screen-material", MATERIALS, c.screen_material,
                                         blank="(copper)")

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
            fixed=self.choice("fixed") == "yes", tray=self.choice("tray"),
            screen_area_mm2=self.number("screen-area", "screen area", "mm²", 0.0,
                                        strict=True, optional=True),
            screen_diameter_mm=self.number("screen-dia", "screen diameter", "mm", 0.0,
                                           strict=True, optional=True),
            screen_material=self.choice("screen-material"))


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
        yield "Screen bonding", _select("bonding", SCREEN_BONDINGS, c.screen_bonding,
                                        blank="(no screens)")

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
                                            optional=True),
                       screen_bonding=self.choice("bonding"))


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
