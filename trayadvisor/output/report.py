"""Self-contained reports: HTML with inline SVG pictures, or Markdown with the SVGs beside it.

:func:`write_report` computes the content (:mod:`trayadvisor.output.content`), renders it
(:mod:`trayadvisor.output.render`) and writes every file atomically.
"""

from __future__ import annotations

import os
from pathlib import Path

from trayadvisor.coupling import DEFAULT_TEMPERATURE_C
from trayadvisor.engine import DEFAULT_DISTANCE_MM
from trayadvisor.layoutfile import atomic_write_text
from trayadvisor.model import Layout
from trayadvisor.output.content import build_report
from trayadvisor.output.render import render_html, render_markdown

#: Report file extensions and the format each one picks.
FORMATS = {".html": "html", ".htm": "html", ".md": "md", ".markdown": "md"}


class ReportError(ValueError):
    """A report cannot be written as asked (unknown extension, ...)."""


def write_report(layout: Layout, path: str | os.PathLike[str], *, source_text: str | None = None,
                 source_name: str = "", distance_mm: float = DEFAULT_DISTANCE_MM, top: int = 6,
                 rank: bool = True, coupling: bool = True,
                 currents: str = "solved",
                 temperature_c: float = DEFAULT_TEMPERATURE_C) -> list[Path]:
    """Write the report for ``layout`` to ``path`` (.html, or .md with SVG files beside it).

    Parameters
    ----------
    layout : Layout
    path : .html/.htm (one self-contained file) or .md/.markdown (pictures beside it as
        ``<stem>-<picture>.svg``)
    source_text : the layout file's text for the appendix; default: the layout as it would be
        saved.
    source_name : the file name shown in the report.
    distance_mm, top : distance d for the stray field; number of ranked options shown.
    rank, coupling : include those sections (when their engines are available).
    currents : the current model of every figure: "solved" sharing (the default) or "equal".
    temperature_c : conductor temperature of the resistance in the solved sharing (°C).

    Returns
    -------
    The files written, each atomically.

    Raises
    ------
    ReportError
        For an extension that is neither HTML nor Markdown (nothing is written).
    """
    target = Path(path)
    kind = FORMATS.get(target.suffix.lower())
    if kind is None:
        raise ReportError(f"{target}: a report is .html or .md, not '{target.suffix or '(none)'}'")
    content = build_report(layout, source_text=source_text, source_name=source_name,
                           distance_mm=distance_mm, top=top, rank=rank, coupling=coupling,
                           currents=currents, temperature_c=temperature_c)
    if kind == "html":
        atomic_write_text(target, render_html(content))
        return [target]
    names = {p.key: f"{target.stem}-{p.key}.svg" for p in content.pictures}
    written = []
    for p in content.pictures:
        svg_path = target.with_name(names[p.key])
        atomic_write_text(svg_path, '<?xml version="1.0" encoding="utf-8"?>\n' + p.svg)
        written.append(svg_path)
    atomic_write_text(target, render_markdown(content, names))
    return [*written, target]
