"""Limits judged where they apply: areas, lines and points, AC apart from DC, and the
multi-frequency exposure index -- each against a value computed here, independently.

The reference field is the long-wire formula written out below (Ampère's law, common
practice): B = μ0 I / (2π r) around each conductor, phasors summed per frequency component.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from tests.references import MU0
from trayadvisor.analysis import field_summary
from trayadvisor.cli.main import main
from trayadvisor.layoutfile.reader import parse_layout

HEAD = '''format = "trayadvisor/1"
frequency_hz = 50
[[tray]]
name = "T"
x_mm = 0
y_mm = 0
width_mm = 300
depth_mm = 60
'''


def conductor(name: str, circuit: str, phase: str, x: float, y: float = 30.0,
              d: float = 20.0) -> str:
    return (f'[[conductor]]\nname = "{name}"\ncircuit = "{circuit}"\nphase = "{phase}"\n'
            f"x_mm = {x}\ny_mm = {y}\ndiameter_mm = {d}\n")


FLAT_WITH_NEUTRAL = HEAD + '''[[circuit]]
name = "F"
system = "ac3"
current_a = 400
harmonics = { 3 = 0.3, 5 = 0.4, 7 = 0.3, 11 = 0.2 }
''' + "".join(conductor(n, "F", p, x) for n, p, x in
              (("a", "L1", 40), ("b", "L2", 100), ("c", "L3", 160), ("n", "N", 220)))


def phasors(order: int) -> dict[str, complex]:
    """Currents of FLAT_WITH_NEUTRAL at harmonic ``order``, by hand (docs/conventions.md):
    I_h = frac_h · 400 A at angle h·φ (φ = 0, −120°, +120°); the neutral returns the sum."""
    frac = {1: 1.0, 3: 0.3, 5: 0.4, 7: 0.3, 11: 0.2}[order]
    cur = {k: 400.0 * frac * np.exp(1j * order * np.deg2rad(phi))
           for k, phi in (("a", 0.0), ("b", -120.0), ("c", 120.0))}
    cur["n"] = -sum(cur.values())
    return cur


def b_component_uT(order: int, x_mm: float, y_mm: float) -> float:
    """Resultant RMS field (µT) of one component at a point: Σ of μ0 I/(2π r) (ẑ × r̂)."""
    xs = {"a": 40.0, "b": 100.0, "c": 160.0, "n": 220.0}
    bx = by = 0j
    for k, i in phasors(order).items():
        dx, dy = (x_mm - xs[k]) * 1e-3, (y_mm - 30.0) * 1e-3
        r2 = dx * dx + dy * dy
        bx += -MU0 * i / (2 * math.pi) * dy / r2
        by += MU0 * i / (2 * math.pi) * dx / r2
    return math.sqrt(abs(bx) ** 2 + abs(by) ** 2) * 1e6


def icnirp_public_uT(f_hz: float) -> float:
    """ICNIRP 2010 Table 4 general-public reference level (from memory): 2e-4 T from 25 Hz
    to 400 Hz, 8e-2/f T from 400 Hz to 3 kHz."""
    return 200.0 if f_hz <= 400.0 else 8e4 / f_hz


def test_exposure_index_sums_ratios_over_frequency():
    text = FLAT_WITH_NEUTRAL + '''[[point]]
name = "desk"
x_mm = 130
y_mm = 700
[[limit]]
name = "public"
library = "icnirp-2010-public"
places = ["desk"]
[[limit]]
name = "same level as a target"
ut = 200
places = ["desk"]
'''
    s = field_summary(parse_layout(text), currents="equal")
    desk = s.places[0]
    public, target = desk.limits
    orders = (1, 3, 5, 7, 11)
    # Source: ICNIRP 2010, multi-frequency rule for reference levels, Σ_j B_j / B_R,j <= 1
    # (from memory), with the long-wire field computed above.
    want_sum = sum(b_component_uT(h, 130, 700) / icnirp_public_uT(50.0 * h) for h in orders)
    want_rss = math.sqrt(sum(b_component_uT(h, 130, 700) ** 2 for h in orders)) / 200.0
    assert public.kind == "exposure" and public.band == "ac"
    assert public.index == pytest.approx(want_sum, rel=1e-9)
    assert target.index == pytest.approx(want_rss, rel=1e-9)
    assert desk.max_resultant_uT == pytest.approx(200.0 * want_rss, rel=1e-9)
    # the linear sum is well above the root-sum-square on this harmonic-rich set: RSS would
    # understate the exposure index
    assert public.index > 1.3 * target.index
    assert public.margin_db == pytest.approx(-20 * math.log10(want_sum), rel=1e-9)


def test_a_harmonic_outside_the_entry_range_is_named():
    text = FLAT_WITH_NEUTRAL.replace("11 = 0.2", "11 = 0.2, 7 = 0.0").replace(
        "7 = 0.3, 11 = 0.2, 7 = 0.0", "7 = 0.3, 11 = 0.2") + '''[[point]]
name = "p"
x_mm = 130
y_mm = 700
[[limit]]
name = "high"
library = "eu-2013-35-high"
places = ["p"]
'''
    s = field_summary(parse_layout(text), currents="equal")
    q = s.places[0].limits[0]
    # 2013/35/EU high AL is kept to 1-300 Hz here: 350 Hz and 550 Hz fall outside
    assert q.outside_hz == (350.0, 550.0)
    assert any("350, 550 Hz" in n and "not in its index" in n for n in s.notes)
    # Source: 3.0e5/f µT (from memory), summed over 50, 150 and 250 Hz only.
    want = sum(b_component_uT(h, 130, 700) / (3.0e5 / (50.0 * h)) for h in (1, 3, 5))
    assert q.index == pytest.approx(want, rel=1e-9)


DC_PAIR = HEAD + '''[[circuit]]
name = "B"
system = "dc"
current_a = 200
''' + conductor("p", "B", "+", 60) + conductor("m", "B", "-", 120)


def test_dc_is_kept_apart_from_every_ac_figure():
    text = DC_PAIR + '''[[point]]
name = "q"
x_mm = 300
y_mm = 30
[[limit]]
name = "implants"
library = "eu-2013-35-static-implants"
places = ["q"]
[[limit]]
name = "ac target"
ut = 0.5
places = ["q"]
'''
    s = field_summary(parse_layout(text), currents="equal")
    # no AC flows: every AC figure is zero, the DC field is reported beside it
    assert s.max_resultant_uT == 0.0 and s.named_points[0].resultant_uT == 0.0
    # Source: two opposite line currents on the x axis, point on the same axis:
    # B = μ0 I/(2π) (1/r1 − 1/r2) with r1 = 0.18 m, r2 = 0.24 m (common practice).
    want = MU0 * 200 / (2 * math.pi) * (1 / 0.18 - 1 / 0.24) * 1e6
    assert s.named_points[0].dc_uT == pytest.approx(want, rel=1e-9)
    implants, ac_target = s.places[0].limits
    assert implants.band == "dc" and implants.index == pytest.approx(want / 500.0, rel=1e-9)
    assert ac_target.index == 0.0 and ac_target.passes
    assert s.dc_max_uT > 0


def test_adding_a_dc_link_changes_no_ac_figure():
    ac = FLAT_WITH_NEUTRAL + '[[line]]\nname = "w"\nx0_mm = -300\ny0_mm = 500\nx1_mm = 600\n' \
        'y1_mm = 500\n'
    both = ac + '[[circuit]]\nname = "B"\nsystem = "dc"\ncurrent_a = 300\n' + \
        conductor("p", "B", "+", 260) + conductor("m", "B", "-", 285, d=10)
    s_ac = field_summary(parse_layout(ac), currents="equal")
    s_both = field_summary(parse_layout(both), currents="equal")
    assert s_both.max_resultant_uT == pytest.approx(s_ac.max_resultant_uT, rel=1e-12)
    assert s_both.lines[0].max_resultant_uT == pytest.approx(s_ac.lines[0].max_resultant_uT,
                                                             rel=1e-12)
    assert s_both.far_field_order == s_ac.far_field_order
    assert s_ac.dc_max_uT == 0.0 and s_both.dc_max_uT > 0.0


def test_area_maximum_is_on_its_boundary_and_beats_a_dense_grid():
    text = FLAT_WITH_NEUTRAL + '''[[area]]
name = "room"
x0_mm = -250
y0_mm = 180
x1_mm = 520
y1_mm = 900
'''
    layout = parse_layout(text)
    s = field_summary(layout, currents="equal")
    room = s.places[0]
    assert room.type == "area"
    # Source: brute force on a 301 x 301 grid over the closed rectangle, long-wire formula.
    xs, ys = np.linspace(-250, 520, 301), np.linspace(180, 900, 301)
    grid = np.array([[math.sqrt(sum(b_component_uT(h, x, y) ** 2 for h in (1, 3, 5, 7, 11)))
                      for x in xs] for y in ys])
    assert room.max_resultant_uT >= grid.max() * (1 - 1e-12)
    assert room.max_resultant_uT <= grid.max() * (1 + 1e-3)
    # maximum principle: the interior never exceeds the boundary
    assert grid[1:-1, 1:-1].max() < grid.max()
    x, y = room.at_mm
    assert min(abs(x + 250), abs(x - 520), abs(y - 180), abs(y - 900)) < 1e-6


def test_line_maximum_is_refined_between_samples():
    text = FLAT_WITH_NEUTRAL + '''[[line]]
name = "w"
x0_mm = -300
y0_mm = 200
x1_mm = 600
y1_mm = 200
samples = 7
'''
    s = field_summary(parse_layout(text), currents="equal")
    # Source: 90 001 samples along the line, long-wire formula.
    xs = np.linspace(-300, 600, 90001)
    dense = max(math.sqrt(sum(b_component_uT(h, x, 200) ** 2 for h in (1, 3, 5, 7, 11)))
                for x in xs)
    assert s.lines[0].max_resultant_uT == pytest.approx(dense, rel=1e-6)
    assert s.lines[0].max_resultant_uT >= dense * (1 - 1e-9)


def test_exposure_clearance_on_the_curve_meets_index_one():
    text = FLAT_WITH_NEUTRAL.replace("current_a = 400", "current_a = 4000") + '''[[limit]]
name = "public"
library = "icnirp-2010-public"
'''
    layout = parse_layout(text)
    s = field_summary(layout, currents="equal")
    lim = s.limits[0]
    assert lim.kind == "exposure" and 0 < lim.clearance_mm < math.inf
    at = field_summary(layout, currents="equal", distance_mm=lim.clearance_mm).limits[0]
    assert at.index == pytest.approx(1.0, rel=1e-3)


BAD = [
    ("unknown place", '[[limit]]\nname = "L"\nut = 1\nplaces = ["nowhere"]\n', 4,
     "place 'nowhere' is not defined"),
    ("unknown library id", '[[limit]]\nname = "L"\nlibrary = "icnirp-2099"\n', 3,
     "unknown library id 'icnirp-2099'"),
    ("both ut and library", '[[limit]]\nname = "L"\nut = 1\nlibrary = "icnirp-2010-public"\n',
     4, "either ut or library, not both"),
    ("neither", '[[limit]]\nname = "L"\nsource = "x"\n', 1, "give the level as ut"),
    ("immunity as exposure",
     '[[limit]]\nname = "L"\nlibrary = "iec-61000-4-8-level-2"\nkind = "exposure"\n', 3,
     "equipment-immunity level, not an exposure limit"),
    ("zero-size area", '[[area]]\nname = "A"\nx0_mm = 1\ny0_mm = 500\nx1_mm = 1\ny1_mm = 900\n',
     1, "the area has no size"),
    ("area holding a conductor",
     '[[area]]\nname = "A"\nx0_mm = 0\ny0_mm = 0\nx1_mm = 50\ny1_mm = 50\n', 1,
     "conductor 'a' lies inside the area"),
    ("unknown band", '[[limit]]\nname = "L"\nut = 1\nband = "hf"\n', 4, "unknown band 'hf'"),
]


@pytest.mark.parametrize("name,tail,line,words", BAD, ids=[b[0] for b in BAD])
def test_bad_places_and_limits_one_line_exit_2(capsys, tmp_path, name, tail, line, words):
    path = tmp_path / "bad.toml"
    text = FLAT_WITH_NEUTRAL + tail
    path.write_text(text, encoding="utf-8")
    want_line = FLAT_WITH_NEUTRAL.count("\n") + line
    assert main(["field", str(path), "--json"]) == 2
    out, err = capsys.readouterr()
    assert out == "" and err.count("\n") == 1
    assert err.startswith(f"{path}:{want_line}: ") and words in err


def test_field_json_places_shape(capsys, tmp_path):
    path = tmp_path / "ok.toml"
    path.write_text(DC_PAIR + '[[area]]\nname = "A"\nx0_mm = -100\ny0_mm = 200\nx1_mm = 400\n'
                    'y1_mm = 600\n[[limit]]\nname = "eq"\nlibrary = "iec-61000-4-8-level-1"\n'
                    'places = ["A"]\n', encoding="utf-8")
    assert main(["field", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["dc_max_uT"] > 0 and data["max_resultant_uT"] == 0.0
    (area,) = data["places"]
    assert {"name", "type", "max_resultant_uT", "at_mm", "dc_max_uT", "limits"} <= set(area)
    (lim,) = area["limits"]
    assert {"name", "kind", "band", "limit_uT", "index", "passes"} <= set(lim)
    # an immunity level is labelled as immunity, never as exposure
    assert lim["kind"] == "immunity" and lim["band"] == "ac"
    assert main(["limits", "--json"]) == 0
    ids = {r["id"]: r for r in json.loads(capsys.readouterr().out)["library"]}
    assert ids["iec-61000-4-8-level-1"]["kind"] == "immunity"
    assert ids["eu-2013-35-static-implants"]["band"] == "dc"


def test_field_maps_leave_the_static_field_out():
    from trayadvisor.engine import field_grid_uT, layout_sources

    ac = parse_layout(FLAT_WITH_NEUTRAL)
    both = parse_layout(FLAT_WITH_NEUTRAL + '[[circuit]]\nname = "B"\nsystem = "dc"\n'
                        'current_a = 300\n' + conductor("p", "B", "+", 260)
                        + conductor("m", "B", "-", 285, d=10))
    bounds = (-500.0, -500.0, 800.0, 800.0)
    g_ac = field_grid_uT(ac, bounds, 40, 30)
    g_both = field_grid_uT(both, bounds, 40, 30, layout_sources(both))
    # the DC link adds a static field only: the AC map is the same to rounding
    assert np.allclose(g_both, g_ac, rtol=1e-12, atol=0)
    # Source: the long-wire formula above at a cell centre (the 1st column, 1st row)
    x, y = -500.0 + 0.5 * 1300 / 40, -500.0 + 0.5 * 1300 / 30
    want = math.sqrt(sum(b_component_uT(h, x, y) ** 2 for h in (1, 3, 5, 7, 11)))
    assert g_ac[0, 0] == pytest.approx(want, rel=1e-9)
