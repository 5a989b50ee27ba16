"""The terminal UI application: the open document, the views, files and the field worker.

:func:`make_app` builds the app for the CLI and for tests. The app owns the
:class:`~trayadvisor.tui.logic.document.Document` (every edit goes through :meth:`TrayApp.
apply_edit`, so it is undoable), the view settings and the latest field figures, which a
worker thread computes with the same functions the CLI calls. Views are app modes listed in
:data:`trayadvisor.tui.views.VIEWS`; the app tells the view on show what changed. Reports
are written from any view (:mod:`trayadvisor.tui.reports`).
"""

from __future__ import annotations

import os
import time
from dataclasses import replace

from textual import on, work
from textual.app import App
from textual.binding import Binding
from textual.message import Message
from textual.timer import Timer
from textual.worker import Worker, WorkerState, get_current_worker

from trayadvisor.analysis import FieldSummary, LimitFigure, PlateComparison
from trayadvisor.layoutfile import demo_path, read_layout
from trayadvisor.model import Layout, Limit
from trayadvisor.output import CAUTION_LINE
from trayadvisor.tui.files import FileCommands
from trayadvisor.tui.logic.compute import (
    CompareDone,
    Failed,
    LimitDone,
    Result,
    SummaryDone,
    run_analysis,
)
from trayadvisor.tui.logic.document import Document
from trayadvisor.tui.logic.keymap import KeymapError, default_keymap_path, load_keymap
from trayadvisor.tui.logic.platetext import working_text
from trayadvisor.tui.logic.settings import (
    TYPED_LIMIT,
    ViewSettings,
    available_limits,
    chosen_limit,
    limit_level_uT,
)
from trayadvisor.tui.reports import ReportCommands
from trayadvisor.tui.screens.base import WorkScreen
from trayadvisor.tui.screens.help import HelpScreen
from trayadvisor.tui.views import VIEWS, ViewSpec

AnalysisKey = tuple[int, int, float, tuple[Limit, ...]]

#: Worker groups that compute field figures of the model on show (the plates are solved in
#: them): while one runs, the message line says so for a layout with plates.
FIELD_GROUPS = frozenset({"analysis", "limits", "map", "coupling"})
#: The notice appears only once the work has lasted this long (s): quick figures (a move
#: that reuses the solved plates) do not make the message line flicker.
BUSY_AFTER_S = 0.3


class Computed(Message):
    """One stage of the field worker's results for the model identified by ``key``."""

    def __init__(self, key: AnalysisKey, result: Result) -> None:
        super().__init__()
        self.key, self.result = key, result

    def can_replace(self, message: Message) -> bool:
        """A newer summary replaces a queued older one; likewise one limit's figure."""
        if not isinstance(message, Computed):
            return False
        a, b = self.result, message.result
        for kind in (SummaryDone, CompareDone):
            if isinstance(a, kind) and isinstance(b, kind):
                return True
        return (isinstance(a, LimitDone) and isinstance(b, LimitDone)
                and a.figure.name == b.figure.name)


