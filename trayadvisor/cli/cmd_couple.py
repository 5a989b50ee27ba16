"""``trayadvisor couple FILE``: EMF in victim signal loops and current sharing."""

from __future__ import annotations

import argparse
import math

from trayadvisor.cli.common import (
    UserError,
    add_temperature,
    current_model,
    load,
    positive,
    print_json,
    temperature,
)
from trayadvisor.coupling import CouplingSummary, coupling_summary
from trayadvisor.engine.units import NH
from trayadvisor.model import Layout
from trayadvisor.output import CAUTION_LINE, fmt_fixed, plain


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("couple", help="EMF induced in signal loops; current sharing between "
                       "parallel conductors")
    p.add_argument("file", metavar="FILE", help="layout file")
    p.add_argument("--length-m", type=float, default=None, metavar="L",
                   help="run length (m) for signal circuits that give no length_m")
    add_temperature(p)
    p.add_argument("--earth-y-mm", type=float, default=None, metavar="Y",
                   help="height of an earth reference plane (mm): also report the "
                   "screen/earth loop of each signal pair")
    p.add_argument("--equal-shares", action="store_true",
                   help="victim EMF with equal shares between parallel conductors (default: "
                   "the solved sharing)")
    p.add_argument("--json", action="store_true", help="print the figures as JSON")
    p.set_defaults(run=run)


def options(args: argparse.Namespace) -> dict:
    """Validated keyword arguments for :func:`trayadvisor.coupling.coupling_summary`."""
    if args.length_m is not None:
        positive("--length-m", args.length_m)
    t = temperature(args)
    if args.earth_y_mm is not None and not math.isfinite(args.earth_y_mm):
        raise UserError(f"--earth-y-mm {args.earth_y_mm}: must be a finite height in mm")
    return {"length_m": args.length_m, "temperature_c": t, "earth_y_mm": args.earth_y_mm,
            "currents": current_model(args)}


def _g(v: float | None, digits: int = 3) -> str:
    if v is None:
        return "-"
    return f"{v:.{digits}g}" if v != 0 else "0"


def render(path: str, layout: Layout, s: CouplingSummary) -> str:
    rows = [f"{path}: {layout.title or '(untitled)'}"]
    if s.victims:
        rows.append("  victim signal loops: EMF (RMS, harmonics by root-sum-square)")
        rows.append(f"  {'circuit':<12}{'mV/m':>10}{'run m':>9}{'V over run':>12}"
                    f"{'finite-run':>12}")
        for v in s.victims:
            rows.append(f"  {v.circuit[:11]:<12}{_g(v.induced_mV_per_m):>10}"
                        f"{_g(v.length_m, 4):>9}{_g(v.induced_V):>12}"
                        f"{_g(v.finite_length_factor, 4):>12}")
            if len(v.harmonics) > 1:
                parts = ", ".join(f"{p.frequency_hz:g} Hz {_g(p.induced_mV_per_m)}"
                                  for p in v.harmonics)
                rows.append(f"    by frequency (mV/m): {parts}")
            if v.earth_loop_mV_per_m is not None:
                rows.append(f"    screen/earth loop: {_g(v.earth_loop_mV_per_m)} mV/m"
                            + (f", {_g(v.earth_loop_V)} V over the run"
                               if v.earth_loop_V is not None else ""))
        power = [k for k, n in enumerate(s.loops) if n.split(":")[0] not in
                 {v.circuit for v in s.victims}]
        victim_idx = [k for k in range(len(s.loops)) if k not in power]
        if power and victim_idx:
            head = "".join(f"{s.loops[k][:11]:>12}" for k in victim_idx)
            rows.append(f"  mutual inductance, nH/m   {head}")
            for k in power:
                vals = "".join(f"{s.mutual_H_per_m[k, j] * NH:>12.3g}" for j in victim_idx)
                rows.append(f"    {s.loops[k][:22]:<22}{vals}")
    else:
        rows.append("  no signal circuit with an a and a b conductor: no victim loop")
    sh = s.sharing
    if sh.groups:
        basis = "reactance only (no area)" if sh.reactance_only and all(
            g.reactance_only for g in sh.groups) else f"R' at {sh.temperature_c:g} °C"
        rows.append(f"  current sharing between parallel conductors ({basis})")
        rows.append(f"  {'conductor':<16}{'current A':>11}{'angle °':>9}{'share %':>9}")
        for c in sh.shares:
            share = "-" if c.share_pct is None else fmt_fixed(c.share_pct)
            rows.append(f"  {c.conductor[:15]:<16}{fmt_fixed(c.current_a):>11}"
                        f"{fmt_fixed(c.angle_deg):>9}{share:>9}")
        rows.append("  imbalance (max−min)/mean: " + ", ".join(
            f"{g.circuit} {g.phase} " + (
                f"{fmt_fixed(g.imbalance_pct)} %" if g.imbalance_pct is not None
                else f"no total, {fmt_fixed(g.circulating_a)} A circulating")
            for g in sh.groups))
    else:
        rows.append("  no parallel conductors: nothing to share")
    if sh.screens:
        rows.append("  cable screens (λ1 = screen loss / core loss)")
        rows.append(f"  {'cable':<16}{'bonding':>13}{'current A':>11}{'angle °':>9}"
                    f"{'loss W/m':>10}{'λ1':>8}{'V/m':>9}")
        for f in sh.screens:
            rows.append(f"  {plain(f.conductor)[:15]:<16}{f.bonding:>13}"
                        f"{fmt_fixed(f.current_a):>11}{fmt_fixed(f.angle_deg):>9}{_g(f.loss_w_per_m):>10}"
                        f"{_g(f.loss_factor):>8}{_g(f.standing_v_per_m):>9}")
    if sh.passive:
        rows.append(f"  passive loops {'current A':>15}{'angle °':>9}{'loss W/m':>10}")
        for p in sh.passive:
            rows.append(f"  {plain(p.circuit)[:14]:<15}{fmt_fixed(p.current_a):>14}"
                        f"{fmt_fixed(p.angle_deg):>9}{_g(p.loss_w_per_m):>10}")
    rows.extend(f"  note: {n}" for n in s.notes if sh.groups or "R'" not in n
                or sh.screens or sh.passive)
    rows.append(CAUTION_LINE)
    return "\n".join(rows)


def run(args: argparse.Namespace) -> int:
    opts = options(args)
    layout = load(args.file)
    summary = coupling_summary(layout, **opts)
    if args.json:
        print_json(summary.to_json())
    else:
        print(render(args.file, layout, summary))
    return 0
