"""Benchmark of plates in the figures; run by hand: ``python bench/bench_plates.py``.

A 600 × 100 mm solid steel sheet tray with a cover (2 mm; μr 200, σ 5.0e6 S/m: typical
values recalled from memory) holding 48 single-core conductors (16 three-phase sets of
240 mm², two rows, 200 A each; an invented layout):

1. cold start: mesh + factorisation + 48 unit solves at 50 Hz through the layout path
   (``field_summary`` of the layout, solvers not yet cached; target < 10 s on 2 cores);
2. an edit that moves one conductor: the next ``field_summary`` with the solver cached —
   one back-substitution for the moved conductor — against the cold start (ratio);
3. the ranking's tables: arrangements scored per second with the plates' complex unit
   tables against the free-space tables of the same space (same run; target: the same
   rate), and the field of random arrangements from the tables against the direct field
   with the plates (agreement);
4. the shielding: the figure below the tray with and without the steel;
5. harmonics: mesh + factorisation of the same tray at 50 Hz to 2.45 kHz (the skin depth
   falls to 0.2 mm, the layers follow), and the factorisation with scipy's default column
   ordering at 650 Hz for comparison (the solver uses a symmetric minimum-degree ordering).

Medians of ``--repeat`` runs where repeatable.
"""

from __future__ import annotations

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import sys
import time
from dataclasses import replace
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "bench"))

from benchutil import median_time  # noqa: E402


def layout(n_sets: int = 16, sheet: str | None = "steel", cover: bool = True):  # noqa: ANN201
    from trayadvisor.model import Circuit, Conductor, Layout, ObservationPoint, Tray

    cons, circuits = [], []
    per_row = 3 * n_sets // 2
    for s in range(n_sets):
        name = f"F{s + 1}"
        circuits.append(Circuit(name, "ac3", current_a=200.0))
        for j, ph in enumerate(("L1", "L2", "L3")):
            k = 3 * s + j
            row, col = divmod(k, per_row)
            cons.append(Conductor(f"{name}-{ph}", name, ph, 14.0 + 24.0 * col,
                                  13.0 + 27.0 * row, 24.0, area_mm2=240.0, tray="T"))
    tray = Tray("T", 0.0, 0.0, 600.0, 100.0, sheet=sheet, sheet_mm=2.0, cover=cover)
    return Layout(title="bench", trays=(tray,), circuits=tuple(circuits),
                  conductors=tuple(cons),
                  points=(ObservationPoint("below", 300.0, -500.0),
                          ObservationPoint("beside", 1100.0, 50.0)))


def clear_caches() -> None:
    import trayadvisor.fem.reaction as r

    r._solvers.clear()
    r._reactions.clear()


