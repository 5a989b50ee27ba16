"""The plates of a layout as the engine's ``Reaction``: what steel and aluminium add.

:func:`layout_reaction` turns a layout's plates (``[[plate]]`` entries and sheet trays) into
a :class:`PlateReaction`, or None without plates. The engine adds its ``field`` to the
free-space field of the same currents (:meth:`trayadvisor.engine.SourceArrays.field_at`), so
every figure — points, lines, areas, the curve at d, field maps — sees the plates; the
ranking takes ``unit_fields`` and the sharing solve ``potentials``.

Re-use, so that an edit or a search costs back-substitutions, not meshes:

- solvers (mesh + factorisation) are cached per plates, frequency and meshed extent; the
  extent is the trays, the plates and the conductors, rounded outwards to 50 mm, so moving a
  conductor inside its tray keeps the solver;
- each solver keeps the reaction potential of a unit current at every position it has seen
  (least recently used first out, within a memory budget): a moved conductor costs one
  back-substitution.
"""

from __future__ import annotations

import math
import threading
from collections import OrderedDict

import numpy as np

from trayadvisor.engine.units import MM
from trayadvisor.fem.materials import PLATE_MATERIALS
from trayadvisor.fem.solver import Plate, PlateSolver
from trayadvisor.model import Layout

#: Solvers kept (each holds a factorisation: tens of MB): enough for the fundamental,
#: DC and several harmonics of one layout.
_SOLVERS_KEPT = 10
#: Memory for cached unit reaction potentials per solver, bytes.
_UNIT_BYTES = 96 * 2**20
#: Bounds of the element size near the conductors, m.
_NEAR_MIN_M, _NEAR_MAX_M = 0.002, 0.015
#: Reaction potentials of whole arrangements kept (the curve, places and maps of one
#: layout evaluate the same currents many times).
_COMBINED_KEPT = 32
#: The meshed extent is rounded outwards to this grid, m.
_EXTENT_GRID_M = 0.05

_solvers: OrderedDict[tuple, PlateSolver] = OrderedDict()
_building: dict[tuple, threading.Lock] = {}
_lock = threading.Lock()
_reactions: OrderedDict[tuple, PlateReaction] = OrderedDict()


def material_data(material: str | None, mu_r: float | None, sigma: float | None
                  ) -> tuple[float, float]:
    """(μr, σ S/m) of a plate: the explicit values, else the material's typical ones."""
    base = PLATE_MATERIALS.get(material or "", (None, None))
    m = mu_r if mu_r is not None else base[0]
    s = sigma if sigma is not None else base[1]
    if m is None or s is None:
        raise ValueError(f"plate material {material!r} needs mu_r and sigma_s_per_m")
    return float(m), float(s)


def solver_plates(layout: Layout) -> list[Plate]:
    """The layout's plates (``all_plates``) in metres with their data and body numbers."""
    plates = layout.all_plates()
    bodies = {name: k for k, name in enumerate(dict.fromkeys(p.body_name for p in plates))}
    out = []
    for p in plates:
        mu_r, sigma = material_data(p.material, p.mu_r, p.sigma_s_per_m)
        x0, y0, x1, y1 = p.bounds
        out.append(Plate(x0 * MM, y0 * MM, x1 * MM, y1 * MM, mu_r, sigma, bodies[p.body_name]))
    return out


def meshed_extent_m(layout: Layout) -> tuple[float, float, float, float]:
    """Where the sources are, m: the trays (the conductors when there is no tray; the
    plates when there is neither), rounded outwards to the extent grid. The mesh is finest
    there and grows with the distance from it (plates far away get their own layers);
    moving conductors inside their trays keeps it, so the solvers stay."""
    boxes = [t.outer_bounds for t in layout.trays]
    if not boxes:
        boxes = [(c.x_mm - c.radius_mm, c.y_mm - c.radius_mm, c.x_mm + c.radius_mm,
                  c.y_mm + c.radius_mm) for c in layout.conductors]
    if not boxes:
        boxes = [p.bounds for p in layout.all_plates()]
    g = _EXTENT_GRID_M
    return (math.floor(min(b[0] for b in boxes) * MM / g) * g,
            math.floor(min(b[1] for b in boxes) * MM / g) * g,
            math.ceil(max(b[2] for b in boxes) * MM / g) * g,
            math.ceil(max(b[3] for b in boxes) * MM / g) * g)


