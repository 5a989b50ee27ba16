"""Contract tests of `couple FILE [--length-m L] [--temperature-c T] [--json]`."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from trayadvisor.cli.main import main
from trayadvisor.coupling import coupling_summary
from trayadvisor.layoutfile.reader import read_layout

# An invented tray: one feeder in two parallel sets and two instrument pairs beside it.
LAYOUT = (Path(__file__).parent / "data" / "two-sets-signal.toml").read_text(encoding="utf-8")


@pytest.fixture
def layout_file(tmp_path: Path) -> Path:
    p = tmp_path / "tray.toml"
    p.write_text(LAYOUT, encoding="utf-8")
    return p


def run_cli(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_json_shape_and_values_are_the_core_call(capsys, layout_file):
    code, out, err = run_cli(capsys, "couple", str(layout_file), "--length-m", "12", "--json")
    assert code == 0 and err == ""
    data = json.loads(out)
    ref = coupling_summary(read_layout(layout_file), length_m=12.0).to_json()
    assert data == json.loads(json.dumps(ref))
    # docs/json.md shape: keys may be added, never renamed
    v = {x["circuit"]: x for x in data["victims"]}
    assert set(v) == {"S4", "S5"} and "induced_mV_per_m" in v["S4"]
    assert v["S4"]["length_m"] == 35.0  # the circuit's own length_m
    assert v["S5"]["length_m"] == 12.0  # --length-m for circuits without one
    assert v["S5"]["induced_V"] > 0
    assert [h["order"] for h in v["S4"]["harmonics"]] == [1, 5]
    shares = {s["conductor"]: s for s in data["sharing"]}
    assert set(shares) == {f"M1-L{k}{s}" for k in (1, 2, 3) for s in "ab"}  # the two sets
    for s in shares.values():
        assert {"current_a", "angle_deg", "share_pct"} <= set(s)
    for g in data["groups"]:
        assert g["imbalance_pct"] >= 0 and g["reactance_only"] is False
        assert sum(shares[c]["share_pct"] for c in g["conductors"]) >= 100.0 - 1e-9
    assert data["temperature_c"] == 90.0


def test_temperature_changes_the_sharing(capsys, layout_file):
    _, cold, _ = run_cli(capsys, "couple", str(layout_file), "--temperature-c", "20", "--json")
    _, hot, _ = run_cli(capsys, "couple", str(layout_file), "--json")
    a, b = json.loads(cold), json.loads(hot)
    assert a["temperature_c"] == 20.0
    assert a["groups"][0]["imbalance_pct"] != pytest.approx(b["groups"][0]["imbalance_pct"],
                                                            rel=1e-6)


def test_human_output(capsys, layout_file):
    code, out, _ = run_cli(capsys, "couple", str(layout_file), "--earth-y-mm", "-150")
    assert code == 0
    for words in ("S4", "mV/m", "M1-L1a", "share %", "imbalance", "screen/earth loop",
                  "Caution"):
        assert words in out


def test_reactance_only_is_said(capsys, tmp_path):
    p = tmp_path / "noarea.toml"
    p.write_text(LAYOUT.replace("area_mm2 = 185.0\n", ""), encoding="utf-8")
    code, out, _ = run_cli(capsys, "couple", str(p))
    assert code == 0 and "reactance only" in out
    code, out, _ = run_cli(capsys, "couple", str(p), "--json")
    data = json.loads(out)
    assert data["reactance_only"] is True
    assert any("reactance-only" in n for n in data["notes"])


@pytest.mark.parametrize("argv", [["--length-m", "0"], ["--length-m", "-3"],
                                  ["--length-m", "inf"], ["--temperature-c", "nan"],
                                  ["--temperature-c", "900"], ["--earth-y-mm", "nan"]])
def test_bad_options_are_one_clean_line(capsys, layout_file, argv):
    code, out, err = run_cli(capsys, "couple", str(layout_file), *argv)
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    assert argv[0] in err


def test_bad_file_is_one_clean_line(capsys, tmp_path):
    p = tmp_path / "bad.toml"
    p.write_text(LAYOUT.replace('phase = "L2"', 'phase = "x"', 1), encoding="utf-8")
    code, out, err = run_cli(capsys, "couple", str(p), "--json")
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and err.startswith(f"{p}:")
    code, out, err = run_cli(capsys, "couple", str(tmp_path / "missing.toml"))
    assert code == 2 and out == "" and len(err.strip().splitlines()) == 1
