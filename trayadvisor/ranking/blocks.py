"""Exact solved scores of whole enumeration blocks (prefix × suffix pairs) on a few points."""

from __future__ import annotations

import numpy as np

from trayadvisor.ranking.smallsolve import solve_small, solve_symmetric
from trayadvisor.ranking.solved import SolvedTables


class BlockScorer:
    """Exact values, on a few points, of every (prefix, suffix) pair of an enumeration block.

    The column system splits like the arrangement: E = [E_prefix; E_suffix], so
    Eᵀ Y E = (prefix part) + (suffix part) + the cross terms E_pᵀ Y_ps E_s, which for all
    pairs of a block are one matrix product. Then one small solve per pair and component,
    and the field on the points. For the exhaustive search with solved currents.
    """

    def __init__(self, tables: SolvedTables, points: np.ndarray) -> None:
        m = tables.model
        if not m.schur or tables.expand is not None:
            raise ValueError("blocks are scored on a main space with a fixed Y")
        self.t, self.m = tables, m
        s, h = m.n_rows, m.Y.shape[0]
        self.ay = tables.ay[:, :, points].reshape(h, s, -1)  # (H, S, 2F)
        self.b0 = tables.b0[:, points].reshape(h, -1)

    def _cols(self, rows: np.ndarray, offset: np.ndarray) -> np.ndarray:
        m = self.m
        col = m.kind_group[rows]
        for q in m.known_kinds:
            mask = rows == q
            col = np.where(mask, m.known_base[q] + offset[q] + np.cumsum(mask, axis=1) - 1,
                           col)
        return col

    def values(self, pre: np.ndarray, suf: np.ndarray, mask: np.ndarray | None = None
               ) -> np.ndarray:
        """(Np, Ns) largest Σ_h |B_h|² over the points of every pair; the pairs outside
        ``mask`` (Np, Ns) are inf."""
        m, g = self.m, self.m.n_cols
        j = self.t.space.n_positions
        tp = pre.shape[1]
        np_, ns = pre.shape[0], suf.shape[0]
        if mask is None:
            mask = np.ones((np_, ns), dtype=bool)
        first = np.bincount(pre[0], minlength=len(m.kind_members))
        col_p = np.concatenate([self._cols(pre, np.zeros_like(first)),
                                np.broadcast_to(m.ff_col, (np_, m.ff_col.size))], axis=1)
        col_s = self._cols(suf, first)
        rows_p = np.concatenate([np.arange(tp), np.arange(j, m.n_rows)])
        rows_s = np.arange(tp, j)
        ep = np.zeros((np_, rows_p.size, g))
        np.put_along_axis(ep, col_p[:, :, None], 1.0, axis=2)
        es = np.zeros((ns, rows_s.size, g))
        np.put_along_axis(es, col_s[:, :, None], 1.0, axis=2)
        ept, est = np.swapaxes(ep, 1, 2), np.swapaxes(es, 1, 2)
        es_flat = es.transpose(1, 0, 2).reshape(rows_s.size, ns * g)
        r2 = np.zeros((np_, ns, self.b0.shape[1] // 2))
        for k in range(m.Y.shape[0]):
            y = m.Y[k]
            ypp, yps, yss = y[np.ix_(rows_p, rows_p)], y[np.ix_(rows_p, rows_s)], \
                y[np.ix_(rows_s, rows_s)]
            mpp = ept @ (ypp @ ep)  # (Np, G, G)
            mss = est @ (yss @ es)  # (Ns, G, G)
            w = (ept @ yps).reshape(np_ * g, rows_s.size)
            cross = (w @ es_flat).reshape(np_, g, ns, g).transpose(0, 2, 1, 3)
            mat = cross + np.swapaxes(cross, -1, -2)
            mat += mpp[:, None]
            mat += mss[None]
            rhs = (m.col_total[k] + (ept @ m.yc[k][rows_p]))[:, None, :] + \
                (est @ m.yc[k][rows_s])[None]
            u = solve_symmetric(mat, rhs) if g <= 3 else solve_small(mat, rhs)
            ap = ept @ self.ay[k][rows_p]  # (Np, G, 2F)
            as_ = est @ self.ay[k][rows_s]  # (Ns, G, 2F)
            b = u @ ap
            b += np.swapaxes(np.swapaxes(u, 0, 1) @ as_, 0, 1)
            b += self.b0[k]
            bv = b.view(np.float64).reshape(np_, ns, -1, 4)  # per point: Re, Im of x and y
            r2 += np.einsum("abpi,abpi->abp", bv, bv)
        out = r2.max(axis=-1) if r2.shape[-1] else np.zeros((np_, ns))
        return np.where(np.isfinite(out) & mask, out, np.inf)
