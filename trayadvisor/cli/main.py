"""``trayadvisor`` entry point: one sub-command module per command.

Each module in :data:`COMMANDS` exposes ``add_parser(subparsers)`` and ``run(args) -> int``.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Sequence

from trayadvisor import __version__
from trayadvisor.cli.common import CAUTION_LINE, UserError

COMMANDS: tuple[str, ...] = ("edit", "check", "field", "report", "limits", "couple", "rank")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="trayadvisor",
        description="Lay single-core conductors in cable trays for low stray magnetic field, "
        "low crosstalk and even current sharing. Without a command: the terminal UI on the "
        "built-in demo layout.",
        epilog=CAUTION_LINE,
    )
    parser.add_argument("--version", action="version", version=f"trayadvisor {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        importlib.import_module(f"trayadvisor.cli.cmd_{name}").add_parser(sub)
    return parser


def _join_negative_values(argv: list[str]) -> list[str]:
    """Let ``--at -200,50`` work: argparse would take ``-200,50`` for an option."""
    out: list[str] = []
    i = 0
    while i < len(argv):
        tok = argv[i]
        nxt = argv[i + 1] if i + 1 < len(argv) else ""
        if tok.startswith("--") and "=" not in tok and nxt[:1] == "-" and nxt[1:2].isdigit():
            out.append(f"{tok}={nxt}")
            i += 2
            continue
        out.append(tok)
        i += 1
    return out


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(_join_negative_values(list(sys.argv[1:] if argv is None else argv)))
    try:
        if args.command is None:
            return importlib.import_module("trayadvisor.cli.cmd_edit").run_default(args)
        return int(args.run(args) or 0)
    except UserError as err:
        print(str(err), file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("trayadvisor: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0


if __name__ == "__main__":
    raise SystemExit(main())
