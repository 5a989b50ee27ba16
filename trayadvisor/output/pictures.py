"""The report's pictures, drawn with matplotlib and returned as SVG text.

matplotlib is imported inside the functions that draw (an optional heavy import). Figures are
built as ``matplotlib.figure.Figure`` objects with the SVG canvas directly: no pyplot, no
global figure state, nothing left open. Every picture gets its own id prefix so several SVGs
can sit in one HTML document without clashing ids.
"""

from __future__ import annotations

import io
import math
import re
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from trayadvisor.analysis import FieldSummary
from trayadvisor.engine import offset_points
from trayadvisor.engine.units import MM
from trayadvisor.fem import PLATE_MATERIALS
from trayadvisor.model import Layout, Plate

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

_SVG_START = re.compile(r"<svg\b")
_ID = re.compile(r'\bid="([^"]+)"')
_URL = re.compile(r"url\(#([^)]+)\)")
_HREF = re.compile(r'((?:xlink:)?href)="#([^"]+)"')
_RC = {"svg.fonttype": "none", "svg.hashsalt": "trayadvisor", "font.size": 8.0,
       "axes.titlesize": 9.0, "axes.labelsize": 8.0, "legend.fontsize": 7.0}
_PALETTE = ("#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#8c564b", "#e377c2", "#7f7f7f",
            "#bcbd22", "#17becf", "#ff7f0e")


def new_figure(width_in: float, height_in: float, constrained: bool = True) -> Figure:
    """A Figure on the SVG canvas (no pyplot)."""
    from matplotlib.backends.backend_svg import FigureCanvasSVG
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in), layout="constrained" if constrained else None)
    FigureCanvasSVG(fig)
    return fig


def to_svg(fig: Figure, prefix: str) -> str:
    """The figure as an ``<svg>`` element (no XML prolog), ids prefixed with ``prefix``."""
    import matplotlib

    buf = io.StringIO()
    with matplotlib.rc_context(_RC):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    fig.clear()
    text = buf.getvalue()
    text = text[_SVG_START.search(text).start():]
    text = _ID.sub(lambda m: f'id="{prefix}-{m.group(1)}"', text)
    text = _URL.sub(lambda m: f"url(#{prefix}-{m.group(1)})", text)
    return _HREF.sub(lambda m: f'{m.group(1)}="#{prefix}-{m.group(2)}"', text)


#: How plates are drawn: (face colour, hatch) by material; plates given by μr and σ alone
#: are drawn as steel when magnetic (μr > 1), else as the last entry.
_PLATE_LOOKS: dict[str, tuple[str, str | None]] = {
    "steel": ("#6f7c88", "xxxx"), "stainless": ("#b4bcc4", "\\\\\\"),
    "aluminium": ("#d9dde2", "...."), "copper": ("#c98a5a", None),
    "": ("#c8c0a8", "++"),
}


def _literal(text: str) -> str:
    """Text from a file shown as it is: matplotlib reads a pair of ``$`` as mathematics,
    so every ``$`` is escaped; a legend label that starts with ``_`` (which a legend
    leaves out) gets a zero-width space in front."""
    text = str(text).replace("$", r"\$")
    return "\u200b" + text if text.startswith("_") else text


def _circuit_colours(layout: Layout) -> dict[str, str]:
    return {c.name: _PALETTE[i % len(_PALETTE)] for i, c in enumerate(layout.circuits)}


def plate_label(plate: Plate) -> str:
    """The legend words of a plate: ``plate (steel)``, ``plate (steel, μr 500)``,
    ``plate (μr 1, σ 3.5e+07 S/m)``."""
    parts = [plate.material] if plate.material else []
    if plate.mu_r is not None:
        parts.append(f"μr {plate.mu_r:g}")
    if plate.sigma_s_per_m is not None:
        parts.append(f"σ {plate.sigma_s_per_m:g} S/m")
    return f"plate ({', '.join(parts)})" if parts else "plate"


def _plate_look(plate: Plate) -> tuple[str, str | None]:
    if plate.material in _PLATE_LOOKS:
        return _PLATE_LOOKS[plate.material]
    mu_r = plate.mu_r if plate.mu_r is not None else PLATE_MATERIALS.get(
        plate.material or "", (1.0, 0.0))[0]
    return _PLATE_LOOKS["steel"] if mu_r > 1.0 else _PLATE_LOOKS[""]


