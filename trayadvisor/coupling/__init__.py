"""Coupling: inductance, current sharing, victim EMF, and their ranking constraints.

- :mod:`~trayadvisor.coupling.inductance` — per-metre and finite-length (Grover) mutual
  inductance, geometric mean radii, the loops of a layout and their inductance matrix.
- :mod:`~trayadvisor.coupling.system` — the impedance system of all conductors: parallel
  groups, cable screens bonded at both ends, passive loops; one batched solve.
- :mod:`~trayadvisor.coupling.sharing` — the current sharing between parallel conductors of
  a phase; ``carried_sources``: the currents every figure uses (``"solved"``, the default,
  or ``"equal"`` shares).
- :mod:`~trayadvisor.coupling.induced` — screens and passive loops as figures: currents,
  losses, the loss factor λ1, standing voltages of screens bonded at one point.
- :mod:`~trayadvisor.coupling.resistance` — R′ from the IEC 60228 table, at temperature,
  and at each harmonic with the IEC 60287-1-1 skin effect.
- :mod:`~trayadvisor.coupling.victims` — the EMF induced in victim signal loops, per metre,
  over a run and per harmonic; the screen/earth loop.
- :mod:`~trayadvisor.coupling.summary` — ``coupling_summary``: every coupling figure of one
  layout (what ``couple`` prints and the UI shows).
- :mod:`~trayadvisor.coupling.constraints` — current imbalance and victim EMF as ranking
  constraints, evaluated in batches without building layouts.

The method is written up in ``docs/coupling.md``.
"""

from trayadvisor.coupling.constraints import (
    ConstraintFigure,
    imbalance_constraint,
    induced_loss_figure,
    induced_voltage_constraint,
)
from trayadvisor.coupling.induced import PassiveFigure, ScreenFigure, induced_loss_w_per_m
from trayadvisor.coupling.inductance import (
    gmr_m,
    grover_mutual_finite,
    log_distance_matrix,
    loop_inductance_matrix,
    mutual_inductance_per_m,
)
from trayadvisor.coupling.resistance import (
    ac_resistance_per_m,
    dc_resistance_20c_per_m,
    resistance_per_m,
    skin_effect_factor,
)
from trayadvisor.coupling.sharing import (
    CURRENT_MODELS,
    DEFAULT_TEMPERATURE_C,
    TEMPERATURE_RANGE_C,
    SharingError,
    SharingPlan,
    SharingResult,
    carried_sources,
    check_current_model,
    check_temperature,
    plate_sources,
    sharing_plan,
    solve_parts,
    solve_plan,
    solve_sharing,
    solved_sources,
)
from trayadvisor.coupling.summary import CouplingSummary, coupling_summary
from trayadvisor.coupling.victims import VictimFigure, induced_emf

__all__ = [
    "CURRENT_MODELS",
    "DEFAULT_TEMPERATURE_C",
    "TEMPERATURE_RANGE_C",
    "SharingError",
    "SharingPlan",
    "ConstraintFigure",
    "CouplingSummary",
    "PassiveFigure",
    "ScreenFigure",
    "SharingResult",
    "VictimFigure",
    "ac_resistance_per_m",
    "carried_sources",
    "check_current_model",
    "check_temperature",
    "coupling_summary",
    "dc_resistance_20c_per_m",
    "gmr_m",
    "grover_mutual_finite",
    "imbalance_constraint",
    "induced_emf",
    "induced_loss_figure",
    "induced_loss_w_per_m",
    "induced_voltage_constraint",
    "log_distance_matrix",
    "loop_inductance_matrix",
    "mutual_inductance_per_m",
    "resistance_per_m",
    "plate_sources",
    "sharing_plan",
    "skin_effect_factor",
    "solve_parts",
    "solve_plan",
    "solve_sharing",
    "solved_sources",
]
