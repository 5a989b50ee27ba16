"""Exact scores of arrangements with the currents each one really carries (solved sharing).

With solved sharing the currents of parallel conductors depend on where every conductor
lies, so an arrangement's field is no longer a sum of per-position tables. It is still cheap
to get exactly, because the candidate positions do not move:

- Every movable position and every fixed parallel conductor is a row s of one impedance
  matrix Z (self and mutual inductance, resistance at each component's own frequency). When
  the conductors that may share a position have one size (the usual case), Z does not depend
  on the arrangement, so Y = Z⁻¹ is computed once per frequency component.
- An arrangement assigns every row a *column*: its parallel group (one per circuit and
  phase), or a column of its own for a conductor whose current is known (a single
  conductor of a phase, an empty place: current 0). All rows of a column share one voltage
  drop U, and a column's currents sum to its total T. With the incidence matrix E (rows ×
  columns) the currents are I = Y (E U − c), c = Z I_k the voltage the fixed known currents
  induce, and U solves the small system (Eᵀ Y E) U = T + Eᵀ Y c.
- The field of the arrangement at a point is Σ_s I_s g_s(p) plus that of the fixed known
  currents.

A move of a local search changes a few rows of E, so Eᵀ Y E changes by a few outer products
and a move costs O(columns²) plus the field on the points it is screened on
(:class:`MoveState`). When the sizes differ, every arrangement is solved in full with the
layout's sharing plan (:mod:`trayadvisor.coupling.sharing`), exact but slower.

The result is identical to :func:`trayadvisor.coupling.solved_sources` on the arrangement's
positions.

References
----------
F. W. Grover, *Inductance Calculations*, 1946 (self and mutual inductance per metre); the
reduction to the columns is a Schur complement of the bordered system (Golub and Van Loan,
*Matrix Computations*, from memory).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from trayadvisor.coupling import (
    SharingError,
    SharingPlan,
    log_distance_matrix,
    sharing_plan,
    solve_plan,
)
from trayadvisor.engine import SourceArrays, unit_field
from trayadvisor.engine.units import K_LINE, MM
from trayadvisor.model import Layout
from trayadvisor.ranking.space import TOL_MM, Space
from trayadvisor.ranking.tables import Tables

_STAGE_POINTS = 48  # points of the first pass of :meth:`SolvedTables.values_below`
_CHUNK = 2048  # arrangements per batched solve


def _channels(b: np.ndarray) -> np.ndarray:
    """(N, H, P, 2) complex → (N, P, 4H) real channels, per component [Re x, Re y, Im x, Im y]
    (the layout of :class:`trayadvisor.ranking.tables.Tables`)."""
    n, h, p, _ = b.shape
    out = np.concatenate([b.real, b.imag], axis=-1)  # (N, H, P, 4)
    return np.ascontiguousarray(out.transpose(0, 2, 1, 3)).reshape(n, p, 4 * h)


@dataclass
class _Model:
    """Everything of the solve that depends neither on the arrangement nor on the points."""

    plan: SharingPlan
    n_rows: int  # J movable rows, then the fixed parallel conductors
    fixed_free: np.ndarray  # conductor indices of fixed conductors in parallel groups
    fixed_known: np.ndarray  # conductor indices of the other fixed conductors
    kind_group: np.ndarray  # (K,) column of a free kind's group, -1 for known kinds
    known_kinds: np.ndarray  # kinds with a known current (empty places included)
    known_base: np.ndarray  # (K,) first column of a known kind's own columns
    n_cols: int
    col_total: np.ndarray  # (H, G) column totals
    ff_col: np.ndarray  # columns of the fixed parallel conductors
    schur: bool  # Y is arrangement-independent
    Y: np.ndarray | None  # (H, S, S)
    yc: np.ndarray | None  # (H, S) Y c
    xy_rows: np.ndarray  # (S, 2) m
    radius_rows: np.ndarray  # (S,) m
    kind_members: tuple[tuple[int, ...], ...]


def _model(space: Space, layout: Layout, temperature_c: float) -> _Model:
    plan = sharing_plan(layout, temperature_c)
    src = plan.sources
    group_of = {int(i): int(g) for i, g in zip(plan.free, plan.group_of_free, strict=True)}
    fixed = np.array(space.fixed, dtype=int)
    fixed_free = np.array([i for i in fixed if i in group_of], dtype=int)
    fixed_known = np.array([i for i in fixed if i not in group_of], dtype=int)
    k = space.n_kinds
    kind_group = np.full(k, -1, dtype=int)
    for q, kind in enumerate(space.kinds):
        gs = {group_of.get(i, -1) for i in kind.members}
        if len(gs) > 1:
            raise ValueError(f"kind {kind.label} mixes parallel and single conductors")
        kind_group[q] = gs.pop() if gs else -1
    known_kinds = np.nonzero(kind_group < 0)[0]
    known_base, n_cols, col_total = _known_columns(space, plan, kind_group)
    ff_col = np.array([group_of[int(i)] for i in fixed_free], dtype=int)
    j = space.n_positions
    xy_rows = np.concatenate([space.positions_mm * MM, src.xy_m[fixed_free]]).reshape(-1, 2)
    radius_rows = np.concatenate([0.5 * space.diameters_mm * MM, src.radius_m[fixed_free]])
    model = _Model(plan, j + fixed_free.size, fixed_free, fixed_known, kind_group, known_kinds,
                   known_base, n_cols, col_total, ff_col, False, None, None, xy_rows,
                   radius_rows, tuple(kd.members for kd in space.kinds))
    _impedance(model, space)
    return model


def _known_columns(space: Space, plan: SharingPlan, kind_group: np.ndarray
                   ) -> tuple[np.ndarray, int, np.ndarray]:
    """The columns: one per parallel group, then one per place holding a known current
    (each kind's places in order); returns (first column of each known kind, count,
    totals (H, G))."""
    k = space.n_kinds
    counts = np.bincount(space.reference(), minlength=k)  # places of each kind, any code
    known_base = np.full(k, -1, dtype=int)
    col = plan.starts.size
    for q in np.nonzero(kind_group < 0)[0]:
        known_base[q] = col
        col += int(counts[q])
    h = plan.orders.size
    col_total = np.zeros((h, col), dtype=complex)
    col_total[:, :plan.starts.size] = plan.totals
    for q in np.nonzero(kind_group < 0)[0]:
        cur = space.kinds[q].currents if not space.kinds[q].empty else np.zeros(h)
        col_total[:, known_base[q]:known_base[q] + counts[q]] = np.asarray(cur)[:, None]
    return known_base, col, col_total


def _aggregable(m: _Model, sub: Space, owner: np.ndarray) -> bool:
    """Whether every position of ``sub`` that stands for several places can only hold
    conductors of parallel groups (their places then share one column)."""
    many = np.bincount(owner, minlength=sub.n_positions) > 1
    if not many.any():
        return True
    known = m.kind_group < 0
    dk = np.array([kd.diameter_mm for kd in sub.kinds])
    for r in np.nonzero(many)[0]:
        fits = np.abs(dk - sub.diameters_mm[r]) <= TOL_MM
        if np.any(fits & known):
            return False
    return True


def _impedance(m: _Model, space: Space) -> None:
    """Y = Z⁻¹ over the rows when every free kind of a diameter has one impedance."""
    plan = m.plan
    pos_free = {int(i): p for p, i in enumerate(plan.free)}
    r_of = {}  # row → (H,) resistance and gmr of its free occupants
    diam = space.diameters_mm
    for q, kind in enumerate(space.kinds):
        if m.kind_group[q] < 0:
            continue
        sig = [(tuple(np.round(plan.r_free[:, pos_free[i]], 15)),
                round(float(plan.gmr[i]), 15)) for i in kind.members]
        if len(set(sig)) > 1:
            return
        for jj in np.nonzero(np.abs(diam - kind.diameter_mm) <= TOL_MM)[0]:
            if int(jj) in r_of and r_of[int(jj)] != sig[0]:
                return  # two free kinds of different impedance may take this place
            r_of[int(jj)] = sig[0]
    h = plan.orders.size
    s = m.n_rows
    r = np.ones((h, s))
    gmr = np.array(m.radius_rows) * np.exp(-0.25)
    for row, (rr, g) in r_of.items():
        r[:, row] = rr
        gmr[row] = g
    j = space.n_positions
    for n, i in enumerate(m.fixed_free):
        r[:, j + n] = plan.r_free[:, pos_free[int(i)]]
        gmr[j + n] = plan.gmr[i]
    with np.errstate(all="ignore"):
        lam = log_distance_matrix(m.xy_rows, gmr)
        src = plan.sources
        kx = src.xy_m[m.fixed_known]
        dk = np.hypot(m.xy_rows[:, None, 0] - kx[None, :, 0],
                      m.xy_rows[:, None, 1] - kx[None, :, 1])
        lam_k = np.log(dk)
    if not (np.all(np.isfinite(lam)) and np.all(np.isfinite(lam_k))):
        return  # a candidate place on a fixed conductor: the full solve reports it
    y = np.empty((h, s, s), dtype=complex)
    yc = np.empty((h, s), dtype=complex)
    i_k = src.currents[:, m.fixed_known]
    for k in range(h):
        w = plan.omega[k]
        z = -1j * w * K_LINE * lam
        z[np.arange(s), np.arange(s)] += r[k]
        try:
            y[k] = np.linalg.inv(z)
        except np.linalg.LinAlgError:
            return
        c = (-1j * w * K_LINE * lam_k) @ i_k[k]
        yc[k] = y[k] @ c
    m.Y, m.yc, m.schur = y, yc, True


class SolvedTables(Tables):
    """Exact field of arrangements with their own solved currents, on a set of points.

    Has the attributes of :class:`~trayadvisor.ranking.tables.Tables` (``V``, ``F`` hold
    the equal-share tables, all channels kept, for screening moves and building
    sub-problems) and overrides the scoring: :meth:`fields`, :meth:`values` and
    :meth:`values_below` are exact. ``expand`` maps the codes of a restricted sub-problem to
    the full space before solving.
    """

    linear = False

    def __init__(self, space: Space, src: SourceArrays, pts_m: np.ndarray, layout: Layout,
                 temperature_c: float) -> None:
        super().__init__(space, src, pts_m, keep_all=True)
        self.model = _model(space, layout, temperature_c)
        self.space = space
        self.expand: Callable[[np.ndarray], np.ndarray] | None = None
        self._points(np.asarray(pts_m, dtype=float).reshape(-1, 2))

    def _points(self, pts: np.ndarray) -> None:
        m = self.model
        self.pts_m = pts
        self.g_rows = unit_field(m.xy_rows, m.radius_rows, pts)  # (S, P, 2)
        src = m.plan.sources
        g_k = unit_field(src.xy_m[m.fixed_known], src.radius_m[m.fixed_known], pts)
        self.b_known = np.einsum("hk,kpc->hpc", src.currents[:, m.fixed_known], g_k)
        if m.schur:  # B = Σ_g U_g (Eᵀ ay)_g + b0 (module notes)
            self.ay = np.einsum("hst,tpc->hspc", m.Y, self.g_rows, optimize=True)
            self.b0 = self.b_known - np.einsum("hs,spc->hpc", m.yc, self.g_rows)

    # -- derived tables ----------------------------------------------------------------------
    def subset(self, idx: np.ndarray) -> SolvedTables:
        t = self._copy(self.V[:, :, idx], self.F[idx], self.expand)
        t.pts_m = self.pts_m[idx]
        t.g_rows = None if self.g_rows is None else np.ascontiguousarray(self.g_rows[:, idx])
        t.b_known = np.ascontiguousarray(self.b_known[:, idx])
        if self.model.schur:
            t.ay = np.ascontiguousarray(self.ay[:, :, idx])
            t.b0 = np.ascontiguousarray(self.b0[:, idx])
        return t

    def reduced(self, v: np.ndarray, expand: Callable[[np.ndarray], np.ndarray],
                sub: Space) -> SolvedTables:
        """The tables of a restricted sub-problem ``sub``: screening tables ``v`` over its
        positions, exact scores of its codes (``expand`` maps them to this space).

        A position of ``sub`` stands for one or two places that hold the same kind. When
        those places can only hold parallel conductors, both join the same column, so the
        sub-problem is a column system of its own with Y summed over its places (Pᵀ Y P):
        moves and blocks are scored as fast as on a main space. Otherwise its codes are
        expanded and solved in full.
        """
        owner = np.asarray(expand(np.arange(sub.n_positions)[None]))[0]
        m = self.model
        if m.schur and self.expand is None and _aggregable(m, sub, owner):
            return self._aggregated(v, sub, owner)
        outer = self.expand
        t = self._copy(v, self.F, expand if outer is None else (lambda c: outer(expand(c))))
        t.pts_m, t.g_rows, t.b_known = self.pts_m, self.g_rows, self.b_known
        if self.model.schur:
            t.ay, t.b0 = self.ay, self.b0
        return t

    def _aggregated(self, v: np.ndarray, sub: Space, owner: np.ndarray) -> SolvedTables:
        m = self.model
        j = self.space.n_positions
        n_ff = m.n_rows - j
        agg = np.zeros((m.n_rows, sub.n_positions + n_ff))
        agg[np.arange(j), owner] = 1.0
        agg[j + np.arange(n_ff), sub.n_positions + np.arange(n_ff)] = 1.0
        known_base, n_cols, col_total = _known_columns(sub, m.plan, m.kind_group)
        red = _Model(m.plan, agg.shape[1], m.fixed_free, m.fixed_known, m.kind_group,
                     m.known_kinds, known_base, n_cols, col_total, m.ff_col, True,
                     np.einsum("sr,hst,tq->hrq", agg, m.Y, agg), m.yc @ agg,
                     m.xy_rows, m.radius_rows, m.kind_members)
        t = self._copy(v, self.F, None)
        t.model, t.space = red, sub
        t.pts_m, t.b_known, t.g_rows = self.pts_m, self.b_known, None  # schur only
        t.ay, t.b0 = np.einsum("sr,hspc->hrpc", agg, self.ay), self.b0
        return t

    def _copy(self, v: np.ndarray, f: np.ndarray,
              expand: Callable[[np.ndarray], np.ndarray] | None) -> SolvedTables:
        t = object.__new__(SolvedTables)
        t.V, t.F, t._stage = np.ascontiguousarray(v), np.ascontiguousarray(f), None
        t.model, t.space, t.expand = self.model, self.space, expand
        return t

    # -- scoring ---------------------------------------------------------------------------

    def columns(self, codes: np.ndarray) -> np.ndarray:
        """(N, S) column of every row (see the module notes)."""
        m = self.model
        col = m.kind_group[codes]
        for q in m.known_kinds:
            mask = codes == q
            col = np.where(mask, m.known_base[q] + np.cumsum(mask, axis=1) - 1, col)
        ff = np.broadcast_to(m.ff_col, (codes.shape[0], m.ff_col.size))
        return np.concatenate([col, ff], axis=1)

    def complex_fields(self, codes: np.ndarray) -> np.ndarray:
        """(N, H, P, 2) complex field of each arrangement at the points, T."""
        codes = np.asarray(codes, dtype=np.int64)
        if self.expand is not None:
            codes = self.expand(codes)
        codes = codes.reshape(-1, self.space.n_positions)
        out = np.empty((codes.shape[0], *self.b_known.shape), dtype=complex)
        for s in range(0, codes.shape[0], _CHUNK):
            part = codes[s:s + _CHUNK]
            if self.model.schur:
                out[s:s + _CHUNK] = _schur_fields(self.model, self.columns(part), self.ay,
                                                  self.b0)
            else:
                cur = _full_currents(self.model, self.space, part)  # (n, H, S)
                out[s:s + _CHUNK] = np.einsum("nhs,spc->nhpc", cur, self.g_rows,
                                              optimize=True) + self.b_known[None]
        return out

    def fields(self, codes: np.ndarray) -> np.ndarray:
        return _channels(self.complex_fields(codes))

    def values(self, codes: np.ndarray) -> np.ndarray:
        b = self.complex_fields(codes)
        return (b.real ** 2 + b.imag ** 2).sum(axis=(1, 3)).max(axis=1)

    def values_below(self, codes: np.ndarray, threshold: float
                     ) -> tuple[np.ndarray, np.ndarray]:
        codes = np.asarray(codes)
        p = self.pts_m.shape[0]
        keep = np.arange(codes.shape[0])
        if np.isfinite(threshold) and p > 2 * _STAGE_POINTS and codes.shape[0] > 8:
            if self._stage is None:
                self._stage = self.subset(np.linspace(0, p, _STAGE_POINTS, endpoint=False)
                                          .astype(int))
            keep = np.nonzero(self._stage.values(codes) < threshold)[0]
        v = self.values(codes[keep])
        ok = v < threshold
        return keep[ok], v[ok]


def _schur_fields(m: _Model, col: np.ndarray, ay: np.ndarray, b0: np.ndarray
                  ) -> np.ndarray:
    """(N, H, P, 2) field from the columns (N, S): U from the column system, then
    B = Σ_g U_g (Eᵀ ay)_g + b0."""
    n, s = col.shape
    e = np.zeros((n, s, m.n_cols))
    np.put_along_axis(e, col[:, :, None], 1.0, axis=2)
    et = np.swapaxes(e, 1, 2)
    h = m.Y.shape[0]
    out = np.empty((n, h, *b0.shape[1:]), dtype=complex)
    for k in range(h):
        mat = et @ (m.Y[k] @ e)  # (N, G, G)
        rhs = m.col_total[k][None, :] + et @ m.yc[k]
        u = _solve_small(mat, rhs)
        ag = et @ ay[k].reshape(s, -1)  # (N, G, 2P)
        out[:, k] = (np.einsum("ng,ngq->nq", u, ag) + b0[k].reshape(1, -1)).reshape(
            n, *b0.shape[1:])
    if not np.all(np.isfinite(out)):
        raise SharingError("the current sharing of some arrangement has no solution")
    return out


def _full_currents(m: _Model, space: Space, codes: np.ndarray) -> np.ndarray:
    """(N, H, S) currents by the layout's full sharing solve (sizes differ by arrangement)."""
    plan = m.plan
    src = plan.sources
    n = codes.shape[0]
    xy = np.broadcast_to(src.xy_m, (n, *src.xy_m.shape)).copy()
    cond_at = np.full((n, space.n_positions), -1, dtype=int)
    for q, members in enumerate(m.kind_members):
        if not members:
            continue
        mask = codes == q
        rank = np.cumsum(mask, axis=1) - 1
        mem = np.asarray(members)
        cond_at = np.where(mask, mem[np.minimum(rank, mem.size - 1)], cond_at)
    rows, cols = np.nonzero(cond_at >= 0)
    xy[rows, cond_at[rows, cols]] = space.positions_mm[cols] * MM
    cur = solve_plan(plan, xy)  # (N, H, n)
    h = plan.orders.size
    out = np.zeros((n, h, m.n_rows), dtype=complex)
    out[rows, :, cols] = cur[rows, :, cond_at[rows, cols]]
    if m.fixed_free.size:
        out[:, :, space.n_positions:] = cur[:, :, m.fixed_free]
    return out


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
        u = _solve_packed(mat, rhs, g)  # (H, N, G)
        ayq = self.ay[..., q]  # (H, S, 2Q): select the points before gathering rows
        b = np.matmul(u, self.ag[..., q])
        b += np.einsum("hng,ng->hn", u, y)[..., None] * (ayq[:, i] - ayq[:, j])
        b += self.b0[:, None][..., q]
        return _peak_r2(b)

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