def draw_plates(ax: Axes, layout: Layout, alpha: float = 1.0, zorder: float = 1.0,
                label: bool = True) -> None:
    """Every plate (``[[plate]]`` entries and sheet trays' metal) as a filled, hatched
    rectangle to scale, one legend entry per kind (``plate (steel)``); a dark edge keeps a
    2 mm sheet visible at report scale."""
    from matplotlib.patches import Rectangle

    seen: set[str] = set()
    for p in layout.all_plates():
        face, hatch = _plate_look(p)
        words = plate_label(p)
        ax.add_patch(Rectangle((p.x_mm, p.y_mm), p.width_mm, p.height_mm, facecolor=face,
                               edgecolor="0.15", linewidth=0.6, hatch=hatch, alpha=alpha,
                               zorder=zorder,
                               label=_literal(words) if label and words not in seen
                               else None))
        seen.add(words)


def drawing_bounds(layout: Layout) -> tuple[float, float, float, float]:
    """What a cross-section drawing shows (mm): the envelope and every plate."""
    x0, y0, x1, y1 = layout.envelope_mm()
    plates = layout.all_plates()
    if plates and not (layout.trays or layout.conductors):
        x0, y0, x1, y1 = plates[0].bounds
    for p in plates:
        px0, py0, px1, py1 = p.bounds
        x0, y0, x1, y1 = min(x0, px0), min(y0, py0), max(x1, px1), max(y1, py1)
    return x0, y0, x1, y1


def section_pads(layout: Layout) -> tuple[float, float]:
    """Margins (mm) around the drawing (envelope and plates) in cross-sections: x, y."""
    x0, y0, x1, y1 = drawing_bounds(layout)
    w, h = max(x1 - x0, 1.0), max(y1 - y0, 1.0)
    return 0.03 * max(w, h), 0.15 * h + 0.02 * max(w, h)


def _drawn_aspect(layout: Layout) -> float:
    """Height / width of a cross-section drawing with its margins."""
    x0, y0, x1, y1 = drawing_bounds(layout)
    px, py = section_pads(layout)
    return (y1 - y0 + 2 * py) / max(x1 - x0 + 2 * px, 1.0)


def draw_section(ax: Axes, layout: Layout, *, width_pt: float, labels: bool = True,
                 legend: bool = True) -> None:
    """Trays, plates and conductors to scale (mm); conductors coloured by circuit, phase
    written in; plates filled and hatched by material, under the conductors.

    ``width_pt`` is the axes' width in points, used to size the phase labels to the circles.
    Names from the file are drawn literally (:func:`_literal`).
    """
    from matplotlib.patches import Circle, Rectangle

    colours = _circuit_colours(layout)
    for t in layout.trays:
        ax.add_patch(Rectangle((t.x_mm, t.y_mm), t.width_mm, t.depth_mm, fill=False,
                               edgecolor="0.35", linewidth=1.0))
        if labels:
            top = t.outer_bounds[3]
            ax.annotate(_literal(t.name), (t.x_mm, top), xytext=(2, 2),
                        textcoords="offset points", fontsize=7, color="0.35")
    x0, y0, x1, y1 = drawing_bounds(layout)
    px, py = section_pads(layout)
    pt_per_mm = width_pt / (x1 - x0 + 2 * px)
    seen: set[str] = set()
    for c in layout.conductors:
        col = colours.get(c.circuit, "0.5")
        ax.add_patch(Circle((c.x_mm, c.y_mm), c.radius_mm, facecolor=col, edgecolor="black",
                            linewidth=0.5, alpha=0.85, hatch="///" if c.fixed else None,
                            label=None if c.circuit in seen else _literal(c.circuit)))
        seen.add(c.circuit)
        size = 0.5 * c.diameter_mm * pt_per_mm / max(1, len(c.phase) * 0.7)
        if labels and size >= 3.0:
            ax.text(c.x_mm, c.y_mm, _literal(c.phase), ha="center", va="center", color="white",
                    fontsize=min(7.0, size), fontweight="bold")
    draw_plates(ax, layout, zorder=0.8)  # under the trays and conductors, listed after them
    ax.set_xlim(x0 - px, x1 + px)
    ax.set_ylim(y0 - py, y1 + py)
    ax.set_aspect("equal")
    if legend and (seen or layout.all_plates()):
        ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False,
                  title="circuit (hatched: fixed)" if seen else None, title_fontsize=7)


