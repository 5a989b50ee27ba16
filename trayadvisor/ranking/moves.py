"""Incremental exact scoring of local-search moves with solved currents.

:class:`MoveState` keeps the column system of one arrangement (see
:mod:`trayadvisor.ranking.solved`) and scores a move by a rank update of it;
:class:`BatchState` offers the same interface by full batched solves, for sub-problems
whose tables cannot be updated that way.
"""

from __future__ import annotations

import numpy as np

from trayadvisor.ranking.smallsolve import peak_r2, solve_packed
from trayadvisor.ranking.solved import SolvedTables


class MoveState:
    """One arrangement of a local search, with the pieces that make a move cheap to score.

    Per frequency component it keeps P = Y E (rows × columns), the column system
    M = Eᵀ Y E and its right-hand side, and the columns' field tables aG = Eᵀ Y g (see the
    module notes). A move gives some rows a new column: E changes by a few outer products,
    so M, the right-hand side and aG change by sums over those rows only, and the new
    currents come from one small solve per component. Exact, like a full solve.
    """

    def __init__(self, tables: SolvedTables, a: np.ndarray) -> None:
        m = tables.model
        if not m.schur or tables.expand is not None:
            raise ValueError("moves are scored incrementally on a main space with a fixed Y")
        self.t, self.m = tables, m
        self.a = np.asarray(a, dtype=np.int64).copy()
        self.col = tables.columns(self.a[None])[0]
        s, g = m.n_rows, m.n_cols
        h = m.Y.shape[0]
        self.ay = tables.ay.reshape(h, s, -1)  # (H, S, 2P)
        self.b0 = tables.b0.reshape(h, -1)  # (H, 2P)
        e = np.zeros((s, g))
        e[np.arange(s), self.col] = 1.0
        self.onehot = e  # (S, G): row r's column
        self.ydiag = np.diagonal(m.Y, axis1=1, axis2=2)  # (H, S)
        self.upper = np.triu_indices(g)
        self.p = m.Y @ e  # (H, S, G)
        self.mat = e.T @ self.p  # (H, G, G)
        self.rhs = m.col_total + m.yc @ e  # (H, G)
        self.ag = np.einsum("sg,hsq->hgq", e, self.ay)  # (H, G, 2P)
        self.value = float(self._values(self.mat[None], self.rhs[None], self.ag[None],
                                        slice(None))[0])

    def _values(self, mat: np.ndarray, rhs: np.ndarray, ag: np.ndarray, q: slice | np.ndarray
                ) -> np.ndarray:
        """max over points of Σ_h |B_h|² for batched systems (N, H, G, G)."""
        with np.errstate(all="ignore"):
            try:
                u = np.linalg.solve(mat, rhs[..., None])[..., 0]  # (N, H, G)
            except np.linalg.LinAlgError:
                return np.full(mat.shape[0], np.inf)
        b = np.einsum("nhg,nhgq->nhq", u, ag) + self.b0[None][..., q]  # (N, H, 2Q)
        r2 = (b.real ** 2 + b.imag ** 2).sum(axis=1)
        r2 = r2.reshape(r2.shape[0], -1, 2).sum(axis=-1)
        out = r2.max(axis=1)
        return np.where(np.isfinite(out), out, np.inf)

    def peaks(self, n: int) -> np.ndarray:
        """Indices of the ``n`` points where the field is largest now."""
        b = np.einsum("hg,hgq->hq", np.linalg.solve(self.mat, self.rhs[..., None])[..., 0],
                      self.ag) + self.b0
        r2 = (b.real ** 2 + b.imag ** 2).sum(axis=0).reshape(-1, 2).sum(axis=1)
        return np.argpartition(r2, -min(n, r2.size))[-n:]

    def _moved(self, pos: np.ndarray, src: np.ndarray, q: slice | np.ndarray
               ) -> tuple[np.ndarray, ...]:
        """The systems after each move (rows ``pos`` take the contents of ``src``)."""
        m = self.m
        g = m.n_cols
        new = self.col[src]
        old = self.col[pos]
        d = np.zeros((*pos.shape, g))  # (N, r, G)
        np.put_along_axis(d, new[..., None], 1.0, axis=2)
        np.put_along_axis(d, old[..., None], -1.0, axis=2)
        d[new == old] = 0.0
        pr = self.p[:, pos]  # (H, N, r, G)
        cross = np.einsum("nrg,hnrk->hngk", d, pr)
        yrr = m.Y[:, pos[:, :, None], pos[:, None, :]]  # (H, N, r, r)
        quad = np.einsum("nrg,hnrs,nsk->hngk", d, yrr, d)
        mat = self.mat[:, None] + cross + np.swapaxes(cross, -1, -2) + quad
        rhs = self.rhs[:, None] + np.einsum("nrg,hnr->hng", d, m.yc[:, pos])
        ag = self.ag[:, None][..., q] + np.einsum("nrg,hnrq->hngq", d, self.ay[..., q][:, pos])
        return (np.moveaxis(mat, 1, 0), np.moveaxis(rhs, 1, 0), np.moveaxis(ag, 1, 0), d)

    def _q(self, points: np.ndarray | None) -> slice | np.ndarray:
        if points is None:
            return slice(None)
        return np.stack([2 * points, 2 * points + 1], axis=1).ravel()

    def screen(self, pos: np.ndarray, src: np.ndarray, points: np.ndarray) -> np.ndarray:
        """Exact value of each move on ``points`` only: a lower bound of its value."""
        q = self._q(points)
        if _is_swap(pos, src):
            return self._swap_values(pos, q)
        mat, rhs, ag, _ = self._moved(pos, src, q)
        return self._values(mat, rhs, ag, q)

    def evaluate(self, pos: np.ndarray, src: np.ndarray) -> np.ndarray:
        """Exact value of each move on every point."""
        if _is_swap(pos, src):
            return self._swap_values(pos, slice(None))
        mat, rhs, ag, _ = self._moved(pos, src, slice(None))
        return self._values(mat, rhs, ag, slice(None))

    def _swap_values(self, pos: np.ndarray, q: slice | np.ndarray) -> np.ndarray:
        """Swaps of two rows: E changes by one outer product x yᵀ (x = e_i − e_j, y = the
        two columns' difference), so M' = M + y dᵀ + d yᵀ + α y yᵀ with d = (P_i − P_j)
        and α = Y_ii + Y_jj − 2 Y_ij, and every column table moves by y (ay_i − ay_j).
        M' is symmetric: only its upper entries are formed (packed, last axis)."""
        m = self.m
        i, j = pos[:, 0], pos[:, 1]
        g = m.n_cols
        e = self.onehot
        y = e[j] - e[i]  # (N, G)
        dp = self.p[:, i] - self.p[:, j]  # (H, N, G)
        alpha = self.ydiag[:, i] + self.ydiag[:, j] - 2.0 * m.Y[:, i, j]  # (H, N)
        ia, ib = self.upper
        ya, yb = y[:, ia], y[:, ib]
        mat = dp[..., ia] * yb
        mat += dp[..., ib] * ya
        mat += alpha[..., None] * (ya * yb)
        mat += self.mat[:, ia, ib][:, None]
        rhs = self.rhs[:, None] + y[None] * (m.yc[:, i] - m.yc[:, j])[..., None]
        u = solve_packed(mat, rhs, g)  # (H, N, G)
        ayq = self.ay[..., q]  # (H, S, 2Q): select the points before gathering rows
        b = np.matmul(u, self.ag[..., q])
        b += np.einsum("hng,ng->hn", u, y)[..., None] * (ayq[:, i] - ayq[:, j])
        b += self.b0[:, None][..., q]
        return peak_r2(b)

    def apply(self, pos: np.ndarray, src: np.ndarray) -> None:
        """Make one move (``pos``, ``src``: the rows of one move)."""
        pos, src = np.asarray(pos)[None], np.asarray(src)[None]
        mat, rhs, ag, d = self._moved(pos, src, slice(None))
        self.mat, self.rhs, self.ag = mat[0], rhs[0], ag[0]
        self.p = self.p + np.einsum("hsr,rg->hsg", self.m.Y[:, :, pos[0]], d[0])
        self.a[pos[0]] = self.a[src[0]]
        self.col[pos[0]] = self.col[src[0]]
        self.onehot[pos[0]] = self.onehot[src[0]]
        self.value = float(self._values(self.mat[None], self.rhs[None], self.ag[None],
                                        slice(None))[0])


