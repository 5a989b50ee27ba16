"""Batched solves of the small column systems of solved scoring, and the peak field.

The column systems of :mod:`trayadvisor.ranking.solved` are tiny (G = one per parallel group
and known-current column) and come by the million: closed forms (Cramer's rule) for G ≤ 3,
Gaussian elimination unrolled over the batch up to G = 8, numpy's batched LU beyond.
"""

from __future__ import annotations

import numpy as np


def solve_small(mat: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """Batched solve of (..., G, G) systems; closed forms for G ≤ 3 (Cramer's rule), which
    numpy's batched LU is many times slower than on tiny systems."""
    g = mat.shape[-1]
    with np.errstate(all="ignore"):
        if g == 1:
            return rhs / mat[..., 0]
        if g == 2:
            a, b, c, d = mat[..., 0, 0], mat[..., 0, 1], mat[..., 1, 0], mat[..., 1, 1]
            det = a * d - b * c
            return np.stack([d * rhs[..., 0] - b * rhs[..., 1],
                             a * rhs[..., 1] - c * rhs[..., 0]], axis=-1) / det[..., None]
        if g == 3:
            m = mat
            c00 = m[..., 1, 1] * m[..., 2, 2] - m[..., 1, 2] * m[..., 2, 1]
            c01 = m[..., 0, 2] * m[..., 2, 1] - m[..., 0, 1] * m[..., 2, 2]
            c02 = m[..., 0, 1] * m[..., 1, 2] - m[..., 0, 2] * m[..., 1, 1]
            c10 = m[..., 1, 2] * m[..., 2, 0] - m[..., 1, 0] * m[..., 2, 2]
            c11 = m[..., 0, 0] * m[..., 2, 2] - m[..., 0, 2] * m[..., 2, 0]
            c12 = m[..., 0, 2] * m[..., 1, 0] - m[..., 0, 0] * m[..., 1, 2]
            c20 = m[..., 1, 0] * m[..., 2, 1] - m[..., 1, 1] * m[..., 2, 0]
            c21 = m[..., 0, 1] * m[..., 2, 0] - m[..., 0, 0] * m[..., 2, 1]
            c22 = m[..., 0, 0] * m[..., 1, 1] - m[..., 0, 1] * m[..., 1, 0]
            det = m[..., 0, 0] * c00 + m[..., 0, 1] * c10 + m[..., 0, 2] * c20
            r0, r1, r2 = rhs[..., 0], rhs[..., 1], rhs[..., 2]
            return np.stack([c00 * r0 + c01 * r1 + c02 * r2, c10 * r0 + c11 * r1 + c12 * r2,
                             c20 * r0 + c21 * r1 + c22 * r2], axis=-1) / det[..., None]
    if g <= _UNROLLED_MAX and mat.ndim > 2:
        return _solve_unrolled(mat, rhs)
    return _solve_lu(mat, rhs)


#: Column systems up to this size are solved by elimination unrolled over the batch.
_UNROLLED_MAX = 8
#: A pivot below this fraction of its matrix's largest entry sends that system to LU.
_PIVOT_FLOOR = 1e-10


def _solve_lu(mat: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    with np.errstate(all="ignore"):
        try:
            return np.linalg.solve(mat, rhs[..., None])[..., 0]
        except np.linalg.LinAlgError:
            return np.full(rhs.shape, np.nan, dtype=complex)


def _solve_unrolled(mat: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """Gaussian elimination of a batch of small systems, one vector operation per entry
    (the batch axis last and contiguous): for G ≤ 8 several times faster than numpy's
    batched LU, which pays a per-matrix overhead.

    No pivoting: the column systems M = Eᵀ Y E come from Y = Z⁻¹ with Z = R + jX (R ≥ 0
    diagonal, X positive definite), so −Im M is positive definite and no leading minor
    vanishes. A system whose pivot nevertheless falls below :data:`_PIVOT_FLOOR` of its
    largest entry is re-solved by LU with pivoting.
    """
    g = mat.shape[-1]
    a = np.moveaxis(mat, (-2, -1), (0, 1)).copy()  # (G, G, ...)
    b = np.moveaxis(rhs, -1, 0).copy()  # (G, ...)
    scale = np.abs(mat).max(axis=(-2, -1))
    weak = np.zeros(scale.shape, dtype=bool)
    with np.errstate(all="ignore"):
        for k in range(g):
            weak |= ~(np.abs(a[k, k]) > _PIVOT_FLOOR * scale)
            inv = 1.0 / a[k, k]
            for i in range(k + 1, g):
                f = a[i, k] * inv
                a[i, k + 1:] -= f * a[k, k + 1:]
                b[i] -= f * b[k]
        x = np.empty_like(b)
        for k in range(g - 1, -1, -1):
            s = b[k].copy()
            for j in range(k + 1, g):
                s -= a[k, j] * x[j]
            x[k] = s / a[k, k]
    out = np.moveaxis(x, 0, -1)
    if weak.any():
        out[weak] = _solve_lu(mat[weak], rhs[weak])
    return out


def peak_r2(b: np.ndarray) -> np.ndarray:
    """max over points of Σ_h |B_h|² from fields (H, N, 2Q) stored as (x, y) per point."""
    sq = b.view(np.float64) ** 2  # (H, N, 4Q): Re and Im of x and y per point
    s = sq[0]
    for k in range(1, sq.shape[0]):
        s += sq[k]
    s = s.reshape(s.shape[0], -1, 4)
    # Explicit sums: numpy reduces a length-4 last axis several times slower.
    out = (s[..., 0] + s[..., 1] + s[..., 2] + s[..., 3]).max(axis=1)
    return np.where(np.isfinite(out), out, np.inf)


def _cramer(m: list[np.ndarray], rhs: np.ndarray) -> np.ndarray:
    """Cramer's rule for batched symmetric systems of G ≤ 3 given by their upper entries
    ``m`` (arrays in :func:`numpy.triu_indices` order)."""
    g = rhs.shape[-1]
    r = [rhs[..., k] for k in range(g)]
    with np.errstate(all="ignore"):
        if g == 1:
            return (r[0] / m[0])[..., None]
        if g == 2:
            a, b, d = m
            inv = 1.0 / (a * d - b * b)
            return np.stack([(d * r[0] - b * r[1]) * inv, (a * r[1] - b * r[0]) * inv], -1)
        m00, m01, m02, m11, m12, m22 = m
        c00 = m11 * m22 - m12 * m12
        c01 = m02 * m12 - m01 * m22
        c02 = m01 * m12 - m02 * m11
        c11 = m00 * m22 - m02 * m02
        c12 = m01 * m02 - m00 * m12
        c22 = m00 * m11 - m01 * m01
        inv = 1.0 / (m00 * c00 + m01 * c01 + m02 * c02)
        return np.stack([(c00 * r[0] + c01 * r[1] + c02 * r[2]) * inv,
                         (c01 * r[0] + c11 * r[1] + c12 * r[2]) * inv,
                         (c02 * r[0] + c12 * r[1] + c22 * r[2]) * inv], axis=-1)


def solve_packed(mat: np.ndarray, rhs: np.ndarray, g: int) -> np.ndarray:
    """Batched solve of symmetric systems given by their upper entries (..., G(G+1)/2) in
    :func:`numpy.triu_indices` order: Cramer's rule for G ≤ 3, else :func:`solve_small`."""
    if g <= 3:
        return _cramer([mat[..., k] for k in range(g * (g + 1) // 2)], rhs)
    full = np.empty((*mat.shape[:-1], g, g), dtype=mat.dtype)
    ia, ib = np.triu_indices(g)
    full[..., ia, ib] = mat
    full[..., ib, ia] = mat
    return solve_small(full, rhs)


def solve_symmetric(mat: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """Cramer's rule for batched symmetric systems (..., G, G), G ≤ 3 (upper entries)."""
    ia, ib = np.triu_indices(mat.shape[-1])
    return _cramer([mat[..., i, j] for i, j in zip(ia, ib, strict=True)], rhs)
