"""Benchmark of the coupling engine, run by hand: ``python bench/bench_coupling.py``.

Prints medians of repeated timings and ratios against plain baselines measured in the same
run on the same machine:

- sharing solve of 60 parallel conductors (5 feeders × 4 sets) — target < 20 ms — against a
  plain ``numpy.linalg.solve`` of one dense complex system of the same size;
- victim EMF of 20 signal pairs beside them — target < 20 ms;
- per-arrangement cost of the sharing constraint (plan cached, one and batched) against the
  per-arrangement cost of a stray-field evaluation (``analysis.stray_uT``), and
  ``rank_layout`` with solved sharing (the default) against equal shares without coupling
  figures.

The layout is an invented one built here.
"""

from __future__ import annotations

import os
from functools import partial

# One BLAS thread, as the command-line entry points use (trayadvisor/cli/__init__.py).
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import statistics
import sys
import time
from collections.abc import Callable

import numpy as np

from trayadvisor.coupling.constraints import (
    imbalance_constraint,
    induced_voltage_constraint,
    positions_m,
)
from trayadvisor.coupling.sharing import sharing_plan, solve_sharing
from trayadvisor.coupling.victims import induced_emf
from trayadvisor.engine import stray_uT
from trayadvisor.model import Circuit, Conductor, Layout, Tray

REPEATS = 15


def median_s(fn: Callable[[], object], repeats: int = REPEATS, inner: int = 1) -> float:
    fn()  # warm up
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        for _ in range(inner):
            fn()
        times.append((time.perf_counter() - t0) / inner)
    return statistics.median(times)


class _Timed:
    """Wraps a constraint and keeps its call count and time."""

    def __init__(self, inner: Callable) -> None:
        self.inner = inner
        self.reset()

    def reset(self) -> None:
        self.calls, self.seconds = 0, 0.0

    def __call__(self, layout: Layout) -> object:
        t0 = time.perf_counter()
        out = self.inner(layout)
        self.seconds += time.perf_counter() - t0
        self.calls += 1
        return out


def bench_layout(feeders: int = 5, sets: int = 4, victims: int = 20) -> Layout:
    """Feeders of parallel sets in rows on a power tray; signal pairs on a data tray."""
    circuits, cons = [], []
    pitch = 30.0
    for f in range(feeders):
        name = f"W{f + 1}"
        circuits.append(Circuit(name, "ac3", 400.0 * sets, harmonics=((5, 0.15), (7, 0.08))))
        for s in range(sets):
            for k, ph in enumerate(("L1", "L2", "L3")):
                x = 20.0 + pitch * (3 * s + k)
                cons.append(Conductor(f"{name}-{ph}{s}", name, ph, x, 15.0 + 40.0 * f, 28.0,
                                      240.0, "copper"))
    for v in range(victims):
        name = f"Q{v + 1}"
        circuits.append(Circuit(name, "signal", length_m=60.0))
        x = 20.0 + 20.0 * v
        cons.append(Conductor(f"{name}-a", name, "a", x, 260.0, 6.0, fixed=True))
        cons.append(Conductor(f"{name}-b", name, "b", x + 8.0, 262.0, 6.0, fixed=True))
    trays = (Tray("P", 0.0, 0.0, 40.0 + pitch * 3 * sets, 40.0 * feeders + 10.0),
             Tray("D", 0.0, 250.0, 440.0, 20.0))
    return Layout(title="bench", trays=trays, circuits=tuple(circuits), conductors=tuple(cons))


def shuffled(layout: Layout, rng: np.random.Generator, count: int) -> np.ndarray:
    """(count, n, 2) m: the power conductors' positions permuted, victims fixed."""
    xy = positions_m(layout)
    power = np.array([i for i, c in enumerate(layout.conductors) if c.phase != "a"
                      and c.phase != "b"])
    out = np.repeat(xy[None], count, axis=0)
    for b in range(count):
        out[b, power] = xy[rng.permutation(power)]
    return out


def main() -> int:
    lay = bench_layout()
    n_par = sum(1 for c in lay.conductors if c.phase.startswith("L"))
    n_vic = sum(1 for c in lay.circuits if c.system == "signal")
    plan = sharing_plan(lay)
    n_sys = plan.free.size + plan.starts.size
    print(f"layout: {len(lay.conductors)} conductors, {n_par} parallel, {n_vic} victims, "
          f"{plan.orders.size} frequency components, system size {n_sys}")

    rng = np.random.default_rng(7)
    a = rng.normal(size=(n_sys, n_sys)) + 1j * rng.normal(size=(n_sys, n_sys))
    rhs = rng.normal(size=n_sys) + 0j
    t_base = median_s(lambda: np.linalg.solve(a, rhs), inner=50)
    t_share = median_s(lambda: solve_sharing(lay))
    t_emf = median_s(lambda: induced_emf(lay))
    print(f"plain dense solve ({n_sys}×{n_sys} complex): {t_base * 1e6:9.1f} µs  (baseline)")
    print(f"solve_sharing, {n_par} parallel conductors: {t_share * 1e3:9.2f} ms  "
          f"= {t_share / t_base:7.1f}× baseline   target < 20 ms: "
          f"{'ok' if t_share < 0.020 else 'MISSED'}")
    print(f"induced_emf, {n_vic} victims:               {t_emf * 1e3:9.2f} ms  "
          f"= {t_emf / t_base:7.1f}× baseline   target < 20 ms: "
          f"{'ok' if t_emf < 0.020 else 'MISSED'}")

    imb = imbalance_constraint(10.0)
    emf = induced_voltage_constraint(1.0, currents="solved")
    batch = shuffled(lay, rng, 64)
    t_field = median_s(lambda: stray_uT(lay, 500.0))
    t_imb1 = median_s(lambda: imb.value_xy(lay, batch[0]), inner=10)
    t_emf1 = median_s(lambda: emf.value_xy(lay, batch[0]), inner=10)
    t_imbb = median_s(lambda: imb.values_batch(lay, batch)) / batch.shape[0]
    t_emfb = median_s(lambda: emf.values_batch(lay, batch)) / batch.shape[0]
    print(f"per arrangement: stray field at 500 mm     {t_field * 1e3:9.3f} ms  (baseline)")
    for label, t in (("imbalance constraint, one", t_imb1), ("imbalance constraint, batch", t_imbb),
                     ("EMF constraint (solved), one", t_emf1),
                     ("EMF constraint (solved), batch", t_emfb)):
        print(f"  {label:<38}{t * 1e3:9.3f} ms  = {t / t_field:6.2f}× stray field")

    from trayadvisor.ranking.rank import rank_layout

    for feeders, sets in ((1, 2), (2, 2)):
        small = bench_layout(feeders=feeders, sets=sets, victims=2)
        top, reps = 5, 3
        run = partial(rank_layout, small, top_k=top)
        t_plain = median_s(partial(run, currents="equal", coupling_figures=False),
                           repeats=reps)
        t_figs = median_s(partial(run, currents="equal"), repeats=reps)
        t_share = median_s(run, repeats=reps)
        r = rank_layout(small, top_k=top)
        print(f"rank_layout, {feeders * sets * 3} movable conductors, {r.distinct:,} distinct,"
              f" top {top}:")
        print(f"  equal shares, no coupling figures {t_plain * 1e3:8.1f} ms (baseline); "
              f"equal shares with the coupling figures {t_figs * 1e3:8.1f} ms = "
              f"{t_figs / t_plain:5.2f}×; solved sharing (the default) with the figures "
              f"{t_share * 1e3:8.1f} ms = {t_share / t_plain:5.2f}× (target ≤ 3×)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
