"""The top-level views of the terminal UI, one key each.

Each view is a textual Screen run as an app *mode* (its own screen stack), derived from
:class:`trayadvisor.tui.screens.base.WorkScreen`. To add a view: write the screen in
``tui/screens/``, then add a :class:`ViewSpec` here. The app builds its modes, its
view-switch bindings (id ``view.<name>``) and the view bar from this tuple; nothing else needs
to change. See docs/tui.md.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from textual.screen import Screen

from trayadvisor.tui.screens.coupling import CouplingScreen
from trayadvisor.tui.screens.field import FieldScreen
from trayadvisor.tui.screens.ranking import RankingScreen
from trayadvisor.tui.screens.section import SectionScreen


@dataclass(frozen=True)
class ViewSpec:
    """One top-level view.

    Attributes
    ----------
    name : str
        Mode name and binding id suffix (``view.<name>``).
    title : str
        Shown in the view bar and the footer.
    key : str
        The key that shows the view (textual key name).
    screen : callable
        Makes the view's screen (a WorkScreen subclass).
    description : str
        One line for the help screen.
    """

    name: str
    title: str
    key: str
    screen: Callable[[], Screen]
    description: str


VIEWS: tuple[ViewSpec, ...] = (
    ViewSpec("section", "Section", "1", SectionScreen,
             "the cross-section to scale: move, add, copy, delete and edit conductors"),
    ViewSpec("field", "Field", "2", FieldScreen,
             "the field map around the tray with the contour at d and the readouts"),
    ViewSpec("ranking", "Ranking", "3", RankingScreen,
             "rank arrangements by stray field; preview, apply, save"),
    ViewSpec("coupling", "Coupling", "4", CouplingScreen,
             "signal-loop EMF and current sharing while editing"),
)
