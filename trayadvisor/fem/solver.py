"""The plates' reaction to line currents: P2 finite elements, one factorisation per frequency.

Formulation (per metre, one frequency component ω; SI units). The total vector potential
A_z = A0 + A_r is split into the free-space potential of the sources,
A0 = −(μ0/2π) Σ I_k ln r_k (known in closed form, so the singularity at each conductor never
meets the mesh), and the **reaction** A_r of the plates, which solves

    −∇·(ν ∇A_r) + jωσ (A_r − c_p) = ∇·((ν − ν0) ∇A0) − jωσ A0       (in plate p),

with ν = 1/(μ0 μr) in the plates, ν0 = 1/μ0 elsewhere, σ the conductivity. In weak form the
right-hand side is −∫(ν − ν0)∇A0·∇v − jω∫σ A0 v, an integral over the plates only.

- **Floating plates.** In 2D every plate is a conductor insulated from the rest: its eddy
  current J = −jωσ(A − c_p) sums to zero. One unknown c_p per plate and the row
  ∫_p σ (A_r + A0 − c_p) = 0 keep it so; the bordered system stays complex symmetric.
- **Open boundary.** A_r = 0 on a disc far away (at least 20 m, 30 × the plates' size): the
  reaction of plates whose eddy currents sum to zero falls off like a dipole, so the
  boundary's error near the plates is of the order (size/radius)².
- **One factorisation per frequency** (scipy.sparse.linalg.splu), one back-substitution per
  source: the field of any arrangement is Σ_k I_k G_k (linear materials).
- **B at a point** from A_r: B = (∂A_r/∂y, −∂A_r/∂x) of the P2 solution in the element that
  holds the point, plus the closed-form free-space field. A_r has no singularity (the
  sources stay in A0), so the P2 gradient is accurate; a gradient of the total potential
  near a source would not be.

At ω = 0 (DC) only the permeability acts (σ plays no part).

References
----------
Time-harmonic A_z formulation of 2D eddy-current problems and the floating-potential
constraint of insulated conductors, e.g. P. P. Silvester, R. L. Ferrari, *Finite Elements for
Electrical Engineers*, 3rd ed., 1996 (from memory).
"""

from __future__ import annotations

import math
import threading
from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.units import MU0
from trayadvisor.fem.materials import skin_depth_m
from trayadvisor.fem.mesh import PlateMesh, build_mesh
from trayadvisor.fem.probing import PointProbe

_K = MU0 / (2.0 * math.pi)
#: Largest length-to-thickness ratio of the cells of a plate's structured layers.
_ASPECT = 5.0


@dataclass(frozen=True)
class Plate:
    """An axis-aligned rectangle of linear material, m; ``mu_r`` ≥ 1, ``sigma`` ≥ 0 S/m."""

    x0: float
    y0: float
    x1: float
    y1: float
    mu_r: float
    sigma: float
    #: Plates with the same body (≥ 0) are one conductor; −1: a body of its own.
    body: int = -1

    @property
    def thickness_m(self) -> float:
        return min(self.x1 - self.x0, self.y1 - self.y0)

    def skin_depth_m(self, frequency_hz: float) -> float:
        """sqrt(2/(ωμσ)), inf for no conductivity or DC."""
        return skin_depth_m(self.mu_r, self.sigma, frequency_hz)


def free_potential(xy_src: np.ndarray, pts: np.ndarray) -> np.ndarray:
    """A0 per ampere, (k, ...) for sources (k, 2) at points (2, ...) m: −(μ0/2π) ln r."""
    dx = pts[0][None] - xy_src[:, 0].reshape(-1, *([1] * (pts.ndim - 1)))
    dy = pts[1][None] - xy_src[:, 1].reshape(-1, *([1] * (pts.ndim - 1)))
    return -0.5 * _K * np.log(dx * dx + dy * dy)