def section_svg(layout: Layout, prefix: str) -> str:
    fig = new_figure(7.5, float(np.clip(5.6 * _drawn_aspect(layout) + 0.9, 1.8, 6.0)))
    ax = fig.add_subplot()
    draw_section(ax, layout, width_pt=72 * 5.6)
    ax.set_xlabel("x (mm)")
    ax.set_ylabel("y (mm)")
    ax.set_title("Cross-section to scale")
    return to_svg(fig, prefix)


def log_levels(lo: float, hi: float, per_decade: Sequence[float] = (1.0, 2.0, 5.0),
               max_levels: int = 14) -> list[float]:
    """1-2-5 levels strictly inside (lo, hi), thinned to at most ``max_levels``."""
    if not (hi > lo > 0):
        return []
    out = [m * 10.0**k for k in range(math.floor(math.log10(lo)), math.ceil(math.log10(hi)) + 1)
           for m in per_decade]
    out = [v for v in out if lo < v < hi]
    step = max(1, math.ceil(len(out) / max_levels))
    return out[::step]


def contours_svg(layout: Layout, summary: FieldSummary, grid_uT: np.ndarray,
                 bounds_mm: tuple[float, float, float, float], prefix: str) -> str:
    """Iso-µT lines (1-2-5 log steps) with the distance-d curve and its maximum."""
    from matplotlib.colors import LogNorm

    x0, y0, x1, y1 = bounds_mm
    ny, nx = grid_uT.shape
    xs = x0 + (np.arange(nx) + 0.5) * (x1 - x0) / nx
    ys = y0 + (np.arange(ny) + 0.5) * (y1 - y0) / ny
    fig = new_figure(7.5, float(np.clip(7.5 * (y1 - y0) / (x1 - x0), 2.5, 6.5)))
    ax = fig.add_subplot()
    positive = grid_uT[grid_uT > 0]
    levels = log_levels(float(positive.min()), float(grid_uT.max())) if positive.size else []
    if levels:
        norm = LogNorm(vmin=levels[0], vmax=levels[-1]) if len(levels) > 1 else None
        cs = ax.contour(xs, ys, grid_uT, levels=levels, cmap="viridis", norm=norm,
                        linewidths=0.8)
        ax.clabel(cs, fmt=lambda v: f"{v:g}", fontsize=6)
    ex0, ey0, ex1, ey1 = layout.envelope_mm()
    draw_plates(ax, layout, alpha=0.75, zorder=1.0)
    ax.plot([ex0, ex1, ex1, ex0, ex0], [ey0, ey0, ey1, ey1, ey0], color="0.3", linewidth=0.8)
    for c in layout.conductors:
        ax.plot(c.x_mm, c.y_mm, marker="o", markersize=1.5, color="black")
    env_m = (ex0 * MM, ey0 * MM, ex1 * MM, ey1 * MM)
    d_m = summary.distance_mm * MM
    perimeter = 2 * (ex1 - ex0 + ey1 - ey0) * MM + 2 * math.pi * d_m
    curve = offset_points(env_m, d_m, np.linspace(0.0, perimeter, 721)) / MM
    ax.plot(curve[:, 0], curve[:, 1], color="#d62728", linewidth=1.2, linestyle="--",
            label=f"d = {summary.distance_mm:g} mm")
    mx, my = summary.max_at_mm
    ax.plot(mx, my, marker="x", color="#d62728", markersize=7, linestyle="none",
            label=f"maximum {summary.max_resultant_uT:.3g} µT")
    for ln in layout.lines:
        ax.plot([ln.x0_mm, ln.x1_mm], [ln.y0_mm, ln.y1_mm], color="0.2", linewidth=0.9,
                linestyle=":")
        ax.annotate(_literal(ln.name), (ln.x1_mm, ln.y1_mm), fontsize=6, color="0.2",
                    xytext=(-2, 2), textcoords="offset points", ha="right")
    for p in layout.points:
        ax.plot(p.x_mm, p.y_mm, marker="s", markersize=3, color="0.2")
        ax.annotate(_literal(p.name), (p.x_mm, p.y_mm), fontsize=6, color="0.2",
                    xytext=(3, 3), textcoords="offset points")
    dx0, dy0, dx1, dy1 = drawing_bounds(layout)  # plates beyond the map stay in the picture
    ax.set_xlim(min(x0, dx0), max(x1, dx1))
    ax.set_ylim(min(y0, dy0), max(y1, dy1))
    ax.set_aspect("equal")
    ax.set_xlabel("x (mm)")
    ax.set_ylabel("y (mm)")
    ax.set_title("Resultant RMS field, iso-µT lines")
    ax.legend(loc="upper right", fontsize=7)
    return to_svg(fig, prefix)


