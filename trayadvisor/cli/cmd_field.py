"""``trayadvisor field FILE``: stray field at a distance, far-field decay, points, clearance."""

from __future__ import annotations

import argparse
import math
from dataclasses import replace

from trayadvisor.analysis import FieldSummary, PlateComparison, compare_summaries, field_summary
from trayadvisor.batch import expand_inputs
from trayadvisor.cli.batch_runs import run_batch
from trayadvisor.cli.common import (
    UserError,
    add_temperature,
    current_model,
    load,
    non_negative,
    parse_xy,
    positive,
    print_json,
    temperature,
)
from trayadvisor.engine import DEFAULT_DISTANCE_MM
from trayadvisor.model import Layout
from trayadvisor.output import CAUTION_LINE, decay_text, fmt_mm, fmt_uT, plain


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("field", help="stray field at distance d outside the tray envelope")
    p.add_argument("files", nargs="+", metavar="FILE",
                   help="layout file(s) or a folder of them (several: a batch run)")
    p.add_argument("--distance-mm", type=float, default=DEFAULT_DISTANCE_MM, metavar="D",
                   help=f"distance outside the tray envelope (default {DEFAULT_DISTANCE_MM:g})")
    p.add_argument("--at", action="append", default=[], metavar="X,Y",
                   help="also report the field at this point (mm); repeatable")
    p.add_argument("--limit-ut", dest="limit_uT", type=float, default=None, metavar="B",
                   help="test against this limit (µT): pass/fail and clearance distance")
    p.add_argument("--equal-shares", action="store_true",
                   help="parallel conductors share current equally (default: the solved "
                   "sharing of the impedance system)")
    p.add_argument("--sharing", action="store_true",
                   help="solved current sharing between parallel conductors (the default; "
                   "kept for scripts)")
    add_temperature(p)
    p.add_argument("--compare-plates", action="store_true",
                   help="also compute every figure without the plates and sheet metal and "
                   "print the shielding factor (with / without) at each place and on the curve")
    p.add_argument("--json", action="store_true", help="print the figures as JSON")
    p.add_argument("--out", default=None, metavar="SUMMARY.csv",
                   help="batch runs: write one summary row per file")
    p.set_defaults(run=run)


def options(args: argparse.Namespace) -> dict:
    """Validated keyword arguments for :func:`trayadvisor.analysis.field_summary` (single and
    batch runs make the same call)."""
    non_negative("--distance-mm", args.distance_mm)
    limits = []
    if args.limit_uT is not None:
        positive("--limit-ut", args.limit_uT)
        limits.append(("--limit-ut", args.limit_uT, "command line"))
    return {
        "distance_mm": args.distance_mm,
        "at": [parse_xy(t) for t in args.at],
        "limits": limits,
        "currents": current_model(args),
        "temperature_c": temperature(args),
    }


def _verdict(index: float) -> str:
    return "pass" if index <= 1.0 else "FAIL"


def _db(margin_db: float) -> str:
    return "inf" if margin_db == float("inf") else f"{margin_db:+.1f}"


def _induced_rows(s: FieldSummary) -> list[str]:
    """Screens and passive loops in a few lines (the full table: ``couple``)."""
    rows = []
    both = [f for f in s.screens if f.bonding == "both-ends"]
    one = [f for f in s.screens if f.bonding == "single-point"]
    if both:
        worst = max(both, key=lambda f: f.current_a)
        factors = [f.loss_factor for f in both if f.loss_factor is not None]
        lam = f", λ1 up to {max(factors):.3g}" if factors else ""
        rows.append(f"  screens bonded at both ends: {len(both)}, up to "
                    f"{worst.current_a:.3g} A ({plain(worst.conductor)}){lam}, "
                    f"{sum(f.loss_w_per_m for f in both):.3g} W/m in all")
    if one:
        worst = max(one, key=lambda f: f.standing_v_per_m)
        rows.append(f"  screens bonded at one point: {len(one)}, standing voltage up to "
                    f"{worst.standing_v_per_m:.3g} V/m ({plain(worst.conductor)}); the "
                    "permitted touch voltage is for local rules and licensed practice")
    for p in s.passive:
        rows.append(f"  passive loop {plain(p.circuit)}: {p.current_a:.3g} A at "
                    f"{p.angle_deg:.0f}°, {p.loss_w_per_m:.3g} W/m")
    return rows


def _plate_rows(s: FieldSummary) -> list[str]:
    """Plates in a few lines: the eddy-current loss of each conducting body."""
    if not s.plates:
        return []
    bodies: dict[str, list] = {}
    for p in s.plates:
        bodies.setdefault(p.body, []).append(p)
    parts = [f"{plain(b)} {sum(p.loss_w_per_m for p in ps):.3g} W/m"
             for b, ps in bodies.items()]
    return [f"  plates: {len(s.plates)} in {len(bodies)} bodies (finite elements, linear "
            f"materials); eddy-current loss: {', '.join(parts)}"]


