"""The Ranking view: rank arrangements of the open layout, preview one, apply it, save them.

The search is :func:`trayadvisor.ranking.rank_layout` (the call ``trayadvisor rank``
makes) in a worker thread: its progress callback posts coalesced messages to the progress
bar, and the stop key sets the event its cancel callback polls, so a stopped run keeps the
best arrangements found so far. The options are listed with the engine's figures; the
highlighted one is drawn in the preview, and applying it is one undoable edit
(:func:`trayadvisor.ranking.apply_option` through ``TrayApp.apply_edit``). Saving writes
the options with :func:`trayadvisor.output.exports.write_result` (CSV, JSON or Markdown by
extension, atomically).
"""

from __future__ import annotations

import threading
from pathlib import Path

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.widgets import DataTable, ProgressBar, Static
from textual.worker import get_current_worker

from trayadvisor.model import Layout
from trayadvisor.output import ExportError, fmt_fixed, fmt_uT, write_result
from trayadvisor.ranking import RankError, RankOption, RankResult, apply_option, rank_layout
from trayadvisor.tui.logic.ranktable import (
    RankParams,
    columns,
    fits,
    objective_text,
    option_cells,
    option_lines,
    run_line,
    run_notes,
    staleness,
    usable_params,
    value_text,
)
from trayadvisor.tui.logic.scene import drawing_bounds
from trayadvisor.tui.screens.base import WorkScreen
from trayadvisor.tui.screens.dialogs import MessageDialog, choose_output
from trayadvisor.tui.screens.rankform import RankForm
from trayadvisor.tui.widgets.canvas import CanvasContent, SectionCanvas
from trayadvisor.tui.widgets.panels import FieldReadout

OTHER_FILE = "this ranking is of another file: r ranks the open one"
#: Shown when an option is applied: what the ranking does not look at.
APPLY_CAUTION = ("The ranking looks at the stray field only. It does not check ampacity, "
                 "grouping derating, voltage drop, fault withstand or segregation of the new "
                 "arrangement: defer to the local wiring rules. u undoes.")



def _unit(result: RankResult) -> str:
    """The unit word of a ranking's values: 'µT', or 'worst limit index'."""
    return "µT" if result.unit == "µT" else "worst limit index"

class RankProgress(Message):
    """How far run ``run`` has got; a newer one replaces a queued older one."""

    def __init__(self, run: int, fraction: float, text: str) -> None:
        super().__init__()
        self.run, self.fraction, self.text = run, fraction, text

    def can_replace(self, message: Message) -> bool:
        return isinstance(message, RankProgress) and message.run == self.run


class RankFinished(Message):
    """Run ``run`` ended: its result, or the error that stopped it."""

    def __init__(self, run: int, layout: Layout, params: RankParams,
                 result: RankResult | None, error: str = "") -> None:
        super().__init__()
        self.run, self.layout, self.params = run, layout, params
        self.result, self.error = result, error


