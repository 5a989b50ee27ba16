"""The words and glyphs of plates: how a plate is drawn on the canvas (its fill glyph), how
its material reads in the list and the plates menu, the rows of that menu, and the Field
view's plate figures: the eddy-current loss line of the readouts, the with / without plates
panel (key ``w``) and the notice shown while the plates are being solved.

A plate is *magnetic* when its relative permeability is above 1 (steel); the others
(stainless steel, aluminium, copper) only carry eddy currents. The two are drawn with
different fill glyphs so they read without colour. No textual here.
"""

from __future__ import annotations

import math

from trayadvisor.analysis import FieldSummary, PlateComparison, ShieldingRow
from trayadvisor.fem import PLATE_MATERIALS
from trayadvisor.model import Layout, Plate, Tray
from trayadvisor.output import fmt_uT, plain
from trayadvisor.tui.logic.couplingtext import Line, g3

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


# -- the Field view's plate figures ----------------------------------------------------------
#: The message line while a worker solves the plates (the first solve of new plates takes
#: seconds; later ones reuse it).
SOLVING = "solving the plates (finite elements)…"
#: The message line when ``w`` is pressed on a layout without metal.
NOTHING_TO_COMPARE = "no plates or sheet trays: nothing to compare (P adds a plate)"
#: What the factor means (the panel's notes; the help and docs/tui.md say the same).
FACTOR_MEANING = "factor = with / without (below 1: the plates screen there)"
DB_MEANING = "dB = -20 log10(factor)"
#: The panel's caution: the shielding rests on recalled, linear material data.
CAUTION_DATA = "Typical, linear metal data: check them."
#: Glyph of each row type, as the canvas and the legend draw the places.
_ROW_GLYPH = {"curve": "·", "point": "◆", "line": "╌", "area": "┄"}
#: Column widths of the with / without table (a space before each figure): 42 columns,
#: the wide side of the Field view less its scroll bar.
_NAME_W, _WITH_W, _WITHOUT_W, _FACTOR_W, _DB_W = 14, 6, 7, 6, 5


def working_text(has_plates: bool, busy: bool) -> str:
    """The notice for the message line while the field workers run: explicit when the
    layout has plates (a finite-element solve can take seconds); empty otherwise."""
    return SOLVING if has_plates and busy else ""


def body_losses(summary: FieldSummary) -> list[tuple[str, float]]:
    """(body, W/m) of each conducting body (plates bonded together are one body; a sheet
    tray's bottom and sides are one), the largest loss first."""
    bodies: dict[str, float] = {}
    for p in summary.plates:
        bodies[p.body] = bodies.get(p.body, 0.0) + p.loss_w_per_m
    return sorted(bodies.items(), key=lambda kv: -kv[1])


def loss_line(summary: FieldSummary | None, pending: bool = False) -> str | None:
    """The readouts' line of eddy-current losses per body, e.g. ``Eddy W/m T1 2.2 · shield
    0.0072`` (None when the layout has no plate); `` …`` while newer figures are on the
    way."""
    if summary is None or not summary.plates:
        return None
    wait = " …" if pending else ""
    parts = " · ".join(f"{plain(b)} {g3(w)}" for b, w in body_losses(summary))
    return f"Eddy W/m{wait} {parts}"


def _cut(text: str, width: int) -> str:
    return text if len(text) <= width else text[:width - 1] + "…"


def _row_label(row: ShieldingRow) -> str:
    glyph = _ROW_GLYPH.get(row.type, "?")
    name = "curve at d" if row.type == "curve" else plain(row.name)
    return _cut(f"{glyph} {name}", _NAME_W)


def _factor(row: ShieldingRow) -> tuple[str, str]:
    f, db = row.factor, row.reduction_db
    if not math.isfinite(db):
        return (g3(f) if math.isfinite(f) else "-", "-")
    db_text = f"{db:+.1f}"
    return g3(f), "0.0" if db_text in ("+0.0", "-0.0") else db_text


def comparison_rows(comparison: PlateComparison) -> list[str]:
    """The table: a header, then the curve at d and every place: the AC maximum with and
    without the plates (µT), the factor with / without and the reduction in dB."""
    out = [f"{'µT':<{_NAME_W}} {'with':>{_WITH_W}} {'without':>{_WITHOUT_W}} "
           f"{'factor':>{_FACTOR_W}} {'dB':>{_DB_W}}"]
    for r in comparison.rows:
        f, db = _factor(r)
        out.append(f"{_row_label(r):<{_NAME_W}} {fmt_uT(r.with_uT):>{_WITH_W}} "
                   f"{fmt_uT(r.without_uT):>{_WITHOUT_W}} {f:>{_FACTOR_W}} {db:>{_DB_W}}")
    return out


def comparison_lines(comparison: PlateComparison | None, has_plates: bool,
                     pending: bool = False) -> list[Line]:
    """The with / without plates panel of the Field view (key ``w``): the figures of
    :func:`trayadvisor.analysis.plate_comparison` for the curve at d and every place, the
    meaning of the factor and a caution on the material data. ``pending``: the figures on
    show are older than the model (a newer comparison is on its way).

    Line kinds: "head", "row", "note".
    """
    wait = " …" if pending and comparison is not None else ""
    d = f", d {comparison.distance_mm:g} mm" if comparison is not None else ""
    out = [Line(f"With/without plates{d}{wait} (w: legend)", "head")]
    if not has_plates:
        out.append(Line("No plate or sheet tray: nothing to compare. P adds a plate; a tray "
                        "becomes a sheet tray in its form (t)."))
        return out
    if comparison is None:
        out.append(Line("computing the field with and without the plates…"))
        return out
    rows = comparison_rows(comparison)
    out.append(Line(rows[0], "head"))
    out += [Line(r) for r in rows[1:]]
    out.append(Line(FACTOR_MEANING, "note"))
    out.append(Line(DB_MEANING, "note"))
    out.append(Line(CAUTION_DATA, "note"))
    return out