def near_size_m(layout: Layout) -> float:
    """Element size near the conductors: 1/40 of the trays' and conductors' extent (the
    plates' when there are neither), from 2 to 15 mm (bench/bench_fem.py: 10 mm near a
    600 mm tray agrees with a twice finer mesh to 0.2 %)."""
    boxes = [t.outer_bounds for t in layout.trays] + [
        (c.x_mm - c.radius_mm, c.y_mm - c.radius_mm, c.x_mm + c.radius_mm,
         c.y_mm + c.radius_mm) for c in layout.conductors]
    if not boxes:
        boxes = [p.bounds for p in layout.all_plates()]
    size = max(max(b[2] for b in boxes) - min(b[0] for b in boxes),
               max(b[3] for b in boxes) - min(b[1] for b in boxes)) * MM
    return min(max(size / 40.0, _NEAR_MIN_M), _NEAR_MAX_M)


def cached_solver(plates: tuple[Plate, ...], frequency_hz: float,
                  extent_m: tuple[float, float, float, float],
                  near_h_m: float | None = None) -> PlateSolver:
    """The solver of these plates at this frequency (built once, then reused)."""
    key = (plates, float(frequency_hz), extent_m, near_h_m)
    with _lock:  # one lock per key: two workers asking at once build it once
        key_lock = _building.setdefault(key, threading.Lock())
    with key_lock:
        with _lock:
            solver = _solvers.get(key)
            if solver is not None:
                _solvers.move_to_end(key)
                return solver
        solver = PlateSolver(list(plates), float(frequency_hz), extent_m, near_h_m)
        with _lock:
            _solvers[key] = solver
            _building.pop(key, None)
            while len(_solvers) > _SOLVERS_KEPT:
                _solvers.popitem(last=False)
    return solver


