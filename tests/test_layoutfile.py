"""Layout file format 1: reading a valid file, every bad-input case with its line, writing.

Line numbers are checked against the test text itself: the expected line of each bad case
carries the TOML comment ``#!`` (Source: the marked line of the test text). Syntax errors
and number formats follow the TOML 1.0.0 specification (https://toml.io/en/v1.0.0), and the
writer is cross-checked against tomllib (Python standard library) and tomli_w (an
independent TOML writer on PyPI).
"""

from __future__ import annotations

import dataclasses
import os
import pickle
import stat
import time
import tomllib
from pathlib import Path

import numpy as np
import pytest
import tomli_w
from scipy.spatial.distance import cdist

from trayadvisor.layoutfile import atomic_write_text, dumps_layout, write_layout
from trayadvisor.layoutfile import reader as layoutfile
from trayadvisor.layoutfile.checks import layout_problems, overlapping_pairs
from trayadvisor.layoutfile.reader import LayoutError, parse_layout, read_layout, validate_layout
from trayadvisor.model import (
    Circuit,
    Conductor,
    Layout,
    Limit,
    ObservationLine,
    ObservationPoint,
    Tray,
)

ROOT = Path(__file__).resolve().parents[1]

BASE = """\
format = "trayadvisor/1"
title = "Test riser"
frequency_hz = 50

[[tray]]
name = "T1"
x_mm = 0.0
y_mm = 0.0
width_mm = 300.0
depth_mm = 100.0

[[tray]]
name = "T2"
x_mm = 0
y_mm = 200.0
width_mm = 150.0
depth_mm = 50.0

[[circuit]]
name = "F1"
system = "ac3"
current_a = 250
harmonics = { 5 = 0.2 }

[[circuit]]
name = "S7"
system = "signal"
length_m = 25.0

[[conductor]]
name = "F1-L1"
circuit = "F1"
phase = "L1"
x_mm = 20.0
y_mm = 20.0
diameter_mm = 30.0
area_mm2 = 150.0
material = "copper"

[[conductor]]
name = "F1-L2"
circuit = "F1"
phase = "L2"
x_mm = 60.0
y_mm = 20.0
diameter_mm = 30.0

[[conductor]]
name = "F1-L3"
circuit = "F1"
phase = "L3"
x_mm = 100.0
y_mm = 20.0
diameter_mm = 30.0
fixed = true

[[conductor]]
name = "S7-a"
circuit = "S7"
phase = "a"
x_mm = 10.0
y_mm = 210.0
diameter_mm = 8.0
tray = "T2"

[[conductor]]
name = "S7-b"
circuit = "S7"
phase = "b"
x_mm = 20.0
y_mm = 210.0
diameter_mm = 8.0
tray = "T2"
current_a = 0.5
angle_deg = 180.0

[[point]]
name = "desk"
x_mm = 150.0
y_mm = 1200.0

[[line]]
name = "wall"
x0_mm = -500.0
y0_mm = 600.0
x1_mm = 800.0
y1_mm = 600.0
samples = 27

[[limit]]
name = "site"
ut = 1.0
source = "client brief"
"""

EXPECTED = Layout(
    title="Test riser",
    frequency_hz=50.0,
    trays=(Tray("T1", 0.0, 0.0, 300.0, 100.0), Tray("T2", 0.0, 200.0, 150.0, 50.0)),
    circuits=(Circuit("F1", "ac3", 250.0, harmonics=((5, 0.2),)),
              Circuit("S7", "signal", length_m=25.0)),
    conductors=(
        Conductor("F1-L1", "F1", "L1", 20.0, 20.0, 30.0, area_mm2=150.0, material="copper"),
        Conductor("F1-L2", "F1", "L2", 60.0, 20.0, 30.0),
        Conductor("F1-L3", "F1", "L3", 100.0, 20.0, 30.0, fixed=True),
        Conductor("S7-a", "S7", "a", 10.0, 210.0, 8.0, tray="T2"),
        Conductor("S7-b", "S7", "b", 20.0, 210.0, 8.0, tray="T2", current_a=0.5,
                  angle_deg=180.0),
    ),
    points=(ObservationPoint("desk", 150.0, 1200.0),),
    lines=(ObservationLine("wall", -500.0, 600.0, 800.0, 600.0, samples=27),),
    limits=(Limit("site", 1.0, "client brief"),),
)

