"""The Plates section of a report: every plate with its eddy-current loss (the field
summary's own figures), the loss of each body, the field with and without the plates (the
figures of ``plate_comparison``), what is and is not modelled, names escaped in HTML and
Markdown; the embedded JSON gains ``plate_comparison``; the field map reaches the plates.

The first solve of a layout's plates takes a few seconds, so each layout's report content
is built once per module (without ranking, coupling or pictures unless a test needs them).
"""

from __future__ import annotations

import dataclasses
import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

from trayadvisor.analysis import field_summary, plate_comparison
from trayadvisor.layoutfile.reader import read_layout
from trayadvisor.output.content import (
    PLATES_NOTE,
    build_report,
    contour_bounds,
    num,
)
from trayadvisor.output.pictures import log_levels
from trayadvisor.output.render import render_html, render_markdown

ROOT = Path(__file__).resolve().parents[1]
SHIELD = ROOT / "layouts" / "sheet-tray-shield.toml"
DEMO = ROOT / "layouts" / "demo.toml"
X = "{http://www.w3.org/1999/xhtml}"
#: A plate name and a point name that would be markup or mathematics if not escaped.
PLATE_NAME = "<b>shield</b> $x$ | *y*"
POINT_NAME = "<i>desk</i> $p$"


def _report(path: Path, **kw):
    text = path.read_text(encoding="utf-8")
    layout = read_layout(path)
    c = build_report(layout, source_text=text, source_name=path.name, rank=False,
                     coupling=False, pictures=False, **kw)
    return layout, c, render_html(c), render_markdown(c, {})


@pytest.fixture(scope="module")
def shield():
    return _report(SHIELD)


@pytest.fixture(scope="module")
def escaped(tmp_path_factory):
    text = SHIELD.read_text(encoding="utf-8")
    text = text.replace('name = "shield"', f'name = "{PLATE_NAME}"', 1)
    text = text.replace('name = "desk"', f'name = "{POINT_NAME}"', 1)
    assert PLATE_NAME in text and POINT_NAME in text
    path = tmp_path_factory.mktemp("esc") / "esc.toml"
    path.write_text(text, encoding="utf-8")
    return _report(path)


def _section_md(md: str) -> str:
    m = re.search(r"^## Plates\n(.*?)^## ", md, re.S | re.M)
    assert m, "no Plates section"
    return m.group(1)


def _md_tables(section: str) -> list[list[list[str]]]:
    """The Markdown tables of a section, as rows of raw cell texts (header row first)."""
    tables, rows = [], []
    for line in [*section.splitlines(), ""]:
        if line.startswith("|"):
            if not line.startswith("|---"):
                rows.append([c.strip() for c in re.split(r"(?<!\\)\|", line)[1:-1]])
        elif rows:
            tables.append(rows)
            rows = []
    return tables


def _html_table(root: ET.Element, tid: str) -> list[list[ET.Element]]:
    t = root.find(f".//{X}table[@id='{tid}']")
    assert t is not None, tid
    return [list(tr) for tr in t.find(f"{X}tbody")]


def _value(td: ET.Element) -> float:
    return float(td.get("data-value"))


def test_the_html_plates_table_has_every_plate_with_the_summary_losses(shield):
    layout, c, html, _ = shield
    reference = field_summary(layout).plates
    assert [p.name for p in reference] == ["shield", "T1 bottom", "T1 left side",
                                           "T1 right side", "T1 cover"]
    root = ET.fromstring(html)
    section = root.find(f".//{X}section[@id='plates']")
    assert section is not None and section.find(f"{X}h2").text == "Plates"
    rows = _html_table(root, "plate-table")
    assert [r[0].text for r in rows] == [p.name for p in reference]
    for row, p in zip(rows, reference, strict=True):
        assert row[1].text == p.material and row[4].text == p.body
        assert _value(row[2]) == pytest.approx(p.mu_r)
        assert _value(row[3]) == pytest.approx(p.sigma_s_per_m / 1e6)
        assert _value(row[-1]) == pytest.approx(p.loss_w_per_m, rel=1e-9)
    assert rows[0][5].text == "800 × 3" and rows[0][6].text == "-100, -255"
    # the body totals: the tray's bottom and sides are one body, its cover another
    bodies = {r[0].text: _value(r[-1]) for r in _html_table(root, "plate-body-table")}
    assert set(bodies) == {"shield", "T1", "T1 cover", "all bodies"}
    t1 = sum(p.loss_w_per_m for p in reference if p.body == "T1")
    assert bodies["T1"] == pytest.approx(t1, rel=1e-9)
    assert bodies["all bodies"] == pytest.approx(sum(p.loss_w_per_m for p in reference),
                                                 rel=1e-9)
    assert PLATES_NOTE in "".join(section.itertext())


def test_the_html_comparison_equals_plate_comparison(shield):
    layout, c, html, _ = shield
    reference = plate_comparison(layout)
    rows = _html_table(ET.fromstring(html), "plate-comparison-table")
    assert [r[0].text for r in rows] == ["curve at 500 mm", "point desk", "area office below"]
    assert len(rows) == len(reference.rows)
    for row, ref in zip(rows, reference.rows, strict=True):
        assert _value(row[1]) == pytest.approx(ref.with_uT, rel=1e-9)
        assert _value(row[2]) == pytest.approx(ref.without_uT, rel=1e-9)
        assert _value(row[3]) == pytest.approx(ref.factor, rel=1e-9)
        assert _value(row[4]) == pytest.approx(ref.reduction_db, rel=1e-9)
        assert ref.factor < 1  # the shield and the steel tray screen every place here


