"""A triangle mesh of a disc that holds rectangular plates, graded by a size function.

Pass 1 meshes the disc with the plates as regions (each triangle knows its plate). Then the
mesh is refined (``triangle``'s ``r`` switch with a maximum area per triangle) until every
triangle is no larger than a size function allows: ``near_h`` within the extent of interest
(the conductors and points), growing linearly with the distance from it, and never more
than the plate's own size inside a plate (a few elements per skin depth). Quality meshing
(minimum angle 28°) keeps the grading smooth.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: A mesh above this many triangles is refused (memory of the factorisation).
MAX_TRIANGLES = 400_000
#: Element size grows by this fraction of the distance from the extent of interest (the
#: reaction field varies on the scale of that distance; 0.15 agrees with a twice finer mesh
#: to 0.1 % at 0.5–3 m from a steel tray, bench/bench_fem.py).
_GROWTH = 0.15


@dataclass(frozen=True)
class PlateMesh:
    """Mesh arrays: nodes (2, N) m, triangles (3, T), and the plate (0, 1, …) or −1 of each
    triangle."""

    p: np.ndarray
    t: np.ndarray
    region: np.ndarray
    radius_m: float
    centre_m: tuple[float, float]


def _box_distance(x: np.ndarray, y: np.ndarray, box: tuple[float, float, float, float]
                  ) -> np.ndarray:
    dx = np.maximum(np.maximum(box[0] - x, x - box[2]), 0.0)
    dy = np.maximum(np.maximum(box[1] - y, y - box[3]), 0.0)
    return np.hypot(dx, dy)


def build_mesh(plates_m: list[tuple[float, float, float, float]], plate_h_m: list[float],
               near_h_m: float, radius_m: float | None = None,
               extent_m: tuple[float, float, float, float] | None = None,
               growth: float = _GROWTH) -> PlateMesh:
    """Mesh a disc around rectangles ``(x0, y0, x1, y1)`` (m); see the module notes.

    Parameters
    ----------
    plates_m : list of (x0, y0, x1, y1)
        The plates, m.
    plate_h_m : list of float
        Largest element size inside each plate, m.
    near_h_m : float
        Element size within the extent of interest, m.
    radius_m : float, optional
        Radius of the disc (default 30 × the half-diagonal of everything, at least 20 m).
    extent_m : (x0, y0, x1, y1), optional
        The extent of interest (conductors, points), m; default the plates' bounding box.
    growth : float
        Element size added per metre of distance from the extent of interest.

    Raises
    ------
    ValueError
        When the mesh would exceed :data:`MAX_TRIANGLES`.
    """
    import triangle

    boxes = list(plates_m) + ([extent_m] if extent_m is not None else [])
    if not boxes:
        raise ValueError("nothing to mesh: give plates or an extent")
    x0 = min(b[0] for b in boxes)
    y0 = min(b[1] for b in boxes)
    x1 = max(b[2] for b in boxes)
    y1 = max(b[3] for b in boxes)
    cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
    half = 0.5 * math.hypot(x1 - x0, y1 - y0)
    outer = float(radius_m or max(20.0, 30.0 * half))
    focus = extent_m or (x0, y0, x1, y1)
    verts, segs, regions = [], [], []
    count = 0
    for k, (a, b, c, d) in enumerate(plates_m):
        verts.append(np.array([[a, b], [c, b], [c, d], [a, d]], dtype=float))
        segs.append(np.array([[0, 1], [1, 2], [2, 3], [3, 0]]) + count)
        count += 4
        regions.append([0.5 * (a + c), 0.5 * (b + d), float(k + 1), 0.0])
    n_out = 256
    ang = np.linspace(0.0, 2.0 * math.pi, n_out, endpoint=False)
    verts.append(np.column_stack([cx + outer * np.cos(ang), cy + outer * np.sin(ang)]))
    segs.append(np.column_stack([np.arange(n_out), (np.arange(n_out) + 1) % n_out]) + count)
    # a point in no plate: just inside the outer circle
    regions.append([cx + 0.999 * outer, cy, 0.0, 0.0])
    # plates that touch share corners: merge equal vertices (an unused duplicate would
    # leave a node in no triangle, and a singular system)
    allv = np.vstack(verts)
    uniq, inv = np.unique(np.round(allv, 12), axis=0, return_inverse=True)
    seg = inv.reshape(-1)[np.vstack(segs)]
    seg = seg[seg[:, 0] != seg[:, 1]]
    data = {"vertices": uniq, "segments": seg, "regions": np.array(regions)}
    mesh = triangle.triangulate(data, "pq28A")
    h_plate = np.asarray(plate_h_m, dtype=float)
    for _ in range(12):
        p, t = mesh["vertices"], mesh["triangles"]
        attr = mesh["triangle_attributes"][:, 0].round().astype(int) - 1
        c = p[t].mean(axis=1)
        d = _box_distance(c[:, 0], c[:, 1], focus)
        h = near_h_m + growth * d
        inside = attr >= 0
        h[inside] = np.minimum(h[inside], h_plate[attr[inside]])
        e = p[t]
        area = 0.5 * np.abs((e[:, 1, 0] - e[:, 0, 0]) * (e[:, 2, 1] - e[:, 0, 1])
                            - (e[:, 2, 0] - e[:, 0, 0]) * (e[:, 1, 1] - e[:, 0, 1]))
        want = 0.5 * h * h
        if np.all(area <= 1.3 * want):
            break
        if t.shape[0] > MAX_TRIANGLES:
            raise ValueError(f"the mesh would exceed {MAX_TRIANGLES:,} triangles")
        mesh = triangle.triangulate({**mesh, "triangle_max_area": np.where(
            area > want, want, -1.0)}, "rpq28Aa")
    p, t = mesh["vertices"], mesh["triangles"]
    if t.shape[0] > MAX_TRIANGLES:
        raise ValueError(f"the mesh would exceed {MAX_TRIANGLES:,} triangles")
    attr = mesh["triangle_attributes"][:, 0].round().astype(int) - 1
    used = np.unique(t)  # drop any vertex that no triangle uses
    if used.size < p.shape[0]:
        remap = np.full(p.shape[0], -1)
        remap[used] = np.arange(used.size)
        p, t = p[used], remap[t]
    return PlateMesh(p.T.copy(), t.T.copy(), attr, outer, (cx, cy))