def _solve_small(mat: np.ndarray, rhs: np.ndarray) -> np.ndarray:
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
            u = _solve_symmetric(mat, rhs) if g <= 3 else _solve_small(mat, rhs)
            ap = ept @ self.ay[k][rows_p]  # (Np, G, 2F)
            as_ = est @ self.ay[k][rows_s]  # (Ns, G, 2F)
            b = u @ ap
            b += np.swapaxes(np.swapaxes(u, 0, 1) @ as_, 0, 1)
            b += self.b0[k]
            bv = b.view(np.float64).reshape(np_, ns, -1, 4)  # per point: Re, Im of x and y
            r2 += np.einsum("abpi,abpi->abp", bv, bv)
        out = r2.max(axis=-1) if r2.shape[-1] else np.zeros((np_, ns))
        return np.where(np.isfinite(out) & mask, out, np.inf)


def _peak_r2(b: np.ndarray) -> np.ndarray:
    """max over points of Σ_h |B_h|² from fields (H, N, 2Q) stored as (x, y) per point."""
    sq = b.view(np.float64) ** 2  # (H, N, 4Q): Re and Im of x and y per point
    s = sq[0]
    for k in range(1, sq.shape[0]):
        s += sq[k]
    s = s.reshape(s.shape[0], -1, 4)
    # Explicit sums: numpy reduces a length-4 last axis several times slower.
    out = (s[..., 0] + s[..., 1] + s[..., 2] + s[..., 3]).max(axis=1)
    return np.where(np.isfinite(out), out, np.inf)


