"""Batch `field` and `rank`: parallel runs equal single runs; bad files get error rows."""

from __future__ import annotations

import csv
import io
import json
from dataclasses import replace
from functools import partial
from pathlib import Path

import pytest

from trayadvisor.batch import (
    FIELD_COLUMNS,
    FileResult,
    expand_inputs,
    field_job,
    run_files,
    run_one,
    summary_csv,
)
from trayadvisor.cli.batch_runs import ProgressBar
from trayadvisor.cli.main import main
from trayadvisor.layoutfile import read_layout, write_layout
from trayadvisor.model import Limit

BASE = Path(__file__).parent / "data" / "three-flat.toml"  # one flat ac3 set in a tray


def write_cases(folder: Path, n: int) -> list[Path]:
    """n distinct small layouts (current, spacing, phase order, frequency, limit vary)."""
    folder.mkdir(parents=True, exist_ok=True)
    base = read_layout(BASE)
    tray = replace(base.trays[0], width_mm=400.0)
    paths = []
    for i in range(n):
        a, b, c = base.conductors
        order = ("L2", "L3") if i % 2 == 0 else ("L3", "L2")
        cons = (a.moved(30.0, 15.0), replace(b.moved(70.0 + 3 * i, 15.0), phase=order[0]),
                replace(c.moved(140.0 + 11 * i, 15.0), phase=order[1]))
        layout = replace(base, title=f"batch case {i}", frequency_hz=50.0 if i % 3 else 60.0,
                         trays=(tray,), conductors=cons,
                         circuits=(replace(base.circuits[0], current_a=100.0 + 37.0 * i),),
                         limits=(Limit("target", 0.5 + i),))
        p = folder / f"case{i:02d}.toml"
        write_layout(layout, p)
        paths.append(p)
    return paths


def single_json(capsys, path: Path, *extra: str) -> dict:
    assert main(["field", str(path), "--json", *extra]) == 0
    return json.loads(capsys.readouterr().out)


@pytest.mark.parametrize("mode", ["adaptive", "workers"])
def test_batch_of_20_equals_20_single_runs(tmp_path, capsys, monkeypatch, mode):
    if mode == "workers":  # every file in the process pool, none in this process
        import trayadvisor.cli.batch_runs as batch_runs

        monkeypatch.setattr(batch_runs, "run_files", partial(run_files, serial_first_s=0.0))
    paths = write_cases(tmp_path / "in", 20)
    out = tmp_path / "summary.csv"
    assert main(["field", str(tmp_path / "in"), "--distance-mm", "300", "--at", "100,400",
                 "--out", str(out), "--json"]) == 0
    batch = json.loads(capsys.readouterr().out)
    assert [b["file"] for b in batch] == [str(p) for p in paths]
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8"))))
    assert tuple(rows[0]) == FIELD_COLUMNS
    for b, row, p in zip(batch, rows, paths, strict=True):
        one = single_json(capsys, p, "--distance-mm", "300", "--at", "100,400")
        assert b["error"] is None
        assert {k: v for k, v in b.items() if k not in ("file", "error")} == one
        assert row["file"] == str(p) and row["status"] == "ok" and row["error"] == ""
        assert float(row["max_resultant_uT"]) == one["max_resultant_uT"]  # full precision
        assert float(row["max_at_x_mm"]) == one["max_at_mm"][0]
        assert int(row["far_field_order"]) == one["far_field_order"]
        assert int(row["limits_failed"]) == sum(not x["pass"] for x in one["limits"])


def test_bad_file_gets_error_row_others_complete_exit_2(tmp_path, capsys):
    paths = write_cases(tmp_path / "in", 5)
    bad = tmp_path / "in" / "case02.toml"
    bad.write_text(bad.read_text(encoding="utf-8").replace("depth_mm = 60.0",
                                                          "depth_mm = 0.0"), encoding="utf-8")
    bad_line = bad.read_text(encoding="utf-8").splitlines().index("depth_mm = 0.0") + 1
    out = tmp_path / "summary.csv"
    assert main(["field", *map(str, paths), "--out", str(out)]) == 2
    captured = capsys.readouterr()
    err_lines = captured.err.strip().splitlines()
    assert len(err_lines) == 1 and err_lines[0].startswith(f"{bad}:{bad_line}: ")
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8"))))
    assert [r["status"] for r in rows] == ["ok", "ok", "error", "ok", "ok"]
    assert rows[2]["error"] == err_lines[0] and rows[2]["max_resultant_uT"] == ""
    assert all(float(r["max_resultant_uT"]) > 0 for r in rows if r["status"] == "ok")
    assert "wrote" in captured.out


