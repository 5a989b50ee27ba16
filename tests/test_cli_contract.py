"""Contract tests of `check` and `field` (docs/cli.md and docs/json.md)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from references import MU0

from trayadvisor.analysis import field_summary
from trayadvisor.cli.main import main
from trayadvisor.coupling import solved_sources
from trayadvisor.engine import stray_uT
from trayadvisor.layoutfile import read_layout

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "layouts" / "demo.toml"

BASE = (ROOT / "tests" / "data" / "three-flat.toml").read_text(encoding="utf-8")


def line_of(text: str, needle: str, occurrence: int = 1) -> int:
    """1-based line number of the n-th line containing ``needle``."""
    hits = [i + 1 for i, ln in enumerate(text.splitlines()) if needle in ln]
    return hits[occurrence - 1]


def run_cli(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_demo_checks_ok(capsys):
    code, out, err = run_cli(capsys, "check", str(DEMO))
    assert code == 0 and err == ""
    assert out.count("\n") == 1 and "ok" in out and "16 conductor(s)" in out


def test_field_json_shape_and_value(capsys):
    code, out, _ = run_cli(capsys, "field", str(DEMO), "--distance-mm", "500", "--at", "300,900",
                           "--at", "-200,50", "--limit-ut", "1", "--json")
    assert code == 0
    data = json.loads(out)
    for key in ("distance_mm", "max_resultant_uT", "max_at_mm", "far_field_order", "points"):
        assert key in data
    assert data["distance_mm"] == 500.0
    assert len(data["points"]) == 2  # one entry per --at (docs/json.md)
    assert {"x_mm", "y_mm", "resultant_uT", "max_uT"} <= set(data["points"][0])
    assert data["points"][0]["x_mm"] == 300.0
    # the JSON figure is the same core call the UI makes, with the solved currents
    layout = read_layout(DEMO)
    assert data["currents"] == "solved"
    assert data["max_resultant_uT"] == field_summary(layout, distance_mm=500.0).max_resultant_uT
    assert data["max_resultant_uT"] == pytest.approx(
        stray_uT(layout, 500.0, solved_sources(layout)), rel=1e-12)
    lim = [x for x in data["limits"] if x["name"] == "--limit-ut"][0]
    assert lim["pass"] is (data["max_resultant_uT"] <= 1.0)
    # every conductor at every component, and the parallel L1 pair shares unevenly
    cur = {(c["name"], c["order"]): c for c in data["conductor_currents"]}
    assert len(cur) == len(layout.conductors) * len({o for _, o in cur})
    assert cur["F1-L1a", 1]["current_a"] != pytest.approx(cur["F1-L1b", 1]["current_a"],
                                                          rel=1e-3)


def test_equal_shares_reproduce_the_equal_share_figures(capsys):
    code, out, _ = run_cli(capsys, "field", str(DEMO), "--equal-shares", "--json")
    assert code == 0
    data = json.loads(out)
    layout = read_layout(DEMO)
    assert data["currents"] == "equal"
    assert data["max_resultant_uT"] == pytest.approx(stray_uT(layout, 500.0), rel=1e-12)
    cur = {(c["name"], c["order"]): c["current_a"] for c in data["conductor_currents"]}
    assert cur["F1-L1a", 1] == pytest.approx(cur["F1-L1b", 1], rel=1e-12) == 315.0
    code, _, err = run_cli(capsys, "field", str(DEMO), "--equal-shares", "--sharing")
    assert code == 2 and "contradict" in err


def test_field_human_output_names_cautions(capsys):
    code, out, _ = run_cli(capsys, "field", str(DEMO))
    assert code == 0
    assert "stray field at 500 mm" in out
    assert "Caution" in out and "licensed practice" in out


def test_python_dash_m_and_console_script_agree():
    res = subprocess.run([sys.executable, "-m", "trayadvisor", "check", str(DEMO)],
                         capture_output=True, text=True)
    assert res.returncode == 0 and "ok" in res.stdout


# Every bad-input case of docs/file-format.md "Checks": (name, edit of BASE, needle marking
# the expected line, words)
BAD = [
    ("unknown top key", lambda t: t.replace('title = "contract base"',
                                            'title = "contract base"\ncolour = 3'),
     "colour", ["colour"]),
    ("unknown conductor key",
     lambda t: t.replace('diameter_mm = 30.0\n\n[[conductor]]\nname = "B"',
                         'diamter_mm = 30.0\n\n[[conductor]]\nname = "B"', 1),
     "diamter_mm", ["diamter_mm"]),
    ("missing key", lambda t: t.replace('phase = "L2"\n', ""), None, ["phase"]),
    ("wrong type", lambda t: t.replace("x_mm = 100.0", 'x_mm = "100"'), 'x_mm = "100"', ["x_mm"]),
    ("boolean as number", lambda t: t.replace("x_mm = 100.0", "x_mm = true"), "x_mm = true",
     ["x_mm"]),
    ("nan", lambda t: t.replace("x_mm = 100.0", "x_mm = nan"), "x_mm = nan", ["x_mm"]),
    ("inf", lambda t: t.replace("current_a = 100.0", "current_a = inf"), "current_a = inf",
     ["current_a"]),
    ("negative size", lambda t: t.replace("width_mm = 300.0", "width_mm = -300.0"),
     "width_mm", ["width_mm"]),
    ("zero diameter", lambda t: t.replace("diameter_mm = 30.0\n\n[[conductor]]\nname = \"C\"",
                                          "diameter_mm = 0.0\n\n[[conductor]]\nname = \"C\""),
     "diameter_mm = 0.0", ["diameter_mm"]),
    ("duplicate name", lambda t: t.replace('name = "B"', 'name = "A"'), 'name = "A"#2',
     ["A", "duplicate"]),
    ("phase not valid", lambda t: t.replace('phase = "L2"', 'phase = "+"'), 'phase = "+"',
     ["phase"]),
    ("missing circuit", lambda t: t.replace('circuit = "F1"\nphase = "L3"',
                                            'circuit = "F9"\nphase = "L3"'),
     'circuit = "F9"', ["F9"]),
    ("overlap", lambda t: t.replace("x_mm = 100.0", "x_mm = 70.0"), None, ["overlap"]),
    ("outside tray", lambda t: t.replace("x_mm = 150.0", "x_mm = 290.0"), None, ["tray"]),
    ("cannot carry current", lambda t: t.replace('phase = "L2"', 'phase = "L1"'), None, ["L2"]),
    ("wrong format", lambda t: t.replace("trayadvisor/1", "trayadvisor/9"), "format", ["format"]),
    ("toml syntax", lambda t: t.replace("y_mm = 15.0", "y_mm = = 15.0", 1), "y_mm = = 15.0", []),
]


@pytest.mark.parametrize("name,edit,needle,words", BAD, ids=[b[0] for b in BAD])
def test_bad_input_through_cli(tmp_path, capsys, name, edit, needle, words):
    text = edit(BASE)
    assert text != BASE, "the edit must change the file"
    path = tmp_path / "bad.toml"
    path.write_text(text, encoding="utf-8")
    for argv in (["check", str(path)], ["field", str(path), "--json"]):
        code, out, err = run_cli(capsys, *argv)
        assert code == 2
        assert out == ""  # nothing written on stdout
        lines = err.strip().splitlines()
        assert len(lines) == 1, err  # one clear line, no traceback
        assert "Traceback" not in err
        prefix = f"{path}:"
        assert lines[0].startswith(prefix)
        line_no = int(lines[0][len(prefix):].split(":", 1)[0])
        if needle is not None:
            n, _, occ = needle.partition("#")
            assert line_no == line_of(text, n, int(occ or 1)), lines[0]
        else:
            assert line_no >= 1
        for w in words:
            assert w in lines[0]


def test_missing_file_is_a_clean_error(tmp_path, capsys):
    code, out, err = run_cli(capsys, "check", str(tmp_path / "nope.toml"))
    assert code == 2 and out == "" and len(err.strip().splitlines()) == 1


@pytest.mark.parametrize("argv", [["--distance-mm", "-1"], ["--at", "1;2"], ["--limit-ut", "0"],
                                  ["--distance-mm", "nan"]])
def test_bad_options_are_clean_errors(capsys, argv):
    code, out, err = run_cli(capsys, "field", str(DEMO), *argv)
    assert code == 2 and out == "" and len(err.strip().splitlines()) == 1


def test_envelope_without_a_tray_is_around_the_outer_circles(capsys):
    # A go/return pair at x = ±s, radius r, no tray: the curve at d runs at h = r + d above
    # the pair's axis, and on it the field peaks above the middle, where each conductor is
    # ρ² = s² + h² away. Source: B = μ0 I / (2π ρ) per line current (common practice); the
    # two horizontal parts add, the vertical ones cancel: B = μ0 I s / (π ρ²).
    # (An envelope around the centres instead of the outer circles gives h = d, 15 % more.)
    s, r, d, current = 0.030, 0.015, 0.200, 100.0
    h = r + d
    want_uT = MU0 * current * s / (np.pi * (s * s + h * h)) * 1e6
    code, out, _ = run_cli(capsys, "field", str(ROOT / "tests" / "data" / "pair-no-tray.toml"),
                           "--distance-mm", str(d * 1e3), "--json")
    assert code == 0
    data = json.loads(out)
    assert data["max_resultant_uT"] == pytest.approx(want_uT, rel=1e-9)
    assert abs(data["max_at_mm"][0]) < 1e-3 and abs(data["max_at_mm"][1]) == pytest.approx(
        h * 1e3, abs=1e-6)


def test_conductor_temperature_reaches_field_and_rank(capsys):
    # R' rises with temperature (IEC 60287-1-1), so the solved sharing and the field change;
    # the figures are the core calls with that temperature.
    layout = read_layout(DEMO)
    code, out, _ = run_cli(capsys, "field", str(DEMO), "--temperature-c", "20", "--json")
    cold = json.loads(out)
    assert code == 0 and cold["temperature_c"] == 20.0
    assert cold["max_resultant_uT"] == field_summary(
        layout, temperature_c=20.0).max_resultant_uT
    assert cold["max_resultant_uT"] != pytest.approx(
        field_summary(layout).max_resultant_uT, rel=1e-6)
    assert any("20 °C" in n for n in cold["notes"])
    code, out, _ = run_cli(capsys, "field", str(DEMO), "--equal-shares", "--json")
    assert json.loads(out)["temperature_c"] is None  # no resistance enters equal shares
    code, out, _ = run_cli(capsys, "rank", str(DEMO), "--temperature-c", "20", "--top", "1",
                           "--objective", "contour", "--json")
    assert code == 0
    assert json.loads(out)["baseline_uT"] == pytest.approx(cold["max_resultant_uT"],
                                                           rel=1e-9)
    # the default objective (the demo's place-bound limits) uses that temperature too
    code, out, _ = run_cli(capsys, "rank", str(DEMO), "--temperature-c", "20", "--top", "1",
                           "--json")
    worst = max(q["index"] for p in cold["places"] for q in p["limits"])
    assert json.loads(out)["baseline"] == pytest.approx(worst, rel=1e-9)


@pytest.mark.parametrize("command", ["field", "rank", "couple", "report"])
@pytest.mark.parametrize("value", ["900", "nan"])
def test_conductor_temperature_outside_the_range_is_one_clean_error(capsys, tmp_path,
                                                                   command, value):
    extra = ["--out", str(tmp_path / "r.html")] if command == "report" else []
    code, out, err = run_cli(capsys, command, str(DEMO), "--temperature-c", value, *extra)
    assert code == 2 and out == "" and len(err.strip().splitlines()) == 1
    assert f"--temperature-c {float(value)}" in err and "-50 to 250 °C" in err
    assert not (tmp_path / "r.html").exists()