def main() -> None:
    from trayadvisor.analysis import field_summary
    from trayadvisor.coupling import plate_sources
    from trayadvisor.ranking.build import build_space
    from trayadvisor.ranking.tables import Tables

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    lay = layout()
    opts = {"currents": "equal"}

    def cold():  # noqa: ANN202
        clear_caches()
        return field_summary(lay, **opts)

    t_cold, s_cold = median_time(cold, args.repeat)
    src = plate_sources(lay)
    solver = src.reaction.solver(50.0)
    print(f"48 conductors, steel sheet tray with cover: cold field_summary (mesh + "
          f"factorisation + 48 unit solves + every figure) {t_cold:.2f} s (target < 10 s); "
          f"{solver.mesh.t.shape[1]:,} triangles, {solver._n:,} unknowns")

    field_summary(lay, **opts)  # warm
    moved = [lay.with_conductor(0, replace(lay.conductors[0],
                                           x_mm=lay.conductors[0].x_mm + 0.5 + k))
             for k in range(args.repeat)]
    it = iter(moved)
    t_edit, _ = median_time(lambda: field_summary(next(it), **opts), args.repeat)
    free_lay = replace(lay, trays=(replace(lay.trays[0], sheet=None, cover=False),))
    t_free, s_free = median_time(lambda: field_summary(free_lay, **opts), args.repeat)
    print(f"an edit moving one conductor: field_summary {t_edit:.3f} s with the solver "
          f"cached ({t_cold / t_edit:.0f}× faster than cold; free space {t_free:.3f} s)")

    t0 = time.perf_counter()
    xy = np.array([[0.3, 0.05]])
    solver.reaction(xy)
    print(f"  one back-substitution (one new position at 50 Hz): "
          f"{1e3 * (time.perf_counter() - t0):.1f} ms")

    small = layout(n_sets=3, cover=True)
    small_free = replace(small, trays=(replace(small.trays[0], sheet=None, cover=False),))
    pts = np.array([[0.3, -0.5], [0.3, -1.0], [1.1, 0.05], [-0.5, 0.05]])
    rng = np.random.default_rng(0)
    rates = {}
    for tag, lay_k in (("plates", small), ("free space", small_free)):
        s_k = plate_sources(lay_k)
        space = build_space(lay_k)
        tables = Tables(space, s_k, pts)
        codes = np.stack([rng.permutation(space.reference()) for _ in range(20000)])
        t, _ = median_time(lambda tables=tables, codes=codes: tables.values(codes),
                           args.repeat)
        rates[tag] = codes.shape[0] / t
        if tag == "plates":
            b_tab = np.sqrt(tables.values(codes[:20]))
            direct = []
            for c in codes[:20]:
                pos = {}
                for kind_id, pos_mm in zip(c, space.positions_mm, strict=True):
                    members = [m for m in space.kinds[kind_id].members
                               if lay_k.conductors[m].name not in pos]
                    if members:
                        pos[lay_k.conductors[members[0]].name] = tuple(pos_mm)
                b = plate_sources(lay_k.with_positions(pos)).field_at(pts)
                direct.append(np.sqrt((np.abs(b) ** 2).sum(axis=(0, 2))).max())
            agree = np.abs(b_tab / np.array(direct) - 1).max()
    print(f"ranking tables, 9 conductors, {pts.shape[0]} points: "
          f"{rates['plates']:,.0f} arrangements/s with the plates, "
          f"{rates['free space']:,.0f} in free space "
          f"(ratio {rates['plates'] / rates['free space']:.2f}); tables against the direct "
          f"field of 20 arrangements: largest difference {agree:.1e}")

    for p_with, p_free in zip(s_cold.places, s_free.places, strict=True):
        print(f"  {p_with.name}: {p_with.max_resultant_uT:.4g} µT with the steel, "
              f"{p_free.max_resultant_uT:.4g} µT without "
              f"(factor {p_with.max_resultant_uT / p_free.max_resultant_uT:.3f})")

    from trayadvisor.fem.reaction import cached_solver

    rx = src.reaction
    for f in (50.0, 250.0, 650.0, 1250.0, 2450.0):
        clear_caches()
        t0 = time.perf_counter()
        s_f = cached_solver(rx.plates, f, rx.extent_m, rx.near_h_m)
        print(f"  {f:6.0f} Hz: mesh + factorisation {time.perf_counter() - t0:.2f} s, "
              f"{s_f._n:,} unknowns")
    import scipy.sparse.linalg as sla

    real_splu = sla.splu
    captured = {}

    def capture(a, **kw):  # noqa: ANN001, ANN003, ANN202
        captured["a"] = a
        return real_splu(a, **kw)

    sla.splu = capture
    clear_caches()
    try:
        cached_solver(rx.plates, 650.0, rx.extent_m, rx.near_h_m)
    finally:
        sla.splu = real_splu
    t0 = time.perf_counter()
    real_splu(captured["a"])
    print(f"  650 Hz with scipy's default ordering: {time.perf_counter() - t0:.2f} s "
          "for the factorisation alone")


if __name__ == "__main__":
    main()