class BatchState:
    """The same interface as :class:`MoveState` by full batched solves (sub-problems, or
    sizes that differ by arrangement): exact, slower per move."""

    def __init__(self, tables: SolvedTables, a: np.ndarray) -> None:
        self.t = tables
        self.a = np.asarray(a, dtype=np.int64).copy()
        self._refresh()

    def _refresh(self) -> None:
        b = self.t.complex_fields(self.a[None])[0]
        self.r2 = (b.real ** 2 + b.imag ** 2).sum(axis=(0, 2))
        self.value = float(self.r2.max())

    def _codes(self, pos: np.ndarray, src: np.ndarray) -> np.ndarray:
        out = np.repeat(self.a[None], pos.shape[0], axis=0)
        np.put_along_axis(out, pos, self.a[src], axis=1)
        return out

    def peaks(self, n: int) -> np.ndarray:
        return np.argpartition(self.r2, -min(n, self.r2.size))[-n:]

    def screen(self, pos: np.ndarray, src: np.ndarray, points: np.ndarray) -> np.ndarray:
        return self.t.subset(points).values(self._codes(pos, src))

    def evaluate(self, pos: np.ndarray, src: np.ndarray) -> np.ndarray:
        return self.t.values(self._codes(pos, src))

    def apply(self, pos: np.ndarray, src: np.ndarray) -> None:
        self.a[pos] = self.a[src]
        self._refresh()


def _is_swap(pos: np.ndarray, src: np.ndarray) -> bool:
    return pos.shape[1] == 2 and bool(np.array_equal(src, pos[:, ::-1]))


def move_state(tables: SolvedTables, a: np.ndarray) -> MoveState | BatchState:
    """The fastest exact move scorer these tables allow."""
    if tables.model.schur and tables.expand is None:
        return MoveState(tables, a)
    return BatchState(tables, a)