F1_L2 = ('[[conductor]]\nname = "F1-L2"\ncircuit = "F1"\nphase = "L2"\nx_mm = 60.0\n'
         'y_mm = 20.0\ndiameter_mm = 30.0\n\n')
DC = ('\n[[circuit]]\nname = "B1"\nsystem = "dc"\ncurrent_a = 100.0\n'
      'harmonics = { 3 = 0.1 } #!\n\n[[conductor]]\nname = "B1+"\ncircuit = "B1"\n'
      'phase = "+"\nx_mm = 150.0\ny_mm = 20.0\ndiameter_mm = 30.0\n\n[[conductor]]\n'
      'name = "B1-"\ncircuit = "B1"\nphase = "-"\nx_mm = 190.0\ny_mm = 20.0\n'
      'diameter_mm = 30.0\n')


def after(anchor: str, text: str) -> tuple[str, str]:
    """An edit that inserts a line after the unique line ``anchor``."""
    return anchor, f"{anchor}\n{text}"


def header(name: str) -> tuple[str, str]:
    """An edit that marks the [[conductor]] header of conductor ``name``."""
    return f'[[conductor]]\nname = "{name}"', f'[[conductor]] #!\nname = "{name}"'


def edited(*edits: tuple[str, str], append: str = "") -> str:
    text = BASE
    for old, new in edits:
        assert text.count(old) == 1, old
        text = text.replace(old, new)
    return text + append


