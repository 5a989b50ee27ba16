"""The words and glyphs of plates: how a plate is drawn on the canvas (its fill glyph), how
its material reads in the list and the plates menu, and the rows of that menu.

A plate is *magnetic* when its relative permeability is above 1 (steel); the others
(stainless steel, aluminium, copper) only carry eddy currents. The two are drawn with
different fill glyphs so they read without colour. No textual here.
"""

from __future__ import annotations

from trayadvisor.fem import PLATE_MATERIALS
from trayadvisor.model import Layout, Plate, Tray
from trayadvisor.output import plain

#: Fill glyph of a magnetic plate (steel) and of any other metal plate.
MAGNETIC_GLYPH = "#"
OTHER_GLYPH = "="
#: The materials the forms offer, in the order shown.
PLATE_MATERIAL_NAMES: tuple[str, ...] = tuple(PLATE_MATERIALS)


def plate_mu_r(plate: Plate) -> float:
    """The plate's relative permeability: its own ``mu_r``, else its material's, else 1."""
    if plate.mu_r is not None:
        return float(plate.mu_r)
    data = PLATE_MATERIALS.get(plate.material or "")
    return float(data[0]) if data is not None else 1.0


def is_magnetic(plate: Plate) -> bool:
    return plate_mu_r(plate) > 1.0 + 1e-9


def plate_glyph(plate: Plate) -> str:
    """``#`` for a magnetic plate, ``=`` for another metal."""
    return MAGNETIC_GLYPH if is_magnetic(plate) else OTHER_GLYPH


def material_text(plate: Plate) -> str:
    """The material in words: ``steel``, ``steel, μr 500``, ``μr 1, σ 3.5e+07 S/m``
    (made safe for a terminal line)."""
    parts = [plain(plate.material)] if plate.material else []
    if plate.mu_r is not None:
        parts.append(f"μr {plate.mu_r:g}")
    if plate.sigma_s_per_m is not None:
        parts.append(f"σ {plate.sigma_s_per_m:g} S/m")
    return ", ".join(parts) or "no material"


def sheet_text(tray: Tray) -> str:
    """A sheet tray's metal in words: ``steel sheet 2 mm, cover``; empty for other trays."""
    if not tray.sheet:
        return ""
    cover = ", cover" if tray.cover else ""
    return f"{plain(tray.sheet)} sheet {tray.sheet_mm:g} mm{cover}"


def _mm(v: float) -> str:
    return f"{v:g}"


def plate_row(plate: Plate) -> str:
    """One line of the plates menu: glyph, name, material, lower-left corner and size."""
    body = f" · body {plain(plate.body)}" if plate.body else ""
    return (f"{plate_glyph(plate)} plate {plain(plate.name)}  {material_text(plate)} · "
            f"({_mm(plate.x_mm)}, {_mm(plate.y_mm)}) {_mm(plate.width_mm)} × "
            f"{_mm(plate.height_mm)} mm{body}")


def menu_rows(layout: Layout) -> list[tuple[str, str]]:
    """(option id, text) of the plates menu: every ``[[plate]]``, every sheet tray (its
    bottom, sides and cover are plates; Enter opens the tray form), then the row that adds
    a plate. Option ids are ``plate:name``, ``tray:name`` and ``add:plate``."""
    out = [(f"plate:{p.name}", plate_row(p)) for p in layout.plates]
    for t in layout.trays:
        if t.sheet:
            glyph = plate_glyph(t.sheet_plates()[0])
            out.append((f"tray:{t.name}", f"{glyph} tray {plain(t.name)}  {sheet_text(t)}"))
    out.append(("add:plate", "+ add a plate"))
    return out