def profile_svg(layout: Layout, summary: FieldSummary, prefix: str) -> str:
    """Resultant field along the distance-d curve, sides marked, maximum marked."""
    fig = new_figure(7.5, 2.8)
    ax = fig.add_subplot()
    s_m = summary.profile_s_mm * MM
    ax.plot(s_m, summary.profile_uT, color="#1f77b4", linewidth=1.0)
    ex0, ey0, ex1, ey1 = layout.envelope_mm()
    w, h, q = ex1 - ex0, ey1 - ey0, 0.5 * math.pi * summary.distance_mm
    edges = np.cumsum([0.0, w, q, h, q, w, q, h, q]) * MM
    for e in edges[1:-1]:
        ax.axvline(e, color="0.85", linewidth=0.6)
    for i, name in enumerate(("below", "right", "above", "left")):
        ax.text(0.5 * (edges[2 * i] + edges[2 * i + 1]), 1.0, name, ha="center", va="bottom",
                transform=ax.get_xaxis_transform(), fontsize=7, color="0.4")
    top = float(np.max(summary.profile_uT)) if summary.profile_uT.size else 0.0
    if summary.profile_xy_mm.size:
        near = np.argmin(np.hypot(*(summary.profile_xy_mm - np.asarray(summary.max_at_mm)).T))
        s_max = float(s_m[near])
        ax.plot(s_max, summary.max_resultant_uT, marker="x", color="#d62728", markersize=6)
        ax.annotate(f"maximum {summary.max_resultant_uT:.4g} µT", (s_max,
                    summary.max_resultant_uT), xytext=(6, -4), textcoords="offset points",
                    fontsize=7, color="#d62728", va="top")
    ax.set_xlim(0.0, float(edges[-1]) if edges[-1] > 0 else 1.0)
    ax.set_ylim(0.0, max(top, summary.max_resultant_uT) * 1.12 or 1.0)
    ax.set_xlabel("position along the curve at distance d, counter-clockwise from lower left (m)")
    ax.set_ylabel("resultant (µT)")
    return to_svg(fig, prefix)


