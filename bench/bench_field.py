"""Benchmark of the field engine against magpylib and a plain numpy broadcast (run by hand).

    python bench/bench_field.py [--repeat N] [--quick]

Prints one table per job. The scenario is invented: 20 three-phase sets of single-core
conductors (60 conductors) in two 600 × 100 mm trays side by side, with unequal loads and
small angle errors, observed on a 200 × 100 grid (20 000 points) over 4 m × 2 m.

* field job: the complex phasor field of the 60 conductors at the 20 000 points, by
  - trayadvisor ``phasor_field``;
  - magpylib: two DC problems (real and imaginary parts of the phasors), straight current
    lines from z = −L to +L evaluated at z = 0 (L = 100 km, finite-length error < 1e-8);
    the source objects and the tiled arrays are built before the clock starts, and the
    fastest of its interfaces counts;
  - numpy one-shot broadcast: all (n, m, 2) pair terms in memory, then one contraction.
* memory: 200 conductors × 1 000 000 points, in a fresh subprocess (tracemalloc peak of the
  call and the peak resident set of the whole process).
* threads: 200 conductors × 100 000 points with the chunk pool and with one thread.
* UI budget: 48 conductors; stray field at 0.5 m + far field + clearance for one limit.

Timings are medians over ``--repeat`` runs (the machine is shared: min and median shown).
"""

from __future__ import annotations

import argparse
import os
import platform
import subprocess
import sys
import textwrap
import time
from collections.abc import Callable

import numpy as np

import trayadvisor.engine.field as fieldmod
from trayadvisor.engine.contour import clearance, stray_field
from trayadvisor.engine.field import K_LINE, far_field, phasor_field

PHASES = np.exp(1j * np.deg2rad([0.0, -120.0, 120.0]))


def scenario_sets(n_sets: int, trays: int, seed: int) -> tuple[np.ndarray, np.ndarray,
                                                                np.ndarray]:
    """Flat three-phase sets in 600 × 100 mm trays 100 mm apart: centres, radii, phasors."""
    rng = np.random.default_rng(seed)
    per_tray = int(np.ceil(n_sets / trays))
    xy, cur = [], []
    for k in range(n_sets):
        tray, j = divmod(k, per_tray)
        row, col = divmod(j, 8)
        for p in range(3):
            x = 0.7 * tray + 0.0125 + (3 * col + p) * 0.025
            y = 0.0125 + 0.05 * row
            xy.append((x, y))
            mag = 250.0 * (1.0 + 0.15 * rng.random())
            cur.append(mag * PHASES[p] * np.exp(1j * np.deg2rad(rng.normal(0.0, 2.0))))
    xy_a = np.array(xy)
    return xy_a, np.full(len(xy_a), 0.0115), np.array(cur)


def grid(nx: int, ny: int) -> np.ndarray:
    xs = np.linspace(-1.3, 2.7, nx)
    ys = np.linspace(-0.95, 1.05, ny)
    gx, gy = np.meshgrid(xs, ys)
    return np.column_stack([gx.ravel(), gy.ravel()])


def timed(fn: Callable[[], object], repeat: int) -> tuple[float, float, object]:
    """(median, min) wall time in seconds and the last result."""
    out = fn()  # warm-up
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return float(np.median(times)), float(np.min(times)), out


def numpy_broadcast(xy: np.ndarray, radius: np.ndarray, cur: np.ndarray,
                    pts: np.ndarray) -> np.ndarray:
    """The textbook one-shot version: every pair term in memory, then one contraction."""
    d = pts[None, :, :] - xy[:, None, :]  # (n, m, 2)
    r2 = np.maximum(np.sum(d * d, axis=-1), (radius**2)[:, None])
    g = K_LINE * np.stack([-d[..., 1], d[..., 0]], axis=-1) / r2[..., None]
    return np.einsum("c,cpk->pk", cur, g)


