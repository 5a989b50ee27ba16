"""Layout format 1: ``[[plate]]`` tables and sheet trays — reading, writing, every bad input
with its line.

Line numbers are checked against the test text itself: the expected line of each bad case
carries the TOML comment ``#!`` (Source: the marked line of the test text). Overlap and
touching cases are set up by closed form (edges and circle extents computed by hand in the
comments); default values are those of docs/file-format.md.
"""

from __future__ import annotations

import dataclasses

import pytest

from trayadvisor.cli.main import main
from trayadvisor.layoutfile import dumps_layout, layout_problems, validate_layout
from trayadvisor.layoutfile.reader import LayoutError, parse_layout, read_layout
from trayadvisor.model import DEFAULT_SHEET_MM, Layout, Plate

# T1: a steel sheet tray with a cover, inner 0..400 × 0..80; its plates (closed form):
# bottom x -2..402, y -2..0; sides x -2..0 and 400..402, y 0..80; cover x -2..402, y 80..82.
# T2: a ladder tray (no sheet). shield: x -100..800, y -203..-200. web x 750..760,
# y -100..200 and flange x 720..790, y 200..212 touch (one body "beam"). divider x 200..203,
# y 0..80 inside T1, bolted to it (body "T1"). F1 conductors reach x 15..105, y 0..30.
BASE = '''format = "trayadvisor/1"
frequency_hz = 50

[[tray]]
name = "T1"
x_mm = 0.0
y_mm = 0.0
width_mm = 400.0
depth_mm = 80.0
sheet = "steel"
sheet_mm = 2.0
cover = true

[[tray]]
name = "T2"
x_mm = 500.0
y_mm = 0.0
width_mm = 200.0
depth_mm = 60.0

[[plate]]
name = "shield"
x_mm = -100.0
y_mm = -203.0
width_mm = 900.0
height_mm = 3.0
material = "aluminium"

[[plate]]
name = "web"
x_mm = 750.0
y_mm = -100.0
width_mm = 10.0
height_mm = 300.0
mu_r = 150.0
sigma_s_per_m = 4.0e6
body = "beam"

[[plate]]
name = "flange"
x_mm = 720.0
y_mm = 200.0
width_mm = 70.0
height_mm = 12.0
material = "steel"
mu_r = 300.0
body = "beam"

[[plate]]
name = "divider"
x_mm = 200.0
y_mm = 0.0
width_mm = 3.0
height_mm = 80.0
material = "steel"
body = "T1"

[[circuit]]
name = "F1"
system = "ac3"
current_a = 250.0

[[conductor]]
name = "F1-L1"
circuit = "F1"
phase = "L1"
x_mm = 30.0
y_mm = 15.0
diameter_mm = 30.0

[[conductor]]
name = "F1-L2"
circuit = "F1"
phase = "L2"
x_mm = 60.0
y_mm = 15.0
diameter_mm = 30.0

[[conductor]]
name = "F1-L3"
circuit = "F1"
phase = "L3"
x_mm = 90.0
y_mm = 15.0
diameter_mm = 30.0

[[point]]
name = "desk"
x_mm = 200.0
y_mm = -1500.0

[[line]]
name = "ceiling"
x0_mm = -1000.0
y0_mm = -300.0
x1_mm = 1500.0
y1_mm = -300.0

[[area]]
name = "office"
x0_mm = -1000.0
y0_mm = -3000.0
x1_mm = 1500.0
y1_mm = -400.0

[[limit]]
name = "office target"
ut = 1.0
places = ["office"]
'''


def block(kind: str, name: str) -> str:
    """The header and name lines of a table."""
    return f'[[{kind}]]\nname = "{name}"'


def header(kind: str, name: str) -> tuple[str, str]:
    """An edit that marks the header of the table ``kind`` called ``name``."""
    return block(kind, name), f'[[{kind}]] #!\nname = "{name}"'


def in_table(kind: str, name: str, old: str, new: str) -> tuple[str, str]:
    """An edit of the line ``old`` (to ``new``) inside the table ``kind`` called ``name``."""
    start = BASE.index(block(kind, name))
    end = BASE.find("\n\n", start)
    part = BASE[start:end if end >= 0 else len(BASE)]
    assert part.count(old) == 1, (name, old)
    return part, part.replace(old, new)


def edited(*edits: tuple[str, str], append: str = "") -> str:
    text = BASE
    for old, new in edits:
        assert text.count(old) == 1, old
        text = text.replace(old, new)
    return text + append


