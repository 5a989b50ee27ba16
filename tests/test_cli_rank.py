"""Contract tests of `trayadvisor rank` (docs/cli.md and docs/json.md "rank --json")."""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
from dataclasses import replace
from pathlib import Path

import pytest

from trayadvisor.cli.main import main
from trayadvisor.coupling import solved_sources
from trayadvisor.engine import stray_uT
from trayadvisor.layoutfile import dumps_layout, read_layout

FEEDER = Path(__file__).parent / "data" / "workshop-feeder.toml"  # two sets, 400 mm tray


def layout_text(n_sets: int = 2, width: float = 400.0) -> str:
    """The feeder of ``FEEDER`` with ``n_sets`` sets laid side by side, 30 mm apart."""
    base = read_layout(FEEDER)
    pattern = base.conductors[:3]  # L1, L2, L3 of the first set
    cons = tuple(c.__class__(f"M1-{c.phase}{i // 3}", c.circuit, c.phase, 30.0 + 30.0 * i,
                             c.y_mm, c.diameter_mm)
                 for i, c in ((i, pattern[i % 3]) for i in range(3 * n_sets)))
    tray = replace(base.trays[0], width_mm=width)
    return dumps_layout(replace(base, trays=(tray,), conductors=cons))


@pytest.fixture
def lay_file(tmp_path: Path) -> Path:
    p = tmp_path / "feeder.toml"
    p.write_text(layout_text(), encoding="utf-8")
    return p


def run(capsys, *argv: str) -> tuple[int, str, str]:
    rc = main(["rank", *map(str, argv)])
    out, err = capsys.readouterr()
    return rc, out, err


def test_json_shape_and_values(capsys, lay_file):
    rc, out, err = run(capsys, lay_file, "--json", "--top", "3")
    assert rc == 0 and err == ""
    data = json.loads(out)
    # Source: docs/json.md rank --json: distance_mm, method, evaluated, options[rank,
    # max_resultant_uT, conductors[name, x_mm, y_mm]]; every conductor in every option.
    assert data["distance_mm"] == 500.0 and data["method"] == "exhaustive"
    assert data["evaluated"] == data["distinct"] == 90  # Source: 6!/(2!2!2!) = 90
    lay = read_layout(lay_file)
    assert [o["rank"] for o in data["options"]] == [1, 2, 3]
    for o in data["options"]:
        pos = {c["name"]: (c["x_mm"], c["y_mm"]) for c in o["conductors"]}
        assert set(pos) == {c.name for c in lay.conductors}
        # Source: the `field` command's figure on the option's positions (solved currents).
        moved = lay.with_positions(pos)
        assert o["max_resultant_uT"] == pytest.approx(
            stray_uT(moved, 500.0, solved_sources(moved)), rel=1e-6)


def test_text_output(capsys, lay_file):
    rc, out, _ = run(capsys, lay_file, "--top", "2", "--distance-mm", "800")
    assert rc == 0
    assert "exhaustive: 90 of 90 distinct arrangements" in out
    assert "contour at 800 mm" in out and "option 1:" in out and "Caution" in out


@pytest.mark.parametrize("argv,message", [
    (["--top", "0"], "trayadvisor rank: --top 0: must be at least 1"),
    (["--top", "many"], "trayadvisor rank: --top many: must be a whole number"),
    (["--objective", "line:nope"], "trayadvisor rank: --objective line:nope: the layout has "
                                   "no observation line 'nope'; its lines are wall"),
    (["--objective", "sideways"], "trayadvisor rank: --objective sideways: use line:NAME, "
                                  "point:NAME, contour or limits"),
    (["--slots", "diagonal"], "trayadvisor rank: --slots diagonal: use one of touching, "
                              "spaced, trefoil"),
    (["--budget-s", "0"], "trayadvisor rank: --budget-s 0: must be a positive number"),
    (["--apply", "1"], "trayadvisor rank: --apply 1: needs --out NEW.toml (the layout to "
                       "write)"),
    (["--out", "{tmp}/new.toml"], "trayadvisor rank: --out {tmp}/new.toml: unknown extension "
                                  "'.toml'; use .csv, .json or .md (to write a layout, add "
                                  "--apply N)"),
    (["--out", "{tmp}/x.xlsx"], "trayadvisor rank: --out {tmp}/x.xlsx: unknown extension "
                                "'.xlsx'; use .csv, .json or .md"),
    (["--apply", "50", "--out", "{tmp}/new.toml"],  # 90 arrangements, < 50 classes
     "trayadvisor rank: --apply 50: only"),
])
def test_bad_options_one_clean_line_nothing_written(capsys, lay_file, argv, message):
    tmp = lay_file.parent
    before = sorted(p.name for p in tmp.iterdir())
    rc, out, err = run(capsys, lay_file, *[a.replace("{tmp}", str(tmp)) for a in argv])
    assert rc == 2 and out == ""
    assert err.count("\n") == 1 and "Traceback" not in err
    assert err.startswith(message.replace("{tmp}", str(tmp)))
    assert sorted(p.name for p in tmp.iterdir()) == before


