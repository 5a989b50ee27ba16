"""The figures of one layout with the options a user picks: one call for every front end.

- :mod:`~trayadvisor.analysis.summary` — ``field_summary(layout, distance_mm=…, at=…,
  limits=…, sharing=…)``: the stray field at d, where it peaks, far-field decay, points,
  lines and limits with clearances; the currents are equal shares or the solved sharing.
- :mod:`~trayadvisor.analysis.judging` — limits judged where they apply: every point, line
  and area with its AC and DC maxima and the index of each limit bound to it.
- :mod:`~trayadvisor.analysis.plates` — every plate's eddy-current loss, and
  ``plate_comparison``: the field with and without the plates (shielding factors).

This layer sits above :mod:`trayadvisor.coupling` because the solved currents come from its
impedance system; the CLI, the TUI, batch runs and reports all call it with the same keyword
arguments.
"""

from trayadvisor.analysis.judging import PlaceFigure, PlaceLimit, margin_db, rule_measure
from trayadvisor.analysis.plates import (
    PlateComparison,
    PlateFigure,
    ShieldingRow,
    compare_summaries,
    plate_figures,
)
from trayadvisor.analysis.summary import (
    FieldSummary,
    LimitFigure,
    carried_sources,
    field_summary,
    plate_comparison,
)

__all__ = ["FieldSummary", "LimitFigure", "PlaceFigure", "PlaceLimit", "PlateComparison",
           "PlateFigure", "ShieldingRow", "carried_sources", "compare_summaries",
           "field_summary", "margin_db", "plate_comparison", "plate_figures", "rule_measure"]
