"""Benchmark of the finite-element plates solver; run by hand: ``python bench/bench_fem.py``.

A 600 × 100 mm solid-bottom steel tray (2 mm bottom and sides; μr 200, σ 5.0e6 S/m: typical
values recalled from memory, check the steel's data) under 24 single-core conductors:

1. mesh + factorisation + 24 unit solves at 50 Hz (target < 5 s on 2 cores), and the
   elements and unknowns;
2. accuracy: the field of a balanced arrangement at 0.5–3 m below and beside the tray,
   against the same solve on a mesh twice as fine (the reference, same run; target 1 %);
3. the shielding it brings: the same field without the tray (closed form).

The layout is invented. Medians of ``--repeat`` runs.
"""

from __future__ import annotations

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "bench"))

from benchutil import median_time  # noqa: E402

MU_R, SIGMA = 200.0, 5.0e6  # typical structural steel, recalled from memory
GROWTH = float(os.environ.get("BENCH_FEM_GROWTH", "0.15"))  # the solver's default


def tray_plates(t: float = 0.002):  # noqa: ANN201
    from trayadvisor.fem import Plate

    return [Plate(-0.002, -t, 0.602, 0.0, MU_R, SIGMA),      # bottom
            Plate(-0.002, 0.0, 0.0, 0.1, MU_R, SIGMA),        # left side
            Plate(0.600, 0.0, 0.602, 0.1, MU_R, SIGMA)]       # right side


def conductors(n: int = 24) -> tuple[np.ndarray, np.ndarray]:
    """n conductors of 24 mm in two rows, phases L1 L2 L3 repeating; currents 200 A."""
    per_row = n // 2
    xs = 0.03 + 0.045 * np.arange(per_row)
    xy = np.array([[x, 0.013 + 0.025 * r] for r in range(2) for x in xs])
    ph = np.exp(-2j * np.pi / 3 * (np.arange(n) % 3))
    return xy, 200.0 * ph


def field(solver, xy, cur, pts):  # noqa: ANN001, ANN201
    g = solver.field(xy, pts)  # (k, m, 2)
    b = np.einsum("k,kmc->mc", cur, g)
    return np.sqrt((np.abs(b) ** 2).sum(axis=1))


def main() -> None:
    from trayadvisor.fem import PlateSolver

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    xy, cur = conductors()
    extent = (-0.05, -0.05, 0.65, 0.15)
    pts = np.array([[0.3, -0.5], [0.3, -1.0], [0.3, -3.0], [1.1, 0.05], [-0.9, -0.5],
                    [0.3, 0.6]])

    def run(fine: float = 1.0):  # noqa: ANN202
        s = PlateSolver(tray_plates(), 50.0, extent, near_h_m=0.01 / fine,
                        growth=GROWTH / fine, plate_refine=fine)
        return s, field(s, xy, cur, pts)

    t, (solver, b) = median_time(run, args.repeat)
    print(f"steel tray, 24 conductors: mesh + factorisation + 24 unit solves {t:.2f} s "
          f"(target < 5 s); {solver.mesh.t.shape[1]:,} triangles, {solver._n:,} unknowns")
    t2 = time.perf_counter()
    fine, b_fine = run(2.0)
    t2 = time.perf_counter() - t2
    err = np.abs(b / b_fine - 1.0)
    print(f"against a mesh twice as fine everywhere ({fine.mesh.t.shape[1]:,} "
          f"triangles, {t2:.1f} s): largest difference {100 * err.max():.2f} % at 0.5-3 m "
          "(target 1 %)")
    k = 2e-7
    b0 = []
    for p in pts:
        d = p[None, :] - xy
        r2 = (d ** 2).sum(axis=1)
        bx = np.sum(-k * cur * d[:, 1] / r2)
        by = np.sum(k * cur * d[:, 0] / r2)
        b0.append(np.sqrt(abs(bx) ** 2 + abs(by) ** 2))
    ratio = b / np.array(b0)
    for p, r, v in zip(pts, ratio, b, strict=True):
        print(f"  point ({p[0]:+.2f}, {p[1]:+.2f}) m: {v * 1e6:.4g} µT with the tray, "
              f"{r:.3f} of free space")


if __name__ == "__main__":
    main()