# (id, edits, text to append, words the message must contain)
BAD = [
    ("syntax", [("x_mm = 60.0", "x_mm = = 60.0 #!")], "", ["TOML syntax error", "column"]),
    ("key twice", [after("samples = 27", "samples = 28 #!")], "", ["given twice"]),
    ("unclosed at end", [], "x = [1, 2 #!\n\n", ["TOML syntax error", "Unclosed"]),
    ("too many digits", [("x_mm = 150.0", "x_mm = 1" + "0" * 5000 + " #!")], "", ["digits"]),
    ("missing format", [('format = "trayadvisor/1"', "# format missing #!")], "", ["format"]),
    ("wrong format", [('/1"', '/2" #!')], "", ["unsupported format", "trayadvisor/1"]),
    ("unknown top key", [after("frequency_hz = 50", "frequncy_hz = 60 #!")], "",
     ["unknown top-level key 'frequncy_hz'", "did you mean 'frequency_hz'?"]),
    ("unknown key", [after('name = "F1-L2"', "diamter_mm = 30.0 #!")], "",
     ["conductor 'F1-L2'", "unknown key 'diamter_mm'", "did you mean 'diameter_mm'?"]),
    ("unknown key no guess", [after('name = "T2"', 'colour = "red" #!')], "",
     ["tray 'T2'", "unknown key 'colour'", "remove it"]),
    ("unknown kind", [("[[point]]", "[[points]] #!")], "", ["did you mean 'point'?"]),
    ("unknown table", [], "\n[settings] #!\nzoom = 2\n", ["unknown top-level key 'settings'"]),
    ("top key in table", [after('source = "client brief"', 'title = "x" #!')], "",
     ["unknown key 'title'", "before the first"]),
    ("harmonic key", [("{ 5 = 0.2 }", "{ h5 = 0.2 } #!")], "", ["'h5'", "harmonic order"]),
    ("missing key", [header("F1-L2"), ("x_mm = 60.0\ny_mm = 20.0\n", "x_mm = 60.0\n")], "",
     ["conductor 'F1-L2'", "missing key 'y_mm'"]),
    ("missing current", [("[[circuit]]\nname = \"F1\"", "[[circuit]] #!\nname = \"F1\""),
                         ("current_a = 250\n", "")], "", ["missing key 'current_a'"]),
    ("missing name", [('[[tray]]\nname = "T2"\n', "[[tray]] #!\n")], "",
     ["[[tray]] #2", "missing key 'name'"]),
    ("bool as number", [("x_mm = 60.0", "x_mm = true #!")], "",
     ["x_mm must be a number", "boolean"]),
    ("string as number", [("x_mm = 60.0", 'x_mm = "60" #!')], "", ["x_mm", "a string"]),
    ("number as name", [('name = "T2"', "name = 2 #!")], "", ["name must be a string"]),
    ("int as bool", [("fixed = true", "fixed = 1 #!")], "", ["fixed", "true or false"]),
    ("float samples", [("samples = 27", "samples = 27.0 #!")], "", ["samples", "whole"]),
    ("bool samples", [("samples = 27", "samples = true #!")], "", ["samples", "whole"]),
    ("harmonics array", [("{ 5 = 0.2 }", "[0.2] #!")], "", ["harmonics", "inline table"]),
    ("harmonic bool", [("{ 5 = 0.2 }", "{ 5 = true } #!")], "", ["harmonic 5", "number"]),
    ("title type", [('title = "Test riser"', "title = 3 #!")], "", ["title", "string"]),
    ("freq type", [("frequency_hz = 50", 'frequency_hz = "50 Hz" #!')], "", ["frequency_hz"]),
    ("single table", [("[[point]]", "[point] #!")], "", ["'point'", "[[point]]"]),
    ("date", [("y_mm = 1200.0", "y_mm = 2024-01-01 #!")], "", ["y_mm", "date"]),
    ("huge int", [("x_mm = 150.0", "x_mm = 1" + "0" * 400 + " #!")], "", ["too large"]),
    ("huge harmonic", [("{ 5 = 0.2 }", "{ 5 = 1" + "0" * 400 + " } #!")], "", ["too large"]),
    ("nan", [("x_mm = 60.0", "x_mm = nan #!")], "", ["F1-L2", "x_mm", "finite"]),
    ("inf", [("area_mm2 = 150.0", "area_mm2 = inf #!")], "", ["area_mm2", "finite"]),
    ("freq -inf", [("frequency_hz = 50", "frequency_hz = -inf #!")], "", ["frequency_hz"]),
    ("limit nan", [("ut = 1.0", "ut = nan #!")], "", ["limit 'site'", "ut", "finite"]),
    ("zero diameter", [("diameter_mm = 30.0\narea", "diameter_mm = 0.0 #!\narea")], "",
     ["diameter_mm must be > 0"]),
    ("negative width", [("width_mm = 300.0", "width_mm = -5 #!")], "", ["width_mm", "> 0"]),
    ("zero depth", [("depth_mm = 50.0", "depth_mm = 0 #!")], "", ["depth_mm", "> 0"]),
    ("negative current", [("current_a = 250", "current_a = -1.0 #!")], "",
     ["current_a must be >= 0", "angle_deg"]),
    ("negative cond current", [("current_a = 0.5", "current_a = -0.5 #!")], "",
     ["S7-b", "current_a"]),
    ("zero limit", [("ut = 1.0", "ut = 0 #!")], "", ["ut must be > 0"]),
    ("zero frequency", [("frequency_hz = 50", "frequency_hz = 0 #!")], "", ["frequency_hz"]),
    ("zero length", [("length_m = 25.0", "length_m = 0.0 #!")], "", ["length_m", "> 0"]),
    ("one sample", [("samples = 27", "samples = 1 #!")], "", ["samples", "from 2"]),
    ("negative harmonic", [("{ 5 = 0.2 }", "{ 5 = -0.2 } #!")], "", ["harmonic 5", ">= 0"]),
    ("harmonic order 1", [("{ 5 = 0.2 }", "{ 1 = 0.2 } #!")], "", ["order 1", "2 to 50"]),
    ("harmonic order 51", [("{ 5 = 0.2 }", "{ 51 = 0.2 } #!")], "", ["order 51"]),
    ("harmonic twice", [("{ 5 = 0.2 }", '{ 5 = 0.2, "05" = 0.1 } #!')], "", ["twice"]),
    ("zero-length line", [("[[line]]", "[[line]] #!"), ("x1_mm = 800.0", "x1_mm = -500.0")],
     "", ["line 'wall'", "zero length"]),
    ("unknown system", [('system = "ac3"', 'system = "ac2" #!')], "",
     ["unknown system 'ac2'", "did you mean"]),
    ("material", [('material = "copper"', 'material = "aluminum" #!')], "",
     ["did you mean 'aluminium'?"]),
    ("dup tray", [('name = "T2"', 'name = "T1" #!')], "",
     ["duplicate tray name 'T1'", "first at line 6"]),
    ("dup circuit", [('name = "S7"', 'name = "F1" #!')], "", ["duplicate circuit name"]),
    ("dup conductor", [('name = "F1-L3"', 'name = "F1-L2" #!')], "",
     ["duplicate conductor name 'F1-L2'"]),
    ("dup point", [], '\n[[point]]\nname = "desk" #!\nx_mm = 0.0\ny_mm = 900.0\n',
     ["duplicate point name"]),
    ("dup line", [], '\n[[line]]\nname = "wall" #!\nx0_mm = 0\ny0_mm = 0\nx1_mm = 1\n'
     'y1_mm = 0\n', ["duplicate line name"]),
    ("dup limit", [], '\n[[limit]]\nname = "site" #!\nut = 2.0\n', ["duplicate limit name"]),
    ("phase ac3", [('phase = "L2"', 'phase = "L" #!')], "",
     ["phase 'L' is not valid", "(ac3)", "L1 L2 L3 N PE"]),
    ("phase signal", [('phase = "a"', 'phase = "L1" #!')], "", ["phase 'L1'", "a b"]),
    ("missing circuit", [('circuit = "F1"\nphase = "L3"', 'circuit = "F2" #!\nphase = "L3"')],
     "", ["circuit 'F2' is not defined", "F1, S7"]),
    ("missing tray", [('tray = "T2"\ncurrent_a', 'tray = "T3" #!\ncurrent_a')], "",
     ["tray 'T3' is not defined"]),
    ("dc harmonics", [], DC, ["circuit 'B1'", "dc", "harmonics"]),
    ("overlap", [header("F1-L2"), ("x_mm = 60.0", "x_mm = 45.0")], "",
     ["conductor 'F1-L2' overlaps conductor 'F1-L1'", "25 mm apart"]),
    ("overlap second", [header("F1-L2"), ("x_mm = 20.0\ny_mm = 20.0", "x_mm = 55.0\ny_mm = 20")],
     "", ["conductor 'F1-L2' overlaps conductor 'F1-L1'"]),
    ("outside every tray", [header("F1-L2"), ("x_mm = 60.0\ny_mm = 20.0", "x_mm = 60\ny_mm = 95")],
     "", ["F1-L2", "outside every tray"]),
    ("outside own tray", [header("S7-a"), ('tray = "T2"\n\n', 'tray = "T1"\n\n')], "",
     ["S7-a", "not inside its tray 'T1'"]),
    ("phase missing", [("[[circuit]]\nname = \"F1\"", "[[circuit]] #!\nname = \"F1\""),
                       (F1_L2, "")], "", ["circuit 'F1'", "no conductor with phase 'L2'"]),
    ("no conductors", [], '\n[[circuit]] #!\nname = "F9"\nsystem = "ac1"\ncurrent_a = 10.0\n',
     ["circuit 'F9' has no conductors"]),
    ("signal missing b", [("[[circuit]]\nname = \"S7\"", "[[circuit]] #!\nname = \"S7\""),
                          ('phase = "b"', 'phase = "a"')], "", ["phase 'b'"]),
]