class TrayApp(FileCommands, ReportCommands, App[None]):
    """Edit a cable-tray cross-section and watch its stray magnetic field."""

    CSS_PATH = "app.tcss"
    TITLE = "trayadvisor"
    ENABLE_COMMAND_PALETTE = False
    MODES = {v.name: v.screen for v in VIEWS}
    DEFAULT_MODE = VIEWS[0].name
    BINDINGS = [
        # Tab moves the focus before the next key is delivered: as a priority binding the
        # app handles it at once, so keys typed (or pasted by a script) right after a Tab
        # land in the next field, not the one left.
        Binding("tab", "app.focus_next", "Next field", show=False, priority=True,
                id="focus.next"),
        Binding("shift+tab", "app.focus_previous", "Previous field", show=False,
                priority=True, id="focus.previous"),
        *(Binding(v.key, f"show_view('{v.name}')", v.title, show=False, id=f"view.{v.name}",
                  tooltip=f"show the {v.title} view") for v in VIEWS),
        Binding("ctrl+s", "save", "Save", id="file.save",
                tooltip="save (checks the layout first)"),
        Binding("S", "save_as", "Save as", show=False, id="file.save_as",
                tooltip="save under another name"),
        Binding("ctrl+o", "open", "Open", show=False, id="file.open",
                tooltip="open a layout file"),
        Binding("R", "report", "Report", id="file.report",
                tooltip="write the report (.html, or .md + .svg)"),
        Binding("u,ctrl+z", "undo", "Undo", id="edit.undo",
                tooltip="undo the last edit"),
        Binding("ctrl+r,ctrl+y", "redo", "Redo", show=False, id="edit.redo",
                tooltip="redo the last undone edit"),
        Binding("question_mark,f1", "help", "Help", id="app.help",
                tooltip="this help"),
        Binding("ctrl+q", "quit", "Quit", priority=True, id="app.quit",
                tooltip="quit (asks when edits are unsaved)"),
    ]

    view_specs: tuple[ViewSpec, ...] = VIEWS

    def __init__(self, document: Document, settings: ViewSettings | None = None,
                 keymap: dict[str, str] | None = None, note: str = "") -> None:
        super().__init__()
        self.document = document
        self.document_serial = 0
        self.settings = settings or ViewSettings(map_style=default_map_style())
        self.limits: tuple[Limit, ...] = ()
        self.summary: FieldSummary | None = None
        self.summary_key: AnalysisKey | None = None
        self.figures: dict[str, LimitFigure] = {}
        self.figure_keys: dict[str, AnalysisKey] = {}
        #: The with / without plates comparison (key ``w`` of the Field view): asked for,
        #: the latest one computed and the model it is for.
        self.compare_plates = False
        self.comparison: PlateComparison | None = None
        self.comparison_key: AnalysisKey | None = None
        #: The message line's notice while field workers run (see :meth:`refresh_busy`).
        self.busy = ""
        self._busy_since: float | None = None
        self._busy_timer: Timer | None = None
        self.problems: list[str] = []
        self.message: tuple[str, str] = (note or CAUTION_LINE, "warning" if note else "info")
        self._keymap_overrides = keymap or {}

    def on_mount(self) -> None:
        if self._keymap_overrides:
            self.set_keymap(self._keymap_overrides)
        self.document_changed()

    # -- state the views read ---------------------------------------------------------------
    def current_view(self) -> WorkScreen | None:
        """The view being shown (under any dialog); None while a view just switched to is
        not mounted yet (a key typed before the switch may still be handled after it: the
        view draws everything from the app's state when it mounts)."""
        stack = self.screen_stack
        view = stack[0] if stack and isinstance(stack[0], WorkScreen) else None
        return view if view is not None and view.is_mounted else None

    def analysis_key(self) -> AnalysisKey:
        return (self.document_serial, self.document.generation, self.settings.distance_mm,
                self.limits, self.settings.currents)

    def chosen_limit(self) -> Limit | None:
        return chosen_limit(self.settings, self.limits, self.document.layout)

    def figure_for(self, limit: Limit | None) -> LimitFigure | None:
        if limit is None:
            return None
        fig = self.figures.get(limit.name)
        level = limit_level_uT(limit, self.document.layout.frequency_hz)
        return fig if fig is not None and fig.limit_uT == level else None

    def comparison_pending(self) -> bool:
        """True while the comparison on show (if any) is older than the model and settings."""
        return self.comparison_key != self.analysis_key()

    def results_pending(self) -> bool:
        """True while the figures on show are older than the model and settings."""
        key = self.analysis_key()
        lim = self.chosen_limit()
        return self.summary_key != key or (lim is not None
                                           and self.figure_keys.get(lim.name) != key)

    # -- changes ----------------------------------------------------------------------------
    def apply_edit(self, layout: Layout, label: str, selected: str | None | bool = True,
                   moved: bool = False) -> bool:
        """Make ``layout`` current as one undoable edit called ``label``."""
        if not self.document.apply(layout, label, selected):
            return False
        self.message = ("", "info")
        self.document_changed(moved=moved)
        return True

    def selection_changed(self) -> None:
        view = self.current_view()
        if view is not None:
            view.document_changed(moved=False)

    def set_settings(self, settings: ViewSettings) -> None:
        if settings == self.settings:
            return
        self.settings = settings
        self.limits = available_limits(self.document.layout, settings.typed_limit_uT)
        view = self.current_view()
        if view is not None:
            view.settings_changed()
        self.request_analysis()

    def set_status(self, message: str, level: str = "info") -> None:
        self.message = (message, level)
        view = self.current_view()
        if view is not None:
            view.update_bars()

    def document_changed(self, moved: bool = False) -> None:
        """Re-check the model, redraw the view and start the field worker."""
        doc = self.document
        self.problems = [e.message for e in doc.problems()]
        if not moved:
            self.limits = available_limits(doc.layout, self.settings.typed_limit_uT)
        view = self.current_view()
        if view is not None:
            view.document_changed(moved)
        self.request_analysis()

    # -- the field worker -------------------------------------------------------------------
    def request_analysis(self) -> None:
        """Start the worker: summary first, then the chosen limit's verdict and clearance.
        The other limits' clearances are computed only when asked for (the settings form),
        so arrow keys never queue a dozen clearance searches."""
        lim = self.chosen_limit()
        self._analyse(self.analysis_key(), self.document.layout, self.settings.distance_mm,
                      [lim] if lim is not None else [], summary=True,
                      currents=self.settings.currents, compare=self.compare_plates)

    def set_compare_plates(self, on: bool) -> None:
        """Ask for (or stop) the with / without plates comparison. When the summary on show
        is current, only the comparison (and a limit figure still missing) is computed, from
        that summary; otherwise the whole analysis restarts with it."""
        self.compare_plates = on
        key = self.analysis_key()
        if on and self.comparison_key != key:
            if self.summary is not None and self.summary_key == key:
                lim = self.chosen_limit()
                todo = ([lim] if lim is not None and self.figure_keys.get(lim.name) != key
                        else [])
                self._analyse(key, self.document.layout, self.settings.distance_mm, todo,
                              summary=False, currents=self.settings.currents, compare=True,
                              known=self.summary)
            else:
                self.request_analysis()
        view = self.current_view()
        if view is not None:
            view.results_changed()

    def request_all_limits(self) -> None:
        """Compute the verdict and clearance of every offered limit not yet known."""
        key = self.analysis_key()
        todo = [lim for lim in self.limits if self.figure_keys.get(lim.name) != key]
        if todo:
            self._limits_worker(key, self.document.layout, self.settings.distance_mm, todo,
                                self.settings.currents)

    @work(thread=True, exclusive=True, group="analysis", exit_on_error=False)
    def _analyse(self, key: AnalysisKey, layout: Layout, distance_mm: float,
                 limits: list[Limit], summary: bool = True, currents: str = "solved",
                 compare: bool = False, known: FieldSummary | None = None) -> None:
        worker = get_current_worker()
        run_analysis(layout, distance_mm, limits,
                     emit=lambda r: self.post_message(Computed(key, r)),
                     cancelled=lambda: worker.is_cancelled, summary=summary,
                     currents=currents, compare=compare, known=known)

    @work(thread=True, exclusive=True, group="limits", exit_on_error=False)
    def _limits_worker(self, key: AnalysisKey, layout: Layout, distance_mm: float,
                       limits: list[Limit], currents: str = "solved") -> None:
        worker = get_current_worker()
        run_analysis(layout, distance_mm, limits,
                     emit=lambda r: self.post_message(Computed(key, r)),
                     cancelled=lambda: worker.is_cancelled or key != self.analysis_key(),
                     summary=False, currents=currents)

    @on(Computed)
    def _computed(self, event: Computed) -> None:
        if event.key != self.analysis_key():
            return
        r = event.result
        if isinstance(r, Failed):
            self.set_status(r.message, "error")
            return
        view = self.current_view()
        if isinstance(r, SummaryDone):
            self.summary, self.summary_key = r.summary, event.key
        elif isinstance(r, CompareDone):
            self.comparison, self.comparison_key = r.comparison, event.key
        else:
            self.figures[r.figure.name] = r.figure
            self.figure_keys[r.figure.name] = event.key
            listener = getattr(self.screen, "figures_changed", None)
            if listener is not None:  # a dialog listing limit figures
                listener(self.current_figures())
            lim = self.chosen_limit()
            if lim is None or r.figure.name != lim.name:
                return
        if view is not None:
            view.results_changed()

    # -- the notice while the plates are solved ----------------------------------------------
    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        self.refresh_busy()

    def field_work_running(self) -> bool:
        """True while a worker computes field figures of the model (not cancelled ones)."""
        return any(w.group in FIELD_GROUPS and w.state in (WorkerState.PENDING,
                                                            WorkerState.RUNNING)
                   for w in self.workers)

    def refresh_busy(self) -> None:
        """Set the message line's notice: "solving the plates (finite elements)…" once field
        work on a layout with plates has lasted :data:`BUSY_AFTER_S`, nothing otherwise.
        Called when a worker starts or ends (the views forward their workers' changes)."""
        running = self.field_work_running()
        now = time.monotonic()
        if not running:
            self._busy_since = None
        elif self._busy_since is None:
            self._busy_since = now
        waited = now - self._busy_since if self._busy_since is not None else 0.0
        shown = running and waited >= BUSY_AFTER_S
        if self._busy_timer is not None:
            self._busy_timer.stop()
            self._busy_timer = None
        if running and not shown:
            self._busy_timer = self.set_timer(BUSY_AFTER_S - waited + 0.01, self.refresh_busy)
        text = working_text(bool(self.document.layout.all_plates()), shown)
        if text != self.busy:
            self.busy = text
            view = self.current_view()
            if view is not None:
                view.update_bars()

    def current_figures(self) -> dict[str, LimitFigure]:
        """Limit figures computed for the model and settings on show."""
        key = self.analysis_key()
        return {n: f for n, f in self.figures.items() if self.figure_keys.get(n) == key}

    # -- views and help ---------------------------------------------------------------------
    def action_show_view(self, name: str) -> None:
        if name != self.current_mode:
            self.switch_mode(name)

    def action_help(self) -> None:
        merged: dict[str, tuple[list[str], str]] = {}
        for key, active in self.screen.active_bindings.items():
            b = active.binding
            bid = b.id or b.action
            keys, _ = merged.setdefault(bid, ([], b.tooltip or b.description or b.action))
            keys.append(self.get_key_display(b.with_key(key)))
        ours = known_binding_ids()
        keys_list = [(", ".join(k), d, bid) for bid, (k, d) in merged.items()]
        keys_list.sort(key=lambda row: row[2] not in ours)  # the app's own keys first
        views = [(v.key, v.title, v.description) for v in self.view_specs]
        self.push_screen(HelpScreen(views, keys_list))

    # -- undo -------------------------------------------------------------------------------
    def action_undo(self) -> None:
        label = self.document.undo()
        self._after_history("undone", label, "nothing to undo")

    def action_redo(self) -> None:
        label = self.document.redo()
        self._after_history("redone", label, "nothing to redo")

    def _after_history(self, verb: str, label: str | None, empty: str) -> None:
        if label is None:
            self.set_status(empty)
            return
        self.message = (f"{verb}: {label}", "info")
        self.document_changed()