def distance_svg(distance_mm: np.ndarray, stray_uT: np.ndarray, summary: FieldSummary,
                 prefix: str) -> str:
    """Stray field against distance (log-log) with limits, clearances and far-field slope."""
    fig = new_figure(7.5, 4.2)
    ax = fig.add_subplot()
    d_m = np.asarray(distance_mm) * MM
    b = np.asarray(stray_uT)
    ok = b > 0
    lo, hi = (float(b[ok].min()), float(b[ok].max())) if ok.any() else (1e-2, 1.0)
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlim(d_m[0], d_m[-1])
    ax.set_ylim(lo / 3, hi * 3)  # final limits below; set now so lines need no autoscale
    if ok.any():
        ax.plot(d_m[ok], b[ok], color="#1f77b4", linewidth=1.4,
                label="stray field (maximum on the curve at d)")
    else:
        ax.text(0.5, 0.5, "no current flows: no stray field", transform=ax.transAxes,
                ha="center", va="center")
    n, c1 = summary.far_field_order, summary.far_field_uT_at_1m
    if n and c1 > 0:
        far = d_m[d_m >= math.sqrt(d_m[0] * d_m[-1])]
        ax.plot(far, c1 / far**n, color="0.4", linestyle="--", linewidth=0.9,
                  label=f"far field {c1:.3g} µT·m{_sup(n)}/r{_sup(n)} (slope −{n})")
    if summary.max_resultant_uT > 0 and summary.distance_mm > 0:
        ax.plot(summary.distance_mm * MM, summary.max_resultant_uT, marker="o",
                color="black", linestyle="none", markersize=4,
                label=f"d = {summary.distance_mm:g} mm")
    # AC limits only: the curve is the AC stray field (a DC level judges the static field)
    shown = [(i, lim) for i, lim in enumerate(summary.limits)
             if lim.band == "ac" and lo / 30 <= lim.limit_uT <= hi * 30]
    groups: dict[float, list[str]] = {}
    for i, lim in shown:
        col = _PALETTE[(i + 1) % len(_PALETTE)]
        ax.axhline(lim.limit_uT, color=col, linewidth=0.7)
        groups.setdefault(float(f"{lim.limit_uT:.4g}"), []).append(lim.name)
        if math.isfinite(lim.clearance_mm) and lim.clearance_mm > 0:
            ax.plot(lim.clearance_mm * MM, lim.limit_uT, marker="v", color=col, markersize=5)
    top = max([hi * 3] + [2 * v for v in groups])
    bottom = min([max(lo / 3, 1e-6)] + [v / 2 for v in groups])
    for v, y in spread_labels(sorted(groups), math.log10(top / bottom) / 28):
        ax.annotate(_literal(f"{' / '.join(groups[v])}  {_ut_text(v)} µT"), (d_m[-1], y),
                    xytext=(-2, 1),
                    textcoords="offset points", ha="right", va="bottom", fontsize=6,
                    color="0.15")
    from matplotlib.ticker import FuncFormatter, NullFormatter

    for axis in (ax.xaxis, ax.yaxis):
        axis.set_major_formatter(FuncFormatter(lambda v, _: f"{v:g}"))
        axis.set_minor_formatter(NullFormatter())
    ax.set_xlim(d_m[0], d_m[-1])
    ax.set_ylim(bottom, top)
    ax.set_xlabel("distance d outside the tray envelope (m)")
    ax.set_ylabel("stray field (µT)")
    ax.grid(True, which="major", color="0.9", linewidth=0.5)
    if ax.get_legend_handles_labels()[0]:
        ax.legend(loc="lower left", fontsize=7)
    return to_svg(fig, prefix)


def _ut_text(v: float) -> str:
    return f"{v:.0f}" if v >= 1e4 else f"{v:.4g}"


def _sup(n: int) -> str:
    return str(n).translate(str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹"))


def spread_labels(values: Sequence[float], gap_decades: float) -> list[tuple[float, float]]:
    """(value, label height) for ascending positive values, labels at least ``gap_decades``
    apart on a log axis (pushed upwards)."""
    out: list[tuple[float, float]] = []
    prev = -math.inf
    for v in values:
        y = max(math.log10(v), prev + gap_decades)
        out.append((v, 10.0**y))
        prev = y
    return out


def options_svg(layouts: Sequence[tuple[str, Layout]], prefix: str) -> str:
    """Small multiples: one cross-section per ranked option, titled with its figures."""
    k = len(layouts)
    aspect = 1.0 / _drawn_aspect(layouts[0][1])
    cols = min(k, 1 if aspect > 3 else 2 if aspect > 1.5 else 3)
    rows = math.ceil(k / cols)
    width_in = 7.5 / cols
    panel_h = float(np.clip(0.85 * width_in / aspect + 0.5, 0.9, 3.0))
    fig = new_figure(7.5, rows * panel_h, constrained=False)
    top_in, bottom_in = 0.25, 0.3
    fig.subplots_adjust(left=0.6 / 7.5, right=0.98, top=1 - top_in / (rows * panel_h),
                        bottom=bottom_in / (rows * panel_h), wspace=0.15,
                        hspace=0.55 / max(panel_h - 0.55, 0.3))
    for i, (title, lay) in enumerate(layouts):
        ax = fig.add_subplot(rows, cols, i + 1)
        draw_section(ax, lay, width_pt=72 * 0.85 * width_in, labels=True, legend=False)
        ax.set_title(_literal(title), fontsize=8, loc="left")
        ax.tick_params(labelsize=6)
    return to_svg(fig, prefix)