@pytest.mark.parametrize(("edits", "append", "words"), [b[1:] for b in BAD],
                         ids=[b[0] for b in BAD])
def test_bad_input_names_the_line_and_the_key(edits, append, words):
    text = edited(*edits, append=append)
    # Source: the marked line of the test text (1-based, as TOML editors count lines).
    marked = [n for n, row in enumerate(text.split("\n"), 1) if row.rstrip().endswith("#!")]
    assert len(marked) == 1
    with pytest.raises(LayoutError) as info:
        parse_layout(text, "site/riser.toml")
    err = info.value
    assert (err.path, err.line) == ("site/riser.toml", marked[0]), str(err)
    assert str(err) == f"site/riser.toml:{marked[0]}: {err.message}"
    for word in words:
        assert word in err.message, str(err)
    assert "\n" not in str(err)


def test_valid_file_parses_to_the_expected_model():
    assert parse_layout(BASE) == EXPECTED


def test_touching_conductors_are_allowed_but_a_real_overlap_is_not():
    # Source: two circles of radius 15 mm touch at centre distance 30 mm (elementary
    # geometry, common practice); the tolerance 1e-6 mm is the format's stated rule.
    for x, ok in ((50.0, True), (50.0 - 1e-7, True), (50.0 - 1e-5, False)):
        text = edited(("x_mm = 60.0", f"x_mm = {x!r}"))
        if ok:
            assert parse_layout(text).conductors[1].x_mm == x
        else:
            with pytest.raises(LayoutError, match="overlaps"):
                parse_layout(text)


