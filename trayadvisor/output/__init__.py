"""Outputs for people and scripts: wording, cautions, JSON, option exports, reports.

- :mod:`~trayadvisor.output.wording` — µT and mm formats, far-field decay in words (shared by
  the CLI, the UI and the reports so they print the same thing).
- :mod:`~trayadvisor.output.cautions` — the cautions every output shows.
- :mod:`~trayadvisor.output.jsontext` — the one JSON writer (non-finite floats as null).
- :mod:`~trayadvisor.output.exports` — ranked options as CSV, JSON or Markdown.
- :mod:`~trayadvisor.output.content` — what a report shows, computed once.
- :mod:`~trayadvisor.output.render` — a report as HTML (inline SVG) or Markdown.
- :mod:`~trayadvisor.output.pictures` — the report's pictures (matplotlib, as SVG).
- :mod:`~trayadvisor.output.report` — ``write_report``: content, rendering, atomic files.

Reports are described in ``docs/report.md``.
"""

from trayadvisor.output.cautions import CAUTION_LINE, CAUTIONS
from trayadvisor.output.content import ReportContent, build_report
from trayadvisor.output.exports import ExportError, export_format, export_text, write_result
from trayadvisor.output.jsontext import dumps, json_safe
from trayadvisor.output.report import FORMATS as REPORT_FORMATS
from trayadvisor.output.report import ReportError, write_report
from trayadvisor.output.wording import decay_text, fmt_fixed, fmt_mm, fmt_uT, plain

__all__ = [
    "CAUTIONS",
    "CAUTION_LINE",
    "REPORT_FORMATS",
    "ExportError",
    "ReportContent",
    "ReportError",
    "build_report",
    "decay_text",
    "dumps",
    "export_format",
    "export_text",
    "fmt_mm",
    "fmt_fixed",
    "fmt_uT",
    "json_safe",
    "plain",
    "write_report",
    "write_result",
]
