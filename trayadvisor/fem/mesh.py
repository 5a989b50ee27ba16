"""A triangle mesh of a disc that holds rectangular plates, graded by a size function.

Each plate is a **structured grid**: layers across its thickness (two per skin depth at
least) and a coarser spacing along it, each cell cut into two triangles — the field varies
fast across a thin conducting plate and slowly along it, so long thin cells keep the
element count small. Plates that touch share the nodes of their common edge (each takes the
other's nodes on it). The air around is a constrained-Delaunay mesh (the ``triangle``
package) whose boundary holds the plates' edge nodes unchanged (switch ``Y``), refined until
every triangle is no larger than a size function allows: ``near_h`` within the extent of
interest (the conductors and points), growing linearly with the distance from it. Quality
meshing (minimum angle 28°) keeps the grading smooth.
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
#: Coordinates equal to this many decimals (m) are one node.
_DECIMALS = 10


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


def _division(lo: float, hi: float, h: float) -> np.ndarray:
    return np.linspace(lo, hi, max(1, math.ceil((hi - lo) / h - 1e-9)) + 1)


def plate_grids(plates_m: list[tuple[float, float, float, float]], across_m: list[float],
                along_m: list[float]) -> list[tuple[np.ndarray, np.ndarray]]:
    """(xs, ys) grid lines of each plate: ``across`` spacing over its thickness (its smaller
    side), ``along`` over its length, plus the nodes of every touching plate on a common
    edge (so touching plates share their edge nodes)."""
    grids = []
    for (x0, y0, x1, y1), ha, hl in zip(plates_m, across_m, along_m, strict=True):
        thin_x = (x1 - x0) <= (y1 - y0)
        grids.append([_division(x0, x1, ha if thin_x else hl),
                      _division(y0, y1, hl if thin_x else ha)])
    for _ in range(2 * len(plates_m) + 2):
        changed = False
        for a, (ax0, ay0, ax1, ay1) in enumerate(plates_m):
            for b, (bx0, by0, bx1, by1) in enumerate(plates_m):
                if a == b:
                    continue
                for axis, (alo, ahi, blo, bhi), a_lines, b_lines in (
                        (0, (ax0, ax1, bx0, bx1), (ay0, ay1), (by0, by1)),
                        (1, (ay0, ay1, by0, by1), (ax0, ax1), (bx0, bx1))):
                    # edges along this axis on a common line, overlapping: b's nodes on it
                    if not any(abs(u - v) < 1e-12 for u in a_lines for v in b_lines):
                        continue
                    if min(ahi, bhi) - max(alo, blo) <= 1e-12:
                        continue
                    mine, theirs = grids[a][axis], grids[b][axis]
                    add = theirs[(theirs > alo + 1e-12) & (theirs < ahi - 1e-12)]
                    merged = np.unique(np.round(np.concatenate([mine, add]), _DECIMALS))
                    if merged.size != np.unique(np.round(mine, _DECIMALS)).size:
                        grids[a][axis] = merged
                        changed = True
        if not changed:
            break
    return [(g[0], g[1]) for g in grids]


def build_mesh(plates_m: list[tuple[float, float, float, float]], plate_h_m: list[float],
               near_h_m: float, radius_m: float | None = None,
               extent_m: tuple[float, float, float, float] | None = None,
               growth: float = _GROWTH, plate_along_m: list[float] | None = None) -> PlateMesh:
    """Mesh a disc around rectangles ``(x0, y0, x1, y1)`` (m); see the module notes.

    Parameters
    ----------
    plates_m : list of (x0, y0, x1, y1)
        The plates, m.
    plate_h_m : list of float
        Element size across each plate's thickness, m.
    near_h_m : float
        Element size within the extent of interest, m.
    radius_m : float, optional
        Radius of the disc (default 30 × the half-diagonal of everything, at least 20 m).
    extent_m : (x0, y0, x1, y1), optional
        The extent of interest (conductors, points), m; default the plates' bounding box.
    growth : float
        Element size added per metre of distance from the extent of interest.
    plate_along_m : list of float, optional
        Element size along each plate, m (default ``near_h_m``).

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
    along = list(plate_along_m or [near_h_m] * len(plates_m))
    h_plate = np.asarray(plate_h_m, dtype=float)
    # thin plates (layers finer than the near size) get structured layers; thick ones are
    # regions of the Delaunay mesh, graded like the air
    thin = [bool(h < near_h_m) for h in h_plate]
    grids = plate_grids(list(plates_m), [h if t else math.inf for h, t in zip(
        h_plate, thin, strict=True)], [a if t else math.inf for a, t in zip(
            along, thin, strict=True)])
    cells = sum((g[0].size - 1) * (g[1].size - 1) for g, t in zip(grids, thin, strict=True)
                if t)
    if 2 * cells > MAX_TRIANGLES:
        raise ValueError(f"the mesh would exceed {MAX_TRIANGLES:,} triangles")
    verts, segs, holes, regions = [], [], [], []
    count = 0
    for k, ((xs, ys), (a, b, c, d)) in enumerate(zip(grids, plates_m, strict=True)):
        ring = np.vstack([np.column_stack([xs, np.full(xs.size, b)])[:-1],
                          np.column_stack([np.full(ys.size, c), ys])[:-1],
                          np.column_stack([xs[::-1], np.full(xs.size, d)])[:-1],
                          np.column_stack([np.full(ys.size, a), ys[::-1]])[:-1]])
        n_ring = ring.shape[0]
        verts.append(ring)
        segs.append(np.column_stack([np.arange(n_ring), (np.arange(n_ring) + 1) % n_ring])
                    + count)
        count += n_ring
        if thin[k]:
            holes.append([0.5 * (a + c), 0.5 * (b + d)])
        else:
            regions.append([0.5 * (a + c), 0.5 * (b + d), float(k + 1), 0.0])
    n_out = 256
    ang = np.linspace(0.0, 2.0 * math.pi, n_out, endpoint=False)
    verts.append(np.column_stack([cx + outer * np.cos(ang), cy + outer * np.sin(ang)]))
    segs.append(np.column_stack([np.arange(n_out), (np.arange(n_out) + 1) % n_out]) + count)
    regions.append([cx + 0.999 * outer, cy, 0.0, 0.0])  # a point in the air
    allv = np.round(np.vstack(verts), _DECIMALS)
    uniq, inv = np.unique(allv, axis=0, return_inverse=True)
    seg = np.sort(inv.reshape(-1)[np.vstack(segs)], axis=1)
    seg = np.unique(seg[seg[:, 0] != seg[:, 1]], axis=0)
    data = {"vertices": uniq, "segments": seg, "regions": np.array(regions)}
    if holes:
        data["holes"] = np.array(holes)
    mesh = triangle.triangulate(data, "pq28AY")
    for _ in range(12):
        p, t = mesh["vertices"], mesh["triangles"]
        attr = mesh["triangle_attributes"][:, 0].round().astype(int) - 1
        c = p[t].mean(axis=1)
        h = near_h_m + growth * _box_distance(c[:, 0], c[:, 1], focus)
        inside = attr >= 0
        h[inside] = np.minimum(h[inside], h_plate[attr[inside]])
        e = p[t]
        area = 0.5 * np.abs((e[:, 1, 0] - e[:, 0, 0]) * (e[:, 2, 1] - e[:, 0, 1])
                            - (e[:, 2, 0] - e[:, 0, 0]) * (e[:, 1, 1] - e[:, 0, 1]))
        want = 0.5 * h * h
        if np.all(area <= 1.3 * want):
            break
        if t.shape[0] + 2 * cells > MAX_TRIANGLES:
            raise ValueError(f"the mesh would exceed {MAX_TRIANGLES:,} triangles")
        mesh = triangle.triangulate({**mesh, "triangle_max_area": np.where(
            area > want, want, -1.0)}, "rpq28AYa")
    p_air, t_air = mesh["vertices"], mesh["triangles"]
    attr = mesh["triangle_attributes"][:, 0].round().astype(int) - 1
    # the plates' grid nodes: boundary nodes are air nodes already (same coordinates)
    index = {(float(x), float(y)): i for i, (x, y) in enumerate(np.round(p_air, _DECIMALS))}
    extra: list[tuple[float, float]] = []
    tris, region = [t_air], [attr]
    for k, (xs, ys) in enumerate(grids):
        if not thin[k]:
            continue
        gx, gy = np.meshgrid(np.round(xs, _DECIMALS), np.round(ys, _DECIMALS), indexing="ij")
        ids = np.empty(gx.shape, dtype=np.int64)
        for i, j in np.ndindex(gx.shape):
            key = (float(gx[i, j]), float(gy[i, j]))
            if key not in index:
                index[key] = p_air.shape[0] + len(extra)
                extra.append(key)
            ids[i, j] = index[key]
        a, b = ids[:-1, :-1].ravel(), ids[1:, :-1].ravel()
        c, d = ids[1:, 1:].ravel(), ids[:-1, 1:].ravel()
        quad = np.concatenate([np.column_stack([a, b, c]), np.column_stack([a, c, d])])
        tris.append(quad)
        region.append(np.full(quad.shape[0], k))
    p = np.vstack([p_air, np.array(extra).reshape(-1, 2)])
    t = np.vstack(tris)
    if t.shape[0] > MAX_TRIANGLES:
        raise ValueError(f"the mesh would exceed {MAX_TRIANGLES:,} triangles")
    used = np.unique(t)  # drop any vertex that no triangle uses
    if used.size < p.shape[0]:
        remap = np.full(p.shape[0], -1)
        remap[used] = np.arange(used.size)
        p, t = p[used], remap[t]
    return PlateMesh(p.T.copy(), t.T.copy(), np.concatenate(region), outer, (cx, cy))
