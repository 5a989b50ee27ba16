"""The field engine: long straight parallel conductors in free space, 2D phasors, SI inside.

- :mod:`~trayadvisor.engine.units` — every unit constant (mm, µT, mV, µH; μ0).
- :mod:`~trayadvisor.engine.currents` — layout → ``SourceArrays``: positions, radii and the
  current phasor of every conductor at every frequency component (the phase, harmonic,
  neutral and DC conventions live only here), and the ``Reaction`` of plates nearby that
  a higher layer may attach (:mod:`trayadvisor.fem`).
- :mod:`~trayadvisor.engine.field` — the phasor kernel, resultant and ellipse-maximum RMS
  field (IEC 61786-1), far-field decay order from the multipole moments.
- :mod:`~trayadvisor.engine.contour` — the curve at distance d around the tray envelope, its
  refined maximum, and the clearance distance for a limit.
- :mod:`~trayadvisor.engine.measures` — scalar figures of a multi-frequency field: the AC
  or DC resultant, a limit's index; splitting sources into their AC and DC parts.
- :mod:`~trayadvisor.engine.places` — the field of one layout at points, along lines, over
  areas, on grids and on the curve at d, in mm and µT.

The method is written up in ``docs/method.md``.
"""

from trayadvisor.engine.contour import (
    DEFAULT_DISTANCE_MM,
    StrayField,
    clearance,
    contour_length,
    default_samples,
    offset_points,
    stray_field,
)
from trayadvisor.engine.currents import (
    Reaction,
    SourceArrays,
    conductor_currents,
    layout_sources,
    total_field,
    unit_fields,
)
from trayadvisor.engine.field import (
    FarField,
    ellipse_major_rms,
    far_field,
    phasor_field,
    resultant_rms,
    unit_field,
)
from trayadvisor.engine.measures import Measure, split_bands
from trayadvisor.engine.places import (
    LineFigure,
    Place,
    PointFigure,
    envelope_m,
    field_at_points_uT,
    field_grid_uT,
    line_figure,
    line_points_mm,
    path_points_mm,
    place_maxima,
    point_figures,
    source_clearance,
    source_stray_field,
    stray_uT,
)

__all__ = [
    "DEFAULT_DISTANCE_MM",
    "FarField",
    "LineFigure",
    "Measure",
    "Place",
    "PointFigure",
    "Reaction",
    "SourceArrays",
    "StrayField",
    "clearance",
    "conductor_currents",
    "contour_length",
    "default_samples",
    "ellipse_major_rms",
    "envelope_m",
    "far_field",
    "field_at_points_uT",
    "field_grid_uT",
    "layout_sources",
    "line_figure",
    "line_points_mm",
    "offset_points",
    "phasor_field",
    "path_points_mm",
    "place_maxima",
    "point_figures",
    "source_clearance",
    "source_stray_field",
    "split_bands",
    "resultant_rms",
    "stray_field",
    "stray_uT",
    "total_field",
    "unit_field",
    "unit_fields",
]
