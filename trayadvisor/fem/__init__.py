"""The field with steel and aluminium in the cross-section, by 2D finite elements.

- :mod:`~trayadvisor.fem.materials` — typical μr and σ of steel, stainless steel,
  aluminium and copper (recalled from memory), and the skin depth.
- :mod:`~trayadvisor.fem.mesh` — a constrained-Delaunay mesh (the ``triangle`` package) of a
  disc around the plates, graded from layers across each plate's thickness to coarse rings
  far away.
- :mod:`~trayadvisor.fem.solver` — the time-harmonic vector potential of the plates'
  *reaction* to line currents, by P2 elements (scikit-fem) and one sparse LU factorisation
  per frequency, reused for every source.
- :mod:`~trayadvisor.fem.probing` — point location in the mesh and the sparse matrices that
  read a P2 function's value or gradient at any points.
- :mod:`~trayadvisor.fem.reaction` — ``PlateReaction``: a layout's plates as the engine's
  ``Reaction`` (cached solvers per frequency, cached unit potentials per position): the
  field the plates add, the unit-field tables of the ranking, the reaction potentials of
  the sharing solve and the victims, and the plates' eddy-current loss.

The materials are linear (no saturation). The method and its checks are written up in
``docs/method.md`` ("Plates").
"""

from trayadvisor.fem.materials import PLATE_MATERIALS, skin_depth_m
from trayadvisor.fem.mesh import PlateMesh, build_mesh
from trayadvisor.fem.reaction import PlateReaction, layout_reaction, material_data
from trayadvisor.fem.solver import Plate, PlateSolver

__all__ = ["PLATE_MATERIALS", "Plate", "PlateMesh", "PlateReaction",
           "PlateSolver", "build_mesh", "layout_reaction", "material_data", "skin_depth_m"]
