"""Unit fields and reaction potentials of conductors with plates, at every frequency.

:class:`PlateField` keeps one factorised :class:`~trayadvisor.fem.solver.PlateSolver` per
frequency component (DC included: only the permeability acts) and gives, for conductors
at given centres:

- ``unit_fields(xy, radius, pts)`` — (H, n, m, 2) complex, the field per ampere of each
  conductor at each point: the free-space field (:func:`trayadvisor.engine.unit_field`,
  uniform current inside a conductor) plus the plates' reaction. The field of any
  arrangement is Σ_k I_hk G_hk: the tables the ranking, the maps and the places need.
- ``mutual_reaction(xy)`` — (H, n, n) complex, the reaction potential of conductor j at
  conductor i, per ampere: the plates' addition jω·A_r,j(x_i) to the impedance Z_ij of the
  sharing solve and to the loops' mutual inductance (symmetric to the discretisation).
"""

from __future__ import annotations

import numpy as np

from trayadvisor.engine import unit_field
from trayadvisor.fem.solver import Plate, PlateSolver


class PlateField:
    """Plate solvers for a set of frequencies (see the module notes)."""

    def __init__(self, plates: list[Plate], frequencies_hz: np.ndarray,
                 extent_m: tuple[float, float, float, float],
                 near_h_m: float | None = None) -> None:
        self.frequencies = np.asarray(frequencies_hz, dtype=float).reshape(-1)
        self.solvers: dict[float, PlateSolver] = {}
        for f in self.frequencies:
            if float(f) not in self.solvers:
                self.solvers[float(f)] = PlateSolver(plates, float(f), extent_m, near_h_m)

    def unit_fields(self, xy_m: np.ndarray, radius_m: np.ndarray, pts_m: np.ndarray
                    ) -> np.ndarray:
        """(H, n, m, 2) complex field per ampere of each conductor at each point."""
        xy = np.asarray(xy_m, dtype=float).reshape(-1, 2)
        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        free = unit_field(xy, radius_m, pts).astype(complex)  # (n, m, 2)
        out = np.empty((self.frequencies.size, *free.shape), dtype=complex)
        for h, f in enumerate(self.frequencies):
            solver = self.solvers[float(f)]
            out[h] = free + solver.reaction_field(solver.reaction(xy), pts)
        return out

    def mutual_reaction(self, xy_m: np.ndarray) -> np.ndarray:
        """(H, n, n) complex: the reaction potential of conductor j at conductor i."""
        xy = np.asarray(xy_m, dtype=float).reshape(-1, 2)
        out = np.empty((self.frequencies.size, xy.shape[0], xy.shape[0]), dtype=complex)
        for h, f in enumerate(self.frequencies):
            solver = self.solvers[float(f)]
            out[h] = solver.probes(xy) @ solver.reaction(xy)
        return out
