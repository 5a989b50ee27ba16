"""What a report shows, computed once: the figures, the tables and the pictures.

Every number in a report comes from the same core calls the CLI makes
(:func:`trayadvisor.analysis.field_summary`, :func:`trayadvisor.engine.stray_uT`,
:func:`trayadvisor.ranking.rank_layout`, :func:`trayadvisor.coupling.coupling_summary`), so a
report and ``field --json`` / ``rank --json`` / ``couple --json`` agree. The figures are
also embedded as JSON for scripts that read reports. :mod:`trayadvisor.output.render` turns
this content into HTML or Markdown.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from trayadvisor import __version__
from trayadvisor.analysis import FieldSummary, PlateComparison, compare_summaries, field_summary
from trayadvisor.coupling import DEFAULT_TEMPERATURE_C, carried_sources, coupling_summary
from trayadvisor.engine import DEFAULT_DISTANCE_MM, field_grid_uT, stray_uT
from trayadvisor.layoutfile import dumps_layout
from trayadvisor.limits import LibraryLimit, find, library_at, library_source
from trayadvisor.model import Layout, Limit, Plate
from trayadvisor.output.jsontext import dumps
from trayadvisor.output.pictures import (
    contours_svg,
    distance_svg,
    options_svg,
    profile_svg,
    section_svg,
)
from trayadvisor.output.wording import decay_text
from trayadvisor.ranking import rank_layout

#: How library levels are compared; every report shows it beside the limits.
LIMITS_NOTE = (
    "Every field here is AC (fundamental and harmonics); the static (DC) field is reported "
    "beside it and judged only by DC levels. Exposure levels judge harmonics by the "
    "multi-frequency rule (the sum of B_h / level(f_h) must not exceed 1); targets and "
    "equipment-immunity levels judge the AC resultant. Values marked 'recalled' were not "
    "checked against the cited document: check them against your own copy."
)
#: Beside the places table: what the kinds of limit mean.
PLACES_NOTE = (
    "Exposure levels are for people, immunity levels for equipment (never an exposure "
    "limit), targets are the project's own. Index = worst value over the place; pass when "
    "it is at most 1; margin = -20 log10(index) dB."
)
#: Under the plates tables: what of the metal is modelled and what is not.
PLATES_NOTE = (
    "Modelled: the plates and the solid sheet trays' metal the layout describes, solved by "
    "2D finite elements in the cross-section, so every plate is taken as long and straight "
    "along the run, like the cables; linear materials of constant μr and σ (a named "
    "material takes typical data recalled from memory: check them against the "
    "manufacturer's data); each insulated body (plates sharing a body; a sheet tray's bottom "
    "and sides, its cover a body of its own) carries no net current, its eddy currents "
    "summing to zero; the loss is the eddy-current loss per metre of run, summed over the AC "
    "components at their own frequencies (DC drives none). Not modelled: hysteresis loss; "
    "saturation of steel; perforations and slots, and ladder and mesh trays (a tray without "
    "a sheet counts as no metal at all); joints and gaps along the run; a tray bonded to "
    "earth carrying a net current (circulating or fault current); building steel "
    "(reinforcement, beams, ducts) and any other metal the layout does not describe. "
    "Measure installed fields where the figures matter."
)
#: Beside the with / without table: how its figures are made.
COMPARISON_NOTE = (
    "Without: every figure computed again as if no plate and no sheet metal existed, on the "
    "same envelope (the curve at d is the same curve) with the same current model and "
    "options; with solved sharing the currents are solved again without the plates. "
    "Factor = with / without: below 1 the plates screen there, above 1 they concentrate "
    "the field; reduction = -20 log10(factor) dB."
)

@dataclass(frozen=True)
class Picture:
    key: str
    caption: str
    svg: str


@dataclass
class ReportContent:
    """Everything a report shows, computed once; rendered to HTML or Markdown."""

    layout: Layout
    title: str
    source_name: str
    source_text: str
    source_is_file: bool
    summary: FieldSummary
    field_json: dict
    library: tuple[tuple[LibraryLimit, float], ...]
    sweep_mm: np.ndarray
    sweep_uT: np.ndarray
    rank_json: dict | None = None
    rank_note: str = ""
    coupling_json: dict | None = None
    coupling_note: str = ""
    plate_comparison: PlateComparison | None = None
    pictures: list[Picture] = field(default_factory=list)

    def limit_notes(self) -> list[str]:
        """Notes for the limits section that depend on this layout."""
        dc = [c.name for c in self.layout.circuits if c.system == "dc"]
        if not dc:
            return []
        return [f"DC circuit(s) {', '.join(dc)} add a static field to the resultant shown; the "
                "levels listed are for power-frequency fields (static fields have their own "
                "guidance)."]

    def figures_json(self) -> dict:
        """The machine-readable block: field (as ``field --json``), rank, couple; with
        plates, also ``plate_comparison`` (as in ``field --compare-plates --json``)."""
        out = {"trayadvisor": __version__, "field": self.field_json, "rank": self.rank_json,
               "couple": self.coupling_json}
        if self.plate_comparison is not None:
            out["plate_comparison"] = self.plate_comparison.to_json()
        return out


def sweep_distances(summary: FieldSummary) -> np.ndarray:
    """Distances (mm) for the stray-field-against-distance curve: 10 mm to past the
    largest finite clearance (at least 10 m, at most 100 m)."""
    clear = [lim.clearance_mm for lim in summary.limits if math.isfinite(lim.clearance_mm)]
    end = max([1e4, 4 * summary.distance_mm] + [2 * c for c in clear])
    return np.geomspace(10.0, min(end, 1e5), 40)


def contour_bounds(layout: Layout, distance_mm: float) -> tuple[float, float, float, float]:
    """The field map's extent (mm): the curve at d with a margin, the named points and
    lines, and every plate with half that margin around it (the field on its far side)."""
    x0, y0, x1, y1 = layout.envelope_mm()
    m = max(150.0, 1.4 * distance_mm + 0.1 * max(x1 - x0, y1 - y0))
    xs = [x0 - m, x1 + m] + [p.x_mm for p in layout.points]
    ys = [y0 - m, y1 + m] + [p.y_mm for p in layout.points]
    for ln in layout.lines:
        xs += [ln.x0_mm, ln.x1_mm]
        ys += [ln.y0_mm, ln.y1_mm]
    for pl in layout.all_plates():
        px0, py0, px1, py1 = pl.bounds
        xs += [px0 - 0.5 * m, px1 + 0.5 * m]
        ys += [py0 - 0.5 * m, py1 + 0.5 * m]
    pad = 0.05 * m
    return (min(xs) - pad, min(ys) - pad, max(xs) + pad, max(ys) + pad)


def build_report(layout: Layout, *, source_text: str | None = None, source_name: str = "",
                 distance_mm: float = DEFAULT_DISTANCE_MM, top: int = 6, rank: bool = True,
                 coupling: bool = True, pictures: bool = True,
                 currents: str = "solved",
                 temperature_c: float = DEFAULT_TEMPERATURE_C) -> ReportContent:
    """Compute every figure and picture of the report for ``layout``; ``currents`` is the
    current model of every figure ("solved" sharing, the default, or "equal" shares) and
    ``temperature_c`` the conductor temperature of the resistance in the solved sharing."""
    f = float(layout.frequency_hz)
    library = library_at(f)
    options = {"distance_mm": distance_mm, "currents": currents,
               "temperature_c": temperature_c,
               "limits": [Limit(lim.name, ut, library_source(lim, f), kind=lim.kind,
                                band=lim.band, library=lim.id) for lim, ut in library]}
    summary = field_summary(layout, **options)
    src = carried_sources(layout, currents, temperature_c)
    d = sweep_distances(summary)
    b = np.array([stray_uT(layout, float(x), src) for x in d])
    content = ReportContent(
        layout=layout, title=layout.title or "(untitled layout)",
        source_name=source_name or "layout", source_is_file=source_text is not None,
        source_text=source_text if source_text is not None else dumps_layout(layout),
        summary=summary, field_json=summary.to_json(), library=library, sweep_mm=d,
        sweep_uT=b)
    if layout.all_plates():  # the same figures again as if no plate existed
        content.plate_comparison = compare_summaries(
            summary, field_summary(replace(layout, without_metal=True), **options))
    if rank:
        content.rank_json = rank_layout(layout, distance_mm=distance_mm, top_k=top,
                                        currents=currents,
                                        temperature_c=temperature_c).to_json()
    else:
        content.rank_note = "Ranking was not run for this report."
    if coupling:
        content.coupling_json = coupling_summary(layout, currents=currents,
                                                 temperature_c=temperature_c).to_json()
    if not pictures:
        return content
    bounds = contour_bounds(layout, distance_mm)
    bw, bh = bounds[2] - bounds[0], bounds[3] - bounds[1]
    nx = 220 if bw >= bh else max(60, int(220 * bw / bh))
    ny = max(60, int(nx * bh / bw))
    grid = field_grid_uT(layout, bounds, nx, ny, src)
    pics = content.pictures
    pics.append(Picture("section", "Cross-section to scale: trays, conductors by circuit, "
                        "phase written in each conductor.", section_svg(layout, "fig1")))
    pics.append(Picture("contours", "AC resultant RMS field around the trays: iso-µT lines in "
                        "1-2-5 steps; dashed, the curve at distance d and its maximum.",
                        contours_svg(layout, summary, grid, bounds, "fig2")))
    pics.append(Picture("profile", "AC resultant RMS field along the curve at distance d.",
                        profile_svg(layout, summary, "fig3")))
    pics.append(Picture("distance", "AC stray field against distance (log-log), with the AC "
                        "limits, their clearances (triangles; for an exposure level, where its "
                        "multi-frequency index reaches 1) and the far-field slope.",
                        distance_svg(d, b, summary, "fig4")))
    ranked = option_layouts(content)
    if ranked:
        pics.append(Picture("options", "Ranked options as small multiples, the current "
                            "arrangement first.", options_svg(ranked, "fig5")))
    return content


def option_layouts(content: ReportContent) -> list[tuple[str, Layout]]:
    """(title, layout) of the current arrangement and each ranked option."""
    if not content.rank_json or not content.rank_json.get("options"):
        return []
    base = content.rank_json.get("baseline", content.summary.max_resultant_uT)
    unit = content.rank_json.get("unit", "µT")
    fig = (lambda v: f"{v:.4g} µT") if unit == "µT" else (lambda v: f"index {v:.3g}")
    out = [(f"current  {fig(base)}", content.layout)]
    for opt in content.rank_json["options"]:
        pos = {c["name"]: (c["x_mm"], c["y_mm"]) for c in opt["conductors"]}
        out.append((f"#{opt['rank']}  {fig(opt['value'])}",
                    content.layout.with_positions(pos)))
    return out


# -- tables shared by both renderings ----------------------------------------------------
Cell = tuple[str, float | None]  # shown text, exact value (for data-value / checks)


def num(v: float | None, sig: int = 4) -> str:
    if v is None:
        return "-"
    if isinstance(v, float) and not math.isfinite(v):
        return "inf"
    if 10**sig <= abs(v) < 1e12:
        return f"{v:.0f}"
    return f"{v:.{sig}g}"


def _cell(v: float | None) -> Cell:
    return (num(v), None if v is None else float(v))


def summary_rows(c: ReportContent) -> list[list[Cell | str]]:
    s = c.summary
    rows: list[list[Cell | str]] = [
        [f"stray field at d = {s.distance_mm:g} mm (resultant RMS, µT)",
         _cell(s.max_resultant_uT)],
        ["where it peaks, x (mm)", _cell(s.max_at_mm[0])],
        ["where it peaks, y (mm)", _cell(s.max_at_mm[1])],
        ["far-field decay", decay_text(s.far_field_order)],
        ["far-field leading term at 1 m (µT)", _cell(s.far_field_uT_at_1m)],
        ["currents", "solved sharing between parallel conductors" if s.currents == "solved"
         else "equal shares between parallel conductors"],
        *([["note", n] for n in s.notes]),
    ]
    for p in (*s.points, *s.named_points):
        rows.append([f"point {p.name} ({p.x_mm:g}, {p.y_mm:g}) mm: resultant / max (µT)",
                     _cell(p.resultant_uT), _cell(p.max_uT)])
    for ln in s.lines:
        rows.append([f"line {ln.name}: largest resultant / max (µT), at ({ln.max_at_mm[0]:.0f},"
                     f" {ln.max_at_mm[1]:.0f}) mm", _cell(ln.max_resultant_uT),
                     _cell(ln.max_uT)])
    return rows


def limit_rows(c: ReportContent) -> list[list[Cell | str]]:
    rows: list[list[Cell | str]] = []
    for lim in c.summary.limits:
        try:
            lib = find(lim.name)
            checked = ("checked" if lib.checked_at(c.layout.frequency_hz) else "RECALLED")
            source = lib.source
        except KeyError:
            checked, source = "layout", lim.source
        clr = ("beyond 100 m", None) if math.isinf(lim.clearance_mm) else _cell(lim.clearance_mm)
        if lim.clearance_mm == 0:
            clr = ("0 (below it at the envelope)", 0.0)
        rows.append([lim.name, _cell(lim.limit_uT), source, checked, clr,
                     "pass" if lim.passes else "FAIL"])
    return rows


def rank_header(c: ReportContent) -> list[str]:
    """The ranking table's header: the objective's value is µT, or the worst limit index."""
    unit = (c.rank_json or {}).get("unit", "µT")
    value = ("max resultant at d (µT)" if unit == "µT"
             else "worst index of the place-bound limits")
    return ["option", value, "reduction (%)", "reduction (dB)", "far-field order",
            "compared with now"]


def rank_rows(c: ReportContent) -> list[list[Cell | str]]:
    """The current arrangement, then each option, with the ranking's own figures; an option
    worse than now, or equal to an earlier one, says so."""
    r = c.rank_json or {}
    base = r.get("baseline", c.summary.max_resultant_uT)
    rows: list[list[Cell | str]] = [["current", _cell(base), "0", "0",
                                     str(c.summary.far_field_order), ""]]
    for opt in r.get("options", []):
        versus = {"worse": "WORSE than now", "same": "same as now"}.get(
            opt.get("versus_now", ""), "better")
        if opt.get("same_as"):
            versus += f"; equivalent to #{opt['same_as']}"
        rows.append([f"#{opt['rank']}", _cell(opt["value"]),
                     num(opt.get("reduction_pct"), 3), num(opt.get("reduction_db"), 3),
                     str(opt.get("far_field_order")), versus])
    return rows


PLACE_HEADER = ["place", "AC max (µT)", "DC max (µT)", "limit", "kind", "band", "level (µT)",
                "index", "margin (dB)", "verdict"]


def place_rows(c: ReportContent) -> list[list[Cell | str]]:
    """Every point, line and area: its AC and DC maxima, then each limit bound to it with
    its kind (people, equipment or the project's target), index and margin."""
    rows: list[list[Cell | str]] = []
    for p in c.summary.places:
        if p.type != "area" and not p.limits:
            continue
        head: list[Cell | str] = [f"{p.type} {p.name}", _cell(p.max_resultant_uT),
                                  _cell(p.dc_max_uT)]
        if not p.limits:
            rows.append(head + ["-"] * 7)
        for q in p.limits:
            kind = {"exposure": "exposure (people)", "immunity": "immunity (equipment)",
                    "target": "project target"}[q.kind]
            margin = "inf" if math.isinf(q.margin_db) else num(q.margin_db, 3)
            rows.append(head + [q.name, kind, q.band.upper(), _cell(q.limit_uT),
                                num(q.index, 4), margin, "pass" if q.passes else "FAIL"])
            head = ["", "", ""]
    return rows


PLATE_HEADER = ["plate", "material", "μr", "σ (MS/m)", "body", "width × height (mm)",
                "lower-left x, y (mm)", "eddy-current loss (W/m)"]
BODY_HEADER = ["body", "plates", "eddy-current loss (W/m)"]
COMPARISON_HEADER = ["where", "with plates (µT)", "without plates (µT)",
                     "factor (with / without)", "reduction (dB)"]


def _material(plate: Plate) -> str:
    """The material name, saying which data the layout gives itself."""
    given = [w for w, v in (("μr", plate.mu_r), ("σ", plate.sigma_s_per_m)) if v is not None]
    if not given:
        return plate.material or "-"
    words = f"{' and '.join(given)} given"
    return f"{plate.material} ({words})" if plate.material else words


def plate_rows(c: ReportContent) -> list[list[Cell | str]]:
    """Every plate (``[[plate]]`` entries, then the sheet trays' metal) with the data the
    figures use and its eddy-current loss (the field summary's own figures)."""
    rows: list[list[Cell | str]] = []
    for pl, fig in zip(c.layout.all_plates(), c.summary.plates, strict=True):
        rows.append([fig.name, _material(pl), _cell(fig.mu_r), _cell(fig.sigma_s_per_m / 1e6),
                     fig.body, f"{num(pl.width_mm)} × {num(pl.height_mm)}",
                     f"{num(pl.x_mm)}, {num(pl.y_mm)}", _cell(fig.loss_w_per_m)])
    return rows


def body_rows(c: ReportContent) -> list[list[Cell | str]]:
    """The loss of each conducting body (its plates summed), then of all of them."""
    bodies: dict[str, list] = {}
    for fig in c.summary.plates:
        bodies.setdefault(fig.body, []).append(fig)
    rows: list[list[Cell | str]] = [
        [b, ", ".join(p.name for p in ps), _cell(sum(p.loss_w_per_m for p in ps))]
        for b, ps in bodies.items()]
    if len(bodies) > 1:
        rows.append(["all bodies", f"{len(c.summary.plates)} plates",
                     _cell(sum(p.loss_w_per_m for p in c.summary.plates))])
    return rows


def comparison_rows(c: ReportContent) -> list[list[Cell | str]]:
    """The curve at d and every place, with and without the plates."""
    rows: list[list[Cell | str]] = []
    for r in (c.plate_comparison.rows if c.plate_comparison else ()):
        f, db = r.factor, r.reduction_db
        rows.append([r.name if r.type == "curve" else f"{r.type} {r.name}",
                     _cell(r.with_uT), _cell(r.without_uT),
                     ("-", None) if math.isnan(f) else (num(f, 3), f),
                     ("-", None) if not math.isfinite(db) else (num(db, 3), db)])
    return rows


def _scalar(v: object) -> Cell | str:
    if isinstance(v, bool) or v is None:
        return {True: "yes", False: "no", None: "-"}[v]
    if isinstance(v, int | float):
        return _cell(v)
    if isinstance(v, list) and all(not isinstance(x, dict | list) for x in v):
        return ", ".join(str(x) for x in v)
    return str(v)


def json_tables(data: dict | None) -> list[tuple[str, list[str], list[list[Cell | str]]]]:
    """The tables of a JSON result (e.g. ``couple --json``) as (title, header, rows).

    A non-empty list of objects is a table; a list of objects inside its rows (victim
    harmonics) becomes its own table keyed by the row's first column; a square matrix with a
    matching list of names (``mutual_uH_per_m`` with ``loops``) becomes a labelled matrix.
    """
    out: list[tuple[str, list[str], list[list[Cell | str]]]] = []
    data = data or {}
    for key, value in data.items():
        if isinstance(value, list) and value and all(isinstance(r, dict) for r in value):
            keys = list(dict.fromkeys(k for r in value for k in r))
            nested = [k for k in keys if any(isinstance(r.get(k), list) and r.get(k)
                                             and isinstance(r[k][0], dict) for r in value)]
            header = [k for k in keys if k not in nested]
            out.append((key, header, [[_scalar(r.get(k)) for k in header] for r in value]))
            for sub in nested:
                sub_keys = list(dict.fromkeys(k for r in value for x in r.get(sub) or []
                                              for k in x))
                rows = [[_scalar(r.get(header[0]))] + [_scalar(x.get(k)) for k in sub_keys]
                        for r in value for x in r.get(sub) or []]
                out.append((f"{key}: {sub}", [header[0], *sub_keys], rows))
        elif (isinstance(value, list) and value and all(isinstance(r, list) for r in value)
              and key.endswith("_per_m") and len(data.get("loops", [])) == len(value)):
            names = [str(n) for n in data["loops"]]
            rows = [[n] + [_scalar(x) for x in r] for n, r in zip(names, value, strict=True)]
            out.append((key, ["", *names], rows))
    return out


def json_notes(data: dict | None) -> list[str]:
    """The ``notes`` of a JSON result, plus its top-level scalar keys as 'key: value'."""
    data = data or {}
    notes = [str(n) for n in data.get("notes", []) if isinstance(n, str)]
    for key, value in data.items():
        if key != "notes" and (value is None or isinstance(value, bool | int | float | str)):
            shown = _scalar(value) if isinstance(value, bool) or value is None else value
            notes.append(f"{key}: {shown}")
    return notes


def embedded_json(content: ReportContent) -> str:
    """The figures as JSON safe inside <script> and XML (no raw <, > or &)."""
    text = dumps(content.figures_json(), indent=1)
    return text.replace("&", "\\u0026").replace("<", "\\u003c").replace(">", "\\u003e")
