"""2D phasor field of long straight parallel conductors in free space.

Arrays in, arrays out, SI units (metres, amperes, tesla). Every function is vectorised over
conductors and points; the only Python loop in the hot path runs over cache-sized chunks of
points.

The field of a long straight conductor of radius ``a`` carrying a uniformly distributed
current ``I`` at distance ``r`` from its axis is (Ampère's law)

    B = μ0 I / (2π r)        for r >= a
    B = μ0 I r / (2π a²)     for r <  a,

directed along ẑ × r̂. Both cases are one expression, ``B = μ0 I r / (2π max(r², a²))``, so the
inside of a conductor needs no mask and the field is continuous at its surface.
"""

from __future__ import annotations

import os
import threading
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np

from trayadvisor.engine.units import K_LINE

#: Conductor-point pairs per chunk: each (n, chunk) float64 work array is 512 KiB and stays
#: in the per-core L2 cache (2 MiB on the reference machine; see bench/bench_field.py).
_CHUNK_PAIRS = 1 << 16
#: At most this many points per chunk, so that the per-chunk (6H, chunk) temporaries stay
#: small (large fresh arrays cost page faults on every call).
_CHUNK_POINTS = 1024
#: OpenBLAS runs a matrix product on one thread while M·N·K < 2·2^18; keeping every product
#: below that avoids its worker threads, whose wake-up costs 8–16 ms per call on a loaded
#: 2-core machine (measured; bench/bench_field.py) — we thread over chunks ourselves.
_BLAS_SERIAL_MNK = 1 << 19
#: Below this many pairs a single thread is faster than handing chunks to the pool.
_PARALLEL_PAIRS = 1 << 22
#: Worker threads for large jobs (numpy releases the GIL inside each array operation).
#: ``TRAYADVISOR_THREADS=1`` turns threading off, e.g. in batch runs with one process per core.
_THREADS_ENV = os.environ.get("TRAYADVISOR_THREADS", "").strip()
_THREADS = (max(1, int(_THREADS_ENV)) if _THREADS_ENV.isdigit()
            else max(1, min(4, os.cpu_count() or 1)))
#: Smallest r² used in the kernel, m² (a zero radius is treated as 1 nm, avoiding 1/0).
_A2_FLOOR = 1e-18

_pool: ThreadPoolExecutor | None = None
_pool_lock = threading.Lock()


