"""The terminal UI (textual). The core never imports this package.

``make_app`` builds the app; the CLI (``trayadvisor``, ``trayadvisor edit FILE``) and the
tests use it. Layers: ``document``, ``edits``, ``viewport``, ``scene``, ``mapscale``,
``settings``, ``compute`` and ``keymap`` are plain Python (no textual); ``widgets/`` draw and
post messages; ``screens/`` handle them; ``app`` owns the document and the field worker.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from trayadvisor.tui.app import TrayApp

__all__ = ["make_app"]


def make_app(*args: Any, **kwargs: Any) -> TrayApp:
    """See :func:`trayadvisor.tui.app.make_app`."""
    from trayadvisor.tui.app import make_app as _make_app

    return _make_app(*args, **kwargs)