def magpylib_jobs(xy: np.ndarray, cur: np.ndarray, pts: np.ndarray, half_length: float
                  ) -> dict[str, Callable[[], np.ndarray]]:
    import magpylib as magpy

    n, m = len(xy), len(pts)
    obs = np.column_stack([pts, np.zeros(m)])
    parts = (cur.real, cur.imag)
    lines = [[magpy.current.Polyline(current=float(i), vertices=[(x, y, -half_length),
                                                                 (x, y, half_length)])
              for (x, y), i in zip(xy, part, strict=True)] for part in parts]
    colls = [magpy.Collection(*ls) for ls in lines]

    def getb_sumup() -> np.ndarray:
        re, im = (np.asarray(magpy.getB(ls, obs, sumup=True)) for ls in lines)
        return re[:, :2] + 1j * im[:, :2]

    def collection() -> np.ndarray:
        re, im = (np.asarray(c.getB(obs)) for c in colls)
        return re[:, :2] + 1j * im[:, :2]

    jobs = {"magpylib getB(list, sumup=True) x2": getb_sumup,
            "magpylib Collection.getB x2": collection}
    try:
        from magpylib.func import polyline_field
    except ImportError:  # magpylib < 5.2 has no functional interface
        return jobs
    o = np.tile(obs, (n, 1))
    start = np.repeat(np.column_stack([xy, np.full(n, -half_length)]), m, axis=0)
    end = np.repeat(np.column_stack([xy, np.full(n, half_length)]), m, axis=0)
    rep = [np.repeat(part, m) for part in parts]

    def functional() -> np.ndarray:
        re, im = (polyline_field("B", o, start, end, c).reshape(n, m, 3).sum(axis=0)
                  for c in rep)
        return re[:, :2] + 1j * im[:, :2]

    jobs["magpylib func.polyline_field x2"] = functional
    return jobs


MEMORY_CHILD = textwrap.dedent("""
    import resource, sys, time, tracemalloc
    import numpy as np
    from trayadvisor.engine.field import phasor_field

    def peak_rss():
        # VmHWM, reset below: ru_maxrss would keep the parent's peak across fork + exec
        try:
            with open("/proc/self/status") as f:
                return next(int(x.split()[1]) * 1024 for x in f if x.startswith("VmHWM"))
        except OSError:
            return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
    n, m = int(sys.argv[1]), int(sys.argv[2])
    rng = np.random.default_rng(3)
    xy = rng.uniform(-0.3, 0.3, (n, 2)); rad = np.full(n, 0.01)
    cur = rng.normal(size=n) + 1j * rng.normal(size=n)
    pts = rng.uniform(-3.0, 3.0, (m, 2))
    phasor_field(xy, rad, cur, pts[:1000])  # load everything once
    try:
        with open("/proc/self/clear_refs", "w") as f:
            f.write("5")  # reset the peak resident set (Linux)
    except OSError:
        pass
    t0 = time.perf_counter()
    b = phasor_field(xy, rad, cur, pts)
    t = time.perf_counter() - t0
    rss = peak_rss()
    del b
    tracemalloc.start()  # second run: tracemalloc's own book-keeping would inflate the RSS
    b = phasor_field(xy, rad, cur, pts)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    print(peak, rss, t, b.nbytes)
""")


