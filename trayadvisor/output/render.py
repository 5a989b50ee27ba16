"""Rendering a computed report (:class:`trayadvisor.output.content.ReportContent`) to text.

HTML output is one self-contained, well-formed (XHTML-compatible) document: inline style,
inline SVG, no scripts to run and nothing fetched from a network. Markdown output refers to
the SVG files written beside it.
"""

from __future__ import annotations

import html
import re
from collections.abc import Sequence

from trayadvisor import __version__
from trayadvisor.output.cautions import CAUTIONS
from trayadvisor.output.content import (
    BODY_HEADER,
    COMPARISON_HEADER,
    COMPARISON_NOTE,
    LIMITS_NOTE,
    PLACE_HEADER,
    PLACES_NOTE,
    PLATE_HEADER,
    PLATES_NOTE,
    Cell,
    Picture,
    ReportContent,
    body_rows,
    comparison_rows,
    embedded_json,
    json_notes,
    json_tables,
    limit_rows,
    place_rows,
    plate_rows,
    rank_header,
    rank_rows,
    summary_rows,
)

_STYLE = """
body { font-family: sans-serif; max-width: 60em; margin: 1.5em auto; padding: 0 1em;
       color: #111; line-height: 1.35; }
h1 { font-size: 1.5em; } h2 { font-size: 1.2em; border-bottom: 1px solid #999;
       margin-top: 1.6em; }
table { border-collapse: collapse; margin: 0.6em 0; font-size: 0.9em; }
th, td { border: 1px solid #bbb; padding: 0.15em 0.5em; text-align: left;
         vertical-align: top; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
figure { margin: 1em 0; } figure svg { max-width: 100%; height: auto; }
figcaption { font-size: 0.9em; color: #333; }
.cautions { border: 2px solid #000; padding: 0.2em 1em; }
pre { background: #f4f4f4; padding: 0.6em; overflow-x: auto; font-size: 0.85em; }
.note { font-size: 0.9em; }
@media print { .cautions { page-break-inside: avoid; } figure { page-break-inside: avoid; } }
"""


_NO_COUPLING = "No victim loops or parallel conductors in this layout."


def _e(text: object) -> str:
    return html.escape(str(text), quote=True)


def _td(cell: Cell | str) -> str:
    if isinstance(cell, tuple):
        text, value = cell
        data = "" if value is None else f' data-value="{value!r}"'
        return f'<td class="num"{data}>{_e(text)}</td>'
    return f"<td>{_e(cell)}</td>"


def _table(header: Sequence[str], rows: Sequence[Sequence[Cell | str]], tid: str = "") -> str:
    ident = f' id="{_e(tid)}"' if tid else ""
    head = "".join(f"<th>{_e(h)}</th>" for h in header)
    body = "\n".join("<tr>" + "".join(_td(c) for c in r) + "</tr>" for r in rows)
    return f"<table{ident}>\n<thead><tr>{head}</tr></thead>\n<tbody>\n{body}\n</tbody>\n</table>"


def _figure(p: Picture) -> str:
    return (f'<figure id="pic-{_e(p.key)}">\n{p.svg}\n<figcaption>{_e(p.caption)}'
            "</figcaption>\n</figure>")


def _pictures(c: ReportContent) -> dict[str, Picture]:
    return {p.key: p for p in c.pictures}


def _rank_header(c: ReportContent) -> str:
    r = c.rank_json or {}
    return (f"Method: {r.get('method', '?')}; arrangements evaluated: {r.get('evaluated', '?')}; "
            f"objective: maximum resultant field at d = {r.get('distance_mm', '?')} mm.")


def _plates_lead(c: ReportContent) -> str:
    return (f"Every plate and sheet tray part ({len(c.summary.plates)}), with the material "
            "data the figures use and the eddy-current loss the currents drive in it, per "
            "metre of run.")


def _bodies_lead() -> str:
    return ("The loss of each conducting body: plates sharing a body are one conductor, "
            "every other plate is insulated from the rest.")


def _comparison_lead(c: ReportContent) -> str:
    d = c.plate_comparison.distance_mm if c.plate_comparison else c.summary.distance_mm
    return (f"The AC resultant maximum on the curve at d = {d:g} mm and at every place, with "
            f"and without the plates. {COMPARISON_NOTE}")


