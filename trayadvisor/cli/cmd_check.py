"""``trayadvisor check FILE``: validate a layout and print a one-line summary."""

from __future__ import annotations

import argparse
from collections import Counter

from trayadvisor.cli.common import load
from trayadvisor.output import plain


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("check", help="validate a layout file (exit 0, or 2 with FILE:LINE: ...)")
    p.add_argument("file", metavar="FILE")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    layout = load(args.file)
    systems = Counter(c.system for c in layout.circuits)
    kinds = ", ".join(f"{n} {s}" for s, n in sorted(systems.items()))
    plates = layout.all_plates()
    metal = (f", {len(plates)} plate(s) ({len(layout.plates)} [[plate]], "
             f"{sum(1 for t in layout.trays if t.sheet)} sheet tray(s))" if plates else "")
    print(
        f"{plain(args.file)}: ok: {len(layout.trays)} tray(s), {len(layout.circuits)} "
        f"circuit(s) ({kinds}), {len(layout.conductors)} conductor(s){metal}, "
        f"{layout.frequency_hz:g} Hz"
    )
    return 0