def test_the_embedded_json_adds_the_comparison_and_keeps_its_keys(shield):
    layout, c, html, md = shield
    figures = json.loads(ET.fromstring(html).find(
        f".//{X}script[@id='trayadvisor-figures']").text)
    assert set(figures) == {"trayadvisor", "field", "rank", "couple", "plate_comparison"}
    reference = plate_comparison(layout).to_json()
    got = figures["plate_comparison"]
    assert got["distance_mm"] == reference["distance_mm"]
    for a, b in zip(got["rows"], reference["rows"], strict=True):
        assert a["name"] == b["name"] and a["type"] == b["type"]
        for key in ("with_uT", "without_uT", "factor", "reduction_db"):
            assert a[key] == pytest.approx(b[key], rel=1e-9)
    losses = [p["loss_w_per_m"] for p in figures["field"]["plates"]]
    assert losses == pytest.approx([p.loss_w_per_m for p in field_summary(layout).plates],
                                   rel=1e-9)
    block = re.search(r"```json\n(.*?)\n```", md, re.S).group(1)
    assert json.loads(block) == figures


def test_the_markdown_plates_section(shield):
    layout, c, _, md = shield
    section = _section_md(md)
    assert md.index("## Plates") < md.index("## Ranked options")
    plates, bodies, comparison = _md_tables(section)
    reference = field_summary(layout).plates
    assert [r[0] for r in plates[1:]] == [p.name for p in reference]
    assert [r[-1] for r in plates[1:]] == [num(p.loss_w_per_m) for p in reference]
    assert bodies[-1][0] == "all bodies"
    factors = [r.factor for r in plate_comparison(layout).rows]
    assert [r[3] for r in comparison[1:]] == [num(f, 3) for f in factors]
    assert PLATES_NOTE in section
    for words in ("2D finite elements", "long and straight", "recalled from memory",
                  "no net current", "hysteresis", "saturation", "perforations", "joints",
                  "bonded to earth", "building steel"):
        assert words in PLATES_NOTE, words


def test_plate_and_place_names_are_escaped_in_html(escaped):
    _, c, html, _ = escaped
    assert "<b>shield" not in html and "<i>desk" not in html
    root = ET.fromstring(html)  # still well-formed
    assert _html_table(root, "plate-table")[0][0].text == PLATE_NAME
    assert _html_table(root, "plate-body-table")[0][0].text == PLATE_NAME
    assert _html_table(root, "plate-comparison-table")[1][0].text == f"point {POINT_NAME}"


def test_plate_and_place_names_are_escaped_in_markdown(escaped):
    _, c, _, md = escaped
    section = _section_md(md)
    assert r"\<b\>shield\</b\> \$x\$ \| \*y\*" in section
    assert r"point \<i\>desk\</i\> \$p\$" in section
    outside = re.sub(r"^(`{3,})[^\n]*\n.*?^\1$", "", md, flags=re.S | re.M)  # no fences
    for raw in ("<b>", "<i>", "$x$", "$p$", "*y*"):
        assert raw not in outside, raw
    plates, bodies, _ = _md_tables(section)
    assert plates[1][0] == bodies[1][0] == r"\<b\>shield\</b\> \$x\$ \| \*y\*"


def test_a_layout_without_plates_has_no_plates_section():
    _, c, html, md = _report(DEMO)
    assert not c.layout.all_plates() and c.plate_comparison is None
    root = ET.fromstring(html)
    assert root.find(f".//{X}section[@id='plates']") is None
    assert "## Plates" not in md and "plate_comparison" not in c.figures_json()
    assert set(c.figures_json()) == {"trayadvisor", "field", "rank", "couple"}


def test_the_field_map_covers_a_shield_below_the_tray(monkeypatch):
    # no point, area or limit widens the map: only the curve at d and the plates
    layout = dataclasses.replace(read_layout(SHIELD), points=(), areas=(), limits=())
    plate = layout.plates[0]
    d = 50.0  # the curve at d stays well above the shield, 250 mm under the tray
    x0, y0, x1, y1 = contour_bounds(layout, d)
    assert x0 < plate.x_mm and x1 > plate.x_mm + plate.width_mm
    assert y0 < plate.y_mm - 50.0 and y1 > layout.envelope_mm()[3]
    without = contour_bounds(dataclasses.replace(layout, without_metal=True), d)
    assert without[1] > plate.y_mm  # without it, the map would stop short of the shield

    import trayadvisor.output.content as content

    seen = {}

    def capture(lay, summary, grid, bounds, prefix):
        seen.update(grid=grid, bounds=bounds)
        return "<svg xmlns='http://www.w3.org/2000/svg'/>"

    monkeypatch.setattr(content, "contours_svg", capture)
    build_report(layout, distance_mm=d, rank=False, coupling=False)
    grid, (bx0, by0, bx1, by1) = seen["grid"], seen["bounds"]
    assert (bx0, by0, bx1, by1) == (x0, y0, x1, y1)
    ny, nx = grid.shape
    ys = by0 + (np.arange(ny) + 0.5) * (by1 - by0) / ny
    xs = bx0 + (np.arange(nx) + 0.5) * (bx1 - bx0) / nx
    assert np.all(np.isfinite(grid)) and ys[0] < plate.y_mm
    # iso-µT lines run over the shield: some level is crossed across the plate's band
    band = grid[np.ix_((ys > plate.y_mm - 60) & (ys < plate.y_mm + 60),
                       (xs > plate.x_mm) & (xs < plate.x_mm + plate.width_mm))]
    levels = log_levels(float(grid[grid > 0].min()), float(grid.max()))
    assert any(band.min() < v < band.max() for v in levels)
