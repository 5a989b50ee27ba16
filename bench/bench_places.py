"""Benchmarks of limits judged at places; run by hand: ``python bench/bench_places.py``.

1. The maximum over an area (the demo's quiet room, 16 conductors, 5 frequency components):
   ``place_maxima`` (boundary samples plus refinement) against a plain numpy reference in the
   same run: the AC resultant on a dense grid over the whole closed rectangle (all of it, not
   only the boundary), by broadcasting. Accuracy: the refined value must be at least the
   grid's maximum and within its spacing error.
2. ``field_summary`` of the demo with its areas and place-bound limits, against the same
   layout without them (what places cost a UI refresh).
3. Ranking toward compliance: the demo ranked on the worst index of its place-bound limits
   (the default) against the contour objective, both exhaustive and certified, solved
   sharing; and R18 (6 parallel sets, 17 M arrangements) with a target at a point against
   the contour.

Every timing is the median of ``--repeat`` runs (default 5; the machine is shared). The
layouts are invented.
"""

from __future__ import annotations

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import sys
from dataclasses import replace
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "bench"))

from benchutil import median_time  # noqa: E402

DEMO = ROOT / "layouts" / "demo.toml"




def grid_max_uT(src, area, n: int) -> float:  # noqa: ANN001
    """Plain numpy reference: the AC resultant on an n × n grid over the closed rectangle,
    by broadcasting the long-wire formula (no engine code)."""
    mu0 = 4e-7 * np.pi
    xs = np.linspace(area.x0_mm, area.x1_mm, n) * 1e-3
    ys = np.linspace(area.y0_mm, area.y1_mm, n) * 1e-3
    gx, gy = np.meshgrid(xs, ys)
    px, py = gx.ravel(), gy.ravel()
    total = np.zeros(px.size)
    for h, order in enumerate(src.orders):
        if order == 0:
            continue
        dx = px[:, None] - src.xy_m[None, :, 0]
        dy = py[:, None] - src.xy_m[None, :, 1]
        w = mu0 / (2 * np.pi) / (dx * dx + dy * dy)
        bx = (-dy * w) @ src.currents[h]
        by = (dx * w) @ src.currents[h]
        total += np.abs(bx) ** 2 + np.abs(by) ** 2
    return float(np.sqrt(total.max()) * 1e6)


def bench_area(repeat: int) -> None:
    from trayadvisor.coupling import solved_sources
    from trayadvisor.engine import place_maxima, split_bands
    from trayadvisor.layoutfile.reader import read_layout

    layout = read_layout(DEMO)
    ac, _ = split_bands(solved_sources(layout))
    area = layout.area("quiet room")
    t_ref, ref = median_time(lambda: grid_max_uT(ac, area, 600), max(1, repeat // 2))
    t, found = median_time(lambda: place_maxima(ac, area, [None]), repeat)
    value = found[0][0] * 1e6
    assert value >= ref * (1 - 1e-12), (value, ref)
    print(f"area maximum, demo quiet room: {t * 1e3:.1f} ms, {value:.6f} µT; plain numpy "
          f"600 x 600 grid: {t_ref * 1e3:.0f} ms, {ref:.6f} µT (refined - grid = "
          f"{(value - ref) / ref:.1e} relative); ratio {t_ref / t:.0f}x")


def bench_summary(repeat: int) -> None:
    from trayadvisor.analysis import field_summary
    from trayadvisor.layoutfile.reader import read_layout

    layout = read_layout(DEMO)
    bare = replace(layout, areas=(), limits=tuple(lim for lim in layout.limits
                                                  if not lim.places))
    field_summary(layout)
    t_full, _ = median_time(lambda: field_summary(layout), repeat)
    t_bare, _ = median_time(lambda: field_summary(bare), repeat)
    print(f"field_summary, demo: {t_full * 1e3:.0f} ms with its area and 2 place-bound "
          f"limits, {t_bare * 1e3:.0f} ms without; places cost {t_full / t_bare:.2f}x")


def bench_rank(repeat: int) -> None:
    from bench_rank import feeder

    from trayadvisor.layoutfile.reader import read_layout
    from trayadvisor.model import Limit, ObservationPoint
    from trayadvisor.ranking import rank_layout

    layout = read_layout(DEMO)
    for label, lay in (("demo", layout),
                       ("R18", replace(feeder(6, 30.0), points=(ObservationPoint("desk", 300.0,
                                                                           1200.0),),
                                       limits=(Limit("target", 1.0, places=("desk",)),)))):
        t_lim, r_lim = median_time(lambda lay=lay: rank_layout(lay, top_k=5), repeat)
        t_con, r_con = median_time(lambda lay=lay: rank_layout(lay, top_k=5,
                                                               objective="contour"), repeat)
        print(f"rank {label}: worst index {t_lim:.2f} s ({r_lim.method}, certified "
              f"{r_lim.certified}, best index {r_lim.options[0].max_resultant_uT:.4g} from "
              f"{r_lim.baseline_uT:.4g}); contour {t_con:.2f} s ({r_con.method}, certified "
              f"{r_con.certified}); ratio {t_lim / t_con:.2f}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    bench_area(args.repeat)
    bench_summary(args.repeat)
    bench_rank(max(1, args.repeat // 2))


if __name__ == "__main__":
    main()
