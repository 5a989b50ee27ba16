"""The forms of the things a cross-section is made of: conductors, circuits, trays and
plates.

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
    DEFAULT_SHEET_MM,
    MATERIALS,
    PHASES,
    SCREEN_BONDINGS,
    SYSTEMS,
    Circuit,
    Conductor,
    Layout,
    Plate,
    Tray,
)
from trayadvisor.tui.logic.platetext import PLATE_MATERIAL_NAMES
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


def _rectangle(name: str, x: float, y: float, width: float, height: float,
               labels: tuple[str, str, str]) -> Iterable[tuple[str, Widget]]:
    """Name, lower-left corner and size: the first rows of the tray and plate forms
    (``labels``: the y row's label, the height row's label and its id)."""
    yield "Name", Input(name, id="name", compact=True)
    yield "x mm (left)", Input(_text(x), id="x", compact=True)
    yield labels[0], Input(_text(y), id="y", compact=True)
    yield "Width mm", Input(_text(width), id="width", compact=True)
    yield labels[1], Input(_text(height), id=labels[2], compact=True)


class TrayForm(FormScreen[Tray | str | None]):
    """A tray's inner cross-section (lower-left corner, width and depth) and, for a solid
    sheet tray, the sheet's material and thickness and whether it has a cover."""

    def __init__(self, layout: Layout, tray: Tray, new: bool = False) -> None:
        super().__init__(deletable=not new)
        self.lay, self.tray, self.new = layout, tray, new
        self.TITLE_TEXT = "New tray" if new else f"Tray {tray.name}"

    def fields(self) -> Iterable[tuple[str, Widget]]:
        t = self.tray
        yield from _rectangle(t.name, t.x_mm, t.y_mm, t.width_mm, t.depth_mm,
                              ("y mm (floor)", "Depth mm", "depth"))
        yield "Sheet (solid tray)", _select("sheet", PLATE_MATERIAL_NAMES, t.sheet,
                                            blank="(none: ladder, mesh)", keep=True)
        yield "Sheet mm", Input(_text(t.sheet_mm), id="sheet-mm", compact=True,
                                placeholder="thickness of the bottom and sides")
        yield "Cover", _select("cover", ("no", "yes"), "yes" if t.cover else "no")

    def build(self) -> Tray | str | None:
        taken = {t.name for t in self.lay.trays} - ({self.tray.name} if not self.new
                                                       else set())
        name = self.unique_text("name", "name", taken)
        x = self.number("x", "x", "mm")
        y = self.number("y", "y", "mm")
        width = self.number("width", "width", "mm", 0.0, strict=True)
        depth = self.number("depth", "depth", "mm", 0.0, strict=True)
        sheet = self.choice("sheet")
        sheet_mm = self.number("sheet-mm", "sheet thickness", "mm", 0.0, strict=True)
        cover = self.choice("cover") == "yes"
        if cover and sheet is None:
            raise FormError("cover", "cover: only a sheet tray has one; pick the sheet's "
                            "material or set cover to no (a separate cover: P adds a plate)")
        if sheet is None and sheet_mm != DEFAULT_SHEET_MM:
            raise FormError("sheet-mm", f"sheet mm: only a sheet tray has a sheet; pick its "
                            f"material, or leave {DEFAULT_SHEET_MM:g}")
        return Tray(name=name, x_mm=x, y_mm=y, width_mm=width, depth_mm=depth, sheet=sheet,
                    sheet_mm=sheet_mm, cover=cover)


class PlateForm(FormScreen[Plate | str | None]):
    """A plate: an axis-aligned rectangle of metal (lower-left corner, width, height), its
    material or its explicit μr and σ, and the body it is bonded into."""

    def __init__(self, layout: Layout, plate: Plate, new: bool = False) -> None:
        super().__init__(deletable=not new)
        self.lay, self.plate, self.new = layout, plate, new
        self.TITLE_TEXT = "New plate" if new else f"Plate {plate.name}"

    def fields(self) -> Iterable[tuple[str, Widget]]:
        p = self.plate
        yield from _rectangle(p.name, p.x_mm, p.y_mm, p.width_mm, p.height_mm,
                              ("y mm (bottom)", "Height mm", "height"))
        yield "Material", _select("material", PLATE_MATERIAL_NAMES, p.material,
                                  blank="(μr and σ below)", keep=True)
        yield "μr (opt.)", Input(_text(p.mu_r), id="mu", compact=True,
                                 placeholder="relative permeability")
        yield "σ S/m (opt.)", Input(_text(p.sigma_s_per_m), id="sigma", compact=True,
                                    placeholder="conductivity")
        yield "Body (opt.)", Input(p.body or "", id="body", compact=True,
                                   placeholder="same body = bonded together")

    def build(self) -> Plate | str | None:
        taken = {q.name for q in self.lay.all_plates()} - ({self.plate.name}
                                                          if not self.new else set())
        name = self.unique_text("name", "name", taken)
        x = self.number("x", "x", "mm")
        y = self.number("y", "y", "mm")
        width = self.number("width", "width", "mm", 0.0, strict=True)
        height = self.number("height", "height", "mm", 0.0, strict=True)
        material = self.choice("material")
        mu_r = self.number("mu", "μr", "(relative permeability; 1 = non-magnetic)", 1.0,
                           optional=True)
        sigma = self.number("sigma", "σ", "S/m", 0.0, optional=True)
        if material is None and (mu_r is None or sigma is None):
            raise FormError("mu" if mu_r is None else "sigma",
                            "pick a material, or give both μr and σ (S/m)")
        return Plate(name=name, x_mm=x, y_mm=y, width_mm=width, height_mm=height,
                     material=material, mu_r=mu_r, sigma_s_per_m=sigma,
                     body=self.text_of("body") or None)