class PlateReaction:
    """The plates' addition to the field and the potentials of line currents.

    Parameters
    ----------
    plates : sequence of Plate
        In metres (:func:`solver_plates`).
    extent_m : (x0, y0, x1, y1)
        The finely meshed extent (:func:`meshed_extent_m`).
    near_h_m : float, optional
        Element size near the conductors (:func:`near_size_m`; default 1/40 of the
        extent).
    """

    def __init__(self, plates: list[Plate] | tuple[Plate, ...],
                 extent_m: tuple[float, float, float, float],
                 near_h_m: float | None = None) -> None:
        self.plates = tuple(plates)
        self.extent_m = extent_m
        self.near_h_m = near_h_m
        self._units: dict[float, OrderedDict[tuple[float, float], np.ndarray]] = {}
        self._combined: OrderedDict[tuple, np.ndarray] = OrderedDict()
        self._lock = threading.RLock()

    def inside(self, pts_m: np.ndarray) -> np.ndarray:
        """(m,) bool: points strictly inside a plate."""
        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        out = np.zeros(pts.shape[0], dtype=bool)
        for p in self.plates:
            out |= ((pts[:, 0] > p.x0) & (pts[:, 0] < p.x1)
                    & (pts[:, 1] > p.y0) & (pts[:, 1] < p.y1))
        return out

    def solver(self, frequency_hz: float) -> PlateSolver:
        return cached_solver(self.plates, frequency_hz, self.extent_m, self.near_h_m)

    def _unit_potentials(self, xy_m: np.ndarray, frequency_hz: float) -> np.ndarray:
        """(N, n) reaction potential of 1 A at each centre; new centres in one solve."""
        solver = self.solver(frequency_hz)
        with self._lock:  # the UI's workers share the caches
            return self._cached_units(solver, xy_m, frequency_hz)

    def _cached_units(self, solver: PlateSolver, xy_m: np.ndarray, frequency_hz: float
                      ) -> np.ndarray:
        cache = self._units.setdefault(float(frequency_hz), OrderedDict())
        keys = [(float(x), float(y)) for x, y in np.asarray(xy_m, float).reshape(-1, 2)]
        new = [k for k in dict.fromkeys(keys) if k not in cache]
        if new:
            cols = solver.reaction(np.array(new))
            for k, col in zip(new, cols.T, strict=True):
                cache[k] = col
        for k in keys:
            cache.move_to_end(k)
        out = np.column_stack([cache[k] for k in keys]) if keys else np.zeros((solver._n, 0))
        keep = max(len(keys), _UNIT_BYTES // (16 * max(solver._n, 1)))
        while len(cache) > keep:
            cache.popitem(last=False)
        return out

    def field(self, xy_m: np.ndarray, currents: np.ndarray, frequency_hz: np.ndarray,
              pts_m: np.ndarray) -> np.ndarray:
        """(H, m, 2) complex: the plates' reaction field of the currents (H, n) at points."""
        cur = np.asarray(currents, dtype=complex).reshape(len(frequency_hz), -1)
        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        out = np.zeros((cur.shape[0], pts.shape[0], 2), dtype=complex)
        xy = np.ascontiguousarray(xy_m, dtype=float).reshape(-1, 2)
        for h, f in enumerate(np.asarray(frequency_hz, dtype=float)):
            if not np.any(cur[h]):
                continue
            key = (float(f), xy.tobytes(), np.ascontiguousarray(cur[h]).tobytes())
            with self._lock:
                a = self._combined.get(key)
                if a is None:
                    a = self._unit_potentials(xy, f) @ cur[h]
                    self._combined[key] = a
                    while len(self._combined) > _COMBINED_KEPT:
                        self._combined.popitem(last=False)
                else:
                    self._combined.move_to_end(key)
            out[h] = self.solver(f).reaction_field(a[:, None], pts)[0]
        return out

    def unit_fields(self, xy_m: np.ndarray, frequency_hz: np.ndarray, pts_m: np.ndarray
                    ) -> np.ndarray:
        """(H, n, m, 2) complex: the reaction field of 1 A at each centre, at each point."""
        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        xy = np.asarray(xy_m, dtype=float).reshape(-1, 2)
        freqs = np.asarray(frequency_hz, dtype=float).reshape(-1)
        out = np.empty((freqs.size, xy.shape[0], pts.shape[0], 2), dtype=complex)
        for h, f in enumerate(freqs):
            out[h] = self.solver(f).reaction_field(self._unit_potentials(xy, f), pts)
        return out

    def potentials(self, xy_m: np.ndarray, frequency_hz: np.ndarray,
                   pts_m: np.ndarray | None = None) -> np.ndarray:
        """(H, p, n) complex: the reaction potential at point i of 1 A at centre j, V·s/m.

        Without ``pts_m`` the points are the centres (H, n, n): the plates' addition to the
        mutual inductance per metre (the reaction potential is harmonic inside a conductor,
        so its centre value is its mean over the section); the impedance addition is jω
        times it. That matrix is symmetrised (reciprocity holds to the discretisation).
        """
        xy = np.asarray(xy_m, dtype=float).reshape(-1, 2)
        pts = xy if pts_m is None else np.asarray(pts_m, dtype=float).reshape(-1, 2)
        freqs = np.asarray(frequency_hz, dtype=float).reshape(-1)
        out = np.empty((freqs.size, pts.shape[0], xy.shape[0]), dtype=complex)
        for h, f in enumerate(freqs):
            out[h] = self.solver(f).probes(pts) @ self._unit_potentials(xy, f)
            if pts_m is None:
                out[h] = 0.5 * (out[h] + out[h].T)
        return out

    def losses_w_per_m(self, xy_m: np.ndarray, currents: np.ndarray,
                       frequency_hz: np.ndarray) -> np.ndarray:
        """(plates,) eddy-current loss of each plate summed over the components, W/m."""
        cur = np.asarray(currents, dtype=complex).reshape(len(frequency_hz), -1)
        total = np.zeros(len(self.plates))
        for h, f in enumerate(np.asarray(frequency_hz, dtype=float)):
            if f > 0 and np.any(cur[h]):
                total += self.solver(f).losses_w_per_m(xy_m, cur[h])
        return total


def layout_reaction(layout: Layout) -> PlateReaction | None:
    """The plates of ``layout`` as a reaction, or None when it has none (the same object
    for the same plates and extent, so its cached potentials serve every later call)."""
    if not layout.all_plates():
        return None
    key = (tuple(solver_plates(layout)), meshed_extent_m(layout),
           round(near_size_m(layout), 4))
    reaction = _reactions.get(key)
    if reaction is None:
        reaction = PlateReaction(*key)
        _reactions[key] = reaction
        while len(_reactions) > _SOLVERS_KEPT:
            _reactions.popitem(last=False)
    else:
        _reactions.move_to_end(key)
    return reaction