def test_the_example_in_the_format_reference_is_valid():
    doc = (ROOT / "docs" / "file-format.md").read_text(encoding="utf-8")
    example = doc.split("```toml\n", 1)[1].split("```", 1)[0]
    lay = parse_layout(example, "docs/file-format.md")
    assert parse_layout(dumps_layout(lay)) == lay
    # Source: the example's own text (three touching 34 mm conductors, one signal pair).
    assert [c.name for c in lay.conductors] == ["M1-L1", "M1-L2", "M1-L3", "P4-a", "P4-b"]
    assert lay.circuits[0].harmonics == ((3, 0.08), (5, 0.15))


def test_defaults_and_optional_keys():
    text = edited(('title = "Test riser"\nfrequency_hz = 50\n', ""))
    lay = parse_layout(text)
    # Source: docs/file-format.md defaults (title "", 50 Hz, samples 101, source text).
    assert (lay.title, lay.frequency_hz) == ("", 50.0)
    lay = parse_layout(edited(("samples = 27\n", ""), ('source = "client brief"\n', "")))
    assert lay.lines[0].samples == 101 and lay.limits[0].source == "layout file"
    assert lay.circuits[1].current_a == 0.0  # a signal circuit needs no current_a


def test_bom_crlf_and_other_toml_spellings_read_the_same(tmp_path):
    # Source: TOML 1.0.0 allows CRLF newlines, quoted keys, dotted keys and sub-tables.
    spelled = (BASE.replace("x_mm = 0\n", '"x_mm" = 0\n')
               .replace("harmonics = { 5 = 0.2 }\n", "harmonics.5 = 0.2\n")
               .replace("x0_mm = -500.0", "'x0_mm' = -500.0")
               .replace("\n", "\r\n"))
    path = tmp_path / "crlf.toml"
    path.write_bytes(b"\xef\xbb\xbf" + spelled.encode())
    assert read_layout(path) == EXPECTED
    err_text = spelled.replace("harmonics.5 = 0.2", "harmonics.1 = 0.2 #!")
    with pytest.raises(LayoutError) as info:
        parse_layout(err_text)
    # Source: the marked line of the test text.
    assert info.value.line == err_text.split("\n").index("harmonics.1 = 0.2 #!\r") + 1


def test_inline_tables_from_an_independent_writer_have_right_lines():
    doc = tomllib.loads(BASE)
    doc["circuit"][0]["harmonics"] = {"1": 0.2}
    text = tomli_w.dumps(doc)
    with pytest.raises(LayoutError, match="order 1") as info:
        parse_layout(text)
    rows = text.split("\n")
    # Source: tomli_w's own output; the error points at the line holding the order key.
    assert "1 = 0.2" in rows[info.value.line - 1]
    doc = tomllib.loads(BASE)
    doc["conductor"][1]["x_mm"] = 45.0
    text = tomli_w.dumps(doc)
    with pytest.raises(LayoutError, match="'F1-L2' overlaps") as info:
        parse_layout(text)
    # Source: tomli_w's output: the [[conductor]] header, or the inline table, of F1-L2.
    assert 'name = "F1-L2"' in "".join(text.split("\n")[info.value.line - 1: info.value.line + 1])