# -- reading and writing ------------------------------------------------------------------
def test_plates_and_sheet_trays_read_as_written():
    lay = parse_layout(BASE)
    t1, t2 = lay.trays
    assert (t1.sheet, t1.sheet_mm, t1.cover) == ("steel", 2.0, True)
    assert (t2.sheet, t2.sheet_mm, t2.cover) == (None, DEFAULT_SHEET_MM, False)
    # Source: the tables of BASE, copied by hand.
    assert lay.plates == (
        Plate("shield", -100.0, -203.0, 900.0, 3.0, material="aluminium"),
        Plate("web", 750.0, -100.0, 10.0, 300.0, mu_r=150.0, sigma_s_per_m=4.0e6,
              body="beam"),
        Plate("flange", 720.0, 200.0, 70.0, 12.0, material="steel", mu_r=300.0, body="beam"),
        Plate("divider", 200.0, 0.0, 3.0, 80.0, material="steel", body="T1"),
    )
    # four [[plate]] tables plus T1's bottom, two sides and cover (closed form: T2 has none)
    assert [p.name for p in lay.all_plates()][4:] == ["T1 bottom", "T1 left side",
                                                      "T1 right side", "T1 cover"]


def test_round_trip_keeps_plates_and_omits_defaults_and_generated_plates():
    lay = parse_layout(BASE)
    text = dumps_layout(lay)
    assert parse_layout(text) == lay
    assert text.count("[[plate]]") == 4 and "T1 bottom" not in text
    # docs/file-format.md: sheet_mm defaults to 2 and cover to false; they are not written.
    assert "sheet_mm" not in text and "cover = false" not in text
    shield = text.split('name = "shield"')[1].split("\n\n")[0]
    assert "mu_r" not in shield and "body" not in shield and "sigma" not in shield


def test_round_trip_of_a_thick_sheet_without_cover():
    lay = parse_layout(BASE)
    thick = dataclasses.replace(lay, trays=(dataclasses.replace(lay.trays[0], sheet_mm=2.5,
                                                                cover=False), lay.trays[1]))
    validate_layout(thick)
    text = dumps_layout(thick)
    assert "sheet_mm = 2.5" in text and "cover" not in text
    assert parse_layout(text) == thick


def test_the_writer_never_writes_generated_plates():
    lay = parse_layout(BASE)
    with_generated = dataclasses.replace(lay, plates=lay.all_plates())
    assert dumps_layout(with_generated) == dumps_layout(lay)


def test_defaults_written_out_on_a_ladder_tray_read_the_same():
    # docs/file-format.md: sheet_mm = 2 and cover = false are the defaults, so writing them
    # on a tray without sheet changes nothing.
    text = edited(in_table("tray", "T2", "depth_mm = 60.0", "depth_mm = 60.0\nsheet_mm = 2.0\n"
                           "cover = false"))
    assert parse_layout(text) == parse_layout(BASE)


def test_the_shipped_example_reads_and_holds_a_shield_plate():
    from pathlib import Path

    lay = read_layout(Path(__file__).resolve().parents[1] / "layouts" / "sheet-tray-shield.toml")
    assert lay.trays[0].sheet == "steel" and lay.trays[0].cover
    assert [p.material for p in lay.plates] == ["aluminium"]
    assert len(lay.all_plates()) == 5  # closed form: shield, bottom, two sides, cover


# -- bad input, each at its line ----------------------------------------------------------
APPENDED_TRAY = '''
[[tray]] #!
name = "T3"
x_mm = 0.0
y_mm = -230.0
width_mm = 100.0
depth_mm = 40.0
sheet = "stainless"
'''
APPENDED_DIVIDER = '''
[[plate]] #!
name = "divider 2"
x_mm = 100.0
y_mm = 0.0
width_mm = 3.0
height_mm = 80.0
material = "steel"
'''