def known_binding_ids() -> set[str]:
    """Every binding id of the app, its views, the canvas and the dialogs (keymap check)."""
    from trayadvisor.tui.screens import dialogs, forms, placeforms, placemenu, platemenu
    from trayadvisor.tui.widgets.canvas import SectionCanvas

    classes: list[type] = [TrayApp, SectionCanvas, HelpScreen, *(v.screen for v in VIEWS
                                                                  if isinstance(v.screen, type))]
    classes += [getattr(dialogs, n) for n in ("ConfirmDialog", "UnsavedDialog",
                                              "MessageDialog", "PathDialog")]
    classes += [forms.FormScreen, placemenu.PlacesMenu, placeforms.PlacePicker,
                platemenu.PlatesMenu]
    ids = set()
    for cls in classes:
        for klass in cls.__mro__:
            for b in vars(klass).get("BINDINGS", ()):
                if isinstance(b, Binding) and b.id:
                    ids.add(b.id)
    return ids


def demo_document() -> Document:
    """The built-in demo layout (saving it asks for a new path)."""
    return Document(read_layout(demo_path()), None, label="built-in demo")


def make_app(path: str | os.PathLike[str] | None = None, *,
             settings: ViewSettings | None = None, limit_uT: float | None = None,
             keymap_path: str | os.PathLike[str] | None = None) -> TrayApp:
    """The terminal UI on the demo (``path`` None) or on a layout file, created when missing.

    Raises
    ------
    LayoutError
        The file exists but cannot be read or is not a valid layout.
    """
    doc = demo_document() if path is None else Document.open_or_new(path)
    note = ""
    if doc.new:
        note = f"new file {doc.display_path}: empty layout with one tray (saved on ctrl+s)"
    keymap: dict[str, str] = {}
    try:
        keymap = load_keymap(keymap_path or default_keymap_path(), known_binding_ids())
    except KeymapError as err:
        note = f"keymap ignored: {err}"
    if limit_uT is not None:
        base = settings or ViewSettings(map_style=default_map_style())
        settings = replace(base, typed_limit_uT=float(limit_uT), limit_name=TYPED_LIMIT)
    return TrayApp(doc, settings, keymap, note)


def default_map_style() -> str:
    """Shade (glyphs and digits) when NO_COLOR is set, else colour."""
    return "shade" if "NO_COLOR" in os.environ else "colour"