class RankingScreen(WorkScreen):
    """Rank, preview, apply and save arrangements of the movable conductors."""

    VIEW_NAME = "ranking"
    BINDINGS = [
        Binding("r", "run", "Rank", id="ranking.run",
                tooltip="rank arrangements of the open layout"),
        Binding("escape,c", "stop", "Stop", id="ranking.stop",
                tooltip="stop the run, keep the best so far"),
        Binding("a", "apply", "Apply", id="ranking.apply",
                tooltip="apply the highlighted option (undoable)"),
        Binding("w", "save_options", "Write", id="ranking.save",
                tooltip="save the options as .csv, .json or .md"),
        Binding("p", "setup", "Setup", show=False, id="ranking.setup",
                tooltip="top K, objective, time budget"),
        Binding("d", "settings", "Distance", show=False, id="settings.open",
                tooltip="distance d, limit, move step, map style"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.params = RankParams()
        self.result: RankResult | None = None
        self.ranked: Layout | None = None  #: the layout the result is for
        self.ranked_params = self.params
        self.ranked_serial = -1  #: the app's document serial (the file) ranked
        self._run_serial = -1
        self.previews: list[Layout] = []
        self.running = False
        self.run_count = 0
        self._stop = threading.Event()
        self._progress = (0.0, "")
        self._error = ""

    def compose_body(self) -> ComposeResult:
        with Vertical(id="rank-main"):
            yield Static(id="rank-info")
            with Horizontal(id="rank-progress-row"):
                yield ProgressBar(total=100, show_eta=False, show_percentage=False,
                                  id="rank-progress")
                yield Static(id="rank-progress-text")
            yield DataTable(id="options", cursor_type="row")
            with Horizontal(id="rank-preview"):
                yield SectionCanvas(id="preview")
                with Vertical(id="rank-side"):
                    yield Static(id="option-figures")
                    yield FieldReadout(id="readout", classes="brief")

    def on_mount(self) -> None:
        self.query_one("#preview", SectionCanvas).can_focus = False
        table = self.query_one("#options", DataTable)
        for col in columns(None):
            table.add_column(col.label, key=col.key)
        super().on_mount()
        table.focus()

    # -- hooks ------------------------------------------------------------------------------
    def document_changed(self, moved: bool) -> None:
        self.update_bars()
        self.show_info()
        if self.result is None:
            self.show_preview()

    def results_changed(self) -> None:
        app = self.tapp
        lim = app.chosen_limit()
        self.query_one("#readout", FieldReadout).show_brief(
            app.summary, lim, app.figure_for(lim), app.results_pending(),
            app.document.layout.frequency_hz)

    def settings_changed(self) -> None:
        super().settings_changed()
        self.update_bars()
        self.show_info()

    # -- what is shown ----------------------------------------------------------------------
    def current_option(self) -> RankOption | None:
        if self.result is None or not self.result.options:
            return None
        row = self.query_one("#options", DataTable).cursor_row
        return self.result.options[min(max(row, 0), len(self.result.options) - 1)]

    def show_info(self) -> None:
        app = self.tapp
        p = usable_params(self.params, app.document.layout)
        what = objective_text(p.objective, app.settings.distance_mm, app.document.layout)
        head = (f"Objective: {what} · top "
                f"{p.top_k}" + (f" · budget {p.budget_s:g} s" if p.budget_s else ""))
        if self.running:
            lines = [head, "ranking… Esc stops and keeps the best found so far"]
        elif self._error:
            lines = [head, f"✖ {self._error}"]
        elif self.result is None or self.ranked is None:
            lines = [head, "not ranked yet: r ranks the open layout · p changes what to "
                     "search for"]
        else:
            r = self.result
            lines = [head, run_line(r)]
            why = OTHER_FILE if self.ranked_serial != app.document_serial else staleness(
                r, self.ranked, app.document.layout, self.ranked_params.objective,
                app.settings.distance_mm)
            extra = why or " · ".join(f"note: {n}" for n in run_notes(r))
            if extra:
                lines.append(("! " if why else "") + extra)
        self.query_one("#rank-info", Static).update(
            Text("\n".join(lines), no_wrap=True, overflow="ellipsis"), layout=False)

    def show_progress(self) -> None:
        fraction, text = self._progress
        self.query_one("#rank-progress", ProgressBar).update(progress=100.0 * fraction)
        self.query_one("#rank-progress-text", Static).update(
            Text(f"{100 * fraction:3.0f} % {text}" if text else "", no_wrap=True,
                 overflow="ellipsis"), layout=False)

    def show_preview(self, index: int | None = None) -> None:
        """Draw option ``index`` (or the open layout when there is no result) beside its
        figures."""
        canvas = self.query_one("#preview", SectionCanvas)
        figures = self.query_one("#option-figures", Static)
        if self.result is None or index is None or not self.previews:
            lay = self.tapp.document.layout
            canvas.set_fit_bounds(drawing_bounds(lay))
            canvas.show(CanvasContent(lay))
            figures.update("Preview: the open layout\n(r ranks; ↑↓ then pick an option)",
                           layout=False)
            return
        index = min(max(index, 0), len(self.previews) - 1)
        canvas.show(CanvasContent(self.previews[index]))
        opt = self.result.options[index]
        lines = option_lines(self.result, opt, len(self.previews[index].conductors))
        if not self.result.objective.startswith("contour"):  # not the field at d: say so
            lines.insert(2, " (" + objective_text(self.ranked_params.objective, 0.0,
                                                  self.ranked) + ")")
        lines.append("Now (the open layout):")
        figures.update(Text("\n".join(lines), no_wrap=True, overflow="ellipsis"),
                       layout=False)

    def _fill_table(self) -> None:
        table = self.query_one("#options", DataTable)
        table.clear(columns=True)
        r = self.result
        for col in columns(r):
            table.add_column(col.label, key=col.key)
        if r is None:
            return
        for opt in r.options:
            cells = option_cells(r, opt)
            table.add_row(*(Text(c, justify="right") for c in cells), key=str(opt.rank))
        if r.options:
            table.move_cursor(row=0)

    @on(DataTable.RowHighlighted, "#options")
    def _highlighted(self, event: DataTable.RowHighlighted) -> None:
        self.show_preview(event.cursor_row)

    @on(DataTable.RowSelected, "#options")
    def _selected(self, event: DataTable.RowSelected) -> None:
        self.action_apply()

    # -- running ----------------------------------------------------------------------------
    def action_run(self) -> None:
        app = self.tapp
        if self.running:
            app.set_status("a ranking is running: Esc stops it", "warning")
            return
        layout = app.document.layout
        if not layout.conductors:
            app.set_status("nothing to rank: the layout has no conductors", "warning")
            return
        self.params = usable_params(self.params, layout)
        self._run_serial = app.document_serial
        self.run_count += 1
        self._stop = threading.Event()
        self.running, self._error = True, ""
        self._progress = (0.0, "starting…")
        self.show_progress()
        self.show_info()
        app.set_status("ranking the open layout… Esc stops and keeps the best found so far")
        self._rank(self.run_count, layout, self.params, app.settings.distance_mm,
                   app.settings.currents, self._stop)

    def action_stop(self) -> None:
        if not self.running:
            self.tapp.set_status("no ranking is running (r starts one)")
            return
        self._stop.set()
        self.tapp.set_status("stopping: keeping the best found so far…")

    @work(thread=True, exclusive=True, group="ranking", exit_on_error=False)
    def _rank(self, run: int, layout: Layout, params: RankParams, distance_mm: float,
              currents: str, stop: threading.Event) -> None:
        worker = get_current_worker()

        def progress(fraction: float, text: str) -> None:
            self.post_message(RankProgress(run, fraction, text))

        try:
            result = rank_layout(layout, **params.options(distance_mm, currents),
                                 progress=progress,
                                 cancel=lambda: stop.is_set() or worker.is_cancelled)
        except RankError as err:
            self.post_message(RankFinished(run, layout, params, None, str(err)))
        except Exception as exc:  # a UI must survive an engine error: show it, keep running
            self.post_message(RankFinished(run, layout, params, None,
                                           f"ranking failed: {type(exc).__name__}: {exc}"))
        else:
            self.post_message(RankFinished(run, layout, params, result))

    @on(RankProgress)
    def _on_progress(self, event: RankProgress) -> None:
        if event.run == self.run_count and self.running:
            self._progress = (event.fraction, event.text)
            self.show_progress()

    @on(RankFinished)
    def _on_finished(self, event: RankFinished) -> None:
        if event.run != self.run_count:
            return
        self.running = False
        app = self.tapp
        r = event.result
        if r is None:
            self._error = event.error
            self._progress = (0.0, "")
            self.show_progress()
            self.show_info()
            app.set_status(event.error, "error")
            return
        self.result, self.ranked, self.ranked_params = r, event.layout, event.params
        self.ranked_serial = self._run_serial
        self.previews = [apply_option(event.layout, o) for o in r.options]
        self._progress = (self._progress[0] if r.stopped_early else 1.0,
                          "stopped: best found so far" if r.stopped_early else "done")
        self.show_progress()
        self.query_one("#preview", SectionCanvas).set_fit_bounds(
            drawing_bounds(event.layout), refit=True)
        self._fill_table()
        self.show_info()
        self.show_preview(0 if r.options else None)
        if not r.options:
            app.set_status("the search found no arrangement to offer", "warning")
            return
        best = r.options[0]
        early = "stopped early, best found so far: " if r.stopped_early else ""
        app.set_status(f"{early}{len(r.options)} option(s), best "
                       f"{value_text(r, best.max_resultant_uT)} {_unit(r)} "
                       f"({fmt_fixed(best.reduction_pct)} % lower); a applies the "
                       "highlighted one")

    # -- applying and saving ----------------------------------------------------------------
    def action_apply(self) -> None:
        app = self.tapp
        opt = self.current_option()
        if opt is None or self.ranked is None:
            app.set_status("nothing to apply: r ranks the open layout first", "warning")
            return
        doc = app.document
        if self.ranked_serial != app.document_serial:
            app.set_status(OTHER_FILE, "warning")
            return
        if not fits(opt, self.ranked, doc.layout):
            app.set_status("the layout changed since this ranking (not only positions): "
                           "r ranks again", "warning")
            return
        new = apply_option(doc.layout, opt)
        if new == doc.layout:
            app.set_status(f"the open layout already has option {opt.rank}")
            return
        app.apply_edit(new, f"apply ranked option {opt.rank}")
        r = self.result
        what = objective_text(self.ranked_params.objective, r.distance_mm
                              if r else app.settings.distance_mm, self.ranked)
        value = (f"{value_text(r, opt.max_resultant_uT)} {_unit(r)}" if r
                 else f"{fmt_uT(opt.max_resultant_uT)} µT")
        app.set_status(f"applied option {opt.rank}: {value} {what}; u undoes")
        app.notify(APPLY_CAUTION, title=f"Option {opt.rank} applied", severity="warning",
                   timeout=8)

    def action_save_options(self) -> None:
        app = self.tapp
        if self.result is None or self.ranked is None:
            app.set_status("nothing to save: r ranks the open layout first", "warning")
            return
        choose_output(app, "Save the ranked options", str(app.output_path("-options.csv")),
                      self._save_to,
                      hint="Enter saves · .csv .json .md by extension · Esc cancels")

    def _save_to(self, path: Path) -> None:
        app = self.tapp
        if self.result is None or self.ranked is None:
            return
        try:
            fmt = write_result(self.result, str(path), self.ranked, self.ranked.title)
        except ExportError as err:
            app.push_screen(MessageDialog("Not saved", str(err)))
            return
        except OSError as err:
            app.push_screen(MessageDialog("Not saved", f"{path}: {err.strerror or err}. An "
                                          "existing file is left as it was."))
            return
        n = len(self.result.options)
        app.set_status(f"saved {n} option(s) to {path} as {fmt}")
        app.notify(f"{path} ({fmt}, {n} option(s))", title="Options saved")

    def action_setup(self) -> None:
        app = self.tapp

        def done(params: RankParams | None) -> None:
            if params is not None:
                self.params = params
                self.show_info()

        app.push_screen(RankForm(usable_params(self.params, app.document.layout),
                                 app.document.layout, app.settings.distance_mm), done)