def comparison_rows(c: PlateComparison) -> list[str]:
    """The with / without plates table."""
    rows = [f"  {'with / without plates':<28}{'with µT':>10}{'without µT':>12}{'factor':>9}"
            f"{'dB':>7}"]
    for r in c.rows:
        f = f"{r.factor:.3g}" if math.isfinite(r.factor) else "-"
        db = f"{r.reduction_db:+.1f}" if math.isfinite(r.reduction_db) else "-"
        label = r.name if r.type == "curve" else f"{r.type} {r.name}"
        rows.append(f"  {plain(label)[:27]:<28}{fmt_uT(r.with_uT):>10}"
                    f"{fmt_uT(r.without_uT):>12}{f:>9}{db:>7}")
    rows.append("  factor = with / without (below 1: the plates screen there); dB = "
                "-20 log10(factor)")
    return rows


def render(path: str, layout: Layout, s: FieldSummary) -> str:
    order = decay_text(s.far_field_order)
    rows = [
        f"{plain(path)}: {plain(layout.title) or '(untitled)'}",
        f"  stray field at {s.distance_mm:g} mm: {fmt_uT(s.max_resultant_uT)} µT "
        f"(AC resultant RMS), peak at x={s.max_at_mm[0]:.0f} mm, y={s.max_at_mm[1]:.0f} mm",
        f"  far field falls as {order}; {fmt_uT(s.far_field_uT_at_1m)} µT at 1 m "
        f"by the leading term",
    ]
    if s.dc_max_uT > 0:
        rows.append(f"  static (DC) field at {s.distance_mm:g} mm: {fmt_uT(s.dc_max_uT)} µT "
                    "(judged only by DC limits)")
    pts = s.points + s.named_points
    if pts:
        dc = any(p.dc_uT > 0 for p in pts)
        rows.append(f"  {'point':<14}{'x mm':>9}{'y mm':>9}{'resultant µT':>14}{'max µT':>10}"
                    + (f"{'DC µT':>10}" if dc else ""))
        for p in pts:
            rows.append(f"  {plain(p.name)[:13]:<14}{p.x_mm:>9.0f}{p.y_mm:>9.0f}"
                        f"{fmt_uT(p.resultant_uT):>14}{fmt_uT(p.max_uT):>10}"
                        + (f"{fmt_uT(p.dc_uT):>10}" if dc else ""))
    for ln in s.lines:
        rows.append(f"  line {plain(ln.name)}: up to {fmt_uT(ln.max_resultant_uT)} µT at "
                    f"x={ln.max_at_mm[0]:.0f} mm, y={ln.max_at_mm[1]:.0f} mm")
    for p in s.places:  # areas always; points and lines (listed above) when limits judge them
        if p.type == "area" or p.limits:
            dc = f"; DC {fmt_uT(p.dc_max_uT)} µT" if p.dc_max_uT > 0 else ""
            rows.append(f"  {p.type} {plain(p.name)}: up to {fmt_uT(p.max_resultant_uT)} µT "
                        f"AC at x={p.at_mm[0]:.0f} mm, y={p.at_mm[1]:.0f} mm{dc}")
        for q in p.limits:
            rows.append(f"    {_verdict(q.index)} {plain(q.name)} ({q.kind}, "
                        f"{q.band.upper()}): index {q.index:.3g}, margin "
                        f"{_db(q.margin_db)} dB, worst at x={q.at_mm[0]:.0f} mm, "
                        f"y={q.at_mm[1]:.0f} mm")
    if s.limits:
        rows.append(f"  {'limit on the curve':<26}{'kind':>10}{'µT':>8}{'index':>8}"
                    f"{'dB':>7}  {'clearance':>10}  at {s.distance_mm:g} mm")
        for lim in s.limits:
            kind = lim.kind + (" DC" if lim.band == "dc" else "")
            rows.append(f"  {plain(lim.name)[:25]:<26}{kind:>10}{fmt_uT(lim.limit_uT):>8}"
                        f"{lim.index:>8.3g}{_db(lim.margin_db):>7}  "
                        f"{fmt_mm(lim.clearance_mm):>10}  {_verdict(lim.index)}")
    rows += _induced_rows(s)
    rows += _plate_rows(s)
    rows.append("  currents: " + ("solved sharing between parallel conductors"
                                  if s.currents == "solved" else "equal shares (--equal-shares)"))
    rows += [f"  note: {plain(n)}" for n in s.notes]
    rows.append(CAUTION_LINE)
    return "\n".join(rows)


def run(args: argparse.Namespace) -> int:
    opts = options(args)
    files = expand_inputs(args.files)
    if len(files) != 1 or args.out:
        return run_batch("field", files, opts, args)
    layout = load(files[0])
    summary = field_summary(layout, **opts)
    comparison = None
    if args.compare_plates:
        if not layout.all_plates():
            raise UserError(f"{plain(files[0])}: --compare-plates: the layout has no "
                            "[[plate]] and no sheet tray; add one, or leave the flag out")
        comparison = compare_summaries(
            summary, field_summary(replace(layout, without_metal=True), **opts))
    if args.json:
        out = summary.to_json()
        if comparison is not None:
            out["plate_comparison"] = comparison.to_json()
        print_json(out)
    else:
        text = render(files[0], layout, summary)
        if comparison is not None:
            head, _, caution = text.rpartition("\n")
            text = "\n".join([head, *comparison_rows(comparison), caution])
        print(text)
    return 0
