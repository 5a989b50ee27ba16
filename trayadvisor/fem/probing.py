"""Values and gradients of a P2 finite-element function at arbitrary points.

:class:`PointProbe` locates points in the mesh (a k-d tree of the triangles' centroids gives
a few candidates; barycentric coordinates decide, with more candidates for the few points
left over) and builds sparse matrices that map the dof vector to the values or the
gradients at the points. Points outside the meshed disc get zero rows: the plates'
reaction is taken as zero there, as on the disc's boundary.
"""

from __future__ import annotations

import numpy as np

from trayadvisor.fem.mesh import PlateMesh


class PointProbe:
    """Point location and probe matrices on one mesh and P2 basis (see the module notes)."""

    def __init__(self, mesh: PlateMesh, basis) -> None:  # noqa: ANN001
        self.mesh = mesh
        self.basis = basis
        self._tree = None
        self._inv = None

    def locate(self, pts_m: np.ndarray) -> np.ndarray:
        """The triangle holding each point (m, 2), or −1 outside the meshed disc.

        A k-d tree of the triangles' centroids gives a few candidates per point; their
        barycentric coordinates decide (more candidates for the few points left over).
        """
        from scipy.spatial import cKDTree

        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        p, t = self.mesh.p, self.mesh.t
        if self._tree is None:
            self._tree = cKDTree(p[:, t].mean(axis=1).T)
            e1 = p[:, t[1]] - p[:, t[0]]
            e2 = p[:, t[2]] - p[:, t[0]]
            det = e1[0] * e2[1] - e1[1] * e2[0]
            self._inv = np.stack([[e2[1] / det, -e2[0] / det],
                                  [-e1[1] / det, e1[0] / det]])  # (2, 2, T)
        out = np.full(pts.shape[0], -1, dtype=np.int64)
        cx, cy = self.mesh.centre_m
        inside = np.hypot(pts[:, 0] - cx, pts[:, 1] - cy) < self.mesh.radius_m * (1 - 1e-9)
        todo = np.flatnonzero(inside)
        ntri = t.shape[1]
        for k in (8, 32, 128, ntri):
            if todo.size == 0:
                break
            kk = min(k, ntri)
            _, cand = self._tree.query(pts[todo], kk)
            cand = np.asarray(cand).reshape(todo.size, kk)
            d = pts[todo][:, None, :] - p[:, t[0]].T[cand]  # (q, k, 2)
            inv = self._inv[:, :, cand]  # (2, 2, q, k)
            lam1 = inv[0, 0] * d[..., 0] + inv[0, 1] * d[..., 1]
            lam2 = inv[1, 0] * d[..., 0] + inv[1, 1] * d[..., 1]
            tol = -1e-10
            ok = (lam1 >= tol) & (lam2 >= tol) & (1.0 - lam1 - lam2 >= tol)
            hit = ok.any(axis=1)
            out[todo[hit]] = cand[hit, ok[hit].argmax(axis=1)]
            todo = todo[~hit]
        return out

    def gradients(self, pts_m: np.ndarray):  # noqa: ANN201
        """Sparse (m, N) matrices of ∂/∂x and ∂/∂y of a P2 function at each point; zero rows
        outside the meshed disc."""
        from scipy.sparse import coo_matrix

        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        cells = self.locate(pts)
        use = np.flatnonzero(cells >= 0)
        b = self.basis
        shape = (pts.shape[0], b.N)
        if use.size == 0:
            empty = coo_matrix(shape).tocsr()
            return empty, empty
        ref = b.mapping.invF(pts[use].T[:, :, None], tind=cells[use])
        grads = np.array([b.elem.gbasis(b.mapping, ref, k, tind=cells[use])[0].grad
                          for k in range(b.Nbfun)]).reshape(b.Nbfun, 2, -1)
        rows = np.tile(use, b.Nbfun)
        cols = b.element_dofs[:, cells[use]].reshape(-1)
        return tuple(coo_matrix((grads[:, c].reshape(-1), (rows, cols)), shape=shape).tocsr()
                     for c in range(2))

    def values(self, pts_m: np.ndarray):  # noqa: ANN201
        """Sparse (m, N) matrix: the value of a P2 function at each point (m, 2); rows of
        points outside the meshed disc are zero (the reaction is taken as 0 there)."""
        from scipy.sparse import coo_matrix

        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        cells = self.locate(pts)
        use = np.flatnonzero(cells >= 0)
        b = self.basis
        if use.size == 0:
            return coo_matrix((pts.shape[0], b.N)).tocsr()
        ref = b.mapping.invF(pts[use].T[:, :, None], tind=cells[use])
        phis = np.array([b.elem.gbasis(b.mapping, ref, k, tind=cells[use])[0]
                         for k in range(b.Nbfun)]).reshape(b.Nbfun, -1)
        rows = np.tile(use, b.Nbfun)
        cols = b.element_dofs[:, cells[use]].reshape(-1)
        return coo_matrix((phis.reshape(-1), (rows, cols)), shape=(pts.shape[0], b.N)).tocsr()

