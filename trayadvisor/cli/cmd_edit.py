"""``trayadvisor edit FILE`` and bare ``trayadvisor``: the terminal UI."""

from __future__ import annotations

import argparse

from trayadvisor.cli.common import UserError, positive
from trayadvisor.layoutfile.reader import LayoutError


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("edit", help="open the terminal UI on a layout file (created if missing)")
    p.add_argument("file", metavar="FILE")
    p.add_argument("--limit-ut", type=float, default=None, metavar="B",
                   help="test against this limit (µT) as well as the library's and the "
                   "layout's own")
    p.set_defaults(run=run)


def _run_ui(path: str | None, limit_ut: float | None) -> int:
    if limit_ut is not None:
        positive("--limit-ut", limit_ut)
    from trayadvisor.tui import make_app

    try:
        app = make_app(path, limit_ut=limit_ut)
    except LayoutError as err:
        raise UserError(str(err)) from None
    app.run()
    return int(app.return_code or 0)


def run(args: argparse.Namespace) -> int:
    """The terminal UI on FILE; a missing FILE starts an empty layout saved there."""
    return _run_ui(args.file, getattr(args, "limit_ut", None))


def run_default(args: argparse.Namespace) -> int:
    """Bare ``trayadvisor``: the terminal UI on the built-in demo layout."""
    return _run_ui(None, None)