def free_gradient(xy_src: np.ndarray, pts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """∇A0 per ampere: (∂A0/∂x, ∂A0/∂y), each (k, ...)."""
    dx = pts[0][None] - xy_src[:, 0].reshape(-1, *([1] * (pts.ndim - 1)))
    dy = pts[1][None] - xy_src[:, 1].reshape(-1, *([1] * (pts.ndim - 1)))
    r2 = dx * dx + dy * dy
    return -_K * dx / r2, -_K * dy / r2


class PlateSolver:
    """The plates' reaction at one frequency, factorised once (see the module notes).

    Parameters
    ----------
    plates : list of Plate
    frequency_hz : float
        The frequency component (0 for DC).
    extent_m : (x0, y0, x1, y1)
        Where the sources and the points of interest are (meshed finely), m.
    near_h_m : float
        Element size near the plates and sources, m (default: 1/40 of the extent's size).
    radius_m : float, optional
        Radius of the meshed disc, m (see :func:`~trayadvisor.fem.mesh.build_mesh`).
    growth : float
        Element size added per metre of distance from the extent (0.15: the field 0.5–3 m
        away then agrees with a twice finer mesh to 0.1 %, bench/bench_fem.py).
    plate_refine : float
        Divides the element size across the plates (convergence studies).
    """

    def __init__(self, plates: list[Plate], frequency_hz: float,
                 extent_m: tuple[float, float, float, float],
                 near_h_m: float | None = None, radius_m: float | None = None,
                 growth: float = 0.15, plate_refine: float = 1.0) -> None:
        from scipy.sparse import bmat, csc_matrix
        from scipy.sparse.linalg import splu
        from skfem import Basis, BilinearForm, ElementTriP2, MeshTri, asm
        from skfem.helpers import dot, grad

        self.plates = list(plates)
        self.omega = 2.0 * math.pi * float(frequency_hz)
        size = max(extent_m[2] - extent_m[0], extent_m[3] - extent_m[1], 1e-3)
        near = float(near_h_m or size / 40.0)
        hs = []
        for pl in self.plates:
            # across the thickness: two elements at least; in a conductor, two per skin
            # depth; elsewhere the size function of the mesh grades from near_h outwards
            h = pl.thickness_m / 2.0
            delta = pl.skin_depth_m(frequency_hz)
            if math.isfinite(delta):
                h = min(h, delta / 2.0)
            hs.append(max(h / plate_refine, 1e-5))
        # along a plate the field varies on the scale of the sources' distance: the near
        # size, but cells no longer than _ASPECT times their thickness
        along = [min(near / plate_refine, _ASPECT * h) for h in hs]
        self.mesh: PlateMesh = build_mesh([(p.x0, p.y0, p.x1, p.y1) for p in self.plates],
                                          hs, near, radius_m, extent_m, growth, along)
        m = MeshTri(self.mesh.p, self.mesh.t)
        self.basis = Basis(m, ElementTriP2())
        region = self.mesh.region
        nu0 = 1.0 / MU0
        nu_e = np.full(region.size, nu0)
        sig_e = np.zeros(region.size)
        for k, pl in enumerate(self.plates):
            nu_e[region == k] = nu0 / pl.mu_r
            sig_e[region == k] = pl.sigma
        nqp = self.basis.X.shape[1]
        self._nu = np.repeat(nu_e[:, None], nqp, axis=1)
        self._sig = np.repeat(sig_e[:, None], nqp, axis=1)

        @BilinearForm
        def stiff(u, v, w):
            return w.nu * dot(grad(u), grad(v))

        @BilinearForm
        def mass(u, v, w):
            return w.sig * u * v

        k_mat = asm(stiff, self.basis, nu=self._nu)
        n = k_mat.shape[0]
        eddy = self.omega > 0.0 and bool(np.any(sig_e > 0))
        self.plate_basis = [Basis(m, ElementTriP2(), elements=np.flatnonzero(region == k))
                            for k in range(len(self.plates))]
        a_mat = k_mat.astype(complex)
        self._b = []
        self._s = []
        # one floating unknown per conducting body (plates joined by ``body``)
        keys = [pl.body if pl.body >= 0 else -1 - k for k, pl in enumerate(self.plates)]
        self.bodies = {key: [k for k in range(len(keys)) if keys[k] == key]
                       for key in dict.fromkeys(keys)}
        self._body_of = {k: list(self.bodies).index(keys[k]) for k in range(len(keys))}
        if eddy:
            a_mat = a_mat + 1j * self.omega * asm(mass, self.basis, sig=self._sig)
            for members in self.bodies.values():
                b = np.zeros(n)
                for k in members:
                    pb = self.plate_basis[k]
                    b += self._plate_row(pb, np.full((pb.nelems, nqp), self.plates[k].sigma))
                self._b.append(b)
                self._s.append(float(b.sum()))
        boundary = self.basis.get_dofs().all()
        self._interior = np.setdiff1d(np.arange(n), boundary)
        self._n = n
        self._floating = [k for k, s in enumerate(self._s) if s > 0]
        a_ii = a_mat.tocsr()[self._interior][:, self._interior]
        if self._floating:
            cols = np.column_stack([-1j * self.omega * self._b[k][self._interior]
                                    for k in self._floating])
            # the row −jω·(∫σ(A_r − c) + ∫σ A0) = 0 of each body: symmetric with the columns
            diag = np.diag([1j * self.omega * self._s[k] for k in self._floating])
            full = bmat([[a_ii, csc_matrix(cols)], [csc_matrix(cols.T), csc_matrix(diag)]])
        else:
            full = a_ii
        # the matrix is complex symmetric: a minimum-degree ordering of AᵀA + A with the
        # diagonal as pivots keeps the fill-in 10× smaller than the column ordering of the
        # default (at 650 Hz in a steel tray: 0.4 s against 20 s; bench/bench_plates.py)
        self._lu = splu(csc_matrix(full), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                        options={"SymmetricMode": True})
        self.probe = PointProbe(self.mesh, self.basis)
        self._solve_lock = threading.RLock()  # ``reaction`` leaves the bodies' c in _c

    @staticmethod
    def _plate_row(pb, sig: np.ndarray) -> np.ndarray:  # noqa: ANN001
        """∫_p σ φ_i for every dof i (the plate's row of the floating constraint)."""
        from skfem import LinearForm, asm

        @LinearForm
        def row(v, w):
            return w.sig * v

        return np.asarray(asm(row, pb, sig=sig))

    def _unit_loads(self, xy: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Loads of unit sources at ``xy`` (k, 2): (N, k) dof rows and (bodies, k) floating
        rows, by the plates' quadrature in one array expression per plate (the weighted
        path of :meth:`reaction` assembles the same forms with scikit-fem)."""
        nu0 = 1.0 / MU0
        k = xy.shape[0]
        load = np.zeros((self._n, k), dtype=complex)
        body_rows = np.zeros((len(self._floating), k), dtype=complex)
        for idx, (pl, pb) in enumerate(zip(self.plates, self.plate_basis, strict=True)):
            dnu = nu0 / pl.mu_r - nu0
            eddy = self.omega > 0.0 and pl.sigma > 0.0
            if dnu == 0.0 and not eddy:
                continue
            x = np.asarray(pb.global_coordinates())  # (2, E, Q)
            dx = pb.dx  # (E, Q)
            dofs = pb.element_dofs  # (Nb, E)
            part = np.zeros((dofs.shape[0], dofs.shape[1], k), dtype=complex)
            if dnu != 0.0:
                gx, gy = free_gradient(xy, x)  # (k, E, Q)
                for i in range(dofs.shape[0]):
                    g = pb.basis[i][0].grad  # (2, E, Q)
                    part[i] += np.einsum("keq,eq->ek", gx * g[0] + gy * g[1],
                                         -dnu * dx)
            if eddy:
                a0 = free_potential(xy, x)  # (k, E, Q)
                f_sig = np.empty((dofs.shape[0], dofs.shape[1], k))
                for i in range(dofs.shape[0]):
                    f_sig[i] = np.einsum("keq,eq->ek", a0, pl.sigma * np.asarray(pb.basis[i][0])
                                         * dx)
                part -= 1j * self.omega * f_sig
                body = self._body_of[idx]
                if body in self._floating:
                    body_rows[self._floating.index(body)] += (
                        1j * self.omega * f_sig.sum(axis=(0, 1)))
            np.add.at(load, dofs.reshape(-1), part.reshape(-1, k))
        return load, body_rows

    def reaction(self, xy_src_m: np.ndarray, weights: np.ndarray | None = None) -> np.ndarray:
        """A_r at every dof, (N, c): one column per source of 1 A, or (with ``weights``, a
        real (k, c) array) one column per weighted combination of the sources, assembled
        as one load with scikit-fem's forms (an independent path: superposition check)."""
        with self._solve_lock:
            return self._reaction(xy_src_m, weights)

    def _reaction(self, xy_src_m: np.ndarray, weights: np.ndarray | None) -> np.ndarray:
        from skfem import LinearForm, asm
        from skfem.helpers import grad

        xy = np.asarray(xy_src_m, dtype=float).reshape(-1, 2)
        if weights is None:
            load, body_rows = self._unit_loads(xy)
            sol = self._lu.solve(np.vstack([load[self._interior], body_rows]))
            out = np.zeros((self._n, xy.shape[0]), dtype=complex)
            out[self._interior] = sol[:self._interior.size]
            self._c = sol[self._interior.size:]
            return out
        wts = np.eye(xy.shape[0]) if weights is None else np.asarray(weights, float).reshape(
            xy.shape[0], -1)
        cols = range(xy.shape[0]) if weights is None else range(wts.shape[1])
        nf = len(self._floating)
        ni = self._interior.size
        rhs = np.zeros((ni + nf, wts.shape[1]), dtype=complex)
        nu0 = 1.0 / MU0
        for k, (pl, pb) in enumerate(zip(self.plates, self.plate_basis, strict=True)):
            dnu = nu0 / pl.mu_r - nu0
            eddy = self.omega > 0.0 and pl.sigma > 0.0
            for c in cols:
                use = np.flatnonzero(wts[:, c])
                src, wt = xy[use], wts[use, c]

                @LinearForm
                def magnetic(v, w, src=src, wt=wt, dnu=dnu):
                    gx, gy = free_gradient(src, w.x)
                    gx, gy = np.tensordot(wt, gx, axes=1), np.tensordot(wt, gy, axes=1)
                    return -dnu * (gx * grad(v)[0] + gy * grad(v)[1])

                @LinearForm
                def induced(v, w, src=src, wt=wt, sig=pl.sigma):
                    return sig * np.tensordot(wt, free_potential(src, w.x), axes=1) * v

                # real forms assembled apart: the complex load is f_ν − jω f_σ
                f = np.asarray(asm(magnetic, pb), dtype=complex) if dnu != 0.0 else 0.0
                if eddy:
                    f_sig = np.asarray(asm(induced, pb))
                    f = f - 1j * self.omega * f_sig
                    body = self._body_of[k]
                    if body in self._floating:
                        rhs[ni + self._floating.index(body), c] += (
                            1j * self.omega * f_sig.sum())
                if not np.isscalar(f):
                    rhs[:ni, c] += f[self._interior]
        sol = self._lu.solve(rhs)
        out = np.zeros((self._n, wts.shape[1]), dtype=complex)
        out[self._interior] = sol[:ni]
        self._c = sol[ni:]
        return out

    def reaction_field(self, a_r: np.ndarray, pts_m: np.ndarray) -> np.ndarray:
        """B_r (k, m, 2) complex at points (m, 2) from the reaction potentials (N, k):
        B = (∂A/∂y, −∂A/∂x) of the P2 potential in the element holding each point (the
        reaction is smooth where no plate is: no source singularity meets the mesh)."""
        dx, dy = self.gradient_probes(pts_m)
        return np.stack([(dy @ a_r).T, -(dx @ a_r).T], axis=-1)

    def losses_w_per_m(self, xy_src_m: np.ndarray, currents: np.ndarray) -> np.ndarray:
        """Eddy-current loss of each plate, W/m, for RMS phasors ``currents`` (k,) A.

        P = ∫_p |J|²/σ dA with J = −jωσ(A_r + A0 − c_p); zero at DC and in plates without
        conductivity (hysteresis is not modelled: the materials are linear).
        """
        from skfem import Functional, asm

        cur = np.asarray(currents, dtype=complex).reshape(-1)
        out = np.zeros(len(self.plates))
        if self.omega <= 0.0 or not self._floating and not any(
                p.sigma > 0 for p in self.plates):
            return out
        xy = np.asarray(xy_src_m, dtype=float).reshape(-1, 2)
        with self._solve_lock:
            a = self.reaction(xy, weights=np.column_stack([cur.real, cur.imag]))
            c = self._c[:, 0] + 1j * self._c[:, 1] if self._c.size else np.zeros(0)
        a_r = a[:, 0] + 1j * a[:, 1]

        @Functional
        def joule(w):
            a0 = np.tensordot(cur, free_potential(xy, w.x), axes=1) - w.cp
            re = np.asarray(w.ar_re) + a0.real
            im = np.asarray(w.ar_im) + a0.imag
            return self.omega ** 2 * w.sig * (re * re + im * im)

        for k, (pl, pb) in enumerate(zip(self.plates, self.plate_basis, strict=True)):
            if pl.sigma <= 0.0:
                continue
            body = self._body_of[k]
            cp = c[self._floating.index(body)] if body in self._floating else 0.0
            out[k] = float(asm(joule, pb, ar_re=pb.interpolate(a_r.real),
                               ar_im=pb.interpolate(a_r.imag), cp=cp, sig=pl.sigma))
        return out

    def locate(self, pts_m: np.ndarray) -> np.ndarray:
        """The triangle holding each point, −1 outside (:class:`~trayadvisor.fem.probing.
        PointProbe`)."""
        return self.probe.locate(pts_m)

    def probes(self, pts_m: np.ndarray):  # noqa: ANN201
        """Sparse (m, N): a P2 function's value at each point (zero rows outside)."""
        return self.probe.values(pts_m)

    def gradient_probes(self, pts_m: np.ndarray):  # noqa: ANN201
        """Sparse (m, N) matrices of ∂/∂x and ∂/∂y at each point (zero rows outside)."""
        return self.probe.gradients(pts_m)

    def field(self, xy_src_m: np.ndarray, pts_m: np.ndarray) -> np.ndarray:
        """Total B per ampere of each source, (k, m, 2) complex: free space + reaction."""
        xy = np.asarray(xy_src_m, dtype=float).reshape(-1, 2)
        pts = np.asarray(pts_m, dtype=float).reshape(-1, 2)
        gx, gy = free_gradient(xy, pts.T)
        b0 = np.stack([gy, -gx], axis=-1).astype(complex)
        return b0 + self.reaction_field(self.reaction(xy), pts)
