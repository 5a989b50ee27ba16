"""Ranking benchmark (run by hand): ``python bench/bench_rank.py [--quick]``.

Cases (invented layouts, one ac3 feeder of parallel sets in a 600 × 100 mm tray):

- R12: 4 sets, 12 cables in a flat row, 34 650 distinct arrangements — exhaustive, < 1 s;
- R18: 6 sets, 18 cables, 17 153 136 distinct — exhaustive with solved sharing (every
  arrangement's own currents) in at most 3 times the time with equal shares, certified,
  for conductors without a size (reactance only) and for 240 mm² copper; the heuristic
  reaching the same optimum in < 5 s;
- R48: 16 sets, 48 cables in two layers — heuristic within 1 % of the best found by a run
  ten times longer, in < 10 s: solved sharing without a size and with 240 mm² copper,
  and equal shares.

Every figure is the median of several repeats (the machine is shared). The reference for
speed is a plain baseline measured in the same run: arrangements scored one by one with
:func:`trayadvisor.engine.field.phasor_field` on the same points.
"""

from __future__ import annotations

import os

# One BLAS thread, as the command-line entry points use (trayadvisor/cli/__init__.py).
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import statistics
import time
from dataclasses import replace

import numpy as np

from trayadvisor.engine.currents import MM, layout_sources
from trayadvisor.engine.field import phasor_field, resultant_rms
from trayadvisor.model import Circuit, Conductor, Layout, Tray
from trayadvisor.ranking.build import build_space
from trayadvisor.ranking.objective import make_objective
from trayadvisor.ranking.rank import rank_layout


def feeder(n_sets: int, d: float, layers: int = 1) -> Layout:
    """An invented feeder: ``n_sets`` parallel sets, phases repeating L1 L2 L3 along rows."""
    per_row = 3 * n_sets // layers
    x0 = 0.5 * (600.0 - per_row * d) + 0.5 * d
    cons = []
    for k in range(3 * n_sets):
        row, i = divmod(k, per_row)
        ph = ("L1", "L2", "L3")[k % 3]
        cons.append(Conductor(f"F-{ph}-{k // 3 + 1:02d}", "F", ph, x0 + i * d,
                              0.5 * d + row * d, d))
    return Layout(title=f"bench {3 * n_sets}", trays=(Tray("T", 0.0, 0.0, 600.0, 100.0),),
                  circuits=(Circuit("F", "ac3", 250.0 * n_sets),), conductors=tuple(cons))


def plain_rate(lay: Layout, n: int = 300, repeats: int = 3) -> float:
    """Arrangements per second scored one by one with phasor_field (the baseline)."""
    src = layout_sources(lay)
    pts = make_objective(lay, 500.0, None, src).search_m
    space = build_space(lay)
    rng = np.random.default_rng(0)
    names = [c.name for c in lay.conductors]
    codes = [rng.permutation(space.reference()) for _ in range(n)]
    xys = []
    for a in codes:
        pos = space.positions_of(a, lay)
        xys.append(np.array([pos[nm] for nm in names]) * MM)
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        for xy in xys:
            resultant_rms(phasor_field(xy, src.radius_m, src.currents, pts)).max()
        times.append(time.perf_counter() - t0)
    return n / statistics.median(times)


def timed(repeats: int, **kw):  # noqa: ANN003
    runs = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        res = rank_layout(**kw)
        runs.append((time.perf_counter() - t0, res))
    runs.sort(key=lambda r: r[0])
    return runs[len(runs) // 2]


def line(name: str, text: str, ok: bool) -> None:
    print(f"{name:<5} {text}  [{'ok' if ok else 'MISSED'}]")


def with_area(lay: Layout, area_mm2: float) -> Layout:
    """The same layout with copper conductors of ``area_mm2`` (resistance enters sharing)."""
    return lay.with_conductors([replace(c, area_mm2=area_mm2, material="copper")
                                for c in lay.conductors])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="one repeat, shorter long run")
    args = ap.parse_args()
    rep = 1 if args.quick else 3

    r12 = feeder(4, 30.0)
    el, res = timed(rep, layout=r12, top_k=5)
    base = plain_rate(r12)
    rate = res.evaluated / el
    line("R12", f"exhaustive {res.evaluated:,} of {res.distinct:,} in {el:.3f} s "
         f"(median of {rep}): {rate:,.0f} arr/s; plain one-by-one {base:,.0f} arr/s; "
         f"ratio {rate / base:,.0f}x", el < 1.0 and res.evaluated == 34_650)

    r18 = feeder(6, 30.0)
    base = plain_rate(r18)
    for label, lay in (("no area", r18), ("240 Cu", with_area(r18, 240.0))):
        el_eq, eq = timed(rep, layout=lay, top_k=5, currents="equal")
        el, exact = timed(rep, layout=lay, top_k=5)
        rate = exact.evaluated / el
        line("R18", f"{label}: exhaustive solved {exact.evaluated:,} of {exact.distinct:,} "
             f"in {el:.2f} s vs --equal-shares {el_eq:.2f} s: ratio {el / el_eq:.2f}x "
             f"(target <= 3x); {rate:,.0f} arr/s, plain one-by-one (equal shares) "
             f"{base:,.0f} arr/s; optimum {exact.options[0].max_resultant_uT:.6g} µT "
             f"(certified {exact.certified})",
             el <= 3.0 * el_eq and exact.certified and eq.certified)
    el, exact = timed(rep, layout=r18, top_k=5)
    best = exact.options[0].max_resultant_uT
    hits, times = 0, []
    for seed in range(rep * 2):
        t0 = time.perf_counter()
        heur = rank_layout(r18, top_k=5, max_exhaustive=0, seed=seed)
        times.append(time.perf_counter() - t0)
        hits += heur.options[0].max_resultant_uT <= best * (1 + 1e-9)
    el = statistics.median(times)
    line("R18", f"heuristic: same optimum in {hits} of {len(times)} seeds, median "
         f"{el:.2f} s, gap {100 * (heur.options[0].max_resultant_uT / best - 1):.3g} % "
         f"(last seed)", hits == len(times) and el < 5.0)

    r48 = feeder(16, 24.0, layers=2)
    for label, lay, currents in (("no area", r48, "solved"),
                                 ("240 Cu", with_area(r48, 240.0), "solved"),
                                 ("equal shares", r48, "equal")):
        times, vals = [], []
        for seed in range(rep):
            t0 = time.perf_counter()
            heur = rank_layout(lay, top_k=5, seed=seed, currents=currents)
            times.append(time.perf_counter() - t0)
            vals.append(heur.options[0].max_resultant_uT)
        el = statistics.median(times)
        long_budget = (2.0 if args.quick else 10.0) * max(times)
        long = rank_layout(lay, top_k=5, seed=99, budget_s=long_budget, patience=10**9,
                           currents=currents)
        ref = min(long.options[0].max_resultant_uT, *vals)
        gaps = [100 * (v / ref - 1) for v in vals]
        line("R48", f"{label}, {currents}: heuristic ({heur.distinct:.3g} distinct): median "
             f"{el:.2f} s, {heur.evaluated:,} scored; best {min(vals):.5g} µT, worst "
             f"{max(vals):.5g} µT vs {ref:.5g} µT from a {long_budget:.0f} s run: worst gap "
             f"{max(gaps):.3g} %; baseline {long.baseline_uT:.4g} µT",
             el < 10.0 and max(gaps) <= 1.0)


if __name__ == "__main__":
    main()
