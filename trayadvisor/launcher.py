"""The ``trayadvisor`` program: the command line, or the terminal UI for ``edit`` and no command.

The one module above both front ends: it parses the command line with
:mod:`trayadvisor.cli`, runs a command there, or starts :mod:`trayadvisor.tui` with the
options the ``edit`` command validated. The CLI and the UI never import each other.
"""

from __future__ import annotations

from collections.abc import Sequence

from trayadvisor.cli import UserError, guarded, parse_args, run, ui_options, wants_ui
from trayadvisor.layoutfile import LayoutError


def _run_ui(options: dict) -> int:
    from trayadvisor.tui import make_app  # textual is loaded only when the UI starts

    try:
        app = make_app(**options)
    except LayoutError as err:
        raise UserError(str(err)) from None
    app.run()
    return int(app.return_code or 0)


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``trayadvisor`` program; returns the exit status."""
    args = parse_args(argv)
    if wants_ui(args):
        return guarded(lambda: _run_ui(ui_options(args)))
    return run(args)


if __name__ == "__main__":
    raise SystemExit(main())
