"""The figures of one layout with the options a user picks: one call for every front end.

- :mod:`~trayadvisor.analysis.summary` — ``field_summary(layout, distance_mm=…, at=…,
  limits=…, sharing=…)``: the stray field at d, where it peaks, far-field decay, points,
  lines and limits with clearances; the currents are equal shares or the solved sharing.

This layer sits above :mod:`trayadvisor.coupling` because the solved currents come from its
impedance system; the CLI, the TUI, batch runs and reports all call it with the same keyword
arguments.
"""

from trayadvisor.analysis.summary import FieldSummary, LimitFigure, carried_sources, field_summary

__all__ = ["FieldSummary", "LimitFigure", "carried_sources", "field_summary"]
