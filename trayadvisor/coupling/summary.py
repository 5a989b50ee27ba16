"""Every coupling figure of one layout: victim EMF, loop inductances, current sharing.

``coupling_summary`` is what ``couple`` prints, the UI's coupling view shows and reports
include, with the options as keyword arguments.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from trayadvisor.coupling.inductance import layout_loops, loop_inductance_matrix
from trayadvisor.coupling.sharing import (
    DEFAULT_TEMPERATURE_C,
    SharingResult,
    check_current_model,
    solve_sharing,
)
from trayadvisor.coupling.system import plate_sources
from trayadvisor.coupling.victims import VictimFigure, induced_emf
from trayadvisor.engine.units import UH
from trayadvisor.model import Layout


@dataclass(frozen=True)
class CouplingSummary:
    """Every coupling figure of one layout (what ``couple`` prints and the UI panel shows)."""

    victims: tuple[VictimFigure, ...]
    sharing: SharingResult
    loops: tuple[str, ...]
    mutual_H_per_m: np.ndarray  # (L, L)
    sharing_used: bool  # victim EMF computed with the solved currents
    earth_y_mm: float | None = None
    notes: tuple[str, ...] = field(default=())

    def to_json(self) -> dict:
        """The ``couple --json`` object (docs/json.md; keys may be added, never renamed)."""
        s = self.sharing
        return {
            "currents": "solved" if self.sharing_used else "equal",
            "victims": [
                {"circuit": v.circuit, "induced_mV_per_m": v.induced_mV_per_m,
                 "length_m": v.length_m, "induced_V": v.induced_V,
                 "finite_length_factor": v.finite_length_factor,
                 "earth_loop_mV_per_m": v.earth_loop_mV_per_m,
                 "earth_loop_V": v.earth_loop_V,
                 "harmonics": [{"order": p.order, "frequency_hz": p.frequency_hz,
                                "induced_mV_per_m": p.induced_mV_per_m}
                               for p in v.harmonics]}
                for v in self.victims
            ],
            "sharing": [
                {"conductor": c.conductor, "circuit": c.circuit, "phase": c.phase,
                 "current_a": c.current_a, "angle_deg": c.angle_deg,
                 "share_pct": c.share_pct, "current_rms_a": c.current_rms_a}
                for c in s.shares
            ],
            "groups": [
                {"circuit": g.circuit, "phase": g.phase, "conductors": list(g.conductors),
                 "current_a": g.current_a, "order": g.order,
                 "imbalance_pct": g.imbalance_pct, "reactance_only": g.reactance_only,
                 "circulating_a": g.circulating_a}
                for g in s.groups
            ],
            "screens": [f.to_json() for f in s.screens],
            "passive": [f.to_json() for f in s.passive],
            "reactance_only": s.reactance_only,
            "temperature_c": s.temperature_c,
            "sharing_used_for_victims": self.sharing_used,
            "earth_y_mm": self.earth_y_mm,
            "loops": list(self.loops),
            "mutual_uH_per_m": (self.mutual_H_per_m * UH).tolist(),
            "notes": list(self.notes),
        }


def coupling_summary(layout: Layout, length_m: float | None = None, currents: str = "solved",
                     temperature_c: float = DEFAULT_TEMPERATURE_C,
                     earth_y_mm: float | None = None) -> CouplingSummary:
    """Loop inductances, victim EMF and current sharing of one layout.

    Parameters
    ----------
    layout : Layout
    length_m : float, optional
        Run length for victims without their own ``length_m``.
    currents : {"solved", "equal"}
        Compute the victim EMF with the solved sharing currents (the default) or with equal
        shares. The sharing table is reported either way.
    temperature_c : float
        Conductor temperature for R', °C.
    earth_y_mm : float, optional
        Earth reference height for the screen/earth loop (see :func:`induced_emf`).
    """
    solved = check_current_model(currents) == "solved"
    shares = solve_sharing(layout, temperature_c)
    src = plate_sources(layout)
    if solved:
        src = replace(src, currents=shares.currents)
    if earth_y_mm is None:
        earth_y_mm = layout.earth_y_mm
    victims = induced_emf(layout, length_m, src, earth_y_mm)
    names, m = loop_inductance_matrix(layout)
    notes = shares.notes()
    if src.reaction is not None and names:
        # the plates' addition at the fundamental: the inductive (real) part of W P Wᵀ
        weights = layout_loops(layout).weights
        pot = src.reaction.potentials(src.xy_m, np.array([float(layout.frequency_hz)]))[0]
        m = m + (weights @ pot.real @ weights.T)
        notes.append("loop inductances include the plates at the fundamental (their "
                     "inductive part; the plates' losses act as resistance in the sharing)")
    if not solved and shares.groups:
        notes.append("victim EMF with equal shares between parallel conductors (the sharing "
                     "table is the solved one)")
    if not solved and (shares.screens or shares.passive):
        notes.append("victim EMF without the currents induced in screens and passive loops "
                     "(--equal-shares); the screen and loop tables are the solved ones")
    if any(f.bonding == "single-point" and f.standing_v_per_m > 0 for f in shares.screens):
        notes.append("standing voltages on screens bonded at one point: the permitted touch "
                     "voltage and the sheath insulation are for the local rules and licensed "
                     "practice to settle")
    return CouplingSummary(tuple(victims), shares, names, m, solved,
                           None if earth_y_mm is None else float(earth_y_mm), tuple(notes))
