"""The command line: one sub-command module per command, argument parsing and output only.

Each module in :data:`COMMANDS` exposes ``add_parser(subparsers)``; a command that runs here
sets ``run(args) -> int``, the terminal-UI commands (bare ``trayadvisor`` and ``edit``) set
``ui_options(args) -> dict`` instead, and :mod:`trayadvisor.launcher` starts the UI with
those options (the CLI never imports the UI).
"""

from __future__ import annotations

import argparse
import importlib
import sys
from collections.abc import Callable, Sequence

from trayadvisor import __version__
from trayadvisor.cli.common import UserError
from trayadvisor.output import CAUTION_LINE

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


def parse_args(argv: Sequence[str] | None = None) -> argparse.Namespace:
    """The parsed command line (``sys.argv[1:]`` by default); argparse exits on bad usage."""
    return build_parser().parse_args(
        _join_negative_values(list(sys.argv[1:] if argv is None else argv)))


def wants_ui(args: argparse.Namespace) -> bool:
    """True for the commands that open the terminal UI (bare ``trayadvisor``, ``edit``)."""
    return args.command is None or hasattr(args, "ui_options")


def ui_options(args: argparse.Namespace) -> dict:
    """Validated keyword arguments for the UI's ``make_app`` (raises :class:`UserError`)."""
    if args.command is None:
        return {"path": None}
    return args.ui_options(args)


def guarded(action: Callable[[], int]) -> int:
    """Run ``action``; a :class:`UserError` becomes one line on stderr and exit status 2."""
    try:
        return int(action() or 0)
    except UserError as err:
        print(str(err), file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("trayadvisor: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0


def _needs_the_ui() -> int:
    raise UserError("trayadvisor: this command opens the terminal UI; run the trayadvisor "
                    "program (trayadvisor.launcher) for it")


def run(args: argparse.Namespace) -> int:
    """Run a parsed command-line (not UI) command; exit status 0, or 2 for bad input."""
    if wants_ui(args):
        return guarded(_needs_the_ui)
    return guarded(lambda: args.run(args))


def main(argv: Sequence[str] | None = None) -> int:
    """The command-line commands (``check``, ``field``, ``rank``, …) without the UI."""
    return run(parse_args(argv))


if __name__ == "__main__":
    raise SystemExit(main())
