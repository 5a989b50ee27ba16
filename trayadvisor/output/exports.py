"""Ranked options as CSV, JSON or Markdown, written atomically.

- CSV: one row per option and conductor (``rank, max_resultant_uT, reduction_pct,
  reduction_db, far_field_order, <figure keys>, conductor, circuit, phase, x_mm, y_mm,
  moved, value, unit, versus_now, same_as``), floats in full precision, so a spreadsheet
  can filter one option or pivot. ``value`` is the objective's value in ``unit`` (µT, or
  the worst limit index); ``max_resultant_uT`` is empty for an index.
- JSON: the ``rank --json`` object (:meth:`trayadvisor.ranking.RankResult.to_json`).
- Markdown: a summary, a table of options, and for each option its sketch and positions.

The file's extension picks the format (:data:`FORMATS`).
"""

from __future__ import annotations

import csv
import io
import math
import os
from pathlib import Path

from trayadvisor.layoutfile import atomic_write_text
from trayadvisor.model import Layout
from trayadvisor.output.cautions import CAUTIONS
from trayadvisor.output.jsontext import dumps
from trayadvisor.ranking import RankResult

#: Extension → format.
FORMATS: dict[str, str] = {".csv": "csv", ".json": "json", ".md": "markdown",
                           ".markdown": "markdown"}



class ExportError(ValueError):
    """An output path the exporter cannot handle (one clean line)."""


def export_format(path: str | os.PathLike[str]) -> str:
    """The format for ``path`` by its extension, or :class:`ExportError`."""
    ext = Path(path).suffix.lower()
    if ext not in FORMATS:
        raise ExportError(f"{os.fspath(path)}: unknown extension "
                          f"'{ext or '(none)'}'; use .csv, .json or .md")
    return FORMATS[ext]


def result_json(result: RankResult) -> str:
    """JSON text of a ranking (inf and NaN become null)."""
    return dumps(result.to_json()) + "\n"


def _num(v: float | int | None) -> str:
    if v is None or (isinstance(v, float) and not math.isfinite(v)):
        return ""
    return repr(float(v)) if isinstance(v, float) else str(v)


def result_csv(result: RankResult, layout: Layout | None = None) -> str:
    """CSV text: one row per (option, conductor); see the module notes."""
    keys = sorted({k for o in result.options for k in o.figures})
    info = {c.name: (c.circuit, c.phase) for c in layout.conductors} if layout else {}
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["rank", "max_resultant_uT", "reduction_pct", "reduction_db",
                "far_field_order", *keys, "conductor", "circuit", "phase", "x_mm", "y_mm",
                "moved", "value", "unit", "versus_now", "same_as"])
    in_ut = result.unit == "µT"
    for o in result.options:
        head = [o.rank, _num(o.max_resultant_uT) if in_ut else "", _num(o.reduction_pct),
                _num(o.reduction_db), _num(o.far_field_order),
                *(_num(o.figures.get(k)) for k in keys)]
        tail = [_num(o.max_resultant_uT), result.unit, o.versus_now,
                "" if o.same_as is None else o.same_as]
        for name, (x, y) in o.positions.items():
            circ, phase = info.get(name, ("", ""))
            moved = _moved(result, name, x, y)
            w.writerow([*head, name, circ, phase, _num(float(x)), _num(float(y)),
                        "" if moved is None else ("yes" if moved else "no"), *tail])
    return buf.getvalue()


def _moved(result: RankResult, name: str, x: float, y: float) -> bool | None:
    base = result.baseline_positions.get(name)
    if base is None:
        return None
    return math.hypot(base[0] - x, base[1] - y) > 1e-6


def _md_num(v: float | None, fmt: str = ".4g") -> str:
    if v is None:
        return "–"
    if isinstance(v, float) and not math.isfinite(v):
        return "∞"
    return format(v, fmt)


def _md_cell(text: str) -> str:
    return text.replace("|", "\\|")


def result_markdown(result: RankResult, title: str = "", layout: Layout | None = None) -> str:
    """Markdown text: summary, table of options, then each option's sketch and positions."""
    head = f"# Ranked arrangements{' — ' + _md_cell(title) if title else ''}"
    done = f"{result.evaluated:,}"
    if result.distinct is not None:
        done += f" of {result.distinct:,} distinct"
    unit = " µT" if result.unit == "µT" else " (worst limit index)"
    lines = [head, "",
             f"- objective: {_md_cell(result.objective)}",
             f"- method: {result.method} ({done} arrangements evaluated"
             + ("; the top options are exact" if result.certified else "") + ")",
             f"- now (arrangement in the file): {_md_num(result.baseline_uT)}{unit}",
             *(f"- note: {_md_cell(n)}" for n in result.notes), ""]
    keys = sorted({k for o in result.options for k in o.figures})
    field = "field µT" if result.unit == "µT" else "worst index"
    lines.append(f"| rank | {field} | reduction % | reduction dB | far-field order | vs now |"
                 + "".join(f" {k} |" for k in keys))
    lines.append("|---:|---:|---:|---:|---:|---|" + "---:|" * len(keys))
    for o in result.options:
        versus = {"worse": "WORSE", "same": "same"}.get(o.versus_now, "better") + (
            f", = option {o.same_as}" if o.same_as else "")
        lines.append(f"| {o.rank} | {_md_num(o.max_resultant_uT)} | "
                     f"{_md_num(o.reduction_pct, '.1f')} | {_md_num(o.reduction_db, '.1f')} | "
                     f"{'–' if o.far_field_order is None else o.far_field_order} | {versus} |"
                     + "".join(f" {_md_num(o.figures.get(k))} |" for k in keys))
    info = {c.name: (c.circuit, c.phase) for c in layout.conductors} if layout else {}
    for o in result.options:
        lines += ["", f"## Option {o.rank}: {_md_num(o.max_resultant_uT)}{unit}", "",
                  "```text", o.sketch, "```", "",
                  "| conductor | circuit | phase | x mm | y mm | moved |",
                  "|---|---|---|---:|---:|---|"]
        for name, (x, y) in o.positions.items():
            circ, phase = info.get(name, ("", ""))
            moved = _moved(result, name, x, y)
            lines.append(f"| {_md_cell(name)} | {_md_cell(circ)} | {_md_cell(phase)} | "
                         f"{x:.1f} | {y:.1f} | "
                         f"{'' if moved is None else ('yes' if moved else 'no')} |")
    lines += ["", f"> {' '.join(CAUTIONS)}", ""]
    return "\n".join(lines)


def export_text(result: RankResult, fmt: str, layout: Layout | None = None,
                title: str = "") -> str:
    """The text of ``result`` in format ``fmt`` ("csv", "json" or "markdown")."""
    if fmt == "csv":
        return result_csv(result, layout)
    if fmt == "json":
        return result_json(result)
    if fmt == "markdown":
        return result_markdown(result, title or (layout.title if layout else ""), layout)
    raise ExportError(f"unknown export format {fmt!r}; use csv, json or markdown")


def write_result(result: RankResult, path: str | os.PathLike[str],
                 layout: Layout | None = None, title: str = "") -> str:
    """Write ``result`` to ``path`` atomically in the format its extension names.

    Returns the format written. Raises :class:`ExportError` for an unknown extension and
    ``OSError`` when the file cannot be written (an existing file is then left as it was).
    """
    fmt = export_format(path)
    atomic_write_text(path, export_text(result, fmt, layout, title))
    return fmt
