"""Plates as figures: each plate's eddy-current loss, and the field with and without them.

- :func:`plate_figures` — every plate (``[[plate]]`` and sheet-tray metal) with its data and
  the eddy-current loss the currents drive in it, W/m (summed over the AC components; DC
  drives none; hysteresis is not modelled: the materials are linear).
- :func:`compare_summaries` — two :func:`~trayadvisor.analysis.field_summary` of one layout,
  with and without the plates (``Layout.without_metal``: same envelope, same currents
  model; :func:`~trayadvisor.analysis.plate_comparison` makes both), paired: the shielding
  factor B_with / B_without at every place and on the curve at d (below 1: the plates
  screen; above 1: they concentrate the field there).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from trayadvisor.engine import SourceArrays
from trayadvisor.fem import material_data
from trayadvisor.model import Layout


@dataclass(frozen=True)
class PlateFigure:
    """One plate with its material data and eddy-current loss."""

    name: str
    material: str | None
    mu_r: float
    sigma_s_per_m: float
    body: str
    tray: str | None
    loss_w_per_m: float

    def to_json(self) -> dict:
        return {"name": self.name, "material": self.material, "mu_r": self.mu_r,
                "sigma_s_per_m": self.sigma_s_per_m, "body": self.body, "tray": self.tray,
                "loss_w_per_m": self.loss_w_per_m}


def plate_figures(layout: Layout, src: SourceArrays) -> tuple[PlateFigure, ...]:
    """Every plate of ``layout`` with its loss for the currents of ``src`` (W/m)."""
    plates = layout.all_plates()
    if not plates:
        return ()
    reaction = src.reaction
    ac = np.asarray(src.frequency_hz) > 0
    losses = (reaction.losses_w_per_m(src.xy_m, src.currents[ac], src.frequency_hz[ac])
              if reaction is not None and ac.any() else np.zeros(len(plates)))
    out = []
    for p, loss in zip(plates, losses, strict=True):
        mu_r, sigma = material_data(p.material, p.mu_r, p.sigma_s_per_m)
        out.append(PlateFigure(p.name, p.material, mu_r, sigma, p.body_name, p.tray,
                               float(loss)))
    return tuple(out)


@dataclass(frozen=True)
class ShieldingRow:
    """One place (or the curve at d): its AC maximum with and without the plates."""

    name: str
    type: str  # "curve", "point", "line" or "area"
    with_uT: float
    without_uT: float

    @property
    def factor(self) -> float:
        """B_with / B_without (NaN when no field either way)."""
        if self.without_uT > 0:
            return self.with_uT / self.without_uT
        return math.nan if self.with_uT == 0 else math.inf

    @property
    def reduction_db(self) -> float:
        """−20·log10(factor): positive when the plates screen."""
        f = self.factor
        return -20.0 * math.log10(f) if f > 0 and math.isfinite(f) else math.nan

    def to_json(self) -> dict:
        f, db = self.factor, self.reduction_db
        return {"name": self.name, "type": self.type, "with_uT": self.with_uT,
                "without_uT": self.without_uT,
                "factor": f if math.isfinite(f) else None,
                "reduction_db": db if math.isfinite(db) else None}


@dataclass(frozen=True)
class PlateComparison:
    """The field with and without the plates (see the module notes)."""

    distance_mm: float
    rows: tuple[ShieldingRow, ...]  # the curve at d first, then every place in order

    def to_json(self) -> dict:
        return {"distance_mm": self.distance_mm, "rows": [r.to_json() for r in self.rows]}


def compare_summaries(with_plates, without_plates) -> PlateComparison:  # noqa: ANN001
    """Pair two :class:`~trayadvisor.analysis.FieldSummary` of one layout (with, without)."""
    rows = [ShieldingRow(f"curve at {with_plates.distance_mm:g} mm", "curve",
                         with_plates.max_resultant_uT, without_plates.max_resultant_uT)]
    seen = set()
    for a, b in zip(with_plates.places, without_plates.places, strict=True):
        rows.append(ShieldingRow(a.name, a.type, a.max_resultant_uT, b.max_resultant_uT))
        seen.add(a.name)
    for a, b in zip(with_plates.points, without_plates.points, strict=True):
        if a.name not in seen:
            rows.append(ShieldingRow(a.name, "point", a.resultant_uT, b.resultant_uT))
    return PlateComparison(with_plates.distance_mm, tuple(rows))
