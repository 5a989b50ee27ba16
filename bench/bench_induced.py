"""Benchmarks of cable screens and passive loops; run by hand: ``python bench/bench_induced.py``.

1. Accuracy: three 240 mm² cables in trefoil with screens bonded at both ends against the
   IEC 60287-1-1 formulas (circulating current I·X/sqrt(Rs² + X²), λ1), computed here.
2. ``solve_sharing`` of R12 (4 parallel sets of 240 mm² copper in a row) with screens bonded
   at both ends against the same layout without screens (the reference, same run).
3. Ranking R12 (34 650 arrangements, exhaustive, certified) with screens bonded at both ends
   (every arrangement solved in full: a screen moves with its core) against without screens
   (one impedance inverse and small solves per arrangement).

Medians of ``--repeat`` runs (default 5; the machine is shared). Invented layouts; cable
data are typical values recalled from memory.
"""

from __future__ import annotations

import os

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import argparse
import math
import sys
from dataclasses import replace
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "bench"))

from benchutil import median_time  # noqa: E402


def screened(lay, bonding: str = "both-ends"):  # noqa: ANN001, ANN201
    cons = tuple(replace(c, area_mm2=240.0, material="copper", screen_area_mm2=35.0,
                         screen_diameter_mm=24.0) for c in lay.conductors)
    circs = tuple(replace(c, screen_bonding=bonding) for c in lay.circuits)
    return replace(lay, conductors=cons, circuits=circs)


def r12_pair():  # noqa: ANN201
    """R12 (4 parallel sets of 240 mm² copper) without screens, and with screens bonded at
    both ends."""
    from bench_rank import feeder

    base = feeder(4, 30.0)
    bare = replace(base, conductors=tuple(replace(c, area_mm2=240.0, material="copper")
                                          for c in base.conductors))
    return bare, screened(base)


def bench_accuracy() -> None:
    from trayadvisor.coupling import solve_sharing
    from trayadvisor.coupling.resistance import ac_resistance_per_m, resistance_per_m
    from trayadvisor.model import Circuit, Conductor, Layout, Tray

    s, h = 40.0, 40.0 * math.sqrt(3) / 2
    cons = tuple(Conductor(n, "M", p, x, y, 38.0, 240.0, "copper", screen_area_mm2=25.0,
                           screen_diameter_mm=30.0)
                 for n, p, x, y in (("a", "L1", 100, 25), ("b", "L2", 140, 25),
                                    ("c", "L3", 120, 25 + h)))
    lay = Layout(trays=(Tray("T", 0, 0, 400, 120),),
                 circuits=(Circuit("M", "ac3", 400.0, screen_bonding="both-ends"),),
                 conductors=cons)
    res = solve_sharing(lay)
    w = 2 * math.pi * 50
    x = 2 * w * 1e-7 * math.log(2 * s / 30.0)
    rs = 1.7241e-8 * (1 + 3.93e-3 * 70) / 25e-6
    r = float(ac_resistance_per_m(resistance_per_m(240.0, "copper", 90.0), 50.0))
    want_i = 400 * x / math.sqrt(rs * rs + x * x)
    want_l = (rs / r) / (1 + (rs / x) ** 2)
    f = res.screens[0]
    print(f"trefoil, screens bonded at both ends: I_s {f.current_a:.6f} A (IEC 60287-1-1 "
          f"{want_i:.6f}, rel {abs(f.current_a / want_i - 1):.1e}); λ1 {f.loss_factor:.6f} "
          f"(IEC {want_l:.6f}, rel {abs(f.loss_factor / want_l - 1):.1e})")


def bench_solve(repeat: int) -> None:
    from trayadvisor.coupling import solve_sharing

    bare, lay = r12_pair()
    solve_sharing(lay)
    t_s, _ = median_time(lambda: solve_sharing(lay), repeat)
    t_b, _ = median_time(lambda: solve_sharing(bare), repeat)
    print(f"solve_sharing R12: {t_s * 1e3:.2f} ms with 12 screens bonded at both ends, "
          f"{t_b * 1e3:.2f} ms without; ratio {t_s / t_b:.2f}")


def bench_rank(repeat: int) -> None:
    from trayadvisor.ranking import rank_layout

    bare, lay = r12_pair()
    t_s, r_s = median_time(lambda: rank_layout(lay, top_k=5), repeat)
    t_b, r_b = median_time(lambda: rank_layout(bare, top_k=5), repeat)
    print(f"rank R12 with screens: {t_s:.2f} s ({r_s.method}, certified {r_s.certified}, "
          f"{r_s.evaluated:,} evaluated, best {r_s.options[0].max_resultant_uT:.4g} µT, "
          f"screen and loop loss {r_s.options[0].figures.get('induced_loss_w_per_m', 0):.3g}"
          f" W/m); without screens {t_b:.2f} s ({r_b.method}, certified {r_b.certified}, "
          f"best {r_b.options[0].max_resultant_uT:.4g} µT); ratio {t_s / t_b:.1f}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    bench_accuracy()
    bench_solve(args.repeat)
    bench_rank(max(1, args.repeat // 2))


if __name__ == "__main__":
    main()
