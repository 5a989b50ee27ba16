"""CSV, JSON and Markdown of ranked options: shape, values, atomic writes."""

from __future__ import annotations

import csv
import io
import json
import os

import pytest

from trayadvisor.model import Circuit, Conductor, Layout, Tray
from trayadvisor.output.exports import (
    ExportError,
    export_format,
    result_csv,
    result_json,
    result_markdown,
    write_result,
)
from trayadvisor.ranking.rank import rank_layout


@pytest.fixture(scope="module")
def ranked():
    d = 30.0
    phases = ["L1", "L2", "L3", "L1", "L2", "L3"]
    cons = tuple(Conductor(f"M-{p}{'ab'[i // 3]}", "M", p, 40 + i * d, d / 2, d)
                 for i, p in enumerate(phases))
    lay = Layout(title="Invented | export test", trays=(Tray("T", 0, 0, 400, 80),),
                 circuits=(Circuit("M", "ac3", 800.0),), conductors=cons)
    return lay, rank_layout(lay, top_k=3)


def test_csv_has_a_row_per_option_and_conductor(ranked):
    lay, res = ranked
    rows = list(csv.DictReader(io.StringIO(result_csv(res, lay))))
    assert len(rows) == len(res.options) * len(lay.conductors)
    for o in res.options:
        mine = [r for r in rows if int(r["rank"]) == o.rank]
        assert {r["conductor"] for r in mine} == set(o.positions)
        for r in mine:
            # floats are written in full precision (repr), so they read back exactly
            assert float(r["max_resultant_uT"]) == o.max_resultant_uT
            assert (float(r["x_mm"]), float(r["y_mm"])) == o.positions[r["conductor"]]
            assert r["circuit"] == "M" and r["phase"].startswith("L")
            base = res.baseline_positions[r["conductor"]]
            assert r["moved"] == ("no" if base == o.positions[r["conductor"]] else "yes")


def test_json_is_the_rank_json_shape(ranked):
    lay, res = ranked
    data = json.loads(result_json(res))
    # Source: docs/json.md "rank --json" shape (keys may be added, never renamed).
    for key in ("distance_mm", "method", "evaluated", "options"):
        assert key in data
    first = data["options"][0]
    assert first["rank"] == 1
    assert first["max_resultant_uT"] == res.options[0].max_resultant_uT
    assert {c["name"] for c in first["conductors"]} == {c.name for c in lay.conductors}
    assert set(first["conductors"][0]) >= {"name", "x_mm", "y_mm"}


def test_markdown_lists_options_sketches_and_positions(ranked):
    lay, res = ranked
    text = result_markdown(res, lay.title, lay)
    assert text.startswith("# Ranked arrangements — Invented \\| export test")
    assert text.count("## Option ") == len(res.options)
    assert text.count("```text") == len(res.options)
    assert "| rank | field µT |" in text
    for o in res.options:
        assert f"| {o.rank} | {o.max_resultant_uT:.4g} |" in text
    assert "idealised model" in text and "licensed practice" in text  # the cautions


@pytest.mark.parametrize("name,fmt", [("a.csv", "csv"), ("a.JSON", "json"), ("a.md", "markdown"),
                                      ("a.markdown", "markdown")])
def test_extension_picks_the_format(tmp_path, ranked, name, fmt):
    lay, res = ranked
    path = tmp_path / name
    assert write_result(res, path, lay) == fmt == export_format(path)
    text = path.read_text(encoding="utf-8")
    if fmt == "json":
        assert json.loads(text)["method"] == res.method
    elif fmt == "csv":
        assert text.startswith("rank,max_resultant_uT,")
    assert [p.name for p in tmp_path.iterdir()] == [name]  # no temp file left behind


def test_unknown_extension_writes_nothing(tmp_path, ranked):
    _, res = ranked
    with pytest.raises(ExportError, match=r"^[^-].*a\.xlsx: unknown extension '\.xlsx'; "
                                          r"use \.csv, \.json or \.md"):
        write_result(res, tmp_path / "a.xlsx")
    assert list(tmp_path.iterdir()) == []


def test_failed_write_keeps_the_old_file(tmp_path, ranked, monkeypatch):
    _, res = ranked
    path = tmp_path / "keep.json"
    path.write_text("old", encoding="utf-8")

    def boom(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", boom)
    with pytest.raises(OSError):
        write_result(res, path)
    assert path.read_text(encoding="utf-8") == "old"
    assert [p.name for p in tmp_path.iterdir()] == ["keep.json"]