def render_html(c: ReportContent) -> str:
    """The report as one HTML document (well-formed XML as well)."""
    pics = _pictures(c)
    s = c.summary
    out = [
        "<!DOCTYPE html>",
        '<html xmlns="http://www.w3.org/1999/xhtml" lang="en">',
        f'<head><meta charset="utf-8"/><title>{_e(c.title)} - trayadvisor report</title>'
        f"<style>{_STYLE}</style></head>",
        "<body>",
        f"<h1>{_e(c.title)}</h1>",
        f'<p class="note">Layout: {_e(c.source_name)}; {c.layout.frequency_hz:g} Hz; '
        f"{len(c.layout.trays)} tray(s), {len(c.layout.circuits)} circuit(s), "
        f"{len(c.layout.conductors)} conductor(s). Report by trayadvisor {_e(__version__)}.</p>",
        '<section id="cautions" class="cautions"><h2>Cautions</h2>',
        *[f"<p>{_e(t)}</p>" for t in CAUTIONS],
        "</section>",
        '<section id="stray"><h2>Stray field at distance d</h2>',
        _table(["figure", "value", ""], [r + [""] * (3 - len(r)) for r in summary_rows(c)],
               "summary-table"),
    ]
    for key in ("section", "contours", "profile"):
        if key in pics:
            out.append(_figure(pics[key]))
    out += ["</section>", '<section id="limits"><h2>Limits and clearances</h2>',
            f'<p class="note">Clearance: the distance outside the tray envelope beyond which the '
            f"stray field stays below the limit. Pass/fail at d = {s.distance_mm:g} mm. "
            f"{_e(LIMITS_NOTE)}</p>",
            *[f'<p class="note">{_e(n)}</p>' for n in c.limit_notes()],
            _table(["limit", "µT", "source", "value", "clearance (mm)",
                    f"at {s.distance_mm:g} mm"], limit_rows(c), "limits-table")]
    if place_rows(c):
        out += ['<p class="note">Limits bound to places, judged at the worst point of each '
                "place (AC: fundamental and harmonics; DC: the static field). "
                f"{_e(PLACES_NOTE)}</p>", _table(PLACE_HEADER, place_rows(c), "places-table")]
    if "distance" in pics:
        out.append(_figure(pics["distance"]))
    out.append("</section>")
    if c.summary.plates:
        out += ['<section id="plates"><h2>Plates</h2>',
                f'<p class="note">{_e(_plates_lead(c))}</p>',
                _table(PLATE_HEADER, plate_rows(c), "plate-table"),
                f'<p class="note">{_e(_bodies_lead())}</p>',
                _table(BODY_HEADER, body_rows(c), "plate-body-table")]
        if c.plate_comparison is not None:
            out += [f'<p class="note">{_e(_comparison_lead(c))}</p>',
                    _table(COMPARISON_HEADER, comparison_rows(c), "plate-comparison-table")]
        out += [f'<p class="note">{_e(PLATES_NOTE)}</p>', "</section>"]
    out += ['<section id="ranking"><h2>Ranked options</h2>']
    if c.rank_json is not None:
        out.append(f'<p class="note">{_e(_rank_header(c))}</p>')
        out.append(_table(rank_header(c), rank_rows(c), "rank-table"))
        if "options" in pics:
            out.append(_figure(pics["options"]))
    else:
        out.append(f'<p class="note">{_e(c.rank_note)}</p>')
    out += ["</section>", '<section id="coupling"><h2>Coupling and current sharing</h2>']
    tables = json_tables(c.coupling_json)
    if tables:
        for title, header, rows in tables:
            tid = "coupling-" + re.sub(r"[^a-z0-9]+", "-", title.lower())
            out += [f"<h3>{_e(title)}</h3>", _table(header, rows, tid)]
        out += ["<ul>", *[f"<li>{_e(n)}</li>" for n in json_notes(c.coupling_json)], "</ul>"]
    else:
        out.append(f'<p class="note">{_e(c.coupling_note or _NO_COUPLING)}</p>')
    what = "the file's own text" if c.source_is_file else "the layout as it would be saved"
    out += ["</section>", '<section id="appendix"><h2>Appendix: layout file</h2>',
            f'<p class="note">{_e(c.source_name)}, {what}.</p>',
            f"<pre>{_e(c.source_text)}</pre>", "</section>",
            '<script type="application/json" id="trayadvisor-figures">',
            embedded_json(c), "</script>", "</body>", "</html>", ""]
    return "\n".join(out)


