"""``trayadvisor report FILE --out PATH.html``: the report with pictures (or .md beside SVGs)."""

from __future__ import annotations

import argparse
import os
from pathlib import Path

from trayadvisor.cli.common import (
    UserError,
    add_temperature,
    current_model,
    load,
    non_negative,
    temperature,
)
from trayadvisor.coupling import SharingError
from trayadvisor.engine import DEFAULT_DISTANCE_MM
from trayadvisor.output import CAUTION_LINE, REPORT_FORMATS, write_report


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("report", help="write a report with pictures (.html, or .md + .svg files)")
    p.add_argument("file", metavar="FILE")
    p.add_argument("--out", required=True, metavar="PATH",
                   help="PATH.html (one self-contained file) or PATH.md (SVG files beside it)")
    p.add_argument("--distance-mm", type=float, default=DEFAULT_DISTANCE_MM, metavar="D",
                   help=f"distance outside the tray envelope (default {DEFAULT_DISTANCE_MM:g})")
    p.add_argument("--top", type=int, default=6, metavar="K",
                   help="ranked options shown (default 6)")
    p.add_argument("--no-rank", action="store_true", help="leave out the ranked options")
    p.add_argument("--equal-shares", action="store_true",
                   help="every figure with equal shares between parallel conductors "
                   "(default: the solved sharing)")
    add_temperature(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    non_negative("--distance-mm", args.distance_mm)
    t = temperature(args)
    if args.top < 1:
        raise UserError(f"--top {args.top}: must be 1 or more")
    out = Path(args.out)
    if out.suffix.lower() not in REPORT_FORMATS:
        raise UserError(f"--out {args.out}: a report is PATH.html or PATH.md")
    folder = out.parent if str(out.parent) else Path(".")
    if not folder.is_dir():
        raise UserError(f"--out {args.out}: folder {folder} does not exist")
    layout = load(args.file)
    try:
        text = Path(args.file).read_text(encoding="utf-8").removeprefix("\ufeff")
    except OSError as exc:  # read a moment ago by load(); report it the same way
        raise UserError(f"{args.file}:0: cannot read the file ({exc})") from None
    try:
        written = write_report(layout, out, source_text=text, source_name=args.file,
                               distance_mm=args.distance_mm, top=args.top,
                               rank=not args.no_rank, currents=current_model(args),
                               temperature_c=t)
    except OSError as exc:
        raise UserError(f"--out {args.out}: cannot write ({exc.strerror or exc})") from None
    except SharingError as exc:
        raise UserError(f"{args.file}:0: {exc}") from None
    extra = f" and {len(written) - 1} picture file(s)" if len(written) > 1 else ""
    print(f"wrote {os.fspath(out)}{extra}")
    print(CAUTION_LINE)
    return 0