# (id, edits, text to append, words the message must contain)
BAD = [
    ("duplicate plate", [in_table("plate", "web", 'name = "web"', 'name = "shield" #!')], "",
     ["duplicate plate name 'shield'", "unique"]),
    ("generated name", [in_table("plate", "web", 'name = "web"', 'name = "T1 bottom" #!')],
     "", ["'T1 bottom' is taken", "sheet tray 'T1'", "rename the plate"]),
    ("tray body name", [in_table("plate", "shield", 'name = "shield"', 'name = "T1" #!')],
     "", ["body name of sheet tray 'T1'", 'body = "T1"']),
    ("zero thickness", [in_table("plate", "shield", "height_mm = 3.0", "height_mm = 0.0 #!")],
     "", ["plate 'shield'", "height_mm = 0", "no thickness", "positive"]),
    ("negative width", [in_table("plate", "web", "width_mm = 10.0", "width_mm = -10 #!")], "",
     ["plate 'web'", "width_mm = -10", "no thickness"]),
    ("nan height", [in_table("plate", "web", "height_mm = 300.0", "height_mm = nan #!")], "",
     ["plate 'web'", "height_mm", "finite"]),
    ("no material", [in_table("plate", "shield", '\nmaterial = "aluminium"', ""),
                     header("plate", "shield")], "",
     ["plate 'shield'", "no material", 'material = "steel"', "mu_r and sigma_s_per_m"]),
    ("mu_r alone", [in_table("plate", "web", "\nsigma_s_per_m = 4.0e6", ""),
                    header("plate", "web")], "",
     ["plate 'web'", "both mu_r and sigma_s_per_m (add sigma_s_per_m)"]),
    ("unknown material", [in_table("plate", "shield", '"aluminium"', '"aluminum" #!')], "",
     ["unknown material 'aluminum'", "steel, stainless, aluminium, copper",
      "did you mean 'aluminium'"]),
    ("unknown sheet", [('sheet = "steel"', 'sheet = "iron" #!')], "",
     ["tray 'T1'", "unknown sheet material 'iron'", "steel, stainless, aluminium, copper"]),
    ("mu_r below 1", [("mu_r = 150.0", "mu_r = 0.5 #!")], "",
     ["plate 'web'", "mu_r", ">= 1", "got 0.5"]),
    ("mu_r inf", [("mu_r = 300.0", "mu_r = inf #!")], "", ["plate 'flange'", "mu_r", "finite"]),
    ("negative sigma", [("sigma_s_per_m = 4.0e6", "sigma_s_per_m = -1.0 #!")], "",
     ["plate 'web'", "sigma_s_per_m must be >= 0"]),
    ("zero sheet", [("sheet_mm = 2.0", "sheet_mm = 0.0 #!")], "",
     ["tray 'T1'", "sheet_mm must be > 0"]),
    ("cover without sheet", [in_table("tray", "T2", "depth_mm = 60.0",
                                      "depth_mm = 60.0\ncover = true #!")], "",
     ["tray 'T2'", "cover = true needs a sheet tray", 'add sheet = "steel"']),
    ("sheet_mm without sheet", [in_table("tray", "T2", "depth_mm = 60.0",
                                         "depth_mm = 60.0\nsheet_mm = 3.0 #!")], "",
     ["tray 'T2'", "no sheet", 'add sheet = "steel"', "remove sheet_mm"]),
    # flange y 190..202 overlaps web (x 750..760, y up to 200): at the later one, flange
    ("plates overlap", [header("plate", "flange"), ("y_mm = 200.0", "y_mm = 190.0")], "",
     ["plate 'flange'", "overlaps plate 'web'", "touching is allowed"]),
    # shield x -100..400, y -3..0 overlaps T1's bottom (y -2..0); written after T1
    ("plate into sheet tray", [header("plate", "shield"), ("y_mm = -203.0", "y_mm = -3.0"),
                               ("width_mm = 900.0", "width_mm = 500.0")],
     "", ["plate 'shield'", "overlaps plate 'T1 bottom' of sheet tray 'T1'"]),
    # T3's left side x -2..0, y -230..-190 crosses the shield (y -203..-200): at T3's header
    ("sheet tray into plate", [], APPENDED_TRAY,
     ["of sheet tray 'T3'", "overlaps plate 'shield'"]),
    # T2 as a sheet tray at x 403: its left side x 401..403 overlaps T1's right side 400..402
    ("sheet trays overlap", [in_table("tray", "T2", "x_mm = 500.0",
                                      'x_mm = 403.0\nsheet = "aluminium"'),
                             header("tray", "T2")], "",
     ["of sheet tray 'T2'", "of sheet tray 'T1'"]),
    # F1-L3 at x 190 reaches x 175..205, into the divider (x 200..203): at the conductor
    ("conductor into plate", [header("conductor", "F1-L3"), ("x_mm = 90.0", "x_mm = 190.0")],
     "", ["conductor 'F1-L3'", "reaches into plate 'divider'", "move the conductor"]),
    # a second divider at x 100..103 cuts F1-L3 (x 75..105), and is written after it
    ("plate into conductor", [], APPENDED_DIVIDER,
     ["conductor 'F1-L3'", "plate 'divider 2'"]),
    ("point in plate", [header("point", "desk"), ("y_mm = -1500.0", "y_mm = -201.5")], "",
     ["point 'desk' (200, -201.5) mm lies inside plate 'shield'", "move the point out"]),
    # the line from (-1000, -300) to (1500, -100) is at y = -200 at x = 250 (closed form)
    ("line through plate", [header("line", "ceiling"), ("y1_mm = -300.0", "y1_mm = -100.0")],
     "", ["line 'ceiling' runs through plate 'shield'", "move the line out"]),
    ("area over plate", [header("area", "office"), ("y1_mm = -400.0", "y1_mm = -201.0")], "",
     ["area 'office' overlaps plate 'shield'", "field inside metal is not computed"]),
    ("area over sheet tray", [header("area", "office"), ("y1_mm = -400.0", "y1_mm = -1.0"),
                              ("y0_mm = -3000.0", "y0_mm = -199.0")], "",
     ["area 'office' overlaps plate 'T1 bottom' of sheet tray 'T1'"]),
]


