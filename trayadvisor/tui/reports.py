"""The report command of the terminal UI: write the open layout's report from a dialog.

A mixin of :class:`trayadvisor.tui.app.TrayApp`. The report is
:func:`trayadvisor.output.report.write_report`, the call ``trayadvisor report`` makes, with the
app's distance d; it takes a second or two (it ranks the layout too), so it runs in a worker
thread and a notification names the files written, or the error.
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import TYPE_CHECKING

from textual import work

from trayadvisor.model import Layout
from trayadvisor.tui.screens.dialogs import choose_output

if TYPE_CHECKING:
    from trayadvisor.tui.app import TrayApp

    _Base = TrayApp
else:
    _Base = object


class ReportCommands(_Base):
    """Write a report (HTML, or Markdown with SVG pictures beside it)."""

    report_running = False

    def output_path(self, suffix: str) -> Path:
        """A file next to the layout: ``<stem><suffix>`` (the working folder for the demo
        or an unsaved layout)."""
        doc = self.document
        if doc.path is not None:
            folder = doc.path.parent if doc.path.parent.is_dir() else Path.cwd()
            stem = doc.path.stem
        else:
            folder = Path.cwd()
            stem = re.sub(r"[^\w.-]+", "-", doc.label).strip("-") or "layout"
        return folder / f"{stem}{suffix}"

    def action_report(self) -> None:
        if self.report_running:
            self.set_status("a report is being written; wait for its notification",
                            "warning")
            return
        choose_output(self, "Write the report (.html, or .md with .svg pictures)",
                      str(self.output_path("-report.html")), self.start_report,
                      hint="Enter writes · .html or .md · Esc cancels")

    def start_report(self, target: Path) -> None:
        """Write the report for the layout on show to ``target`` in a worker."""
        doc = self.document
        source_file = doc.path if doc.path is not None and not doc.dirty and not doc.new \
            else None
        name = doc.display_path + (" (unsaved edits)" if doc.dirty else "")
        self.report_running = True
        self.set_status(f"writing the report to {target}…")
        self._report_worker(doc.layout, target, source_file, name,
                            self.settings.distance_mm, self.settings.currents)

    @work(thread=True, exclusive=True, group="report", exit_on_error=False)
    def _report_worker(self, layout: Layout, target: Path, source_file: Path | None,
                       source_name: str, distance_mm: float, currents: str) -> None:
        from trayadvisor.output import ReportError, write_report

        text = None
        if source_file is not None:  # the file as saved is the model on show
            try:
                text = source_file.read_text(encoding="utf-8").removeprefix("\ufeff")
            except OSError:
                text = None  # the report then shows the layout as it would be saved
        try:
            written = write_report(layout, target, source_text=text, source_name=source_name,
                                   distance_mm=distance_mm, currents=currents)
        except ReportError as err:
            self.call_from_thread(self._report_done, [], str(err))
        except OSError as err:
            self.call_from_thread(self._report_done, [], f"{target}: cannot write "
                                  f"({err.strerror or err}); an existing file is unchanged")
        except Exception as exc:  # a UI must survive an engine error: show it, keep running
            self.call_from_thread(self._report_done, [],
                                  f"report failed: {type(exc).__name__}: {exc}")
        else:
            self.call_from_thread(self._report_done, written, "")

    def _report_done(self, written: list[Path], error: str) -> None:
        self.report_running = False
        if error:
            self.set_status(f"report not written: {error}", "error")
            self.notify(error, title="Report not written", severity="error", timeout=10)
            return
        main = written[-1]
        extra = f" and {len(written) - 1} picture file(s)" if len(written) > 1 else ""
        self.set_status(f"wrote the report {main}{extra}")
        self.notify("\n".join(str(p) for p in written), title="Report written", timeout=8)
