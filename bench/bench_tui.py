"""Terminal UI latency, run by hand: ``python bench/bench_tui.py [--presses N] [--starts N]``.

1. Edit latency: on a 48-conductor layout in the Field view at 120x40, the time from a key
   press that moves a conductor until the readouts (stray field at d, peak, far-field order)
   and the map for the new model are painted; and until the chosen limit's verdict and
   clearance are in as well. Target: median under 100 ms.
2. Start: wall time from launching ``python`` until the first frame is painted, and until
   the first readouts are on screen. Target: first paint under 1.5 s.

Prints medians and the ratio to the target. The layout is an invented one (four feeders of
four parallel sets each of 240 mm² copper, flat in one wide tray); every figure uses the
solved current sharing (the default), which is re-solved after every move.
"""

from __future__ import annotations

import os

# One BLAS thread, as the command-line entry points use (trayadvisor/cli/__init__.py).
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import asyncio
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from textual import events

from trayadvisor.layoutfile import write_layout
from trayadvisor.layoutfile.reader import validate_layout
from trayadvisor.model import Circuit, Conductor, Layout, Limit, Tray

SIZE = (120, 40)
TARGET_EDIT_S = 0.100
TARGET_START_S = 1.5


def layout_48() -> Layout:
    """4 feeders x 4 parallel sets x L1 L2 L3 = 48 conductors, 28 mm, in a 1400 mm tray."""
    circuits = tuple(Circuit(f"F{k + 1}", "ac3", 400.0 + 50.0 * k,
                             harmonics=((5, 0.2), (7, 0.1)) if k % 2 else ())
                     for k in range(4))
    cons = []
    for k in range(4):
        for s in range(4):
            for p in ("L1", "L2", "L3"):
                i = len(cons)
                # 240 mm² copper (a typical size, from memory): R' enters the sharing
                cons.append(Conductor(f"F{k + 1}-{p}{'abcd'[s]}", f"F{k + 1}", p,
                                      15.0 + 29.0 * i, 45.0, 28.0, 240.0, "copper"))
    lay = Layout("bench: 48 conductors", 50.0, (Tray("W1", 0.0, 0.0, 1400.0, 100.0),),
                 circuits, tuple(cons), limits=(Limit("target", 2.0, "bench"),))
    validate_layout(lay)
    return lay


async def edit_latency(path: Path, presses: int) -> tuple[list[float], list[float]]:
    from trayadvisor.tui import make_app
    from trayadvisor.tui.widgets.canvas import SectionCanvas

    app = make_app(path)
    readout, full = [], []
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("2")
        for _ in range(3):
            await app.workers.wait_for_complete()
            await pilot.pause()
        view = app.screen
        canvas = view.query_one(SectionCanvas)
        for k in range(presses):
            key = "up" if k % 2 == 0 else "down"
            gen0 = app.document.generation
            t0 = time.perf_counter()
            app.post_message(events.Key(key, None))
            t_read = None
            while True:
                await asyncio.sleep(0.0005)
                shown = (app.document.generation != gen0
                         and app.summary_key == app.analysis_key() and view.map_current
                         and canvas.is_painted)
                if shown and t_read is None:
                    t_read = time.perf_counter() - t0
                if shown and not app.results_pending():
                    break
                if time.perf_counter() - t0 > 5:
                    raise RuntimeError("no refresh within 5 s")
            readout.append(t_read)
            full.append(time.perf_counter() - t0)
            await app.workers.wait_for_complete()
            await pilot.pause()
        s = app.summary
        print(f"current model of the readouts: {s.currents}; "
              f"{sum(1 for c in s.conductor_currents if c.order == 1)} conductors; "
              + "; ".join(s.notes))
    return readout, full


_CHILD = """
import sys, time
t_launch = float(sys.argv[1])
from trayadvisor.tui import make_app
app = make_app(sys.argv[2] if len(sys.argv) > 2 else None)
marks = {}

async def auto(pilot):
    marks["paint"] = time.time() - t_launch
    while app.summary is None:
        await pilot.pause(0.005)
    await pilot.pause()
    marks["readout"] = time.time() - t_launch
    app.exit()

app.run(headless=True, size=(120, 40), auto_pilot=auto)
print(marks["paint"], marks["readout"])
"""


def start_times(starts: int, path: Path | None) -> tuple[list[float], list[float]]:
    paint, readout = [], []
    for _ in range(starts):
        args = [sys.executable, "-c", _CHILD, repr(time.time())]
        if path is not None:
            args.append(str(path))
        out = subprocess.run(args, capture_output=True, text=True, check=True)
        a, b = (float(v) for v in out.stdout.split()[-2:])
        paint.append(a)
        readout.append(b)
    return paint, readout


def report(name: str, values: list[float], target: float) -> None:
    med = statistics.median(values)
    print(f"{name:<44} median {med * 1e3:7.1f} ms  (min {min(values) * 1e3:.1f}, "
          f"max {max(values) * 1e3:.1f}, n={len(values)})  {med / target:.2f} x target "
          f"{target * 1e3:.0f} ms")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--presses", type=int, default=40)
    ap.add_argument("--starts", type=int, default=5)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "bench48.toml"
        write_layout(layout_48(), path)
        readout, full = asyncio.run(edit_latency(path, args.presses))
        report("key -> readouts + map painted (48, 120x40)", readout, TARGET_EDIT_S)
        report("key -> ... + limit verdict and clearance", full, TARGET_EDIT_S)
        paint, first = start_times(args.starts, None)
        report("start -> first paint (demo)", paint, TARGET_START_S)
        report("start -> first readouts (demo)", first, TARGET_START_S)
        paint48, _ = start_times(args.starts, path)
        report("start -> first paint (48 conductors)", paint48, TARGET_START_S)


if __name__ == "__main__":
    main()