@pytest.mark.parametrize(("edits", "append", "words"), [b[1:] for b in BAD],
                         ids=[b[0] for b in BAD])
def test_bad_plate_input_names_the_line_and_the_fix(edits, append, words):
    text = edited(*edits, append=append)
    # Source: the marked line of the test text (1-based, as TOML editors count lines).
    marked = [n for n, row in enumerate(text.split("\n"), 1) if row.rstrip().endswith("#!")]
    assert len(marked) == 1
    with pytest.raises(LayoutError) as info:
        parse_layout(text, "site/plates.toml")
    err = info.value
    assert (err.path, err.line) == ("site/plates.toml", marked[0]), str(err)
    assert str(err).startswith(f"site/plates.toml:{marked[0]}: ")
    for word in words:
        assert word in err.message, str(err)
    assert "\n" not in str(err)


# Touching is allowed everywhere (closed form: the edges meet, no interior is shared).
TOUCHING = [
    ("conductor on a plate face", [("x_mm = 90.0", "x_mm = 185.0")]),  # reaches x = 200
    ("plate on a sheet tray", [("y_mm = -203.0", "y_mm = -5.0"),        # top y -2 = bottom
                               ("width_mm = 900.0", "width_mm = 500.0")]),  # x -100..400
    ("sheet trays side by side", [in_table("tray", "T2", "x_mm = 500.0",
                                           'x_mm = 404.0\nsheet = "copper"')]),  # 402 = 402
    ("point on a plate face", [("y_mm = -1500.0", "y_mm = -200.0")]),
    ("line along a plate face", [("y0_mm = -300.0", "y0_mm = -200.0"),
                                 ("y1_mm = -300.0", "y1_mm = -200.0")]),
    ("area against a plate", [("y1_mm = -400.0", "y1_mm = -203.0")]),
]


@pytest.mark.parametrize("edits", [t[1] for t in TOUCHING], ids=[t[0] for t in TOUCHING])
def test_touching_a_plate_is_allowed(edits):
    parse_layout(edited(*edits))


def test_an_edited_model_is_checked_without_lines():
    lay = parse_layout(BASE)
    bad = dataclasses.replace(lay, plates=lay.plates + (
        Plate("patch", 0.0, -202.0, 10.0, 10.0, material="copper"),))
    problems = layout_problems(bad)
    assert [(p.line, "plate 'patch'" in p.message and "overlaps plate 'shield'" in p.message)
            for p in problems] == [(0, True)]
    assert layout_problems(lay) == [] and isinstance(lay, Layout)


def test_check_command_exits_2_with_one_line(capsys, tmp_path):
    path = tmp_path / "bad.toml"
    text = edited(in_table("plate", "shield", "height_mm = 3.0", "height_mm = 0.0 #!"))
    path.write_text(text, encoding="utf-8")
    line = [n for n, row in enumerate(text.split("\n"), 1) if row.endswith("#!")][0]
    assert main(["check", str(path)]) == 2
    out, err = capsys.readouterr()
    assert out == "" and err.count("\n") == 1
    assert err.startswith(f"{path}:{line}: plate 'shield': height_mm = 0")
