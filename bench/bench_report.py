"""Benchmarks of reports and batch runs; run by hand: ``python bench/bench_report.py``.

1. ``trayadvisor report`` on the demo layout, as a fresh process (imports included), and
   ``write_report`` in a warm process. Target: under 5 s.
2. A batch of 100 generated layouts of 12 single-core cables (one three-phase feeder in four
   parallel sets, 12!/(4!^3) = 34650 arrangements) through the ``field`` batch job, on the
   cores available, against the same 100 run serially in this process.
3. The same 100 layouts through the ``rank`` batch job (the command's own options, ranked
   exhaustively), parallel against serial. Target: under 60 s on 2 cores.

Every timing is repeated (``--repeat``, default 3) and the median is printed, with the ratio
serial / parallel measured in the same run. The layouts are an invented set.
"""

from __future__ import annotations

import os

# One BLAS thread, as the command-line entry points use (trayadvisor/cli/__init__.py).
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import random
import statistics
import subprocess
import sys
import tempfile
import time
from functools import partial
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "layouts" / "demo.toml"
sys.path.insert(0, str(ROOT / "bench"))

from benchutil import median_time  # noqa: E402


def layout_text(seed: int) -> str:
    """One invented 12-cable layout: 4 parallel sets of L1/L2/L3 in a row, shuffled."""
    rng = random.Random(seed)
    phases = ["L1", "L2", "L3"] * 4
    rng.shuffle(phases)
    pitch = rng.choice([30.0, 35.0, 40.0])
    out = ['format = "trayadvisor/1"', f'title = "bench case {seed}"', "frequency_hz = 50", "",
           "[[tray]]", 'name = "T1"', "x_mm = 0.0", "y_mm = 0.0",
           f"width_mm = {12 * pitch + 40:.1f}", "depth_mm = 60.0", "",
           "[[circuit]]", 'name = "F1"', 'system = "ac3"',
           f"current_a = {rng.uniform(400, 1600):.1f}"]
    count: dict[str, int] = {}
    for i, ph in enumerate(phases):
        count[ph] = count.get(ph, 0) + 1
        out += ["", "[[conductor]]", f'name = "F1-{ph}{"abcd"[count[ph] - 1]}"',
                'circuit = "F1"', f'phase = "{ph}"', f"x_mm = {20 + pitch * (i + 0.5):.1f}",
                "y_mm = 15.0", "diameter_mm = 28.0"]
    return "\n".join(out) + "\n"


def cli_options(command: str, *argv: str) -> dict:
    """The per-file options a ``field``/``rank`` command line would give its batch jobs."""
    import importlib

    from trayadvisor.cli.main import build_parser

    args = build_parser().parse_args([command, "x.toml", *argv])
    return importlib.import_module(f"trayadvisor.cli.cmd_{command}").options(args)




def bench_report(repeat: int, folder: Path) -> None:
    from trayadvisor.layoutfile.reader import read_layout
    from trayadvisor.output.report import write_report

    out = folder / "demo.html"
    cold, _ = median_time(lambda: subprocess.run(
        [sys.executable, "-m", "trayadvisor", "report", str(DEMO), "--out", str(out)],
        check=True, capture_output=True), repeat)
    layout = read_layout(DEMO)
    write_report(layout, out)  # warm the imports
    warm, _ = median_time(lambda: write_report(layout, out), repeat)
    size = out.stat().st_size
    print(f"report, demo layout: {cold:.2f} s as a new process (median of {repeat}), "
          f"{warm:.2f} s warm; {size / 1024:.0f} KiB; target < 5 s: "
          f"{'met' if cold < 5 else 'NOT met'}")


def bench_batch(kind: str, job, files: list[str], workers: int, repeat: int,  # noqa: ANN001
                target_s: float | None) -> None:
    from trayadvisor.batch import run_files, run_one

    run_one(job, files[0])  # imports and first-call set-up, here and in forked workers
    pars, sers = [], []
    for _ in range(repeat):  # interleaved, so load from other work hits both alike
        t = time.perf_counter()
        res = run_files(job, files, workers=workers)
        pars.append(time.perf_counter() - t)
        t = time.perf_counter()
        res1 = run_files(job, files, workers=1)
        sers.append(time.perf_counter() - t)
    par, ser = statistics.median(pars), statistics.median(sers)
    bad = [r.error for r in res if not r.ok]
    assert not bad, bad[:3]
    assert [r.row for r in res] == [r.row for r in res1], "parallel and serial rows differ"
    if kind == "rank":
        assert {r.row["method"] for r in res} == {"exhaustive"}, "not ranked exhaustively"
    extra = ""
    if kind == "rank":
        methods = {r.row["method"] for r in res}
        evaluated = statistics.median(r.row["evaluated"] for r in res)
        extra = f"; methods {sorted(methods)}, median evaluated {evaluated:.0f}"
    verdict = "" if target_s is None else (
        f"; target < {target_s:g} s: {'met' if par < target_s else 'NOT met'}")
    print(f"{kind} batch, {len(files)} layouts of 12 cables: {par:.2f} s on {workers} "
          f"process(es), {ser:.2f} s serial (medians of {repeat}); serial/parallel = "
          f"{ser / par:.2f}{extra}{verdict}")


def main() -> int:
    from trayadvisor.batch import default_workers, field_job, rank_job

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--files", type=int, default=100)
    ap.add_argument("--workers", type=int, default=default_workers())
    ap.add_argument("--skip-rank", action="store_true")
    a = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        files = []
        for i in range(a.files):
            p = folder / f"case{i:03d}.toml"
            p.write_text(layout_text(i), encoding="utf-8")
            files.append(str(p))
        print(f"{default_workers()} core(s) available; Python {sys.version.split()[0]}")
        bench_report(a.repeat, folder)
        field = partial(field_job, opts=cli_options("field", "--distance-mm", "500"))
        bench_batch("field", field, files, a.workers, a.repeat, None)
        if not a.skip_rank:
            rank = partial(rank_job, opts=cli_options("rank", "--distance-mm", "500"))
            bench_batch("rank", rank, files, a.workers, a.repeat, 60.0)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