def test_human_output_one_line_per_file_in_order(tmp_path, capsys):
    paths = write_cases(tmp_path, 3)
    assert main(["field", *map(str, reversed(paths))]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert [ln.split(":")[0] for ln in lines[:3]] == [str(p) for p in reversed(paths)]
    assert "µT at 500 mm" in lines[0] and lines[3].startswith("Caution")


def test_json_lists_errors_with_file_and_error_keys(tmp_path, capsys):
    good = write_cases(tmp_path, 1)[0]
    missing = tmp_path / "nope.toml"
    assert main(["field", str(good), str(missing), "--json"]) == 2
    data = json.loads(capsys.readouterr().out)
    assert data[0]["error"] is None and data[0]["max_resultant_uT"] > 0
    assert data[1] == {"file": str(missing), "error": f"{missing}:0: no such file; check the path"}


@pytest.mark.parametrize("case", ["empty folder", "not csv", "no folder", "bad option"])
def test_batch_bad_arguments_write_nothing(tmp_path, capsys, case):
    paths = write_cases(tmp_path / "in", 2)
    args = ["field", *map(str, paths), "--out", str(tmp_path / "s.csv")]
    if case == "empty folder":
        (tmp_path / "empty").mkdir()
        args = ["field", str(tmp_path / "empty"), "--out", str(tmp_path / "s.csv")]
    elif case == "not csv":
        args[-1] = str(tmp_path / "s.txt")
    elif case == "no folder":
        args[-1] = str(tmp_path / "missing" / "s.csv")
    else:
        args += ["--distance-mm", "-5"]
    assert main(args) == 2
    assert capsys.readouterr().err.count("\n") == 1
    assert not list(tmp_path.glob("s.*")) and not (tmp_path / "missing").exists()


def test_run_files_pool_and_serial_agree_and_report_progress(tmp_path):
    paths = [str(p) for p in write_cases(tmp_path, 4)] + [str(tmp_path / "gone.toml")]
    job = partial(field_job, opts={"distance_mm": 200.0, "at": [], "limits": []})
    seen: list[tuple[int, int]] = []
    pooled = run_files(job, paths, workers=2, progress=lambda d, t, r: seen.append((d, t)),
                       serial_first_s=0.0)  # workers from the start
    serial = run_files(job, paths, workers=1)
    adaptive = run_files(job, paths, workers=2)  # quick files: stays in this process
    assert pooled == serial == adaptive
    assert sorted(seen) == [(i, 5) for i in range(1, 6)]
    assert [r.ok for r in pooled] == [True] * 4 + [False]


def test_slow_files_go_to_workers(tmp_path, monkeypatch):
    import trayadvisor.batch as batch

    paths = [str(p) for p in write_cases(tmp_path, 6)]
    used: list[int] = []
    real = batch._run_pool
    monkeypatch.setattr(batch, "WORKER_START_S", 0.0)  # as if workers started instantly
    monkeypatch.setattr(batch, "_run_pool", lambda job, f, res, done, n, prog: (
        used.append(done), real(job, f, res, done, n, prog)))
    job = partial(field_job, opts={"distance_mm": 200.0, "at": [], "limits": []})
    res = run_files(job, paths, workers=2, serial_first_s=1e-9)
    assert used == [1]  # one file here, the other five in the pool
    assert res == run_files(job, paths, workers=1)


def _explode(layout, opts):  # a job that fails on one layout
    if layout.title == "batch case 1":
        raise RuntimeError("engine limit")
    return field_job(layout, opts)


def test_a_failing_computation_is_an_error_row_not_a_crash(tmp_path):
    paths = [str(p) for p in write_cases(tmp_path, 3)]
    res = run_files(partial(_explode, opts={"distance_mm": 100.0, "at": [], "limits": []}),
                    paths, workers=1)
    assert [r.ok for r in res] == [True, False, True]
    assert res[1].error == f"{paths[1]}:0: could not compute (RuntimeError: engine limit)"
    text = summary_csv(res, FIELD_COLUMNS)
    assert text.splitlines()[2].startswith(f"{paths[1]},error,")


def test_expand_inputs_and_run_one(tmp_path):
    write_cases(tmp_path / "d", 3)
    (tmp_path / "d" / "notes.txt").write_text("x")
    got = expand_inputs([str(tmp_path / "d"), "x.toml"])
    assert got == [str(tmp_path / "d" / f"case{i:02d}.toml") for i in range(3)] + ["x.toml"]
    r = run_one(partial(field_job, opts={"distance_mm": 0.0, "at": [], "limits": []}), got[0])
    assert r.ok and r.row["distance_mm"] == 0.0


def test_progress_bar_draws_only_on_a_terminal():
    class Tty(io.StringIO):
        def isatty(self) -> bool:
            return True

    quiet, live = io.StringIO(), Tty()
    for stream in (quiet, live):
        bar = ProgressBar(2, stream)
        bar(1, 2, FileResult("a.toml"))
        bar(2, 2, FileResult("b.toml", "b.toml:1: bad"))
        bar.close()
    assert quiet.getvalue() == ""
    assert "2/2 (1 failed)" in live.getvalue() and "[" + "#" * 30 + "]" in live.getvalue()


def test_rank_batch_equals_single_runs(tmp_path, capsys):
    paths = write_cases(tmp_path / "in", 4)
    out = tmp_path / "rank.csv"
    code = main(["rank", *map(str, paths), "--out", str(out), "--json"])
    batch = json.loads(capsys.readouterr().out)
    assert code == 0
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8"))))
    assert tuple(rows[0]) == ("file", "status", "error", "method", "evaluated", "baseline_uT",
                              "best_uT", "reduction_pct", "unit", "baseline", "best")
    for b, row, p in zip(batch, rows, paths, strict=True):
        assert main(["rank", str(p), "--json"]) == 0
        one = json.loads(capsys.readouterr().out)
        timing = ("file", "error", "elapsed_s")  # elapsed_s: wall time, differs run to run
        assert {k: v for k, v in b.items() if k not in timing} == {
            k: v for k, v in one.items() if k != "elapsed_s"}
        assert float(row["best_uT"]) == one["options"][0]["max_resultant_uT"]
        assert row["unit"] == "µT" and float(row["best"]) == one["options"][0]["value"]
        assert row["method"] == one["method"] and int(row["evaluated"]) == one["evaluated"]


def test_field_batch_has_one_column_per_place_bound_limit(tmp_path, capsys):
    demo = Path(__file__).resolve().parents[1] / "layouts" / "demo.toml"
    other = write_cases(tmp_path / "in", 1)[0]
    out = tmp_path / "field.csv"
    assert main(["field", str(demo), str(other), "--out", str(out)]) == 0
    capsys.readouterr()
    rows = list(csv.DictReader(io.StringIO(out.read_text(encoding="utf-8"))))
    assert main(["field", str(demo), "--json"]) == 0
    one = json.loads(capsys.readouterr().out)
    # Source: the single-file `field --json` of the same layout.
    want = {f"index:{q['name']}@{p['name']}": q["index"]
            for p in one["places"] for q in p["limits"]}
    assert set(want) == {"index:quiet-room target@quiet room",
                         "index:implant wearers@quiet room"}
    for key, value in want.items():
        assert float(rows[0][key]) == value
        assert rows[1][key] == ""  # the other file has no such limit
    assert int(rows[0]["place_limits_failed"]) == sum(
        1 for p in one["places"] for q in p["limits"] if not q["passes"])
    assert float(rows[0]["dc_max_uT"]) == one["dc_max_uT"]