def _get_pool() -> ThreadPoolExecutor:
    global _pool
    with _pool_lock:
        if _pool is None:
            _pool = ThreadPoolExecutor(_THREADS, thread_name_prefix="trayadvisor-field")
        return _pool


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
    G = μ0/(2π) · (−Δy, Δx) / max(r², a²), with (Δx, Δy) = p − c and r² = Δx² + Δy².

    This materialises all n·m pairs; use :func:`phasor_field` for the summed field.

    References
    ----------
    Ampère's circuital law, e.g. J. D. Jackson, *Classical Electrodynamics*, 3rd ed., ch. 5
    (from memory).
    """
    src_xy = np.asarray(src_xy, dtype=float).reshape(-1, 2)
    pts = np.asarray(pts, dtype=float).reshape(-1, 2)
    a2 = np.maximum(np.asarray(radius, dtype=float).reshape(-1) ** 2, _A2_FLOOR)
    dx = pts[None, :, 0] - src_xy[:, None, 0]
    dy = pts[None, :, 1] - src_xy[:, None, 1]
    w = K_LINE / np.maximum(dx * dx + dy * dy, a2[:, None])
    return np.stack([-dy * w, dx * w], axis=-1)


def phasor_field(src_xy: np.ndarray, radius: np.ndarray, currents: np.ndarray,
                 pts: np.ndarray) -> np.ndarray:
    """Complex RMS flux-density phasor at each point for each frequency component.

    Parameters
    ----------
    src_xy : (n, 2) float
        Conductor centres, m.
    radius : (n,) float
        Conductor radii, m (uniform current density inside; must be > 0).
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
    Per point p and conductor c, with w_cp = 1 / max(|p − c|², a_c²) and K = μ0/(2π),

        Bx = −K Σ_c I_c (p_y − c_y) w_cp = K (S_y − p_y S_0)
        By =  K Σ_c I_c (p_x − c_x) w_cp = K (p_x S_0 − S_x)

    with the current moments S_0 = Σ_c I_c w_cp, S_x = Σ_c I_c c_x w_cp and
    S_y = Σ_c I_c c_y w_cp. The kernel ``w`` is real, so real and
    imaginary parts of every component are stacked and the three sums are a single real
    matrix product ``(6H, n) @ (n, chunk)`` per chunk of points. Only ``w`` is ever formed per
    pair (seven in-place array passes and one matrix product), in preallocated L2-sized buffers.

    Coordinates are taken relative to the centroid of the conductors, so the splitting into
    moments loses at most a factor ``D / max(r, a)`` of precision (D = distance of the point
    from the centroid, r = distance to the nearest conductor): about 1e-12 for trays a few
    metres across. Large jobs (over ``_PARALLEL_PAIRS`` pairs) spread the chunks over a
    small thread pool; numpy releases the GIL inside each operation.

    References
    ----------
    Ampère's circuital law, e.g. J. D. Jackson, *Classical Electrodynamics*, 3rd ed., ch. 5
    (from memory); superposition of phasors: any circuit-theory text.
    """
    src_xy = np.asarray(src_xy, dtype=float).reshape(-1, 2)
    pts = np.asarray(pts, dtype=float).reshape(-1, 2)
    cur = np.asarray(currents, dtype=complex)
    if cur.ndim == 1:
        cur = cur[None, :]
    n, m, h = src_xy.shape[0], pts.shape[0], cur.shape[0]
    if cur.shape[1] != n:
        raise ValueError(f"currents has {cur.shape[1]} columns for {n} conductors")
    out = np.zeros((h, m, 2), dtype=complex)
    if n == 0 or m == 0:
        return out
    a2 = np.maximum(np.asarray(radius, dtype=float).reshape(-1) ** 2, _A2_FLOOR)
    if a2.shape[0] != n:
        raise ValueError(f"radius has {a2.shape[0]} entries for {n} conductors")
    origin = src_xy.mean(axis=0)
    x = src_xy[:, 0] - origin[0]
    y = src_xy[:, 1] - origin[1]
    px = pts[:, 0] - origin[0]
    py = pts[:, 1] - origin[1]
    c = K_LINE * np.concatenate([cur.real, cur.imag])  # (2H, n): real currents
    coef = np.concatenate([c, c * x, c * y])  # (6H, n): rows of S0, Sx, Sy
    h2 = 2 * h
    rows = 6 * h
    step = min(m, _CHUNK_POINTS,
               max(1, min(_CHUNK_PAIRS // n, (_BLAS_SERIAL_MNK - 1) // (rows * n))))
    # Conductor-side constants tiled to the chunk shape: contiguous operands are ~1.5x faster
    # than numpy's broadcasting loops over a short inner axis.
    xt = np.repeat(x[:, None], step, axis=1)
    yt = np.repeat(y[:, None], step, axis=1)
    a2t = np.repeat(a2[:, None], step, axis=1)
    starts = list(range(0, m, step))

    def run(chunk_starts: list[int]) -> None:
        wbuf = np.empty(n * step)
        tbuf = np.empty(n * step)
        sbuf = np.empty(rows * step)
        for s in chunk_starts:
            e = min(m, s + step)
            k = e - s
            w = wbuf[: n * k].reshape(n, k)  # contiguous views, also for the last chunk
            t = tbuf[: n * k].reshape(n, k)
            sm = sbuf[: rows * k].reshape(rows, k)
            np.subtract(px[s:e], xt[:, :k], out=w)
            np.multiply(w, w, out=w)
            np.subtract(py[s:e], yt[:, :k], out=t)
            np.multiply(t, t, out=t)
            np.add(w, t, out=w)
            np.maximum(w, a2t[:, :k], out=w)
            np.divide(1.0, w, out=w)
            np.matmul(coef, w, out=sm)
            s0, sx, sy = sm[:h2], sm[h2:2 * h2], sm[2 * h2:]
            bx = sy - py[s:e] * s0  # (2H, k): rows Re then Im
            by = px[s:e] * s0 - sx
            blk = out[:, s:e]
            blk[..., 0].real = bx[:h]
            blk[..., 0].imag = bx[h:]
            blk[..., 1].real = by[:h]
            blk[..., 1].imag = by[h:]

    if n * m >= _PARALLEL_PAIRS and _THREADS > 1 and len(starts) > 1:
        parts = [starts[i::_THREADS] for i in range(_THREADS)]
        list(_get_pool().map(run, parts))
    else:
        run(starts)
    return out


def resultant_rms(b: np.ndarray) -> np.ndarray:
    """Resultant RMS flux density, sqrt(Σ_h |Bx_h|² + |By_h|²).

    Parameters
    ----------
    b : (H, m, 2) complex or (m, 2) complex
        RMS phasors, T.

    Returns
    -------
    (m,) float
        Resultant RMS flux density, T.

    Notes
    -----
        B_R = sqrt(Σ_h |Bx_h|² + |By_h|²),

    the root-sum-square of the RMS components (here two; the axial component of long
    parallel conductors is zero), with harmonics combined as root-sum-square.

    References
    ----------
    IEC 61786-1:2013, definition of the resultant field.
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
    (m,) float
        Maximum field, T.

    Notes
    -----
    With S = Σ_h Re(B_h B_hᴴ) = [[a, b], [b, c]] (2×2, symmetric, per point) the RMS of the
    component along a unit vector u is sqrt(uᵀ S u); its maximum is the root of the largest
    eigenvalue,

        λ_max = (a + c)/2 + sqrt(((a − c)/2)² + b²).

    For one frequency this is the semi-major axis of the polarisation ellipse, and
    B_max ≤ B_R ≤ √2 · B_max (equal for linear, √2 for circular polarisation).

    References
    ----------
    IEC 61786-1:2013, definition of the maximum field (semi-major axis of the ellipse).
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

    Returns
    -------
    FarField
        ``order`` (1, 2, 3, … or None), ``coefficient_T_m`` (T·m^order) and the RMS moment
        magnitudes ``moments`` (K,) in A·m^k.

    Notes
    -----
    With z = x + iy, the field of real line currents is

        Bx − i By = μ0/(2π i) Σ_c I_c / (z − z_c) = μ0/(2π i) Σ_k M_k / z^(k+1),
        M_k = Σ_c I_c z_c^k   (|z| > max |z_c|).

    The lowest non-zero moment M_k sets the decay, |B| ∝ |M_k| / r^(k+1), the same in every
    direction; it does not depend on the origin, because all lower moments vanish. A phasor
    current is two real (DC) problems, Re I and Im I, one per quarter period, so the RMS
    resultant of the leading term is

        B_R ≈ μ0/(2π) · sqrt(Σ_h |M_k(Re I_h)|² + |M_k(Im I_h)|²) / r^(k+1).

    References
    ----------
    Laurent (2D multipole) expansion of the complex potential of line currents, e.g.
    K. J. Binns, P. J. Lawrenson, C. W. Trowbridge, *The Analytical and Numerical Solution
    of Electric and Magnetic Fields*, Wiley 1992 (from memory); IEC 61786-1:2013 for the RMS
    resultant.
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
