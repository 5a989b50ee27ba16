"""Plates in the report pictures: a filled patch to scale for every plate (a ``[[plate]]`` or
a sheet tray's metal), one legend entry per material, the extent reaching every plate, and
names drawn literally (a ``$`` in a name is no mathematics).

The layouts are built in code from the model's dataclasses; the figures are drawn on the
Agg canvas and read back from the axes, not from pixels.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from types import SimpleNamespace

import numpy as np
import pytest

matplotlib = pytest.importorskip("matplotlib")

from matplotlib.backends.backend_agg import FigureCanvasAgg  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402
from matplotlib.patches import Rectangle  # noqa: E402

from trayadvisor.model import Circuit, Conductor, Layout, Plate, Tray  # noqa: E402
from trayadvisor.output.pictures import (  # noqa: E402
    contours_svg,
    draw_section,
    options_svg,
    plate_label,
    section_svg,
)

S = "{http://www.w3.org/2000/svg}"
#: A 2 mm aluminium shield 250 mm below the underside of a 400 × 100 mm tray.
SHIELD = Plate("shield", -100.0, -252.0, 600.0, 2.0, material="aluminium")
CIRCUIT = Circuit("F1", "ac3", 100.0)
CONDUCTORS = (Conductor("F1-L1", "F1", "L1", 50.0, 20.0, 30.0),
              Conductor("F1-L2", "F1", "L2", 150.0, 20.0, 30.0),
              Conductor("F1-L3", "F1", "L3", 250.0, 20.0, 30.0))


def _layout(tray: Tray, plates: tuple[Plate, ...] = (SHIELD,)) -> Layout:
    return Layout("plates", 50.0, (tray,), (CIRCUIT,), CONDUCTORS, plates=plates)


def _section_axes(layout: Layout):
    fig = Figure(figsize=(7.5, 4.0))
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    draw_section(ax, layout, width_pt=72 * 5.6)
    fig.canvas.draw()  # every text is laid out (a bad mathtext string would raise here)
    return ax


def _plate_patch(ax, plate: Plate) -> Rectangle | None:
    for p in ax.patches:
        if isinstance(p, Rectangle) and p.get_xy() == pytest.approx((plate.x_mm, plate.y_mm)) \
                and p.get_width() == pytest.approx(plate.width_mm) \
                and p.get_height() == pytest.approx(plate.height_mm) and p.get_fill():
            return p
    return None


def test_the_section_picture_has_a_filled_patch_for_a_plate_and_a_legend_entry():
    lay = _layout(Tray("T1", 0.0, 0.0, 400.0, 100.0))
    ax = _section_axes(lay)
    patch = _plate_patch(ax, SHIELD)
    assert patch is not None
    # under the conductors, which are drawn over it
    circles = [p for p in ax.patches if not isinstance(p, Rectangle)]
    assert circles and all(patch.get_zorder() < c.get_zorder() for c in circles)
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert labels == ["F1", "plate (aluminium)"]
    # the extent reaches the shield 250 mm below the tray, with a margin
    y_lo, y_hi = ax.get_ylim()
    assert y_lo < SHIELD.y_mm and y_hi > 100.0


def test_a_sheet_tray_draws_its_bottom_sides_and_cover_as_steel_plates():
    tray = Tray("T1", 0.0, 0.0, 400.0, 100.0, sheet="steel", sheet_mm=2.0, cover=True)
    lay = _layout(tray)
    ax = _section_axes(lay)
    for part in tray.sheet_plates():
        assert _plate_patch(ax, part) is not None, part.name
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert labels.count("plate (steel)") == 1 and "plate (aluminium)" in labels
    steel = _plate_patch(ax, tray.sheet_plates()[0])
    alu = _plate_patch(ax, SHIELD)
    assert steel.get_facecolor() != alu.get_facecolor()  # steel reads apart from aluminium
    x_lo, x_hi = ax.get_xlim()
    assert x_lo < -2.0 and x_hi > 402.0


def test_explicit_material_data_are_named_in_the_legend():
    assert plate_label(Plate("w", 0, 0, 1, 1, mu_r=300.0, sigma_s_per_m=4e6)) == \
        "plate (μr 300, σ 4e+06 S/m)"
    assert plate_label(Plate("w", 0, 0, 1, 1, material="steel", mu_r=500.0)) == \
        "plate (steel, μr 500)"


def test_the_svg_names_the_plate_and_keeps_a_dollar_in_a_name_literal():
    lay = _layout(Tray("T$1$", 0.0, 0.0, 400.0, 100.0, sheet="copper"),
                  plates=(SHIELD,))
    lay = Layout(lay.title, 50.0, lay.trays, (Circuit("$F$", "ac3", 100.0),),
                 tuple(Conductor(c.name, "$F$", c.phase, c.x_mm, c.y_mm, c.diameter_mm)
                       for c in CONDUCTORS), plates=lay.plates)
    svg = section_svg(lay, "fig1")
    assert ET.fromstring(svg).tag == f"{S}svg"
    assert "plate (aluminium)" in svg and "plate (copper)" in svg
    assert "T$1$" in svg and "$F$" in svg  # drawn as typed, not as mathematics
    ax = _section_axes(lay)
    texts = [t.get_text() for t in ax.texts] + [t.get_text() for t in
                                                 ax.get_legend().get_texts()]
    assert r"T\$1\$" in texts and r"\$F\$" in texts


def _captured(monkeypatch) -> list:
    """The figures a picture function hands to ``to_svg`` (which then writes nothing)."""
    import trayadvisor.output.pictures as pictures

    figures: list = []
    monkeypatch.setattr(pictures, "to_svg", lambda fig, prefix: figures.append(fig) or "")
    return figures


def test_the_field_map_picture_draws_the_plates_and_reaches_them(monkeypatch):
    far = Plate("far", -100.0, -1500.0, 600.0, 3.0, material="copper")
    tray = Tray("T1", 0.0, 0.0, 400.0, 100.0, sheet="steel")
    lay = _layout(tray, plates=(far,))
    bounds = (-600.0, -700.0, 1000.0, 800.0)  # the map stops short of the plate
    grid = np.outer(np.linspace(1.0, 2.0, 30), np.linspace(1.0, 3.0, 40))
    summary = SimpleNamespace(distance_mm=300.0, max_at_mm=(200.0, -300.0),
                              max_resultant_uT=3.0)
    figures = _captured(monkeypatch)
    contours_svg(lay, summary, grid, bounds, "fig2")
    (ax,) = figures[0].axes
    assert _plate_patch(ax, far) is not None
    assert all(_plate_patch(ax, part) is not None for part in tray.sheet_plates())
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert "plate (copper)" in labels and "plate (steel)" in labels
    assert ax.get_ylim()[0] <= far.y_mm and ax.get_ylim()[1] >= bounds[3]
    assert ax.get_xlim() == pytest.approx((bounds[0], bounds[2]))


def test_the_svg_of_the_field_map_is_well_formed_with_plates():
    lay = _layout(Tray("T1", 0.0, 0.0, 400.0, 100.0))
    grid = np.outer(np.linspace(1.0, 2.0, 30), np.linspace(1.0, 3.0, 40))
    summary = SimpleNamespace(distance_mm=300.0, max_at_mm=(200.0, -300.0),
                              max_resultant_uT=3.0)
    svg = contours_svg(lay, summary, grid, (-600.0, -700.0, 1000.0, 800.0), "fig2")
    assert ET.fromstring(svg).tag == f"{S}svg" and "plate (aluminium)" in svg


def test_small_multiples_draw_the_plates_too(monkeypatch):
    lay = _layout(Tray("T1", 0.0, 0.0, 400.0, 100.0))
    figures = _captured(monkeypatch)
    options_svg([("now", lay), ("option 1", lay)], "fig5")
    axes = figures[0].axes
    assert len(axes) == 2 and all(_plate_patch(ax, SHIELD) is not None for ax in axes)
    assert all(ax.get_ylim()[0] < SHIELD.y_mm for ax in axes)
