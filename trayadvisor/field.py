"""2D phasor field of long straight parallel conductors in free space.

Arrays in, arrays out, SI units (metres, amperes, tesla). Every function is vectorised over
conductors and points; the hot loop runs over cache-sized chunks of points only.

The field of a long straight conductor of radius ``a`` carrying a uniformly distributed
current ``I`` at distance ``r`` from its axis is (Ampère's law)

    B = μ0 I / (2π r)        for r >= a
    B = μ0 I r / (2π a²)     for r <  a,

directed along ẑ × r̂. Both cases are one expression, ``B = μ0 I r / (2π max(r², a²))``, so the
inside of a conductor needs no mask and the field is continuous at its surface.
"""

from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np
from scipy.constants import mu_0

MU0: float = mu_0  #: vacuum permeability, T·m/A (CODATA, via scipy.constants)
K_LINE: float = mu_0 / (2.0 * np.pi)  #: μ0/(2π), T·m/A

_CHUNK_PAIRS = 1 << 16  # conductor-point pairs per chunk: ~0.5 MB per temporary, stays in L2
_PARALLEL_PAIRS = 1 << 21  # above this many pairs, chunks run on a thread per core
_THREADS = max(1, min(4, os.cpu_count() or 1))


def _kernel_chunk(x: np.ndarray, y: np.ndarray, a2: np.ndarray, px: np.ndarray,
                  py: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Unit-current kernel for one chunk: (gx, gy) each (n, c), T per A."""
    dx = px[None, :] - x[:, None]
    dy = py[None, :] - y[:, None]
    w = dx * dx
    w += dy * dy
    np.maximum(w, a2[:, None], out=w)
    np.divide(K_LINE, w, out=w)
    dx *= w  # By kernel
    dy *= w  # -Bx kernel
    np.negative(dy, out=dy)
    return dy, dx


def unit_field(src_xy: np.ndarray, radius: np.ndarray, pts: np.ndarray) -> np.ndarray:
    """Flux density of each conductor for 1 A at each point.

    Parameters
    ----------
    src_xy : (n, 2) float
        Conductor centres, m.
    radius : (n,) float
        Conductor radii, m (uniform current density inside).
    pts : (m, 2) float
        Field points, m.

    Returns
    -------
    (n, m, 2) float
        ``G[c, p] = (Bx, By)`` in T for 1 A in conductor ``c``; the field of any set of
        currents ``I`` is then ``einsum('c,cpk->pk', I, G)``.

    Notes
    -----
    B = μ0/(2π) · (−Δy, Δx) / max(r², a²). References: Ampère's circuital law, e.g. Jackson,
    *Classical Electrodynamics*, 3rd ed., §5.3.
    """
    src_xy = np.asarray(src_xy, dtype=float).reshape(-1, 2)
    pts = np.asarray(pts, dtype=float).reshape(-1, 2)
    a2 = np.asarray(radius, dtype=float).reshape(-1) ** 2
    gx, gy = _kernel_chunk(src_xy[:, 0], src_xy[:, 1], a2, pts[:, 0], pts[:, 1])
    return np.stack([gx, gy], axis=-1)


def phasor_field(src_xy: np.ndarray, radius: np.ndarray, currents: np.ndarray,
                 pts: np.ndarray) -> np.ndarray:
    """Complex RMS flux-density phasor at each point for each frequency component.

    Parameters
    ----------
    src_xy : (n, 2) float
        Conductor centres, m.
    radius : (n,) float
        Conductor radii, m.
    currents : (H, n) or (n,) complex
        RMS current phasors, A (one row per frequency component).
    pts : (m, 2) float
        Field points, m.

    Returns
    -------
    (H, m, 2) complex
        ``B[h, p] = (Bx, By)`` phasors in T (RMS).

    Notes
    -----
    The kernel is real, so the currents are split into real and imaginary parts and the sum
    over conductors is one real matrix product per chunk, ``[Re I; Im I] @ G`` (BLAS).
    """
    src_xy = np.asarray(src_xy, dtype=float).reshape(-1, 2)
    pts = np.asarray(pts, dtype=float).reshape(-1, 2)
    cur = np.asarray(currents, dtype=complex)
    if cur.ndim == 1:
        cur = cur[None, :]
    n, m, h = src_xy.shape[0], pts.shape[0], cur.shape[0]
    out = np.zeros((h, m, 2), dtype=complex)
    if n == 0 or m == 0:
        return out
    x = np.ascontiguousarray(src_xy[:, 0])
    y = np.ascontiguousarray(src_xy[:, 1])
    a2 = np.asarray(radius, dtype=float).reshape(-1) ** 2
    c = np.ascontiguousarray(np.concatenate([cur.real, cur.imag]))  # (2H, n)
    px = np.ascontiguousarray(pts[:, 0])
    py = np.ascontiguousarray(pts[:, 1])
    step = max(64, _CHUNK_PAIRS // n)
    starts = range(0, m, step)

    def work(s: int) -> None:
        e = min(m, s + step)
        gx, gy = _kernel_chunk(x, y, a2, px[s:e], py[s:e])
        bx = c @ gx
        by = c @ gy
        out[:, s:e, 0].real = bx[:h]
        out[:, s:e, 0].imag = bx[h:]
        out[:, s:e, 1].real = by[:h]
        out[:, s:e, 1].imag = by[h:]

    if n * m >= _PARALLEL_PAIRS and _THREADS > 1:
        with ThreadPoolExecutor(_THREADS) as pool:
            list(pool.map(work, starts))
    else:
        for s in starts:
            work(s)
    return out


def resultant_rms(b: np.ndarray) -> np.ndarray:
    """Resultant RMS flux density, sqrt(Σ_h |Bx_h|² + |By_h|²).

    Parameters
    ----------
    b : (H, m, 2) complex or (m, 2) complex
        RMS phasors, T.

    Returns
    -------
    (m,) float, T.

    Notes
    -----
    IEC 61786-1, definition of resultant field: B_R = sqrt(B_x² + B_y² + B_z²) of the RMS
    components; harmonics combine as root-sum-square.
    """
    b = np.asarray(b)
    if b.ndim == 2:
        b = b[None]
    return np.sqrt(np.sum(b.real**2 + b.imag**2, axis=(0, 2)))


def ellipse_major_rms(b: np.ndarray) -> np.ndarray:
    """Maximum RMS field along any one direction (semi-major axis of the polarisation ellipse).

    Parameters
    ----------
    b : (H, m, 2) complex or (m, 2) complex
        RMS phasors, T.

    Returns
    -------
    (m,) float, T.

    Notes
    -----
    With S = Σ_h Re(B_h B_hᴴ) (2×2, symmetric), the RMS of the component along unit vector u
    is sqrt(uᵀ S u); its maximum is the root of S's largest eigenvalue,
    λ = (a + c)/2 + sqrt(((a − c)/2)² + b²). For one frequency this is the semi-major axis of
    the polarisation ellipse (IEC 61786-1, "maximum field"); B_max ≤ B_R ≤ √2·B_max.
    """
    b = np.asarray(b)
    if b.ndim == 2:
        b = b[None]
    bx, by = b[..., 0], b[..., 1]
    sa = np.sum(bx.real**2 + bx.imag**2, axis=0)
    sc = np.sum(by.real**2 + by.imag**2, axis=0)
    sb = np.sum(bx.real * by.real + bx.imag * by.imag, axis=0)
    half = 0.5 * (sa - sc)
    lam = 0.5 * (sa + sc) + np.sqrt(half * half + sb * sb)
    return np.sqrt(np.maximum(lam, 0.0))


@dataclass(frozen=True)
class FarField:
    """Leading term of the far field: B_R(r) ≈ coefficient_T_m / r**order for large r.

    ``order`` is 1 for a net current, 2 for a dipole (go/return), 3 for a quadrupole, …;
    ``None`` when no current flows or every moment up to ``max_order`` cancels.
    """

    order: int | None
    coefficient_T_m: float  # T·m^order: the leading term's value extrapolated to r = 1 m
    moments: np.ndarray  # (K,) RMS magnitude of each complex moment, A·m^k


def far_field(src_xy: np.ndarray, currents: np.ndarray, max_order: int = 12,
              rtol: float = 1e-9) -> FarField:
    """Far-field decay order and coefficient from the 2D multipole moments.

    Parameters
    ----------
    src_xy : (n, 2) float
        Conductor centres, m.
    currents : (H, n) or (n,) complex
        RMS phasors, A.
    max_order : int
        Highest decay order examined.
    rtol : float
        A moment counts as zero below ``rtol · Σ|I| · R^k`` (R = largest distance from the
        current-weighted centre), i.e. at rounding level.

    Notes
    -----
    With z = x + iy, the field of line currents is Bx − iBy = μ0/(2πi) Σ_c I_c/(z − z_c)
    = μ0/(2πi) Σ_k M_k / z^(k+1), M_k = Σ_c I_c z_c^k. The lowest non-zero moment sets the
    decay, |B| ∝ |M_k| / r^(k+1), the same in every direction, so the RMS resultant of the
    leading term is μ0/(2π) sqrt(Σ_h |M_k(Re I_h)|² + |M_k(Im I_h)|²) / r^(k+1).
    References: Jackson, *Classical Electrodynamics*, 3rd ed., §4.1 (2D multipoles);
    Hoburg, "Principles of quasistatic magnetic shielding with cylindrical and spherical
    shields", IEEE Trans. EMC 37 (1995) for power-line multipoles (from memory).
    """
    xy = np.asarray(src_xy, dtype=float).reshape(-1, 2)
    cur = np.asarray(currents, dtype=complex)
    if cur.ndim == 1:
        cur = cur[None, :]
    parts = np.concatenate([cur.real, cur.imag])  # (2H, n) real currents
    scale_i = float(np.abs(parts).sum(axis=1).max()) if parts.size else 0.0
    if xy.shape[0] == 0 or scale_i == 0.0:
        return FarField(None, 0.0, np.zeros(max_order))
    w = np.abs(parts).sum(axis=0)
    z = xy[:, 0] + 1j * xy[:, 1]
    z0 = np.sum(w * z) / w.sum()
    dz = z - z0
    radius = max(float(np.abs(dz).max()), 1e-12)
    powers = (dz[None, :] / radius) ** np.arange(max_order)[:, None]  # (K, n), scaled
    m = parts @ powers.T  # (2H, K) complex moments / R^k
    mag = np.sqrt(np.sum(np.abs(m) ** 2, axis=0))  # (K,)
    big = np.nonzero(mag > rtol * scale_i)[0]
    moments = mag * radius ** np.arange(max_order)
    if big.size == 0:
        return FarField(None, 0.0, moments)
    k = int(big[0])
    return FarField(k + 1, float(K_LINE * moments[k]), moments)