def test_read_write_read_round_trip(tmp_path):
    src = tmp_path / "in.toml"
    src.write_text(BASE, encoding="utf-8")
    first = read_layout(src)
    out = tmp_path / "out.toml"
    write_layout(first, out)
    assert read_layout(out) == first == EXPECTED
    assert dumps_layout(read_layout(out)) == out.read_text(encoding="utf-8")


@pytest.mark.parametrize("path", sorted((ROOT / "layouts").glob("*.toml")), ids=lambda p: p.name)
def test_shipped_layouts_round_trip(path):
    lay = read_layout(path)
    assert parse_layout(dumps_layout(lay)) == lay


def _as_dict(lay: Layout) -> dict:
    """The layout as plain TOML data, built here independently of the writer."""
    doc: dict = {"format": "trayadvisor/1", "title": lay.title, "frequency_hz": lay.frequency_hz}
    for kind, items in (("tray", lay.trays), ("circuit", lay.circuits),
                        ("conductor", lay.conductors), ("point", lay.points),
                        ("line", lay.lines), ("limit", lay.limits)):
        rows = []
        for item in items:
            row = {k: v for k, v in dataclasses.asdict(item).items() if v is not None}
            if kind == "circuit":
                row["harmonics"] = {str(h): f for h, f in row["harmonics"]}
            if kind == "limit":  # docs/file-format.md: the value is written as the key `ut`
                row["ut"] = row.pop("value_uT")
            rows.append(row)
        doc[kind] = rows
    return doc


def test_writer_agrees_with_an_independent_toml_writer():
    odd = 'quote " backslash \\ tab \t newline \n del \x7f bell \x07 µT Ω 電'
    lay = dataclasses.replace(EXPECTED, title=odd, frequency_hz=1 / 3)
    lay = lay.with_conductor(0, lay.conductors[0].moved(20 + 1 / 3, 20.000000000000004))
    ours = tomllib.loads(dumps_layout(lay))
    theirs = tomllib.loads(tomli_w.dumps(_as_dict(lay)))
    # Source: tomli_w (PyPI) and tomllib (stdlib) read/write the same TOML 1.0.0 data.
    for key in ("title", "frequency_hz"):
        assert ours[key] == theirs[key]
    assert ours["conductor"][0]["x_mm"] == theirs["conductor"][0]["x_mm"] == 20 + 1 / 3
    assert parse_layout(tomli_w.dumps(_as_dict(lay))) == parse_layout(dumps_layout(lay)) == lay


def test_writer_omits_defaults_and_keeps_a_stable_order():
    text = dumps_layout(EXPECTED)
    assert text.splitlines()[1] == 'format = "trayadvisor/1"'
    assert "fixed = false" not in text and "angle_deg = 0.0" not in text
    assert "None" not in text and 'source = "client brief"' in text
    keys = [row.split(" =")[0] for row in text.split("[[conductor]]")[1].strip().splitlines()]
    assert keys == ["name", "circuit", "phase", "x_mm", "y_mm", "diameter_mm", "area_mm2",
                    "material"]


def test_read_errors_are_layout_errors(tmp_path):
    with pytest.raises(LayoutError, match="no such file") as info:
        read_layout(tmp_path / "missing.toml")
    assert info.value.line == 0 and str(info.value).startswith(str(tmp_path / "missing.toml"))
    with pytest.raises(LayoutError, match="folder"):
        read_layout(tmp_path)
    bad = tmp_path / "latin1.toml"
    bad.write_bytes(BASE.replace("Test riser", "Test riser caf\xe9").encode("latin-1"))
    with pytest.raises(LayoutError, match="not UTF-8") as info:
        read_layout(bad)
    assert info.value.line == 2  # Source: the title is on line 2 of the test text
    if os.geteuid() != 0:  # root may read anything
        locked = tmp_path / "locked.toml"
        locked.write_text(BASE, encoding="utf-8")
        locked.chmod(0)
        with pytest.raises(LayoutError, match="cannot read"):
            read_layout(locked)


