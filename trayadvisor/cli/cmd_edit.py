"""``trayadvisor edit FILE`` and bare ``trayadvisor``: the terminal UI."""

from __future__ import annotations

import argparse

from trayadvisor.cli.common import demo_path, load


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("edit", help="open the terminal UI on a layout file (created if missing)")
    p.add_argument("file", metavar="FILE")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    raise SystemExit("the terminal UI is not built yet")


def run_default(args: argparse.Namespace) -> int:
    """Until the terminal UI lands: the demo layout's field summary."""
    from trayadvisor.analysis import field_summary
    from trayadvisor.cli.cmd_field import render

    path = demo_path()
    layout = load(path)
    print(render("built-in demo", layout, field_summary(layout)))
    return 0