# -- Markdown ------------------------------------------------------------------------------
#: Characters with a meaning inside a Markdown line (emphasis, code, links, raw HTML,
#: entities, mathematics in some renderers, table cells, headings): escaped with a backslash.
_MD_SPECIAL = re.compile(r"([\\`*_\[\]<>&$~|#])")


def _md(text: object) -> str:
    """Text (names, titles from a file) shown literally in Markdown, on one line."""
    return _MD_SPECIAL.sub(r"\\\1", re.sub(r"[\r\n]+", " ", str(text)))


def _md_table(header: Sequence[str], rows: Sequence[Sequence[Cell | str]]) -> str:
    def cell(c: Cell | str) -> str:
        return _md(c[0] if isinstance(c, tuple) else c)

    lines = ["| " + " | ".join(_md(h) for h in header) + " |",
             "|" + "|".join("---" for _ in header) + "|"]
    lines += ["| " + " | ".join(cell(x) for x in r) + " |" for r in rows]
    return "\n".join(lines)


def _fence(text: str, info: str = "") -> str:
    runs = [len(m) for m in re.findall(r"`+", text)]
    tick = "`" * max(3, max(runs, default=0) + 1)
    return f"{tick}{info}\n{text.rstrip()}\n{tick}"


def render_markdown(c: ReportContent, picture_files: dict[str, str]) -> str:
    """The report as Markdown; ``picture_files`` maps picture key -> SVG file name beside it."""
    s = c.summary

    def img(key: str) -> list[str]:
        p = _pictures(c).get(key)
        return [f"![{_md(p.caption)}]({picture_files[key]})", ""] if p else []

    out = [f"# {_md(c.title)}", "",
           f"Layout: {_md(c.source_name)}; {c.layout.frequency_hz:g} Hz. Report by trayadvisor "
           f"{__version__}.", "", "## Cautions", ""]
    out += [f"> {t}\n>" for t in CAUTIONS] + ["", "## Stray field at distance d", ""]
    out += [_md_table(["figure", "value", ""],
                      [r + [""] * (3 - len(r)) for r in summary_rows(c)]), ""]
    for key in ("section", "contours", "profile"):
        out += img(key)
    out += ["## Limits and clearances", "",
            f"Pass/fail at d = {s.distance_mm:g} mm. {LIMITS_NOTE}", "",
            *[f"{_md(n)}\n" for n in c.limit_notes()],
            _md_table(["limit", "µT", "source", "value", "clearance (mm)",
                       f"at {s.distance_mm:g} mm"], limit_rows(c)), ""]
    if place_rows(c):
        out += ["Limits bound to places, judged at the worst point of each place (AC: "
                f"fundamental and harmonics; DC: the static field). {PLACES_NOTE}", "",
                _md_table(PLACE_HEADER, place_rows(c)), ""]
    out += img("distance")
    if c.summary.plates:
        out += ["## Plates", "", _plates_lead(c), "",
                _md_table(PLATE_HEADER, plate_rows(c)), "", _bodies_lead(), "",
                _md_table(BODY_HEADER, body_rows(c)), ""]
        if c.plate_comparison is not None:
            out += [_comparison_lead(c), "",
                    _md_table(COMPARISON_HEADER, comparison_rows(c)), ""]
        out += [PLATES_NOTE, ""]
    out += ["## Ranked options", ""]
    if c.rank_json is not None:
        out += [_rank_header(c), "",
                _md_table(rank_header(c), rank_rows(c)),
                ""]
        out += img("options")
    else:
        out += [c.rank_note, ""]
    out += ["## Coupling and current sharing", ""]
    tables = json_tables(c.coupling_json)
    for title, header, rows in tables:
        out += [f"### {title}", "", _md_table(header, rows), ""]
    if tables:
        out += [f"- {_md(n)}" for n in json_notes(c.coupling_json)] + [""]
    if not tables:
        out += [c.coupling_note or _NO_COUPLING, ""]
    what = "the file's own text" if c.source_is_file else "the layout as it would be saved"
    out += ["## Appendix: layout file", "", f"{_md(c.source_name)}, {what}.", "",
            _fence(c.source_text, "toml"), "", "## Figures as JSON", "",
            _fence(embedded_json(c), "json"), ""]
    return "\n".join(out)