def row(name: str, med: float, best: float, pairs: int, ref: float | None) -> str:
    ratio = "" if ref is None else f"{med / ref:9.1f}x"
    return (f"  {name:<38} {med * 1e3:10.2f} {best * 1e3:10.2f} {pairs / med / 1e6:12.1f}"
            f" {ratio:>10}")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=15)
    ap.add_argument("--quick", action="store_true", help="skip the memory and thread jobs")
    args = ap.parse_args(argv)
    rep = max(3, args.repeat)
    import magpylib
    import scipy

    print(f"python {platform.python_version()}, numpy {np.__version__}, scipy "
          f"{scipy.__version__}, magpylib {magpylib.__version__}; {os.cpu_count()} CPUs, "
          f"load average {os.getloadavg()[0]:.2f}; engine threads {fieldmod._THREADS}")

    # -- field job: 60 conductors x 20 000 points --------------------------------------------
    xy, rad, cur = scenario_sets(20, 2, seed=60)
    pts = grid(200, 100)
    n, m = len(xy), len(pts)
    pairs = n * m
    print(f"\nfield job: {n} conductors x {m} points, complex phasors "
          f"({pairs / 1e6:.2f} M conductor-point evaluations)")
    print(f"  {'method':<38} {'median ms':>10} {'min ms':>10} {'M eval/s':>12} "
          f"{'vs ours':>10}")
    t_ours, b_ours, ours = timed(lambda: phasor_field(xy, rad, cur, pts)[0], rep)
    print(row("trayadvisor phasor_field", t_ours, b_ours, pairs, t_ours))
    t_np, b_np, naive = timed(lambda: numpy_broadcast(xy, rad, cur, pts), max(3, rep // 2))
    print(row("numpy one-shot broadcast", t_np, b_np, pairs, t_ours))
    half_length = 1e5
    mag_best = np.inf
    theirs = None
    for name, job in magpylib_jobs(xy, cur, pts, half_length).items():
        t_mp, b_mp, theirs = timed(job, max(3, rep // 4))
        mag_best = min(mag_best, t_mp)
        print(row(name, t_mp, b_mp, pairs, t_ours))
    dist = np.min(np.hypot(pts[:, None, 0] - xy[None, :, 0], pts[:, None, 1] - xy[None, :, 1])
                  - rad[None, :], axis=1)
    outside = dist > 0.0
    size = np.sqrt(np.sum(np.abs(theirs) ** 2, axis=1))
    err = np.sqrt(np.sum(np.abs(ours - theirs) ** 2, axis=1))[outside] / size[outside]
    err_np = np.max(np.abs(naive - ours)) / np.max(np.abs(ours))
    print(f"  ratio magpylib (fastest) / trayadvisor: {mag_best / t_ours:.0f}x "
          f"(target >= 30x); numpy broadcast / trayadvisor: {t_np / t_ours:.1f}x")
    print(f"  agreement with magpylib at the {outside.sum()} points outside the conductors: "
          f"max relative error {err.max():.1e}; with the broadcast: {err_np:.1e}")

    if not args.quick:
        # -- peak memory: 200 conductors x 1 000 000 points ----------------------------------
        nm, mm = 200, 1_000_000
        res = subprocess.run([sys.executable, "-c", MEMORY_CHILD, str(nm), str(mm)],
                             capture_output=True, text=True, check=True)
        peak, rss, t_big, out_bytes = (float(v) for v in res.stdout.split())
        print(f"\nmemory job: {nm} conductors x {mm} points (fresh process)")
        print(f"  allocated during the call (tracemalloc peak) {peak / 2**20:.0f} MiB, of which "
              f"the result {out_bytes / 2**20:.0f} MiB; peak RSS of the whole process "
              f"(interpreter, numpy, inputs) {rss / 2**20:.0f} MiB; limit 1024 MiB")
        print(f"  time {t_big:.2f} s, {nm * mm / t_big / 1e6:.0f} M eval/s")

        # -- threads over chunks -------------------------------------------------------------
        rng = np.random.default_rng(5)
        xt, rt, ct = scenario_sets(67, 2, seed=7)
        xt, rt, ct = xt[:200], rt[:200], ct[:200]
        pt = rng.uniform(-1.5, 2.5, (100_000, 2))
        saved = fieldmod._THREADS
        t_thr, b_thr, _ = timed(lambda: phasor_field(xt, rt, ct, pt), max(3, rep // 3))
        fieldmod._THREADS = 1
        try:
            t_one, b_one, _ = timed(lambda: phasor_field(xt, rt, ct, pt), max(3, rep // 3))
        finally:
            fieldmod._THREADS = saved
        p2 = len(xt) * len(pt)
        print(f"\nthreads job: {len(xt)} conductors x {len(pt)} points")
        print(row(f"phasor_field, {saved} threads", t_thr, b_thr, p2, t_thr))
        print(row("phasor_field, 1 thread", t_one, b_one, p2, t_thr))

    # -- UI budget: 48 conductors --------------------------------------------------------------
    xu, ru, cu = scenario_sets(16, 1, seed=48)
    env = (0.0, 0.0, 0.6, 0.1)
    limit = 1e-6
    t_sf, b_sf, sf = timed(lambda: stray_field(xu, ru, cu, env, 0.5), rep)
    t_ff, b_ff, _ = timed(lambda: far_field(xu, cu), rep)
    t_cl, b_cl, d = timed(lambda: clearance(xu, ru, cu, env, limit), rep)
    calls = 0
    import trayadvisor.engine.contour as contourmod

    original = contourmod.stray_field

    def counting(*a: object, **k: object) -> object:
        nonlocal calls
        calls += 1
        return original(*a, **k)

    contourmod.stray_field = counting
    try:
        clearance(xu, ru, cu, env, limit)
    finally:
        contourmod.stray_field = original
    print(f"\nUI budget: {len(xu)} conductors, stray field at 0.5 m = {sf.max_T * 1e6:.3f} µT, "
          f"clearance for {limit * 1e6:g} µT = {d:.3f} m ({calls} stray-field evaluations)")
    print(f"  {'step':<38} {'median ms':>10} {'min ms':>10}")
    for name, med, best in (("stray_field (d = 0.5 m)", t_sf, b_sf),
                            ("far_field", t_ff, b_ff),
                            ("clearance (one limit)", t_cl, b_cl)):
        print(f"  {name:<38} {med * 1e3:10.2f} {best * 1e3:10.2f}")
    print(f"  {'total (budget 100 ms)':<38} {(t_sf + t_ff + t_cl) * 1e3:10.2f}")
    print(f"\nload average at the end {os.getloadavg()[0]:.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
