"""``trayadvisor edit FILE`` and bare ``trayadvisor``: options for the terminal UI.

The UI itself is started by :mod:`trayadvisor.launcher` with :func:`ui_options`; the
command line never imports it.
"""

from __future__ import annotations

import argparse

from trayadvisor.cli.common import positive


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("edit", help="open the terminal UI on a layout file (created if missing)")
    p.add_argument("file", metavar="FILE")
    p.add_argument("--limit-ut", dest="limit_uT", type=float, default=None, metavar="B",
                   help="test against this limit (µT) as well as the library's and the "
                   "layout's own")
    p.set_defaults(ui_options=ui_options)


def ui_options(args: argparse.Namespace) -> dict:
    """Validated keyword arguments of the UI's ``make_app``: FILE (a missing FILE starts an
    empty layout saved there) and the typed limit."""
    if args.limit_uT is not None:
        positive("--limit-ut", args.limit_uT)
    return {"path": args.file, "limit_uT": args.limit_uT}