def _solve_packed(mat: np.ndarray, rhs: np.ndarray, g: int) -> np.ndarray:
    """Batched solve of symmetric systems given by their upper entries (..., G(G+1)/2) in
    :func:`numpy.triu_indices` order: Cramer's rule for G ≤ 3, else LU."""
    with np.errstate(all="ignore"):
        r = [rhs[..., k] for k in range(g)]
        if g == 1:
            return (r[0] / mat[..., 0])[..., None]
        if g == 2:
            a, b, d = mat[..., 0], mat[..., 1], mat[..., 2]
            inv = 1.0 / (a * d - b * b)
            return np.stack([(d * r[0] - b * r[1]) * inv, (a * r[1] - b * r[0]) * inv], -1)
        if g == 3:
            m00, m01, m02, m11, m12, m22 = (mat[..., k] for k in range(6))
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
    full = np.empty((*mat.shape[:-1], g, g), dtype=mat.dtype)
    ia, ib = np.triu_indices(g)
    full[..., ia, ib] = mat
    full[..., ib, ia] = mat
    return _solve_small(full, rhs)


def _solve_symmetric(mat: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """Cramer's rule for batched symmetric systems (..., G, G), G ≤ 3 (upper entries)."""
    g = mat.shape[-1]
    r = [rhs[..., i] for i in range(g)]
    with np.errstate(all="ignore"):
        if g == 1:
            return (r[0] / mat[..., 0, 0])[..., None]
        if g == 2:
            a, b, d = mat[..., 0, 0], mat[..., 0, 1], mat[..., 1, 1]
            inv = 1.0 / (a * d - b * b)
            return np.stack([(d * r[0] - b * r[1]) * inv, (a * r[1] - b * r[0]) * inv], -1)
        m00, m01, m02 = mat[..., 0, 0], mat[..., 0, 1], mat[..., 0, 2]
        m11, m12, m22 = mat[..., 1, 1], mat[..., 1, 2], mat[..., 2, 2]
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