def test_layout_error_is_picklable_for_worker_processes():
    err = pickle.loads(pickle.dumps(LayoutError("a.toml", 7, "bad thing; fix it")))
    assert (str(err), err.path, err.line) == ("a.toml:7: bad thing; fix it", "a.toml", 7)


def test_atomic_write_keeps_mode_and_leaves_no_temp_files(tmp_path, monkeypatch):
    target = tmp_path / "lay.toml"
    target.write_text("old\n", encoding="utf-8")
    target.chmod(0o640)
    atomic_write_text(target, "new ✓\n")
    assert target.read_text(encoding="utf-8") == "new ✓\n"
    assert stat.S_IMODE(target.stat().st_mode) == 0o640
    assert sorted(p.name for p in tmp_path.iterdir()) == ["lay.toml"]

    link = tmp_path / "link.toml"
    link.symlink_to(target.name)
    atomic_write_text(link, "via link\n")
    assert link.is_symlink() and target.read_text(encoding="utf-8") == "via link\n"
    link.unlink()
    atomic_write_text(target, "new ✓\n")

    def refuse(src, dst):
        raise OSError("disk full")

    monkeypatch.setattr(layoutfile.os, "replace", refuse)
    with pytest.raises(OSError, match="disk full"):
        write_layout(EXPECTED, target)
    assert target.read_text(encoding="utf-8") == "new ✓\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["lay.toml"]


def test_validate_an_edited_model_without_line_map():
    moved = EXPECTED.with_positions({"F1-L3": (65.0, 20.0)})
    with pytest.raises(LayoutError) as info:
        validate_layout(moved)
    assert str(info.value).startswith("<layout>:0: conductor 'F1-L3' overlaps")
    validate_layout(EXPECTED)
    worse = dataclasses.replace(moved, frequency_hz=float("nan"))
    problems = layout_problems(worse, "edit")
    assert len(problems) == 2
    assert str(problems[0]).startswith("edit:0: layout: frequency_hz must be a finite")
    assert str(problems[1]).startswith("edit:0: conductor 'F1-L3' overlaps conductor 'F1-L2'")


def test_overlap_sweep_matches_brute_force_distances():
    rng = np.random.default_rng(7)
    x, y = rng.uniform(0, 400, 300), rng.uniform(0, 60, 300)
    r = rng.uniform(1, 12, 300)
    x[:40] = 100.0  # a column of equal x, the sweep's worst case
    d = cdist(np.c_[x, y], np.c_[x, y])  # Source: scipy.spatial (independent library)
    i, j = np.nonzero(np.triu(d < r[:, None] + r[None, :] - 1e-6, k=1))
    want = sorted(zip(i.tolist(), j.tolist(), strict=True))
    got = sorted(map(tuple, overlapping_pairs(x, y, r).tolist()))
    assert got == want and len(want) > 10


def test_large_layout_validates_quickly():
    n = 2500
    cols = 50
    conductors = tuple(
        Conductor(f"C{k}", "F1", ("L1", "L2", "L3")[k % 3], 10.0 + 20.0 * (k % cols),
                  10.0 + 20.0 * (k // cols), 20.0)
        for k in range(n))
    lay = Layout(trays=(Tray("T", 0.0, 0.0, 20.0 * cols, 20.0 * (n // cols)),),
                 circuits=(Circuit("F1", "ac3", 100.0),), conductors=conductors)
    text = dumps_layout(lay)
    start = time.perf_counter()
    assert parse_layout(text) == lay
    elapsed = time.perf_counter() - start
    assert elapsed < 5.0, elapsed  # generous for slow CI; about 0.3 s on a laptop
    bad = lay.with_positions({"C2499": (985.0, 985.0)})
    with pytest.raises(LayoutError, match="'C2499' overlaps conductor 'C2449'"):
        validate_layout(bad)
