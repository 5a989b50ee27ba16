"""The field work the views need, as plain functions a worker thread runs.

Every figure comes from the same calls the CLI makes
(:func:`trayadvisor.analysis.field_summary`, :func:`trayadvisor.analysis.compare_summaries`
and :func:`trayadvisor.engine.field_grid_uT`), so the UI and the CLI cannot disagree.
Results go out through ``emit`` one stage at a time, the cheap ones first, and the work
stops between stages once ``cancelled()`` says a newer request exists.
No textual here.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

import numpy as np

from trayadvisor.analysis import (
    FieldSummary,
    LimitFigure,
    PlateComparison,
    compare_summaries,
    field_summary,
)
from trayadvisor.coupling import SharingError, carried_sources
from trayadvisor.engine import field_grid_uT
from trayadvisor.limits import resolve_limit
from trayadvisor.model import Layout, Limit
from trayadvisor.tui.logic.viewport import Viewport


@dataclass(frozen=True)
class SummaryDone:
    """Stray field at d, its peak, far-field order and the curve (no limits yet)."""

    summary: FieldSummary


@dataclass(frozen=True)
class CompareDone:
    """The field with and without the plates, on the curve at d and at every place."""

    comparison: PlateComparison


@dataclass(frozen=True)
class LimitDone:
    """One limit's verdict at d and its clearance distance."""

    figure: LimitFigure


@dataclass(frozen=True)
class Failed:
    """The engines raised; the UI shows ``message`` and keeps running."""

    message: str


Result = SummaryDone | CompareDone | LimitDone | Failed


def run_analysis(layout: Layout, distance_mm: float, limits: Sequence[Limit],
                 emit: Callable[[Result], object],
                 cancelled: Callable[[], bool] = lambda: False, summary: bool = True,
                 currents: str = "solved", compare: bool = False,
                 known: FieldSummary | None = None) -> None:
    """Compute the readouts of one layout in stages.

    1. With ``summary``: ``field_summary(layout, distance_mm=d, currents=…)`` with the
       layout's limits bound to places only (judged at their places: ``summary.places``;
       milliseconds without plates, seconds for the first solve of new plates), emitted as
       SummaryDone.
    2. With ``compare`` and a layout with plates: the same call with
       ``Layout.without_metal`` (no plate solve: milliseconds), paired with the summary of
       stage 1 (or ``known``, the current one, when stage 1 is skipped) by
       ``compare_summaries``: one CompareDone.
    3. For each limit in ``limits``, ``field_summary`` with just that limit on the curve at
       d, which adds its clearance search (tens of ms each): one LimitDone each. The Limit
       itself is passed, so a library entry is judged by its own rule (the multi-frequency
       sum for exposure levels, the static field for the DC band).
    """
    base = replace(layout, limits=())
    bound = replace(layout, limits=place_bound(layout))
    try:
        result = known
        if summary:
            result = field_summary(bound, distance_mm=distance_mm, currents=currents)
            if cancelled():
                return
            emit(SummaryDone(result))
        if compare and result is not None and layout.all_plates():
            bare = field_summary(replace(bound, without_metal=True), distance_mm=distance_mm,
                                 currents=currents)
            if cancelled():
                return
            emit(CompareDone(compare_summaries(result, bare)))
        for lim in limits:
            if cancelled():
                return
            fig = field_summary(base, distance_mm=distance_mm, currents=currents,
                                limits=[lim]).limits[-1]
            if cancelled():
                return
            emit(LimitDone(fig))
    except SharingError as exc:  # a layout whose sharing has no solution: say why
        emit(Failed(str(exc)))
    except Exception as exc:  # a UI must survive an engine error: show it, keep running
        emit(Failed(f"field computation failed: {type(exc).__name__}: {exc}"))


def place_bound(layout: Layout) -> tuple[Limit, ...]:
    """The layout's limits bound to places that the limits library can judge (a limit the
    validation refuses is left out here; the status line names it)."""
    out = []
    for lim in layout.limits:
        if not lim.places:
            continue
        try:
            resolve_limit(lim, float(layout.frequency_hz))
        except (ValueError, TypeError):
            continue
        out.append(lim)
    return tuple(out)


def map_grid(layout: Layout, vp: Viewport, currents: str = "solved") -> np.ndarray:
    """Resultant field (µT) at the window's pixel centres, row 0 at the lowest y (NaN where
    the currents cannot be solved: the status line says why)."""
    try:
        src = carried_sources(layout, currents)
    except SharingError:
        return np.full((vp.px_rows, vp.cols), np.nan)
    return field_grid_uT(layout, vp.bounds_mm, vp.cols, vp.px_rows, src)