def test_bad_file_gets_file_line_error(capsys, tmp_path):
    p = tmp_path / "bad.toml"
    p.write_text(layout_text().replace('circuit = "M1"\nphase = "L2"',
                                       'circuit = "M9"\nphase = "L2"', 1), encoding="utf-8")
    rc, out, err = run(capsys, p)
    assert rc == 2 and out == ""
    line = next(i for i, t in enumerate(p.read_text().splitlines(), 1) if '"M9"' in t)
    assert err.startswith(f"{p}:{line}: ") and err.count("\n") == 1


@pytest.mark.parametrize("ext", ["csv", "json", "md"])
def test_out_writes_the_ranking(capsys, lay_file, ext):
    out_path = lay_file.parent / f"ranked.{ext}"
    rc, out, _ = run(capsys, lay_file, "--top", "2", "--out", out_path)
    assert rc == 0 and f"wrote {out_path}: 2 option(s)" in out
    text = out_path.read_text(encoding="utf-8")
    if ext == "json":
        assert len(json.loads(text)["options"]) == 2
    elif ext == "csv":
        assert len(text.strip().splitlines()) == 1 + 2 * 6
    else:
        assert text.count("## Option ") == 2


def test_apply_writes_a_layout_with_that_option(capsys, lay_file):
    rc, out, _ = run(capsys, lay_file, "--json", "--top", "3")
    option2 = json.loads(out)["options"][1]
    new = lay_file.parent / "applied.toml"
    rc, _, err = run(capsys, lay_file, "--apply", "2", "--out", new, "--json")
    assert rc == 0 and f"wrote {new}" in err
    applied = read_layout(new)  # validates the written file
    want = {c["name"]: (c["x_mm"], c["y_mm"]) for c in option2["conductors"]}
    assert {c.name: (c.x_mm, c.y_mm) for c in applied.conductors} == want
    assert stray_uT(applied, 500.0, solved_sources(applied)) == pytest.approx(
        option2["max_resultant_uT"], rel=1e-9)


def test_objective_line_and_slots(capsys, lay_file):
    rc, out, _ = run(capsys, lay_file, "--json", "--objective", "line:wall", "--slots",
                     "spaced", "--top", "1")
    assert rc == 0
    data = json.loads(out)
    assert data["objective"] == "line wall"
    xs = sorted(c["x_mm"] for c in data["options"][0]["conductors"])
    assert all(b - a >= 60.0 - 1e-9 for a, b in zip(xs, xs[1:], strict=False))


def test_batch_over_a_folder(capsys, tmp_path):
    for k in (1, 2):
        (tmp_path / f"f{k}.toml").write_text(layout_text(k), encoding="utf-8")
    rc, out, _ = run(capsys, tmp_path, "--top", "1")
    assert rc == 0
    assert out.count("exhaustive") == 2


def test_subprocess_json(lay_file):
    proc = subprocess.run([sys.executable, "-m", "trayadvisor", "rank", str(lay_file),
                           "--json", "--top", "1"], capture_output=True, text=True,
                          timeout=120, check=False)
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["options"][0]["rank"] == 1


@pytest.mark.skipif(os.name != "posix", reason="SIGINT delivery")
def test_ctrl_c_keeps_the_best_found_so_far(tmp_path):
    p = tmp_path / "big.toml"
    p.write_text(layout_text(7, width=700.0), encoding="utf-8")  # 21!/(7!)^3 ≈ 4e8
    proc = subprocess.Popen([sys.executable, "-m", "trayadvisor", "rank", str(p), "--json",
                             "--top", "2", "--max-exhaustive", "1000000000"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    first = proc.stderr.readline()  # progress appears once the run passes one second
    assert first.startswith("trayadvisor rank:")
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=60)
    assert proc.returncode == 0, err
    data = json.loads(out)
    assert data["stopped_early"] is True and data["method"] == "exhaustive"
    assert len(data["options"]) == 2 and 0 < data["evaluated"] < 399_072_960
    assert "keeping the best found so far" in err
